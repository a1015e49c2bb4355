"""new -> run -> export on a temporary project, the package's safety, and bad input writing nothing."""

from __future__ import annotations

import json
import re
import shutil
from pathlib import Path

import nbformat
import pytest
from tests.helpers import HOSTILE

from latticecalc.cli import main as cli
from latticecalc.errors import NotebookError, ProjectError
from latticecalc.project.export import export_project
from latticecalc.project.runner import run_project
from latticecalc.project.templates import new_project

pytestmark = pytest.mark.slow

EXTERNAL = re.compile(r"""(?:\b(?:src|href)\s*=\s*["']?\s*|url\(\s*["']?\s*)(https?:|//)""", re.IGNORECASE)


@pytest.fixture(scope="module")
def exported(quick_panel) -> Path:
    """new -> run -> export through the command line: the session's quick project (tests/conftest.py)."""
    return quick_panel


def _package(folder: Path) -> tuple[Path, Path]:
    return folder / "out" / "LC-001-revA.html", folder / "out" / "LC-001-revA.json"


def test_export_writes_html_and_json_named_by_calc_id_and_revision(exported):
    html, js = _package(exported)
    assert html.is_file() and js.is_file()
    assert (exported / "out" / "executed" / "10_strut_resonance.ipynb").is_file()


def test_json_lists_inputs_and_results_with_id_value_unit_step(exported):
    data = json.loads(_package(exported)[1].read_text())
    assert data["project"]["calc_id"] == "LC-001" and data["project"]["revision"] == "A"
    assert data["inputs"] and data["results"]
    for entry in data["inputs"] + data["results"]:
        assert {"id", "value", "unit", "step"} <= set(entry)
    width = next(i for i in data["inputs"] if i["id"] == "cell.width")
    assert width["value"] == pytest.approx(120.0, rel=1e-12) and width["unit"] == "mm"
    f1 = next(r for r in data["results"] if r["id"] == "strut.f1-cc")
    assert f1["unit"] == "Hz" and f1["step"] == "strut.f1-cc" and f1["value"] > 0


def test_package_has_title_block_steps_math_and_cautions(exported):
    text = _package(exported)[0].read_text()
    for needle in ('id="title-block"', 'data-step="strut.f1-cc"', "<math", "<mfrac", "Cautions",
                   "licensed professional engineer", "capacity of the column", "Follow the codes",
                   "Checks summary", "References", "Assumptions", "Content-Security-Policy"):
        assert needle in text, needle


def test_package_makes_no_external_request(exported):
    text = _package(exported)[0].read_text()
    assert not EXTERNAL.findall(text)
    assert "<script src" not in text.lower()
    # the MathML namespace is an identifier, not a request; it is the only http text allowed
    assert set(re.findall(r"https?://[^\s\"'<>]+", text)) <= {"http://www.w3.org/1998/Math/MathML"}


def test_external_pattern_catches_what_it_should():
    # the checker above must be able to fail
    assert EXTERNAL.findall('<img src="https://cdn.example/x.js">')
    assert EXTERNAL.findall("<a href=//cdn.example/x>")
    assert EXTERNAL.findall("background: url( 'http://x/y.png')")


def test_hostile_project_title_is_inert(hostile_panel):
    """The session's hostile project (tests/conftest.py): its title and name hold ``HOSTILE``, run and
    exported through ``export --run``."""
    text = hostile_panel.read_text()
    assert "<script>window" not in text and "<img src=x" not in text
    assert "&lt;script&gt;window.__lcPwned = 1; alert(&quot;x&quot;)&lt;/script&gt;" in text
    data = json.loads(hostile_panel.with_suffix(".json").read_text())
    assert data["project"]["title"] == f"title {HOSTILE}"  # kept verbatim as data, escaped only in HTML
    assert data["project"]["name"] == f"name {HOSTILE}"


def test_stale_project_is_refused_and_old_package_kept(exported, tmp_path):
    folder = tmp_path / "stale"
    shutil.copytree(exported, folder)
    html, _ = _package(folder)
    before = html.read_bytes()
    inputs = folder / "inputs.toml"
    inputs.write_text(inputs.read_text().replace('width = "120 mm"', 'width = "110 mm"'))
    with pytest.raises(ProjectError, match="inputs.toml"):
        export_project(folder)
    assert html.read_bytes() == before
    assert cli(["export", str(folder)]) != 0


@pytest.mark.parametrize(
    ("old", "new", "words"),
    [
        ('width = "120 mm"', "", ["cell.width", "missing"]),
        ('width = "120 mm"', 'widht = "120 mm"', ["cell.widht", "cell.width"]),
        ('width = "120 mm"', 'width = "120 kg"', ["cell.width", "length", "line"]),
        ('width = "120 mm"', 'width = "5 m"', ["cell.width", "500 mm", "line"]),
    ],
    ids=["missing", "misspelt", "wrong-dimension", "out-of-range"],
)
def test_bad_input_stops_the_run_with_a_clear_error_and_writes_no_package(tmp_path, capsys, old, new, words):
    folder = new_project(tmp_path / "bad", template="column-panel")
    inputs = folder / "inputs.toml"
    inputs.write_text(inputs.read_text().replace(old, new))
    assert cli(["export", "--run", str(folder)]) == 2
    err = capsys.readouterr().err
    for w in words:
        assert w in err, (w, err)
    assert "inputs.toml" in err
    assert not list(folder.glob("out/*.html")) and not list(folder.glob("out/*.json"))


def test_failing_cell_is_reported_with_notebook_cell_and_error(tmp_path, capsys):
    folder = new_project(tmp_path / "fails", template="column-panel")
    path = folder / "10_strut_resonance.ipynb"
    nb = nbformat.read(str(path), as_version=4)
    nb.cells.insert(2, nbformat.v4.new_code_cell("print('about to fail')\nraise ZeroDivisionError('deliberate')"))
    nbformat.write(nb, str(path))
    with pytest.raises(NotebookError) as info:
        run_project(folder, progress=None)
    msg = str(info.value)
    assert "10_strut_resonance.ipynb" in msg and "cell 3" in msg and "ZeroDivisionError" in msg
    assert "about to fail" in msg
    assert not (folder / "out" / "run-record.json").exists()
    assert cli(["run", str(folder)]) == 2
    with pytest.raises(ProjectError):
        export_project(folder)


def test_new_refuses_a_folder_that_is_not_empty(tmp_path, capsys):
    (tmp_path / "taken").mkdir()
    (tmp_path / "taken" / "notes.txt").write_text("mine")
    assert cli(["new", str(tmp_path / "taken"), "--template", "column-panel"]) == 2
    assert (tmp_path / "taken" / "notes.txt").read_text() == "mine"
    assert "not empty" in capsys.readouterr().err


def test_unknown_template_lists_the_valid_ones(tmp_path, capsys):
    assert cli(["new", str(tmp_path / "x"), "--template", "colum-panel"]) == 2
    assert "column-panel" in capsys.readouterr().err


def test_templates_command_lists_each_with_a_description(capsys):
    assert cli(["templates"]) == 0
    out = capsys.readouterr().out
    assert "column-panel" in out and "strut" in out
