"""Bad floor-check input stops the run before any section computes, names the input, writes no package.

Behaviour checks (common practice): a survey export with no targeted peaks, a direction the survey
did not record, a panel taller than its column and a bracket stiffness of zero.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from tests.helpers import make_quick, sealed_export

from latticecalc.cli import main as cli
from latticecalc.project.inputs import set_values
from latticecalc.project.schema import load_template_spec

pytestmark = pytest.mark.slow


def _project(tmp_path: Path, values: dict) -> Path:
    folder = tmp_path / "panel"
    assert cli(["new", str(folder), "--template", "column-panel"]) == 0
    make_quick(folder)
    spec = load_template_spec(folder / "template.toml")
    set_values(folder / "inputs.toml", spec, values)
    return folder


def _survey(tmp_path: Path, *, targets, direction) -> str:
    p = tmp_path / "survey.json"
    p.write_text(json.dumps(sealed_export({
        "results": [{"id": "peaks.target-frequencies", "value": targets, "unit": "Hz"},
                    {"id": "peaks.target-losses", "value": [10.0] * len(targets), "unit": "dB"}],
        "inputs": [{"id": "record.direction", "value": direction}]})), encoding="utf-8")
    return "../survey.json"


@pytest.mark.parametrize(("case", "needle"), [
    ("no-peaks", "coverage.survey_results"),
    ("direction", "receiver.direction"),
    ("taller", "panel.cells_high"),
])
def test_bad_floor_input_names_the_input_and_writes_no_package(tmp_path, capsys, case, needle):
    if case == "no-peaks":
        values = {"coverage.survey_results": _survey(tmp_path, targets=[], direction="normal")}
    elif case == "direction":
        values = {"coverage.survey_results": _survey(tmp_path, targets=[47.0], direction="vertical"),
                  "receiver.direction": "normal"}
    else:
        values = {"panel.cells_high": 40}          # 40 × 120 mm = 4.8 m on a 3.5 m column
    folder = _project(tmp_path, values)
    assert cli(["run", str(folder)]) != 0
    err = capsys.readouterr().err
    assert needle in err
    assert "00_inputs" in err                      # stopped before any section computed
    assert not list((folder / "out").glob("*.html")) if (folder / "out").exists() else True
    assert cli(["export", str(folder)]) != 0
    assert not list((folder / "out").glob("*.json")) if (folder / "out").exists() else True


def test_zero_bracket_stiffness_is_refused_at_validation(tmp_path, capsys):
    folder = tmp_path / "panel"
    assert cli(["new", str(folder), "--template", "column-panel"]) == 0
    text = (folder / "inputs.toml").read_text().replace('normal_stiffness = "5 MN/m"', 'normal_stiffness = "0 MN/m"')
    (folder / "inputs.toml").write_text(text)
    assert cli(["run", str(folder)]) != 0
    err = capsys.readouterr().err
    assert "fixing.normal_stiffness" in err and "inputs.toml" in err
