"""Staged evaluation of one design, cheapest first: hand estimates, reduced Bloch model, coupled column model.

Each stage is a pure function of a design (variable name -> plain value) and the study's
:class:`~latticecalc.study.requirement.StudyContext`, returning plain numbers (a mapping of output name
to float). No physics is written here: each stage calls the kit's physics functions (``physics/beams``,
``bands``, ``density``, ``selfweight``, ``receiver``, ``bloch``) the way the column-panel notebooks do, so
a design written back into a project reruns to the same numbers.

:func:`evaluate_stage` is the one entry point; it goes through the result cache
(:func:`latticecalc.cache.cached_arrays`) keyed by :func:`design_fingerprint`, so a rerun, a resumed
study or a widened range computes only designs it has not seen. It returns whether it computed, so a
study can show (and a test can check) that nothing is evaluated twice.
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Mapping, Sequence
from pathlib import Path
from typing import Any

import numpy as np

from latticecalc.cache import cached_arrays, fingerprint
from latticecalc.errors import LatticeCalcError
from latticecalc.study.requirement import StudyContext

#: Stages in the order a design meets them.
STAGES = ("hand", "bloch", "coupled")
#: Bumped when a stage's outputs change meaning, so stale cached evaluations are not reused.
MODEL_VERSION = "study-6"


def full_design(design: Mapping[str, Any], context: StudyContext) -> dict[str, Any]:
    """The design with every value the space does not vary taken from the base project.

    Zone variables are made canonical (:func:`latticecalc.study.zones.canonical`): a one-zone design is the
    uniform design, with the same fingerprint and the same evaluation.
    """
    from latticecalc.study.zones import canonical

    out = dict(context.base)
    out.update(design)
    return canonical(out)


def design_fingerprint(stage: str, design: Mapping[str, Any], context: StudyContext) -> str:
    """SHA-256 of the stage, the full design and the context (requirement, column, limits, numerics)."""
    return fingerprint(MODEL_VERSION, stage, full_design(design, context), context)


# --------------------------------------------------------------------------------------------------------
# objects rebuilt from plain data (in whichever process evaluates)
# --------------------------------------------------------------------------------------------------------
def _materials(d: Mapping[str, Any], context: StudyContext) -> dict[str, Any]:
    from latticecalc import materials

    over = context.material_overrides or None
    return {"lattice": materials.get(d["lattice.material"], overrides=over),
            "frame": materials.get(d["frame.material"], overrides=over)}


def _cell(d: Mapping[str, Any], context: StudyContext, mats: Mapping[str, Any]):
    from latticecalc import Q_, materials
    from latticecalc.physics.cells import build_cell

    kind = d["cell.kind"]
    framed = bool(d["frame.enabled"]) and kind != "simple-cubic"
    cell = build_cell(kind, cell_width=Q_(d["cell.width"], "mm"), strut_diameter=Q_(d["lattice.strut_diameter"], "mm"),
                      frame_diameter=Q_(d["frame.strut_diameter"], "mm") if framed else None)
    wall = float(d.get("frame.wall_thickness") or 0.0)
    if framed and wall > 0:
        cell = cell.with_wall_thicknesses(frame=Q_(wall, "mm"))
    added = None
    if float(d.get("lattice.added_mass") or 0.0) > 0:
        from latticecalc.physics.added_mass import added_mass_sphere

        added = added_mass_sphere(mass=Q_(d["lattice.added_mass"], "g"),
                                  material=materials.get(d["lattice.added_mass_material"],
                                                         overrides=context.material_overrides or None),
                                  strut_diameter=Q_(d["lattice.strut_diameter"], "mm"))
        cell = cell.with_point_mass("lattice", mass=added.value, rotary_inertia=added.rotary_inertia)
    return cell


def _zoned(d: Mapping[str, Any], context: StudyContext, cell: Any, ny: int) -> tuple[Any, Any]:
    """(the cell the sheets use, the zoning): a graded design's zone 1 cell and zones, or (cell, None).

    The column-panel project takes zone 1's cell as its cell (``column_panel.design_from_inputs``); the zoned
    hand checks (the bands, the mass, self-weight, the receiver estimates) take each zone's cell from it, as its
    sheets do.
    """
    from latticecalc.study.zones import zoning

    zn = zoning(d, ny, material_overrides=context.material_overrides)
    return (cell, None) if zn is None else (zn.zone_cell(cell, 0), zn)


def _column(context: StudyContext):
    from latticecalc import Q_, materials
    from latticecalc.physics.column import Column

    c = context.column
    opt = {}
    if c.get("head_translation_N_per_m") is not None:
        opt["head_translation"] = Q_(c["head_translation_N_per_m"], "N/m")
    if c.get("head_rotation_N_m") is not None:
        opt["head_rotation"] = Q_(c["head_rotation_N_m"], "N*m")
    return Column(shape=c["shape"], width=Q_(c["width_m"], "m"),
                  depth=Q_(c["depth_m"], "m") if c.get("depth_m") is not None else None,
                  height=Q_(c["height_m"], "m"),
                  material=materials.get(c["material"], overrides=context.material_overrides or None),
                  head_mass=Q_(c["head_mass_kg"], "kg"), head=c["head"], **opt)


def panel_counts(d: Mapping[str, Any], context: StudyContext, column: Any) -> tuple[int, int]:
    """Cells across the narrowest carrying face and up the column above the panels' base (whole cells)."""
    a = float(d["cell.width"]) / 1000.0
    width = min(column.face_width[f] for f in context.faces)
    height = float(context.column["height_m"]) - float(context.base_height_m)
    return int(math.floor(width / a + 1e-9)), int(math.floor(height / a + 1e-9))


def _levels(text: str, ny: int) -> tuple[int, ...]:
    t = str(text).strip().lower()
    if t == "all":
        return tuple(range(ny + 1))
    if t == "ends":
        return (0, ny)
    return tuple(lv for lv in (int(x) for x in t.split(",") if x.strip()) if lv <= ny)


def _peak_margins(low: float, high: float, context: StudyContext) -> list[float]:
    """Margin of the band [low, high] around each peak's spread (fraction of the peak; negative: not covered)."""
    req = context.requirement
    s = req.spread
    return [float(min(p * (1 - s) - low, high - p * (1 + s)) / p) for p in req.peaks]


def _coverage_margin(low: float, high: float, context: StudyContext) -> float:
    """Smallest margin over the peaks (fraction of the peak) of the band [low, high] around each peak's spread."""
    return float(min(_peak_margins(low, high, context)))


def zone_coverage(margins: Sequence[Sequence[float]]) -> tuple[float, int, int]:
    """(margin, zone, peak) of a graded panel from ``margins[zone][peak]``, 0-based.

    The column-panel sheet's rule (section 70): a peak is covered when at least one zone's held band covers it,
    and it is checked against the zone that holds it with the most margin; the panel's margin is the least of
    these over the peaks, and (zone, peak) are where it is found.
    """
    m = np.asarray(margins, float)
    best_zone = np.argmax(m, axis=0)
    best = m[best_zone, np.arange(m.shape[1])]
    peak = int(np.argmin(best))
    return float(best[peak]), int(best_zone[peak]), peak


def _limits_margins(out: dict[str, float], context: StudyContext) -> None:
    lim = context.limits
    out["mass_margin"] = (1 - out["panel_mass"] / lim["max_panel_mass_kg"]) if lim.get("max_panel_mass_kg") else 1.0
    out["thickness_margin"] = (1 - out["thickness"] / lim["max_thickness_mm"]) if lim.get("max_thickness_mm") else 1.0


# --------------------------------------------------------------------------------------------------------
# the stages
# --------------------------------------------------------------------------------------------------------
def hand_stage(design: Mapping[str, Any], context: StudyContext) -> dict[str, float]:
    """Hand estimates: strut frequency, stop band held under scatter, mass, self-weight, floor estimates.

    Outputs (plain numbers): ``fits`` (1 or −1), ``cells_wide``, ``cells_high``, ``f_strut`` [Hz] (first
    clamped–clamped strut mode, the band's lower edge), ``band_low``/``band_high`` and ``held_low``/``held_high``
    [Hz] (nominal and held under every scatter; with an added mass at strut mid-span, the band estimate's own
    Rayleigh strut mode and mass split, the sphere on the design's cell), ``coverage_margin`` (fraction of the
    peak), ``panel_mass`` [kg], ``thickness`` [mm], ``buckling_margin`` and ``shortening_margin`` (fractions;
    ≥ 0 passes),
    ``mass_ratio``, ``tuning`` [Hz], ``strut_detuning`` (|f_strut / first peak − 1|), ``peak_detuning`` (the
    largest over the peaks of |f_strut / peak − 1|, a graded panel's nearest zone for each peak), ``il_hand`` [dB]
    (absorber tuned to the peak on a mass-like column), ``il_bound`` [dB], ``dh_amplitude`` (Den Hartog fixed-point
    amplitude √(1 + 2/μ)), ``il_margin`` [dB] (``il_hand`` − the largest required), ``mass_margin`` and
    ``thickness_margin`` (fractions of the study's limits).

    A graded design (``zones.count`` > 1, :mod:`latticecalc.study.zones`) adds ``zones`` and each zone's
    ``zone<k>_cells_high``, ``zone<k>_strut_diameter`` [mm], ``zone<k>_added_mass`` [g] and its band
    ``zone<k>_band_low`` … ``zone<k>_held_high`` [Hz]; ``coverage_margin`` is then the least over the peaks of the
    best zone's margin (``coverage_zone``, ``coverage_peak``: where it is found, 1-based), and ``band_*``/``held_*``
    are that zone's; ``f_strut`` is zone 1's strut mode, ``strut_detuning`` the nearest zone's. The mass is each
    zone's over its rows; ``mass_ratio`` and the floor estimates from it sum each zone's resonating mass over its
    rows, as the column-panel sheet does (section 80, ``receiver.receiver_estimates`` with the zoning), and
    ``tuning`` is then the strut tuning of the zone nearest the first peak; self-weight stacks the zones bottom
    first, each with its own cell (``selfweight.graded_panel_self_weight``), as the column-panel sheet does
    (section 30): ``buckling_margin`` then takes the smallest strut safety factor over the zones.
    """
    from latticecalc import Q_
    from latticecalc.physics import receiver
    from latticecalc.physics.bands import band_estimate_for_cell
    from latticecalc.physics.density import panel_mass, relative_density
    from latticecalc.physics.selfweight import graded_panel_self_weight, panel_self_weight

    d = full_design(design, context)
    mats = _materials(d, context)
    column = _column(context)
    nx, ny = panel_counts(d, context, column)
    nz = int(d["panel.cells_deep"])
    out: dict[str, float] = {"cells_wide": float(nx), "cells_high": float(ny), "thickness": nz * float(d["cell.width"])}
    if nx < 1 or ny < 1:
        # the cell is wider than the face or taller than the column: nothing else is meaningful
        out.update(fits=-1.0)
        return out
    out["fits"] = 1.0
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")       # slenderness warnings: the margins below carry the verdict
        cell, zoning = _zoned(d, context, _cell(d, context, mats), ny)
    tol = context.tolerance
    band_kw = dict(lattice_material=mats["lattice"], frame_material=mats["frame"],
                   modulus_tolerance=tol["modulus"], diameter_tolerance=Q_(tol["diameter_mm"], "mm"),
                   length_tolerance=Q_(tol["length_mm"], "mm"), density_tolerance=tol["density"],
                   node_zones=context.node_zones)
    req = context.requirement
    if zoning is None:
        band = band_estimate_for_cell(cell=cell, **band_kw)
        v = {k: float(q.to("Hz").m) for k, q in band.value.items()}
        # the band estimate counts the cell's added mass at strut mid-span itself (the same Rayleigh strut formula
        # as the receiver estimate's tuning), both edges and the scatter
        out.update(f_strut=v["f_low"], band_low=v["f_low"], band_high=v["f_high"], held_low=v["f_low_max"],
                   held_high=v["f_high_min"])
        out["coverage_margin"] = _coverage_margin(out["held_low"], out["held_high"], context)
        out["strut_detuning"] = abs(out["f_strut"] / req.peaks[0] - 1.0)
        out["peak_detuning"] = max(abs(out["f_strut"] / p - 1.0) for p in req.peaks)
    else:
        # a graded panel: each zone's own band (its struts and its mass at mid-span); a peak is covered when a
        # zone's held band covers it, as the column-panel sheet judges it (section 70)
        from latticecalc.physics.bands import zone_band_estimates
        from latticecalc.study import zones as zn

        out.update(zn.outputs(zn.zone_values(d, ny)))
        margins = []
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")   # slenderness warnings of the zone cells, as above
            zone_bands = zone_band_estimates(cell=cell, zoning=zoning, **band_kw)
        for k, band in enumerate(zone_bands, start=1):
            v = {key: float(q.to("Hz").m) for key, q in band.value.items()}
            out.update({f"zone{k}_band_low": v["f_low"], f"zone{k}_band_high": v["f_high"],
                        f"zone{k}_held_low": v["f_low_max"], f"zone{k}_held_high": v["f_high_min"]})
            margins.append(_peak_margins(v["f_low_max"], v["f_high_min"], context))
        margin, zone, peak = zone_coverage(margins)
        z = zone + 1
        # the band shown for the design is the governing zone's (the one holding the least-covered peak best)
        out.update(coverage_margin=margin, coverage_zone=float(z), coverage_peak=float(peak + 1),
                   f_strut=out["zone1_band_low"], band_low=out[f"zone{z}_band_low"],
                   band_high=out[f"zone{z}_band_high"], held_low=out[f"zone{z}_held_low"],
                   held_high=out[f"zone{z}_held_high"])
        # the zone whose strut mode lies nearest the first peak
        modes = [out[f"zone{k}_band_low"] for k in range(1, len(zoning.zones) + 1)]
        out["strut_detuning"] = min(abs(f / req.peaks[0] - 1.0) for f in modes)
        out["peak_detuning"] = max(min(abs(f / p - 1.0) for f in modes) for p in req.peaks)
    if zoning is None:
        rd = relative_density(cell, "closed-form")
        mass = panel_mass(cell, materials=mats, cells_wide=nx, cells_high=ny, cells_deep=nz, method="closed-form",
                          density=rd)
    else:   # each zone's cell over its rows (density.graded_panel_mass, as the mass section of the sheet)
        from latticecalc.physics.density import graded_panel_mass

        with warnings.catch_warnings():
            warnings.simplefilter("ignore")   # slenderness warnings of the zone cells
            mass = graded_panel_mass(cell, zoning=zoning, materials=mats, cells_wide=nx, cells_high=ny,
                                     cells_deep=nz, method="closed-form")
    out["panel_mass"] = float(mass.value.to("kg").m)
    # the hand load-path checks as the sheet makes them (a graded panel: its zones stacked bottom first)
    sw_in = context.selfweight
    sw_kw = dict(materials=mats, cells_wide=nx, cells_high=ny, cells_deep=nz,
                 deflection_limit=Q_(sw_in["deflection_limit_mm"], "mm"), buckling_safety_factor=sw_in["safety_factor"],
                 long_term=sw_in["long_term"], strut_end_condition=sw_in["strut_end_condition"],
                 frame_end_condition=sw_in["frame_end_condition"], k_value=sw_in["k_value"])
    if zoning is None:
        sw = panel_self_weight(cell, density=relative_density(cell, "closed-form"), **sw_kw)
    else:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")   # slenderness warnings of the zone cells
            sw = graded_panel_self_weight(cell, zoning=zoning, density_method="closed-form", **sw_kw)
    case = "with-frame" if sw.strut_safety_factor.get("with-frame") is not None else "lattice-alone"
    factors = [float(sw.strut_safety_factor[case].m)]
    if sw.frame_safety_factor is not None:
        factors.append(float(sw.frame_safety_factor.m))
    out["buckling_margin"] = min(factors) / sw_in["safety_factor"] - 1.0
    out["shortening_margin"] = 1.0 - float(sw.shortening[case].to("mm").m) / sw_in["deflection_limit_mm"]
    with warnings.catch_warnings():
        if zoning is not None:
            warnings.simplefilter("ignore")   # slenderness warnings of the zone cells
        est = receiver.receiver_estimates(cell, material=mats["lattice"], nx=nx, ny=ny, column=column,
                                          faces=context.faces, direction=req.direction,
                                          required=Q_(list(req.required), "dB"), node_zones=context.node_zones,
                                          zoning=zoning)
    out.update(_floor_outputs(est))
    if zoning is not None:
        # the strut tuning of the zone nearest the first peak (the sheet's band takes the lowest zone's: it has no
        # peaks)
        out["tuning"] = min((float(f.to("Hz").m) for f in est.zone_tunings), key=lambda f: abs(f / req.peaks[0] - 1.0))
    out["il_margin"] = out["il_hand"] - max(req.required)
    _limits_margins(out, context)
    return out


def _floor_outputs(est: Any) -> dict[str, float]:
    """The hand stage's floor outputs from the receiver sheet's hand estimates (uniform or zoned)."""
    return {"mass_ratio": float(est.mass_ratio), "tuning": float(est.value["tuning"].to("Hz").m),
            "il_hand": float(est.value["mass_host_il"]), "il_bound": float(est.value["bound"]),
            "dh_amplitude": float(est.step("receiver.dh-amplitude").result.m)}


def bloch_stage(design: Mapping[str, Any], context: StudyContext, *,
                hand: Mapping[str, float] | None = None) -> dict[str, float]:
    """Reduced Bloch model: the complete gap that best covers the peaks and the coverage margin of the gap held.

    The computed gap is held under the same scatter as the hand band (each edge scaled by the hand
    estimate's held-over-nominal ratio). Outputs: ``has_gap`` (1 or −1), ``gap_low``/``gap_high`` [Hz],
    ``gap_held_low``/``gap_held_high`` [Hz], ``coverage_margin_bloch`` (fraction of the peak).
    """
    from latticecalc.physics.bloch import dispersion

    hand = hand if hand is not None else hand_stage(design, context)
    if hand.get("fits", -1.0) < 0 or hand.get("error", 0.0) > 0:
        return {"has_gap": -1.0, "coverage_margin_bloch": -1.0}
    d = full_design(design, context)
    mats = _materials(d, context)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        cell, zoning = _zoned(d, context, _cell(d, context, mats), int(hand["cells_high"]))
    n = context.numerics

    def gaps_of(c: Any) -> list[tuple[float, float]]:
        disp = dispersion(c, materials=mats, n_elements=n["bloch_elements"], n_bands=n["bloch_bands"],
                          points=n["bloch_points"], zone_points=n["bloch_zone_points"],
                          strut_modes=n["bloch_strut_modes"], node_zones=context.node_zones, convergence_check=False)
        return [(float(g.low.to("Hz").m), float(g.high.to("Hz").m)) for g in disp["gaps"]]

    if zoning is not None:
        return _zoned_bloch(zoning, cell, gaps_of, hand, context)
    gaps = gaps_of(cell)
    if not gaps:
        return {"has_gap": -1.0, "coverage_margin_bloch": -1.0}
    low_ratio, high_ratio = hand["held_low"] / hand["band_low"], hand["held_high"] / hand["band_high"]
    # the gap that covers the peaks best once held (a sliver of a gap beside the peak must not stand for it)
    lo, hi = max(gaps, key=lambda g: _coverage_margin(g[0] * low_ratio, g[1] * high_ratio, context))
    held_lo, held_hi = lo * low_ratio, hi * high_ratio
    return {"has_gap": 1.0, "gap_low": lo, "gap_high": hi, "gap_held_low": held_lo, "gap_held_high": held_hi,
            "coverage_margin_bloch": _coverage_margin(held_lo, held_hi, context)}


def _zoned_bloch(zoning: Any, cell: Any, gaps_of: Any, hand: Mapping[str, float],
                 context: StudyContext) -> dict[str, float]:
    """The Bloch stage of a graded design: each zone's cell, a peak covered when a zone's computed gap holds it.

    Each zone's gaps are held under the scatter of that zone's hand band; for each zone and peak the gap
    holding the peak best counts, then :func:`zone_coverage` as in the hand stage.
    """
    out: dict[str, float] = {}
    margins, chosen = [], []
    for k in range(len(zoning.zones)):
        z = k + 1
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            gaps = gaps_of(zoning.zone_cell(cell, k))
        low_ratio = hand[f"zone{z}_held_low"] / hand[f"zone{z}_band_low"]
        high_ratio = hand[f"zone{z}_held_high"] / hand[f"zone{z}_band_high"]
        out[f"zone{z}_gaps"] = float(len(gaps))
        per_peak, best_gap = [], []
        for p in range(len(context.requirement.peaks)):
            if not gaps:
                per_peak.append(-math.inf)
                best_gap.append(None)
                continue
            g = max(gaps, key=lambda g: _peak_margins(g[0] * low_ratio, g[1] * high_ratio, context)[p])
            per_peak.append(_peak_margins(g[0] * low_ratio, g[1] * high_ratio, context)[p])
            best_gap.append((g[0], g[1], g[0] * low_ratio, g[1] * high_ratio))
        margins.append(per_peak)
        chosen.append(best_gap)
    if not any(out[f"zone{k + 1}_gaps"] for k in range(len(zoning.zones))):
        return {**out, "has_gap": -1.0, "coverage_margin_bloch": -1.0}
    margin, zone, peak = zone_coverage(margins)
    lo, hi, held_lo, held_hi = chosen[zone][peak]
    return {**out, "has_gap": 1.0, "gap_low": lo, "gap_high": hi, "gap_held_low": held_lo, "gap_held_high": held_hi,
            "coverage_margin_bloch": margin, "coverage_zone_bloch": float(zone + 1),
            "coverage_peak_bloch": float(peak + 1)}


def coupled_stage(design: Mapping[str, Any], context: StudyContext) -> dict[str, float]:
    """Coupled column model: insertion loss at the floor at each peak (least over its spread).

    Outputs: ``il_peak<k>`` [dB] for k = 1 … (the least of the peak and its spread edges),
    ``il_margin_coupled`` [dB] (smallest of predicted − required over the peaks).
    """
    from latticecalc import Q_
    from latticecalc.physics import receiver

    d = full_design(design, context)
    mats = _materials(d, context)
    column = _column(context)
    nx, ny = panel_counts(d, context, column)
    if nx < 1 or ny < 1:
        return {"il_margin_coupled": -math.inf}
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        cell, zoning = _zoned(d, context, _cell(d, context, mats), ny)
    req = context.requirement
    fx = context.fixing
    fixings = receiver.Fixings(levels=_levels(fx["levels"], ny), normal=Q_(fx["normal_N_per_m"], "N/m"),
                               along=Q_(fx["along_N_per_m"], "N/m"), vertical=Q_(fx["vertical_N_per_m"], "N/m"),
                               loss_factor=fx["loss_factor"])
    s = req.spread
    freqs = sorted({round(p * k, 9) for p in req.peaks for k in (1 - s, 1.0, 1 + s)})
    n = context.numerics
    resp = receiver.coupled_response(cell, materials=mats, nx=nx, ny=ny, column=column, fixings=fixings,
                                     placement=receiver.Placement(faces=context.faces,
                                                                  base_height=Q_(context.base_height_m, "m")),
                                     frequencies=Q_(freqs, "Hz"), directions=(req.direction,),
                                     n_elements=n["coupled_elements"], strut_modes=n["coupled_strut_modes"],
                                     node_zones=context.node_zones, zoning=zoning)
    il = np.asarray(resp.value["insertion_loss"][req.direction], float)
    f = np.asarray(freqs)
    out: dict[str, float] = {}
    margins = []
    for k, (p, r) in enumerate(zip(req.peaks, req.required), start=1):
        near = (f >= p * (1 - s) * (1 - 1e-9)) & (f <= p * (1 + s) * (1 + 1e-9))
        out[f"il_peak{k}"] = float(il[near].min())
        margins.append(out[f"il_peak{k}"] - r)
    out["il_margin_coupled"] = float(min(margins))
    return out


_STAGE_FUNCS = {"hand": hand_stage, "bloch": bloch_stage, "coupled": coupled_stage}


def evaluate_stage(stage: str, design: Mapping[str, Any], context: StudyContext,
                   store: str | Path | None) -> tuple[dict[str, float], bool]:
    """One stage of one design through the result cache in ``store``: (outputs, computed here?).

    A design the model refuses (an :class:`~latticecalc.errors.LatticeCalcError` from the physics: a strut
    too thick for its cell, a frame that does not fit) is an evaluation too: its outputs hold ``error`` = 1
    and it is stored like any other, so it is not tried again.
    """
    if stage not in _STAGE_FUNCS:
        raise LatticeCalcError(f"unknown study stage {stage!r}", expected=", ".join(STAGES))
    key = design_fingerprint(stage, design, context)
    computed = []

    def compute() -> dict[str, np.ndarray]:
        computed.append(True)
        try:
            if stage == "bloch":   # the held band's scatter ratios come from the (cached) hand stage
                res = bloch_stage(design, context, hand=evaluate_stage("hand", design, context, store)[0])
            else:
                res = _STAGE_FUNCS[stage](design, context)
            res["error"] = 0.0
        except LatticeCalcError as exc:
            res = {"error": 1.0, "message": np.asarray(str(exc)[:300])}
        return {k: np.asarray(v) for k, v in res.items()}

    folder = Path(store) / stage if store is not None else None
    arrays = cached_arrays(folder, key, compute)
    out = {k: (str(v) if v.dtype.kind in "US" else float(v)) for k, v in arrays.items()}
    return out, bool(computed)
