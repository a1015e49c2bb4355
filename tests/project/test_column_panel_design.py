"""The column-panel design built from inputs: custom cells, lattice-only panels, calibrated modulus."""

import json
import shutil

import pytest
from tests.helpers import assert_quantity_close, sealed_export

from latticecalc import Q_
from latticecalc.errors import InputError, LatticeCalcError
from latticecalc.project import open_project
from latticecalc.project.column_panel import design_from_inputs
from latticecalc.project.inputs import set_values
from latticecalc.project.templates import templates_root

RTOL = 1e-12


@pytest.fixture
def project(tmp_path):
    dest = tmp_path / "panel"
    shutil.copytree(templates_root() / "column-panel", dest)
    return dest


def _set(folder, changes):
    proj = open_project(folder)
    set_values(folder / "inputs.toml", proj.template, changes)
    return open_project(folder)


def test_default_design_is_a_framed_octet(project):
    design = design_from_inputs(open_project(project).inputs, folder=project)
    assert design.cell.kind == "octet" and design.framed and design.calibration is None
    assert design.counts == {"cells_wide": 4, "cells_high": 12, "cells_deep": 1}


def test_frame_can_be_switched_off(project):
    proj = _set(project, {"frame.enabled": False})
    assert not design_from_inputs(proj.inputs, folder=project).framed


def test_custom_cell_without_its_table_names_the_input(project):
    proj = _set(project, {"cell.kind": "custom"})
    with pytest.raises(InputError, match="cell.custom"):
        design_from_inputs(proj.inputs, folder=project)


def test_calibrated_modulus_replaces_the_lattice_dynamic_modulus(project):
    # an export as written by 'latticecalc export' for a prototype-test project (only the rows read)
    export = project / "coupon.json"
    export.write_text(json.dumps(sealed_export({
        "generated": "2026-11-30T10:00:00+00:00",
        "project": {"calc_id": "PT-9", "revision": "A", "title": "coupon test", "prepared_by": "T. Tester"},
        "results": [{"id": "calibration.modulus", "value": 31.5, "unit": "MPa", "step": "calibration.modulus"},
                    {"id": "calibration.uncertainty", "value": 0.4, "unit": "MPa", "step": "calibration.uncertainty"}],
    })))
    proj = _set(project, {"lattice.calibration": "coupon.json"})
    design = design_from_inputs(proj.inputs, folder=project)
    # common practice: the calibrated dynamic modulus is what the vibration steps then use
    assert_quantity_close(design.lattice.dynamic_modulus(), Q_(31.5, "MPa"), rtol=RTOL)
    ratio = design.lattice.dynamic_to_static
    assert_quantity_close(design.lattice.youngs_modulus, Q_(31.5 / ratio, "MPa"), rtol=RTOL)
    ids = [s.id for s in design.calibration.steps]
    assert ids == ["lattice.calibrated.dynamic-modulus", "lattice.calibrated.static-modulus"]
    assert "PT-9" in design.calibration.steps[0].source.cite()


def test_missing_calibration_export_names_the_input(project):
    proj = _set(project, {"lattice.calibration": "nowhere.json"})
    with pytest.raises(LatticeCalcError, match="lattice.calibration") as e:   # a named error, not a traceback
        design_from_inputs(proj.inputs, folder=project)
    assert e.value.input_name == "lattice.calibration"


def test_coverage_on_the_hand_estimate_alone_is_preliminary_and_blocks_checked():
    # common practice: a verdict no numerical check confirmed cannot be signed as checked
    from latticecalc import Q_
    from latticecalc.project.column_panel import designed_band
    from latticecalc.project.signoff.records import preliminary_results

    est = {"f_low": Q_(35.0, "Hz"), "f_high": Q_(45.0, "Hz")}
    hand = designed_band(estimate=est, gaps=[])
    assert hand.step("coverage.preliminary").result.m == 1
    content = {"results": [{"id": s.id, "value": float(s.result.m) if s.result.ndim == 0 else 0} for s in hand.steps]}
    assert preliminary_results(content) == ["coverage.preliminary"]

    class Gap:
        low, high = Q_(33.6, "Hz"), Q_(44.5, "Hz")

    computed = designed_band(estimate=est, gaps=[Gap()])
    assert computed.step("coverage.preliminary").result.m == 0
    content = {"results": [{"id": s.id, "value": float(s.result.m)} for s in computed.steps]}
    assert preliminary_results(content) == []
