"""Templates and the demo are found when the kit is installed from a wheel, not only in editable mode."""

from __future__ import annotations

import subprocess
import sys
import zipfile
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
pytestmark = pytest.mark.slow


def test_wheel_carries_templates_and_demo_and_finds_them(tmp_path):
    out = tmp_path / "wheel"
    build = subprocess.run([sys.executable, "-m", "pip", "wheel", "--no-deps", "--no-build-isolation", "-q",
                            "-w", str(out), str(ROOT)], capture_output=True, text=True)
    if build.returncode != 0 and "bdist_wheel" in build.stderr:
        pytest.skip("the 'wheel' package is not installed in this environment")
    assert build.returncode == 0, build.stderr[-2000:]
    wheel = next(out.glob("latticecalc-*.whl"))
    names = set(zipfile.ZipFile(wheel).namelist())
    expected = {p.relative_to(ROOT).as_posix() for p in (ROOT / "project_templates").rglob("*")
                if p.is_file() and ".ipynb_checkpoints" not in p.parts}
    for rel in expected:
        assert "latticecalc/bundled/" + rel in names, rel
    assert "latticecalc/bundled/calcs/demo.toml" in names
    site = tmp_path / "site"
    zipfile.ZipFile(wheel).extractall(site)
    probe = ("import sys; sys.path.insert(0, sys.argv[1]); import latticecalc, pathlib;"
             "assert pathlib.Path(latticecalc.__file__).is_relative_to(sys.argv[1]), latticecalc.__file__;"
             "from latticecalc.project.templates import list_templates, new_project;"
             "print(','.join(t.name for t in list_templates()));"
             "new_project(pathlib.Path(sys.argv[2]), template='column-panel')")
    run = subprocess.run([sys.executable, "-c", probe, str(site), str(tmp_path / "proj")],
                         capture_output=True, text=True, cwd=tmp_path)
    assert run.returncode == 0, run.stderr[-2000:]
    assert "column-panel" in run.stdout.split(",")[0] or "column-panel" in run.stdout
    assert (tmp_path / "proj" / "template.toml").is_file()
