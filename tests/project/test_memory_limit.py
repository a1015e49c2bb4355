"""The frame-model sections estimate their memory before they run and refuse a panel above the project's limit.

The estimate's constants are measured on the kit's own solvers (peak resident memory of a framed octet
panel's self-weight solve and transmissibility sweep, see ``FE_BYTES_PER_DOF``); that a calculation should
refuse a job it cannot finish before starting it, rather than die part-way, is common practice.
"""

from __future__ import annotations

import pytest

from latticecalc.errors import InputError, LatticeCalcError
from latticecalc.project import open_project
from latticecalc.project.column_panel import check_fe_memory, design_from_inputs
from latticecalc.project.inputs import set_values
from latticecalc.project.templates import new_project


@pytest.fixture
def panel(tmp_path):
    return new_project(tmp_path / "panel", template="column-panel")


def _design(folder, changes):
    set_values(folder / "inputs.toml", open_project(folder).template, changes)
    proj = open_project(folder)
    return design_from_inputs(proj.inputs, folder=folder), proj.inputs


def test_a_panel_inside_the_declared_ranges_but_too_big_is_refused_naming_the_limit(panel):
    design, inputs = _design(panel, {"panel.cells_wide": 60, "panel.cells_high": 200, "panel.cells_deep": 20})
    with pytest.raises(InputError, match="fe.memory_limit") as err:
        check_fe_memory(design, inputs)
    assert "panel.cells_wide" in err.value.input_name and "GB" in str(err.value)
    design, inputs = _design(panel, {"fe.memory_limit": 4096.0})          # the user raises the limit
    assert check_fe_memory(design, inputs).bytes < 4096e9


def test_the_default_panel_is_well_inside_the_default_limit(panel):
    design, inputs = _design(panel, {})
    est = check_fe_memory(design, inputs)
    assert est.bytes < est.limit / 4 and "degrees of freedom" in est.text   # measured peak 0.39 GB (sweep)


@pytest.mark.slow
def test_the_run_stops_in_the_first_section_and_writes_no_package(panel):
    from latticecalc.project.export import export_project

    set_values(panel / "inputs.toml", open_project(panel).template, {"panel.cells_wide": 60, "panel.cells_high": 200})
    with pytest.raises(LatticeCalcError, match="fe.memory_limit") as err:
        export_project(panel, run=True, progress=None)
    assert "00_inputs" in str(err.value) or "more memory than the limit" in str(err.value)
    assert not list((panel / "out").glob("*.html")) if (panel / "out").exists() else True
