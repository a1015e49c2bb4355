"""Graded panels in the design study: zone variables, every stage, the known optimum, write-back, bad input.

References:
- Rao, S. S., *Vibration of Continuous Systems*, 2nd ed. (2019), Table 11.1 (Euler–Bernoulli beam,
  fixed–fixed): first root β₁L = 4.7300, so f₁ = (4.7300² / 2π L²) √(E I / ρ A); for a solid circular strut
  I / A = d² / 16, hence the diameter that puts f₁ at a target f is d = 8π L² f / (4.7300² √(E / ρ)).
"""

from __future__ import annotations

import dataclasses
import math

import pytest
from tests.study.helpers_study import bcc_context
from tests.study.test_study_project import _nothing_written, _projects, _set_space

from latticecalc import materials
from latticecalc.physics import receiver
from latticecalc.physics.bands import zone_band_estimates
from latticecalc.physics.density import graded_panel_mass
from latticecalc.project import column_panel
from latticecalc.project.project import open_project
from latticecalc.study import evaluate as ev
from latticecalc.study.engine import Constraint, Objective, StudySettings, run_study
from latticecalc.study.requirement import Requirement
from latticecalc.study.space import DesignSpaceError, space_from_table
from latticecalc.study.workflow import apply_from_study, run_study_project
from latticecalc.study.zones import zone_heights, zone_values

#: identical zones: the frame models share one reduction between equal struts, so only round-off may differ
RTOL_SAME = 1e-12
#: the project reruns the same library calls on the same values: only round-off may differ
RTOL_RERUN = 1e-9
#: the search is stopped after 20 generations: each zone's diameter must land this close to the closed form
RTOL_DIAMETER = 1e-2
BETA1_L_FIXED_FIXED = 4.7300     # Rao 2019, Table 11.1 (rounded as printed)

UNIFORM = {"lattice.strut_diameter": 24.6}


def test_zone_heights_split_the_rows_as_evenly_as_they_allow():
    # common practice (the rule stated in study/zones.py): lower zones take the rows left over
    assert zone_heights(10, 3) == (4, 3, 3)
    assert zone_heights(10, 2) == (5, 5)
    assert zone_heights(7, 4) == (2, 2, 2, 1)


def test_spread_steps_the_diameter_around_the_panel_diameter():
    # the rule of study/zones.py: d_k = d (1 + s (k − (n + 1)/2)), k = 1 … n
    d = {"lattice.strut_diameter": 20.0, "lattice.added_mass": 100.0, "zones.count": 3,
         "zones.diameter_spread": 0.1, "zones.mass_spread": -0.5}
    assert zone_values(d, 9) == ((3, 18.0, 150.0), (3, 20.0, 100.0), (3, 22.0, 50.0))


def test_one_zone_is_the_uniform_design_at_every_stage():
    ctx = bcc_context(39.0)
    one = dict(UNIFORM, **{"zones.count": 1, "zones.diameter_spread": 0.3, "zones.mass_spread": 0.2})
    for stage in ev.STAGES:
        assert ev.design_fingerprint(stage, one, ctx) == ev.design_fingerprint(stage, UNIFORM, ctx)
    hand = ev.hand_stage(UNIFORM, ctx)
    assert ev.hand_stage(one, ctx) == hand
    assert ev.bloch_stage(one, ctx) == ev.bloch_stage(UNIFORM, ctx)
    assert ev.coupled_stage(one, ctx) == ev.coupled_stage(UNIFORM, ctx)


def test_two_equal_zones_give_the_uniform_numbers_through_the_graded_path():
    # a graded panel of identical zones is the uniform panel (physics: the same struts everywhere), so the
    # graded path of every stage must give the uniform numbers: per-zone bands, graded mass, zoned models
    ctx = bcc_context(39.0)
    two = dict(UNIFORM, **{"zones.count": 2, "zones.diameter_spread": 0.0})
    hand_u, hand_z = ev.hand_stage(UNIFORM, ctx), ev.hand_stage(two, ctx)
    assert hand_z["zones"] == 2.0
    for key, value in hand_u.items():
        assert hand_z[key] == pytest.approx(value, rel=RTOL_SAME), key
    bloch_u, bloch_z = ev.bloch_stage(UNIFORM, ctx), ev.bloch_stage(two, ctx)
    for key, value in bloch_u.items():
        assert bloch_z[key] == pytest.approx(value, rel=RTOL_SAME), key
    coupled_u, coupled_z = ev.coupled_stage(UNIFORM, ctx), ev.coupled_stage(two, ctx)
    for key, value in coupled_u.items():
        assert coupled_z[key] == pytest.approx(value, rel=RTOL_SAME, abs=1e-9), key


def _graded_design():
    """A two-zone design of the bcc study (diameter step 0.3), its hand stage and the pieces the sheets use."""
    import types
    import warnings

    ctx = bcc_context(39.0)
    design = dict(UNIFORM, **{"zones.count": 2, "zones.diameter_spread": 0.3, "zones.mass_spread": 0.0})
    d = ev.full_design(design, ctx)
    mats = ev._materials(d, ctx)
    column = ev._column(ctx)
    nx, ny = ev.panel_counts(d, ctx, column)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        cell, zoning = ev._zoned(d, ctx, ev._cell(d, ctx, mats), ny)
    return types.SimpleNamespace(ctx=ctx, design=design, hand=ev.hand_stage(design, ctx), d=d, mats=mats,
                                 column=column, nx=nx, ny=ny, cell=cell, zoning=zoning)


def test_graded_self_weight_outputs_are_the_stacked_zones():
    # the hand stage's self-weight margins are the column-panel sheet's (section 30) for a graded design: its
    # zones stacked bottom first (selfweight.graded_panel_self_weight; Gere & Goodno 2013, §2.3, bars in
    # segments [from memory]), not zone 1's cell over the full height (common practice: the study reruns the
    # sheet's own calls)
    import warnings

    from latticecalc import Q_
    from latticecalc.physics.density import relative_density
    from latticecalc.physics.selfweight import graded_panel_self_weight, panel_self_weight

    g = _graded_design()
    ctx, hand, mats, cell, zoning = g.ctx, g.hand, g.mats, g.cell, g.zoning
    sw_in = ctx.selfweight
    kw = dict(materials=mats, cells_wide=g.nx, cells_high=g.ny, cells_deep=int(g.d["panel.cells_deep"]),
              deflection_limit=Q_(sw_in["deflection_limit_mm"], "mm"), buckling_safety_factor=sw_in["safety_factor"],
              long_term=sw_in["long_term"], strut_end_condition=sw_in["strut_end_condition"],
              frame_end_condition=sw_in["frame_end_condition"], k_value=sw_in["k_value"])
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        sw = graded_panel_self_weight(cell, zoning=zoning, density_method="closed-form", **kw)
        zone1 = panel_self_weight(cell, density=relative_density(cell, "closed-form"), **kw)
    case = "with-frame" if "with-frame" in sw.shortening else "lattice-alone"
    shortening = 1.0 - float(sw.shortening[case].to("mm").m) / sw_in["deflection_limit_mm"]
    assert hand["shortening_margin"] == pytest.approx(shortening, rel=RTOL_RERUN)
    factors = [float(sw.strut_safety_factor[case].m)] + ([float(sw.frame_safety_factor.m)]
                                                         if sw.frame_safety_factor is not None else [])
    assert hand["buckling_margin"] == pytest.approx(min(factors) / sw_in["safety_factor"] - 1.0, rel=RTOL_RERUN)
    # the zones differ, so zone 1's cell over the full height would have given another shortening
    old = 1.0 - float(zone1.shortening[case].to("mm").m) / sw_in["deflection_limit_mm"]
    assert hand["shortening_margin"] != pytest.approx(old, rel=1e-3)


def test_graded_floor_outputs_are_the_sheets_zoned_estimates():
    # the hand stage's floor outputs for a graded design are the column-panel sheet's section 80 call
    # (receiver.zoned_receiver_estimates: each zone's resonating mass over its rows, derived, and Den Hartog
    # 1956 §3.3 from the sum), and the nearest-design sheet shows the same call (common practice: the study
    # reruns the sheet's own calls, so the two cannot drift)
    import types
    import warnings

    from latticecalc import Q_
    from latticecalc.study import shortfall

    g = _graded_design()
    ctx, hand, mats, cell, zoning, column, nx, ny = g.ctx, g.hand, g.mats, g.cell, g.zoning, g.column, g.nx, g.ny
    graded = g.design
    req = ctx.requirement
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        est = receiver.zoned_receiver_estimates(cell, zoning=zoning, material=mats["lattice"], nx=nx, ny=ny,
                                                column=column, faces=ctx.faces, direction=req.direction,
                                                required=Q_(list(req.required), "dB"), node_zones=ctx.node_zones)
    assert hand["mass_ratio"] == pytest.approx(est.mass_ratio, rel=RTOL_SAME)
    assert hand["il_hand"] == pytest.approx(est.value["mass_host_il"], rel=RTOL_SAME)
    assert hand["il_bound"] == pytest.approx(est.value["bound"], rel=RTOL_SAME)
    assert hand["dh_amplitude"] == pytest.approx(est.step("receiver.dh-amplitude").result.m, rel=RTOL_SAME)
    assert hand["il_margin"] == pytest.approx(est.value["mass_host_il"] - max(req.required), rel=RTOL_SAME)
    # the study's tuning: the zone tuning nearest the first peak
    tunings = [f.to("Hz").m for f in est.zone_tunings]
    assert hand["tuning"] == min(tunings, key=lambda f: abs(f / req.peaks[0] - 1.0))
    # the zones differ, so zone 1's cell over the full height would have given another μ
    zone1 = receiver.receiver_estimates(cell, material=mats["lattice"], nx=nx, ny=ny, column=column,
                                        faces=ctx.faces, direction=req.direction, node_zones=ctx.node_zones)
    assert hand["mass_ratio"] != pytest.approx(zone1.mass_ratio, rel=1e-3)
    shown = shortfall.floor_estimates(types.SimpleNamespace(design=graded), ctx, id_prefix="t")
    assert shown.mass_ratio == pytest.approx(hand["mass_ratio"], rel=RTOL_SAME)
    assert shown.value["mass_ratio_needed"] == pytest.approx(est.value["mass_ratio_needed"], rel=RTOL_SAME)
    assert "t.zone2.resonating-mass" in {s.id for s in shown.steps}


def test_search_finds_two_zones_each_tuned_to_its_peak(tmp_path):
    # two peaks 1.75 apart: a uniform band (upper over lower edge about 1.32 for this cell) cannot cover both
    # with their ± 2 % spread; two zones can. With no scatter (tolerances and the temperature range set to
    # nothing) the held band is the nominal one, whose lower edge is the clamped strut mode (struts bending node
    # to node), so the design nearest each peak that still covers it puts a zone's strut mode at the lower edge
    # of the peak's spread: d_k from the inverted clamped–clamped formula at p_k (1 − spread).
    peaks, spread = (32.0, 56.0), 0.02
    no_scatter = {"value": 1.0, "source": "test: no temperature scatter (invented)"}
    ctx = dataclasses.replace(
        bcc_context(39.0, node_zones="none"),
        requirement=Requirement(peaks=peaks, required=(10.0, 10.0), spread=spread, direction="normal",
                                source="test requirement (invented)"),
        tolerance={"modulus": 0.0, "diameter_mm": 0.0, "length_mm": 0.0, "density": 0.0},
        material_overrides={"tpu-90a-printed": {"modulus_low_factor": no_scatter, "modulus_high_factor": no_scatter}})
    space = space_from_table({"lattice.strut_diameter": {"low": "15 mm", "high": "45 mm"},
                              "zones.count": {"choices": [1, 2]}, "zones.diameter_spread": {"low": 0.0, "high": 1.0}})
    settings = StudySettings(screen=16, population=12, generations=20, seed=3, stages=("hand",),
                             objectives=(Objective(output="peak_detuning", sense="min"),),
                             constraints=(Constraint(output="fits"), Constraint(output="coverage_margin")))
    result = run_study(space, ctx, settings=settings, store=tmp_path / "evaluations")
    feasible = [r for r in result.records if r.feasible("hand")]
    uniform = [r for r in result.records if r.design["zones.count"] == 1]
    assert uniform and not any(r.feasible("hand") for r in uniform)          # no uniform design covers both
    best = min(feasible, key=lambda r: r.outputs["hand"]["peak_detuning"]).outputs["hand"]
    assert best["zones"] == 2.0 and best["coverage_margin"] >= 0

    mat = materials.get("tpu-90a-printed")
    E = mat.dynamic_modulus().to("Pa").m
    rho = mat.density.to("kg/m^3").m
    L = 0.350 * math.sqrt(3) / 2                   # bcc: corner to centre, a √3 / 2 (geometry)
    for k, p in enumerate(peaks, start=1):
        d_closed = 8 * math.pi * L**2 * p * (1 - spread) / (BETA1_L_FIXED_FIXED**2 * math.sqrt(E / rho)) * 1000.0
        assert math.isclose(best[f"zone{k}_strut_diameter"], d_closed, rel_tol=RTOL_DIAMETER), (k, best, d_closed)


def test_graded_design_written_back_reruns_to_the_study_numbers(tmp_path):
    cp, ds = _projects(tmp_path)
    _set_space(ds, '"lattice.strut_diameter" = { low = "3 mm", high = "15 mm" }\n'
                   '"lattice.added_mass" = { low = "0 g", high = "200 g" }\n'
                   '"zones.count" = { choices = [1, 2] }\n'
                   '"zones.diameter_spread" = { low = -0.3, high = 0.3 }\n'
                   '"zones.mass_spread" = { low = -0.5, high = 0.5 }')
    report = run_study_project(ds, serial=True)
    built = [r for r in report.result.records if r.outputs["hand"].get("error", 1) == 0
             and r.outputs["hand"].get("fits", -1) > 0]
    graded = next(r for r in built if r.design["zones.count"] == 2)
    uniform = next(r for r in built if r.design["zones.count"] == 1)
    changed = apply_from_study(ds, graded.id, cp)
    assert "panel.zones" in changed and "zones.count" not in changed

    proj = open_project(cp)
    inp = proj.inputs
    assert graded.id in inp.entry("panel.zones").source
    design = column_panel.design_from_inputs(inp, folder=proj.folder)
    hand = graded.outputs["hand"]
    assert len(design.zoning.zones) == 2
    for k, z in enumerate(design.zoning.zones, start=1):
        assert z.cells_high == hand[f"zone{k}_cells_high"]
        assert z.strut_diameter.to("mm").m == pytest.approx(hand[f"zone{k}_strut_diameter"], rel=RTOL_RERUN)
    zones = column_panel.bloch_options(proj, design)["node_zones"]
    bands = zone_band_estimates(cell=design.cell, zoning=design.zoning, lattice_material=design.lattice,
                                frame_material=design.frame, modulus_tolerance=inp["tolerance.modulus"],
                                diameter_tolerance=inp["tolerance.strut_diameter"],
                                length_tolerance=inp["tolerance.strut_length"],
                                density_tolerance=inp["tolerance.density"], node_zones=zones)
    for k, band in enumerate(bands, start=1):
        assert band.value["f_low"].to("Hz").m == pytest.approx(hand[f"zone{k}_band_low"], rel=RTOL_RERUN)
        assert band.value["f_high"].to("Hz").m == pytest.approx(hand[f"zone{k}_band_high"], rel=RTOL_RERUN)
        assert band.value["f_low_max"].to("Hz").m == pytest.approx(hand[f"zone{k}_held_low"], rel=RTOL_RERUN)
    mass = graded_panel_mass(design.cell, zoning=design.zoning, materials=design.materials,
                             cells_wide=design.cells_wide, cells_high=design.cells_high,
                             cells_deep=design.cells_deep, method="closed-form")
    assert mass.value.to("kg").m == pytest.approx(hand["panel_mass"], rel=RTOL_RERUN)
    setup = column_panel.receiver_setup(proj, design)
    # the resonating mass is a sum over the struts (Rayleigh): each zone's μ over its share of the rows
    mu = sum(receiver.receiver_estimates(design.zoning.zone_cell(design.cell, k), material=design.lattice,
                                         nx=design.cells_wide, ny=design.cells_high, column=setup.column,
                                         faces=setup.placement.faces, direction=setup.direction,
                                         node_zones=zones).mass_ratio * z.cells_high
             for k, z in enumerate(design.zoning.zones)) / design.cells_high
    assert mu == pytest.approx(hand["mass_ratio"], rel=RTOL_RERUN)

    # a uniform design written over it clears the zones
    changed = apply_from_study(ds, uniform.id, cp)
    assert open_project(cp).inputs.get("panel.zones") in (None, [])
    assert column_panel.design_from_inputs(open_project(cp).inputs, folder=cp).zoning is None


@pytest.mark.parametrize("space, name, expected, got", [
    ('"zones.count" = { choices = [1, 2] }\n"zones.diameter_spread" = { low = 0.4, high = -0.2 }',
     "space.zones.diameter_spread", "low <= high", "low 0.4, high -0.2"),
    ('"zones.count" = { choices = [0, 2] }', "space.zones.count", "[1, 2, …]", "0"),
    ('"zones.count" = { choices = [1, 3] }\n"zones.diameter_spread" = { low = -1.2, high = 0.5 }',
     "space.zones.diameter_spread", "|spread| < 1", "low -1.2, high 0.5"),
    ('"zones.count" = { choices = [2] }\n"zones.mass_spread" = { low = 0, high = 2.5 }',
     "space.zones.mass_spread", "|spread| <= 2", "low 0, high 2.5"),
])
def test_bad_zone_variables_are_named_and_write_nothing(tmp_path, space, name, expected, got):
    _, ds = _projects(tmp_path)
    _set_space(ds, space)
    with pytest.raises(DesignSpaceError) as info:
        run_study_project(ds, serial=True)
    assert info.value.input_name == name
    assert expected in info.value.expected and got in info.value.got
    assert _nothing_written(ds)
