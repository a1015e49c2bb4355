"""A design-study project: bad input writes nothing; a design written back reruns to the study's numbers.

The write-back is checked against the column-panel sheet's own calls (the band estimate of 40_band_estimate,
the hand estimates of 80_receiver): the project, reopened, must give the numbers the study ranked it by.
These are consistency checks between two paths of the kit, not published values (`common practice`: a design
written back must rerun to the numbers it was chosen by); the formulas behind them carry their sources in
tests/physics and tests/validation.
"""

from __future__ import annotations

import re

import pytest

from latticecalc import Q_
from latticecalc.physics import receiver
from latticecalc.physics.bands import band_estimate_for_cell
from latticecalc.physics.density import panel_mass, relative_density
from latticecalc.project import column_panel
from latticecalc.project.inputs import set_values
from latticecalc.project.project import open_project
from latticecalc.project.schema import load_template_spec
from latticecalc.project.templates import new_project
from latticecalc.study.engine import SchedulerError
from latticecalc.study.requirement import RequirementError
from latticecalc.study.space import DesignSpaceError, UnknownVariableError
from latticecalc.study.workflow import apply_from_study, run_study_project

#: the project reruns the same library calls on the same values: only round-off may differ
RTOL = 1e-9

SMALL = {"search.screen": 6, "search.population": 0, "search.generations": 0, "search.bloch": 0,
         "search.coupled": 0}


def _projects(tmp_path):
    cp = new_project(tmp_path / "cp", template="column-panel")
    ds = new_project(tmp_path / "ds", template="design-study")
    spec = load_template_spec(ds / "template.toml")
    set_values(ds / "inputs.toml", spec, {"study.project": "../cp", **SMALL})
    return cp, ds


def _set_space(ds, text):
    path = ds / "inputs.toml"
    old = path.read_text()
    new = re.sub(r"\[space\]\n(.*?)\n\n", "[space]\n" + text + "\n\n", old, flags=re.S)
    assert new != old
    path.write_text(new)


def _nothing_written(ds):
    return not (ds / "evaluations").exists() and not (ds / "out").exists()


@pytest.mark.parametrize("space, error", [
    ("", DesignSpaceError),
    ('"cell.width" = { low = "250 mm", high = "100 mm" }', DesignSpaceError),
    ('"lattice.colour" = { choices = ["red"] }', UnknownVariableError),
])
def test_bad_space_is_named_and_writes_nothing(tmp_path, space, error):
    _, ds = _projects(tmp_path)
    _set_space(ds, space)
    with pytest.raises(error):
        run_study_project(ds, serial=True)
    assert _nothing_written(ds)


def test_unreachable_scheduler_writes_nothing(tmp_path):
    _, ds = _projects(tmp_path)
    with pytest.raises(SchedulerError):
        run_study_project(ds, scheduler="tcp://127.0.0.1:9")
    assert _nothing_written(ds)


def test_requirement_with_no_peaks_writes_nothing(tmp_path):
    cp, ds = _projects(tmp_path)
    set_values(cp / "inputs.toml", load_template_spec(cp / "template.toml"), {"coverage.target_peaks": []})
    with pytest.raises(RequirementError, match="no targeted peaks"):
        run_study_project(ds, serial=True)
    assert _nothing_written(ds)


def test_design_written_back_reruns_to_the_study_numbers(tmp_path):
    cp, ds = _projects(tmp_path)
    comment = next(line for line in (cp / "inputs.toml").read_text().splitlines() if line.startswith("#"))
    report = run_study_project(ds, serial=True)
    fitting = [r for r in report.result.records if r.outputs["hand"].get("fits", -1) > 0
               and r.outputs["hand"].get("error", 1) == 0]
    assert fitting
    chosen = fitting[0]
    changed = apply_from_study(ds, chosen.id, cp)
    assert "cell.width" in changed and "panel.cells_high" in changed

    text = (cp / "inputs.toml").read_text()
    assert comment in text                                   # comments kept
    proj = open_project(cp)
    inp = proj.inputs
    assert chosen.id in inp.entry("cell.width").source and "LC-DS-001-revA" in inp.entry("cell.width").source
    for name, value in chosen.design.items():
        got = inp[name]
        if hasattr(got, "to"):
            unit = "mm" if name != "lattice.added_mass" else "g"
            assert got.to(unit).m == pytest.approx(value, rel=RTOL)
        else:
            assert got == value

    hand = chosen.outputs["hand"]
    design = column_panel.design_from_inputs(inp, folder=proj.folder)
    zones = column_panel.bloch_options(proj, design)["node_zones"]
    band = band_estimate_for_cell(cell=design.cell, lattice_material=design.lattice, frame_material=design.frame,
                                  modulus_tolerance=inp["tolerance.modulus"],
                                  diameter_tolerance=inp["tolerance.strut_diameter"],
                                  length_tolerance=inp["tolerance.strut_length"],
                                  density_tolerance=inp["tolerance.density"], node_zones=zones)
    setup = column_panel.receiver_setup(proj, design)
    kw = dict(material=design.lattice, nx=design.cells_wide, ny=design.cells_high, column=setup.column,
              faces=setup.placement.faces, direction=setup.direction, node_zones=zones)
    est = receiver.receiver_estimates(design.cell, required=setup.required, **kw)
    # the band estimate counts the strut's added mass itself (the design's cell carries the sphere)
    assert band.value["f_low"].to("Hz").m == pytest.approx(hand["band_low"], rel=RTOL)
    assert band.value["f_high"].to("Hz").m == pytest.approx(hand["band_high"], rel=RTOL)
    assert est.mass_ratio == pytest.approx(hand["mass_ratio"], rel=RTOL)
    mass = panel_mass(design.cell, materials=design.materials, **design.counts, method="closed-form",
                      density=relative_density(design.cell, "closed-form"))
    assert mass.value.to("kg").m == pytest.approx(hand["panel_mass"], rel=RTOL)
    assert Q_(hand["cells_high"], "") == Q_(design.cells_high, "")


def test_a_graded_requirement_project_is_named_as_not_searched_from(tmp_path, executed_projects):
    # common practice (the sheet says what the study did not do): a study reads its requirement from a project
    # whose panel is graded, but builds its designs from the uniform inputs and its own zone variables; the
    # package says so, naming the project's zones
    from latticecalc.project.runner import run_project

    cp, ds = _projects(tmp_path)
    spec = load_template_spec(cp / "template.toml")
    rows = [{"cells_high": 2, "strut_diameter": "3 mm"}, {"cells_high": 2, "strut_diameter": "3.5 mm"}]
    set_values(cp / "inputs.toml", spec, {"panel.zones": rows, "panel.cells_high": 4})
    run_project(ds, progress=None)
    shown = _outputs(ds / "out" / "executed" / "10_study.ipynb")
    assert "cp is a graded panel (2 zones in panel.zones)" in shown
    assert "the project's own zoned design is not among them" in shown
    # and a uniform requirement project (the template's, as the session's executed design study reads it) says
    # nothing of zones
    uniform = executed_projects.get("design-study")
    assert "is a graded panel" not in _outputs(uniform / "out" / "executed" / "10_study.ipynb")
    assert "Requirement from" in _outputs(uniform / "out" / "executed" / "10_study.ipynb")


def _outputs(path) -> str:
    """The text of every output of an executed notebook (not its code)."""
    import json

    cells = json.loads(path.read_text(encoding="utf-8"))["cells"]
    return json.dumps([c.get("outputs", []) for c in cells], ensure_ascii=False)
