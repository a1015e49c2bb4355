"""The README's set-up commands exist and CI runs the test one (common practice: docs that run)."""

import re
import subprocess
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def _block_after(marker: str) -> str:
    text = (ROOT / "README.md").read_text()
    m = re.search(re.escape(marker) + r"\s*```\n(.+?)\n```", text, re.S)
    assert m, marker
    return m.group(1).strip()


def test_readme_opens_with_the_job_and_has_two_setup_commands():
    text = (ROOT / "README.md").read_text()
    first_paragraph = text.split("\n\n")[1]
    assert "engineers" in first_paragraph and "checker" in first_paragraph
    assert "latticecalc demo" in _block_after("<!-- demo-command -->")
    assert "pytest" in _block_after("<!-- test-command -->")


def test_ci_runs_exactly_the_readme_test_command():
    script = (ROOT / ".ci" / "run").read_text()
    extracted = subprocess.run(
        ["bash", "-c", script.split("cmd=$(", 1)[1].split(")\n", 1)[0]], cwd=ROOT, capture_output=True, text=True
    ).stdout.strip()
    assert extracted == _block_after("<!-- test-command -->")
    assert 'bash -c "$cmd"' in script
