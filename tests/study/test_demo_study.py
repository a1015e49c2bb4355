"""The demo's design study states feasibility honestly: what its package calls feasible, nearest and short by.

The demo study (calcs/quillon-yard-study) is the session's quick demo (``quick_demo`` in tests/conftest.py:
built by ``latticecalc demo``'s own code, beside the demo survey and column-panel projects it reads), with the
search counts cut down so the test stays quick: same space, requirement, limits and seed, fewer designs. Every
statement of its sheet is compared with the evaluated constraint values it rests on.
"""

from __future__ import annotations

import json
import math
import shutil

import pytest
from tests.helpers import package_paths

from latticecalc import Q_
from latticecalc.physics import receiver
from latticecalc.project.demo import demo_projects
from latticecalc.study import shortfall
from latticecalc.study.engine import Constraint, DesignRecord, StudyResult, StudySettings
from latticecalc.study.project import load_study
from latticecalc.study.workflow import run_study_project
from latticecalc.units import format_number

pytestmark = pytest.mark.slow

#: a shortfall restates an evaluated margin in the check's own unit: only round-off may differ (common practice)
RTOL = 1e-12


@pytest.fixture(scope="module")
def demo_study(quick_demo, tmp_path_factory):
    """A copy of the quick demo's study, run and exported, beside copies of the survey and C3 projects it reads
    (the study reruns its search here, writing beside its evaluations)."""
    root = tmp_path_factory.mktemp("demo")
    wanted = {"quillon-yard-survey", "quillon-yard-c3", "quillon-yard-study"}
    assert wanted <= {p.folder for p in demo_projects()}, "the demo lists its design study (calcs/demo.toml)"
    for name in wanted:
        shutil.copytree(quick_demo.folder / name, root / name)
    return root / "quillon-yard-study"


def _restated(s: shortfall.Shortfall, record: DesignRecord, context) -> float:
    """The evaluated margin behind a row, in the row's unit (the sheet must not recompute it)."""
    out = record.outputs[s.stage]
    req = context.requirement
    if s.check == "il_margin":
        return -out["il_margin"]
    if s.check == "il_margin_coupled":
        return -out["il_margin_coupled"]
    if s.check in ("coverage_margin", "coverage_margin_bloch"):
        return -out[s.check] * req.peaks[0]              # the demo has one targeted peak
    if s.check == "mass_margin":
        return -out["mass_margin"] * context.limits["max_panel_mass_kg"]
    if s.check == "thickness_margin":
        return -out["thickness_margin"] * context.limits["max_thickness_mm"]
    if s.check == "buckling_margin":
        return -out["buckling_margin"] * context.selfweight["safety_factor"]
    if s.check == "shortening_margin":
        return -out["shortening_margin"] * context.selfweight["deflection_limit_mm"]
    raise AssertionError(f"a row with an amount for an unexpected check {s.check!r}")


def test_demo_study_states_feasibility_and_shortfalls_as_evaluated(demo_study):
    study = load_study(demo_study)
    res = run_study_project(demo_study, serial=True).result
    settings, ctx = study.settings, study.context
    cons = {"hand": settings.constraints, "bloch": settings.bloch_constraints, "coupled": settings.coupled_constraints}

    # no design is called feasible at a stage while one of that stage's constraint values lies outside its limits
    for r in res.records:
        for stage, outs in r.outputs.items():
            failing = [c.output for c in cons[stage] if c.shortfall(outs.get(c.output)) > 0]
            assert r.feasible(stage) == (not failing and outs.get("error", 0.0) == 0), (r.id, stage, failing)
    for did in res.pareto:
        assert res.record(did).feasible(res.final_stage)
        assert res.record(did).outputs[res.final_stage].get("il_margin_coupled", 0.0) >= 0

    nearest = shortfall.nearest_designs(res, settings, study.space)
    if res.met:
        assert nearest == []
        return
    assert nearest, "a study that meets nothing shows the nearest designs"
    rows = shortfall.shortfalls(nearest, settings, ctx)
    for r in nearest:
        stage = next(s for s in ("hand", "bloch", "coupled") if r.lacks.get(s))
        listed = {s.check for s in rows if s.design == r.id and s.stage == stage and s.check != "il_margin"}
        assert listed == set(r.lacks[stage]), r.id            # every failed check, and only those, is listed
    for s in rows:
        r = res.record(s.design)
        if s.short_by is not None:
            assert s.short_by == pytest.approx(_restated(s, r, ctx), rel=RTOL), (s.design, s.check)
            assert s.short_by > 0 or s.check == "il_margin"      # a failed check falls short by something

    # the plain-words conclusion: nothing met, and the mass ratio it quotes is the one the sheet's step shows
    est = shortfall.floor_estimates(nearest[0], ctx, id_prefix="t")
    needed = est.value["mass_ratio_needed"]
    text = shortfall.conclusion(res, settings, ctx, nearest=nearest, mass_ratio_needed=needed,
                                requirement_project="quillon-yard-c3")
    assert text.startswith(f"No design meets every check of the {res.final_stage} stage")
    # Den Hartog (1956), §3.2 two-mass absorber: the formula the receiver sheet shows, solved for μ
    il = receiver.IL_MASS_HOST.evaluate({"mu": Q_(needed, ""), "eta_a": Q_(_lattice_loss_factor(ctx, nearest[0]), "")})
    assert float(Q_(il).m) == pytest.approx(max(ctx.requirement.required), rel=1e-9)
    assert f"μ = {format_number(needed, 3)}" in text
    assert "not a feasible design of this study" in text


def _lattice_loss_factor(ctx, record) -> float:
    from latticecalc.study import evaluate

    return float(evaluate._materials(evaluate.full_design(record.design, ctx), ctx)["lattice"].loss_factor)


def test_demo_study_package_shows_the_nearest_designs_and_the_verdict(demo_study):
    html_path, json_path = package_paths(demo_study)     # run and exported as the demo does it
    data = json.loads(json_path.read_text())
    results = {r["id"]: r for r in data["results"]}
    study = load_study(demo_study)
    res = run_study_project(demo_study, serial=True).result
    assert results["study.pareto-count"]["value"] == len(res.pareto)
    html = html_path.read_text()
    if not res.met:
        assert "No design meets every check" in html
        for s in shortfall.shortfalls(shortfall.nearest_designs(res, study.settings, study.space), study.settings,
                                      study.context):
            assert s.design in html and s.row()[-1] in html


def test_coupled_shortfall_is_the_evaluated_margin():
    """A design checked at the floor and short of the requirement: the row restates the coupled margin in dB."""
    from tests.study.helpers_study import bcc_context

    ctx = bcc_context(39.0)
    rec = DesignRecord(id="Dtest", design={"cell.width": 300.0}, lacks={"hand": (), "bloch": (),
                                                                        "coupled": ("il_margin_coupled",)},
                       outputs={"hand": {"panel_mass": 20.0, "il_margin": -9.5, "il_hand": 0.5, "mass_ratio": 0.01},
                                "bloch": {"has_gap": 1.0}, "coupled": {"il_peak1": 0.75, "il_margin_coupled": -9.25}})
    res = StudyResult(records=(rec,), pareto=(), nearest=("Dtest",), computed=(), counts={}, seconds={},
                      executor="serial", final_stage="coupled")
    settings = StudySettings(coupled_constraints=(Constraint(output="il_margin_coupled"),))
    rows = shortfall.shortfalls([rec], settings, ctx)
    assert [(s.check, s.short_by, s.unit) for s in rows] == [("il_margin_coupled", 9.25, "dB")]
    assert math.isclose(rows[0].short_by, ctx.requirement.required[0] - 0.75)      # 10 dB required (helpers_study)
    assert rows[0].found == "0.75 dB" and rows[0].limit == "10 dB required"
    text = shortfall.conclusion(res, settings, ctx, nearest=[rec])
    assert text.startswith("No design meets every check of the coupled stage") and "Dtest" in text


def test_design_that_does_not_fit_is_listed_without_invented_amounts():
    """A cell wider than the column face has no band, mass or self-weight: its rows say so and claim no amount."""
    from tests.study.helpers_study import bcc_context

    ctx = bcc_context(39.0)
    settings = StudySettings()
    out = {"fits": -1.0, "cells_wide": 0.0, "cells_high": 7.0, "thickness": 500.0, "error": 0.0}
    lacks = tuple(c.output for c in settings.constraints if c.shortfall(out.get(c.output)) > 0)
    rec = DesignRecord(id="Dwide", design={"cell.width": 500.0}, outputs={"hand": out}, lacks={"hand": lacks})
    rows = shortfall.shortfalls([rec], settings, ctx)
    assert [s.check for s in rows] == list(lacks)            # every failed check, no requirement row (no estimate)
    assert all(s.short_by is None for s in rows if s.check != "thickness_margin")
    assert rows[0].found == "0 across × 7 up"
