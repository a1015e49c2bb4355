"""The frame-model sections estimate their memory before they run and refuse a panel above the project's limit.

The estimate's constants are measured on the kit's own solvers (peak resident memory of a framed octet
panel's self-weight solve and transmissibility sweep, see ``FE_BYTES_PER_DOF``); that a calculation should
refuse a job it cannot finish before starting it, rather than die part-way, is common practice.
"""

from __future__ import annotations

import dataclasses
import json
import os
import subprocess
import sys

import pytest

from latticecalc.errors import InputError, LatticeCalcError
from latticecalc.project import open_project
from latticecalc.project.column_panel import FE_BASE_BYTES, check_fe_memory, design_from_inputs, fe_memory_estimate
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


def test_the_estimate_bounds_the_measured_peak_of_a_self_weight_solve(panel):
    # measured in a fresh interpreter: the growth of its peak resident memory over the solve, against the
    # estimate's per-degree-of-freedom part (the base, what the kernel loaded before, varies by machine)
    code = f"""
import json, resource
from latticecalc.project import open_project
from latticecalc.project.column_panel import design_from_inputs
from latticecalc.physics.panel import self_weight_deflection
proj = open_project({str(panel)!r})
d = design_from_inputs(proj.inputs, folder=proj.folder)
before = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024
self_weight_deflection(d.cell, materials=d.materials, nx=6, ny=18)
print(json.dumps([before, resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024]))
"""
    env = dict(os.environ, OMP_NUM_THREADS="1")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True, env=env)
    before, after = json.loads(out.stdout.strip().splitlines()[-1])
    design, _ = _design(panel, {})
    est = fe_memory_estimate(dataclasses.replace(design, cells_wide=6, cells_high=18), n_elements=2, limit_gb=4.0)
    grown = after - before
    assert grown < est.bytes - FE_BASE_BYTES < 4 * grown, (grown, est)


@pytest.mark.slow
def test_the_run_stops_in_the_first_section_and_writes_no_package(panel):
    from latticecalc.project.export import export_project

    set_values(panel / "inputs.toml", open_project(panel).template, {"panel.cells_wide": 60, "panel.cells_high": 200})
    with pytest.raises(LatticeCalcError, match="fe.memory_limit") as err:
        export_project(panel, run=True, progress=None)
    assert "00_inputs" in str(err.value) or "more memory than the limit" in str(err.value)
    assert not list((panel / "out").glob("*.html")) if (panel / "out").exists() else True
