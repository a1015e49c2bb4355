"""What the nearest designs of a study lack: each failing check in its own terms and by how much, and a conclusion.

A study that finds no design meeting every check must say why: which designs came nearest, which of their
checks fail, and by how much in the quantity the check is about (dB of insertion loss at the peak, kg over
the mass limit, Hz by which the held band misses the peak), not only the name of a failed constraint. The
study's constraints are margins (fractions of a limit, dB); each is turned back here into the value found
and its limit, from the evaluated outputs and the study's context, so a row's shortfall is the evaluated
margin restated, never a recomputation of the physics.

Every designed row also carries the requirement itself (the insertion loss at the peak, from the coupled
model when the design reached it, otherwise the hand estimate), because the hand and Bloch stages do not
constrain it: a design may pass them and still leave the floor as loud as before.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from latticecalc.study.engine import DesignRecord, StudyResult, StudySettings
from latticecalc.study.evaluate import STAGES
from latticecalc.study.requirement import StudyContext
from latticecalc.study.space import DesignSpace
from latticecalc.units import format_number

#: How many nearest designs a study shows (as the engine's nearest set).
NEAREST_COUNT = 5
#: Column heads of the nearest designs' table (:meth:`Shortfall.row`).
COLUMNS = ["design", "fails at", "check", "found", "limit or requirement", "short by"]


@dataclass(frozen=True, kw_only=True)
class Shortfall:
    """One check a design fails (or the requirement it misses): the value found, its limit, and by how much.

    ``short_by`` is in ``unit`` (``dB``, ``kg``, ``mm``, ``Hz`` or ``""`` for a factor); None where the
    check has no amount (no complete gap, a cell that does not fit, a design the model refused).
    """

    design: str
    stage: str
    check: str
    what: str
    found: str
    limit: str
    short_by: float | None
    unit: str

    def row(self) -> list[str]:
        """(design, stage, check, found, limit, short by) as table text."""
        amount = "—" if self.short_by is None else f"{format_number(self.short_by, 3)} {self.unit}".strip()
        # the requirement row of a design not taken to the floor check: no stage checked it
        stage = "requirement (hand estimate)" if self.check == "il_margin" else self.stage
        return [self.design, stage, self.what, self.found, self.limit, amount]


def _constraints(settings: StudySettings, stage: str):
    return {"hand": settings.constraints, "bloch": settings.bloch_constraints,
            "coupled": settings.coupled_constraints}[stage]


#: What each study check is about, in words (the table's "check" column).
WHAT = {"coverage_margin": "hand stop band covers the peak",
        "coverage_margin_bloch": "computed (Bloch) gap covers the peak",
        "buckling_margin": "buckling safety factor under self-weight",
        "shortening_margin": "shortening under self-weight", "mass_margin": "panel mass",
        "thickness_margin": "panel thickness", "il_margin_coupled": "insertion loss at the floor (coupled model)"}


def _fails_at(record: DesignRecord) -> str | None:
    """The stage at which a design fails a check (None: it failed none of the stages it reached)."""
    for stage in STAGES:
        if record.lacks.get(stage):
            return stage
    return None


def nearest_designs(result: StudyResult, settings: StudySettings, space: DesignSpace, *, count: int = NEAREST_COUNT,
                    apart: float = 0.05) -> list[DesignRecord]:
    """The designs that came nearest to meeting every check, nearest first (none when a design met them all).

    The engine's nearest designs (distinct designs at the last stage run) come first; when fewer than
    ``count`` are distinct there, the designs that failed at an earlier stage follow, the furthest stage
    first and, within a stage, the smallest total violation (the engine's measure), each at least ``apart``
    from every design listed in the unit cube of the space (five near-copies would say one thing five times).
    A design that passed every stage it reached but was not taken further is not known to fail, so it is not
    listed.
    """
    if result.met:
        return []
    chosen = [result.record(i) for i in result.nearest]
    seen = {r.id for r in chosen}
    rest = [r for r in result.records if r.id not in seen and _fails_at(r) is not None]

    def key(r: DesignRecord) -> tuple:
        stage = _fails_at(r)
        out = r.outputs[stage]
        amount = math.inf if out.get("error", 0.0) > 0 else sum(
            c.shortfall(out.get(c.output)) for c in _constraints(settings, stage))
        return (-STAGES.index(stage), amount, r.id)

    for r in sorted(rest, key=key):
        if len(chosen) >= count:
            break
        x = space.encode(r.design)
        if all(np.max(np.abs(x - space.encode(c.design))) >= apart for c in chosen):
            chosen.append(r)
    return chosen[:count]


def _hz(x: float) -> str:
    return f"{format_number(x, 4)} Hz"


def _coverage(record: DesignRecord, stage: str, low_key: str, high_key: str, margin_key: str,
              context: StudyContext, what: str) -> Shortfall:
    out = record.outputs[stage]
    req = context.requirement
    s = req.spread
    low, high = out.get(low_key), out.get(high_key)
    # the governing peak: the one whose margin the study's (smallest) coverage margin is; a graded design names
    # it, with the zone that holds it best (the band given is that zone's)
    suffix = "" if low_key == "held_low" else "_bloch"
    if f"coverage_peak{suffix}" in out:
        k = int(out[f"coverage_peak{suffix}"]) - 1
        zone = f"zone {int(out[f'coverage_zone{suffix}'])} (of {int(record.outputs['hand']['zones'])}, the best for " \
               "this peak): "
    else:
        per_peak = [min(p * (1 - s) - low, high - p * (1 + s)) / p for p in req.peaks]
        k = int(np.argmin(per_peak))
        zone = ""
    p = req.peaks[k]
    margin = float(out[margin_key])
    nominal = {"held_low": ("band_low", "band_high", "band"), "gap_held_low": ("gap_low", "gap_high", "gap")}[low_key]
    found = f"{zone}{nominal[2]} {_hz(out[nominal[0]])} – {_hz(out[nominal[1]])}; held under scatter: " + (
        f"{_hz(low)} – {_hz(high)}" if low < high else f"none ({_hz(low)} over {_hz(high)})")
    return Shortfall(design=record.id, stage=stage, check=margin_key, what=what, found=found,
                     limit=f"peak {_hz(p)} ± {format_number(100 * s, 3)} %: {_hz(p * (1 - s))} – {_hz(p * (1 + s))}",
                     short_by=-margin * p, unit="Hz")


def check_shortfall(record: DesignRecord, stage: str, name: str, context: StudyContext) -> Shortfall:
    """The failed check ``name`` of ``record`` at ``stage``: what it is about, value found, limit, how far off."""
    out = record.outputs[stage]
    lim = context.limits
    sw = context.selfweight

    def make(what: str, found: str, limit: str, short_by: float | None, unit: str) -> Shortfall:
        return Shortfall(design=record.id, stage=stage, check=name, what=what, found=found, limit=limit,
                         short_by=short_by, unit=unit)

    if name == "error":
        return make("the model refused the design", str(out.get("message", "")) or "error", "a design the model takes",
                    None, "")
    m = out.get(name)
    if name not in ("fits", "has_gap") and not (isinstance(m, float) and math.isfinite(m)):
        # a design that does not fit the column has no band, mass or self-weight to compare
        return make(WHAT.get(name, name), "not evaluated", "a value within its limits", None, "")
    if name == "fits":
        return make("cells fit the column face and height",
                    f"{format_number(out.get('cells_wide', 0), 3)} across × "
                    f"{format_number(out.get('cells_high', 0), 3)} up",
                    "at least 1 × 1", None, "")
    if name == "coverage_margin":
        return _coverage(record, stage, "held_low", "held_high", name, context, WHAT[name])
    if name == "coverage_margin_bloch":
        return _coverage(record, stage, "gap_held_low", "gap_held_high", name, context, WHAT[name])
    if name == "has_gap":
        return make("the computed (Bloch) bands have a complete gap", "no complete gap", "a complete gap", None, "")
    if name == "buckling_margin":
        sf = float(sw["safety_factor"])
        return make(WHAT[name], format_number((1 + m) * sf, 3),
                    f"{format_number(sf, 3)} required", -m * sf, "")
    if name == "shortening_margin":
        d = float(sw["deflection_limit_mm"])
        return make(WHAT[name], f"{format_number((1 - m) * d, 3)} mm", f"{format_number(d, 3)} mm",
                    -m * d, "mm")
    if name == "mass_margin":
        ml = float(lim["max_panel_mass_kg"])
        return make(WHAT[name], f"{format_number(out['panel_mass'], 4)} kg", f"{format_number(ml, 4)} kg", -m * ml,
                    "kg")
    if name == "thickness_margin":
        tl = float(lim["max_thickness_mm"])
        return make(WHAT[name], f"{format_number(out['thickness'], 4)} mm", f"{format_number(tl, 4)} mm",
                    -m * tl, "mm")
    if name == "il_margin_coupled":
        req = context.requirement
        k = int(np.argmin([out[f"il_peak{i}"] - r for i, r in enumerate(req.required, start=1)])) + 1
        return make(f"insertion loss at the floor, peak {_hz(req.peaks[k - 1])} (coupled model, least over its spread)",
                    f"{format_number(out[f'il_peak{k}'], 3)} dB",
                    f"{format_number(req.required[k - 1], 3)} dB required",
                    -m, "dB")
    return make(name, format_number(m, 3) if isinstance(m, float) else str(m), "within its limits", None, "")


def requirement_shortfall(record: DesignRecord, context: StudyContext) -> Shortfall | None:
    """The requirement for a design not taken to the coupled model: hand insertion loss against the largest required.

    None when the design reached the coupled model (its coupled check states the requirement) or has no
    hand estimate (it does not fit, or the model refused it).
    """
    hand = record.outputs.get("hand", {})
    if "coupled" in record.outputs or "il_margin" not in hand:
        return None
    req = context.requirement
    m = float(hand["il_margin"])
    return Shortfall(design=record.id, stage="hand", check="il_margin",
                     what="insertion loss at the peak (absorber tuned to the peak on a column moving as a mass)",
                     found=f"{format_number(hand['il_hand'], 3)} dB", limit=f"{format_number(max(req.required), 3)} dB "
                     "required", short_by=max(0.0, -m), unit="dB")


def shortfalls(records: Sequence[DesignRecord], settings: StudySettings, context: StudyContext) -> list[Shortfall]:
    """Every failed check of each design (at the stage it fails) and the requirement each misses, in order."""
    rows = []
    for r in records:
        stage = _fails_at(r)
        if stage is not None:
            names = r.lacks[stage]
            rows += [check_shortfall(r, stage, n, context) for n in names]
        extra = requirement_shortfall(r, context)
        if extra is not None:
            rows.append(extra)
    return rows


@dataclass(frozen=True, kw_only=True)
class MassRatioReach:
    """How far the evaluated designs' resonating mass ratio reaches, against what the requirement needs."""

    needed: float
    within_limits: DesignRecord | None
    largest: DesignRecord | None
    lightest_enough: DesignRecord | None


def mass_ratio_reach(result: StudyResult, needed: float) -> MassRatioReach:
    """The largest hand mass ratio μ among designs within the mass and thickness limits, and over all designs.

    ``lightest_enough`` is the lightest design whose μ reaches ``needed`` (None when none does).
    """
    def mu(r: DesignRecord) -> float:
        return float(r.outputs["hand"].get("mass_ratio", -math.inf))

    have = [r for r in result.records if r.outputs["hand"].get("error", 1.0) == 0 and "mass_ratio" in r.outputs["hand"]]
    within = [r for r in have if r.outputs["hand"].get("mass_margin", -1.0) >= 0
              and r.outputs["hand"].get("thickness_margin", -1.0) >= 0]
    enough = [r for r in have if mu(r) >= needed]
    return MassRatioReach(needed=needed, within_limits=max(within, key=mu, default=None),
                          largest=max(have, key=mu, default=None),
                          lightest_enough=min(enough, key=lambda r: r.outputs["hand"]["panel_mass"], default=None))


def _mu_text(r: DesignRecord) -> str:
    h = r.outputs["hand"]
    return f"μ = {format_number(h['mass_ratio'], 3)} ({r.id}, panel {format_number(h['panel_mass'], 3)} kg)"


def conclusion(result: StudyResult, settings: StudySettings, context: StudyContext, *,
               nearest: Sequence[DesignRecord], mass_ratio_needed: float | None = None,
               requirement_project: str = "the column-panel project") -> str:
    """The study's finding in plain words: what met the requirement, or why nothing did and what it would take."""
    req = context.requirement
    n_hand = len(result.records)
    passed = {s: sum(1 for r in result.records if r.feasible(s)) for s in STAGES}
    reached = {s: sum(1 for r in result.records if s in r.outputs) for s in STAGES}
    flow = f"{passed['hand']} of the {n_hand} designs evaluated by hand pass every hand check"
    if reached["bloch"]:
        flow += f"; {reached['bloch']} of them were checked with the reduced Bloch model and {passed['bloch']} pass"
    if reached["coupled"]:
        flow += f"; {reached['coupled']} were checked at the floor with the coupled model and {passed['coupled']} pass"
    if result.met:
        return (f"{len(result.pareto)} design(s) meet every check of the {result.final_stage} stage ({flow}). "
                "The Pareto set above trades panel mass against the insertion-loss margin; its lightest design is "
                f"{result.pareto[0]}.")
    text = f"No design meets every check of the {result.final_stage} stage: {flow}."
    if result.final_stage != "coupled":
        text += " The study stopped before the floor check, so no design was shown to meet the required insertion loss."
    if nearest:
        first = nearest[0]
        stage = _fails_at(first)
        lacks = [check_shortfall(first, stage, n, context) for n in first.lacks[stage]] if stage else []
        text += (f" The nearest, {first.id}, fails at the {stage} stage: "
                 + "; ".join(f"{s.what}: found {s.found}; limit {s.limit}" for s in lacks) + ".")
    if mass_ratio_needed is not None:
        reach = mass_ratio_reach(result, mass_ratio_needed)
        text += (f" The required {format_number(max(req.required), 3)} dB at the peak needs a resonating mass ratio "
                 f"of about μ = {format_number(mass_ratio_needed, 3)} (absorber tuned to the peak, column moving as a "
                 "mass there; Den Hartog 1956).")
        if reach.within_limits is not None:
            text += f" Within the mass and thickness limits the designs reach at most {_mu_text(reach.within_limits)}."
        if reach.lightest_enough is not None:
            text += f" The lightest design that reaches the needed ratio is {_mu_text(reach.lightest_enough)}."
        elif reach.largest is not None:
            text += f" No evaluated design reaches it; the largest is {_mu_text(reach.largest)}."
    text += (f" Nothing from this study is to be written into {requirement_project}: its design is not a feasible "
             "design of this study, and its own floor check states its verdict.")
    return text


def floor_estimates(record: DesignRecord, context: StudyContext, *, id_prefix: str):
    """The hand estimates of what a design's panels do to the column (μ, Den Hartog, the bound, the μ needed).

    The same call the hand stage makes (:func:`latticecalc.physics.receiver.receiver_estimates`; a graded
    design's zone by zone, :func:`latticecalc.physics.receiver.zoned_receiver_estimates`, as the column-panel
    sheet's section 80 shows them), with the requirement, so the sheet shows the mass ratio the required loss
    needs with its formula and source.
    """
    import warnings

    from latticecalc import Q_
    from latticecalc.physics import receiver
    from latticecalc.study import evaluate

    d = evaluate.full_design(record.design, context)
    mats = evaluate._materials(d, context)
    column = evaluate._column(context)
    nx, ny = evaluate.panel_counts(d, context, column)
    req = context.requirement
    kw = dict(material=mats["lattice"], nx=nx, ny=ny, column=column, faces=context.faces, direction=req.direction,
              required=Q_(list(req.required), "dB"), node_zones=context.node_zones, id_prefix=id_prefix)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")       # slenderness warnings: the study's checks carry the verdict
        cell, zoning = evaluate._zoned(d, context, evaluate._cell(d, context, mats), ny)
        return receiver.receiver_estimates(cell, zoning=zoning, **kw)
