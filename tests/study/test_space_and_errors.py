"""Bad input to a study gives a named error (test_study_project.py checks that a study project then writes nothing)."""

from __future__ import annotations

import pytest

from latticecalc.errors import DimensionError, InputError
from latticecalc.study.engine import DaskExecutor, SchedulerError, StudySettings
from latticecalc.study.requirement import Requirement, RequirementError
from latticecalc.study.space import Continuous, DesignSpaceError, Discrete, UnknownVariableError, space_from_table


def test_empty_space_is_named():
    with pytest.raises(DesignSpaceError, match="empty"):
        space_from_table({})


def test_reversed_bounds_are_named():
    with pytest.raises(DesignSpaceError, match="reversed") as info:
        space_from_table({"cell.width": {"low": "300 mm", "high": "200 mm"}})
    assert info.value.input_name == "space.cell.width"


def test_unknown_variable_is_named():
    with pytest.raises(UnknownVariableError) as info:
        space_from_table({"lattice.colour": {"choices": ["red"]}})
    assert "lattice.colour" in str(info.value) and "cell.width" in str(info.value)


def test_wrong_dimension_and_empty_choices_are_named():
    with pytest.raises(DimensionError):
        space_from_table({"cell.width": {"low": "3 kg", "high": "4 kg"}})
    with pytest.raises(DesignSpaceError, match="no choices"):
        space_from_table({"cell.kind": {"choices": []}})
    with pytest.raises(DesignSpaceError, match="unknown cell kind"):
        space_from_table({"cell.kind": {"choices": ["hexagonal"]}})


def test_space_decodes_the_unit_cube_onto_its_ranges():
    space = space_from_table({"cell.width": {"low": "0.1 m", "high": "300 mm"},
                              "cell.kind": {"choices": ["bcc", "octet"]},
                              "lattice.strut_diameter": {"choices": ["4 mm", "6 mm", "0.8 cm"]}})
    assert isinstance(space.variables[0], Continuous) and isinstance(space.variables[1], Discrete)
    d = space.decode([0.0, 0.99, 0.5])
    assert d == {"cell.width": 100.0, "cell.kind": "octet", "lattice.strut_diameter": 6.0}
    assert space.decode([1.0, 0.0, 1.0])["cell.width"] == 300.0
    assert space.decode([1.0, 0.0, 1.0])["lattice.strut_diameter"] == 8.0


def test_requirement_with_no_peaks_is_named():
    with pytest.raises(RequirementError, match="no targeted peaks"):
        Requirement(peaks=(), required=(), spread=0.02, direction="normal", source="test")


def test_settings_refuse_negative_counts():
    with pytest.raises(InputError):
        StudySettings(screen=0)
    with pytest.raises(InputError):
        StudySettings(bloch=-1)


def test_unreachable_scheduler_is_named():
    # a port on this machine where nothing listens (the discard port, common practice for a dead address)
    with pytest.raises(SchedulerError, match="cannot reach the Dask scheduler") as info:
        DaskExecutor(address="tcp://127.0.0.1:9", timeout=2.0)
    assert info.value.input_name == "--scheduler"
