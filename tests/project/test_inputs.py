"""inputs.toml against a template's declarations: every bad input names itself, the file and the line."""

import shutil
from pathlib import Path

import pytest
from tests.helpers import assert_quantity_close

from latticecalc import Q_
from latticecalc.errors import DimensionError, InputError
from latticecalc.project.inputs import key_lines, load_inputs, set_values
from latticecalc.project.schema import load_template_spec
from latticecalc.project.templates import templates_root

TEMPLATE = templates_root() / "column-panel"


@pytest.fixture
def project(tmp_path) -> Path:
    dest = tmp_path / "proj"
    shutil.copytree(TEMPLATE, dest)
    return dest


def _spec():
    return load_template_spec(TEMPLATE / "template.toml")


def _replace(path: Path, old: str, new: str) -> None:
    text = path.read_text()
    assert old in text, f"test setup: {old!r} not in {path.name}"
    path.write_text(text.replace(old, new, 1))


def _line_of(path: Path, fragment: str) -> int:
    for i, line in enumerate(path.read_text().splitlines(), start=1):
        if fragment in line:
            return i
    raise AssertionError(fragment)


def test_template_defaults_validate(project):
    inputs = load_inputs(project / "inputs.toml", _spec())
    assert_quantity_close(inputs["cell.width"], 120, unit="mm", rtol=1e-12)
    assert inputs["cell.kind"] == "octet"


def test_missing_input_names_input_and_file(project):
    path = project / "inputs.toml"
    _replace(path, 'width = "120 mm"', "")
    with pytest.raises(InputError) as info:
        load_inputs(path, _spec())
    msg = str(info.value)
    assert "cell.width" in msg and "missing" in msg and "inputs.toml" in msg
    assert "length" in msg  # what was expected


def test_misspelt_input_suggests_the_right_name_with_line(project):
    path = project / "inputs.toml"
    _replace(path, 'width = "120 mm"', 'widht = "120 mm"')
    with pytest.raises(InputError) as info:
        load_inputs(path, _spec())
    err = info.value
    assert err.input_name == "cell.widht"
    assert "cell.width" in str(err)
    assert err.line == _line_of(path, "widht")


def test_wrong_dimension_names_input_file_and_line(project):
    path = project / "inputs.toml"
    _replace(path, 'width = "120 mm"', 'width = "120 MPa"')
    with pytest.raises(DimensionError) as info:
        load_inputs(path, _spec())
    err = info.value
    assert err.input_name == "cell.width" and err.file == "inputs.toml"
    assert err.line == _line_of(path, "120 MPa")
    assert "length" in err.expected


def test_out_of_range_names_the_range(project):
    path = project / "inputs.toml"
    _replace(path, 'width = "120 mm"', 'width = "2 m"')
    with pytest.raises(InputError) as info:
        load_inputs(path, _spec())
    err = info.value
    assert err.input_name == "cell.width" and "500 mm" in err.expected
    assert err.line == _line_of(path, '"2 m"')


def test_bad_choice_and_bad_integer(project):
    path = project / "inputs.toml"
    _replace(path, 'kind = "octet"', 'kind = "octett"')
    with pytest.raises(InputError, match="octet"):
        load_inputs(path, _spec())
    _replace(path, 'kind = "octett"', 'kind = "octet"')
    _replace(path, "cells_high = 12", "cells_high = 12.5")
    with pytest.raises(InputError, match="whole number"):
        load_inputs(path, _spec())


def test_toml_syntax_error_gives_line(project):
    path = project / "inputs.toml"
    _replace(path, 'width = "120 mm"', 'width = "120 mm')
    with pytest.raises(InputError) as info:
        load_inputs(path, _spec())
    assert info.value.line == _line_of(path, 'width = "120 mm')


def test_value_with_source(project):
    path = project / "inputs.toml"
    _replace(path, 'width = "120 mm"', 'width = { value = "110 mm", source = "drawing SK-2" }')
    inputs = load_inputs(path, _spec())
    assert_quantity_close(inputs["cell.width"], Q_(110, "mm"), rtol=1e-12)
    assert inputs.entry("cell.width").source == "drawing SK-2"


def test_round_trip_keeps_comments_and_order(project):
    path = project / "inputs.toml"
    before = path.read_text()
    set_values(path, _spec(), {"cell.width": "95 mm", "panel.cells_high": 10})
    after = path.read_text()
    assert after == before.replace('width = "120 mm"', 'width = "95 mm"').replace("cells_high = 12", "cells_high = 10")
    assert_quantity_close(load_inputs(path, _spec())["cell.width"], 95, unit="mm", rtol=1e-12)


def test_invalid_change_writes_nothing(project):
    path = project / "inputs.toml"
    before = path.read_text()
    with pytest.raises(DimensionError):
        set_values(path, _spec(), {"cell.width": "95 kg"})
    assert path.read_text() == before


def test_key_lines_tracks_tables():
    text = "# c\n[a]\nx = 1\n[b.c]\ny = 2\n"
    assert key_lines(text) == {"a": 2, "a.x": 3, "b.c": 4, "b.c.y": 5}


def test_reading_the_same_inputs_again_gives_the_file_as_it_is_now(project):
    # common practice (a cache must not change a result): every section opens the project again and is given the
    # inputs as validated once; a changed file is read afresh, and a value changed in place by one caller is not
    # what the next caller is given
    path = project / "inputs.toml"
    first = load_inputs(path, _spec())
    first["coverage.target_peaks"].append(Q_(99, "Hz"))     # a notebook changing a value in place
    again = load_inputs(path, _spec())
    assert [float(q.to("Hz").m) for q in again["coverage.target_peaks"]] == [47.0, 56.0]
    assert_quantity_close(again["cell.width"], 120, unit="mm", rtol=1e-12)
    _replace(path, 'width = "120 mm"', 'width = "90 mm"')
    changed = load_inputs(path, _spec())
    assert_quantity_close(changed["cell.width"], 90, unit="mm", rtol=1e-12)
    _replace(path, 'width = "90 mm"', 'width = "90 kg"')
    with pytest.raises(DimensionError):
        load_inputs(path, _spec())
