"""Vibration criteria curves with their published sources, exceedance and required insertion loss.

Four families, each selectable by id (see :data:`CRITERIA`); every criterion's title names the
edition it comes from:

- **Generic vibration criterion curves** for sensitive equipment (VC-A to VC-E): one-third-octave
  RMS velocity, constant from 1 to 80 Hz (Gordon 1991; Amick, Gendreau, Busch & Gordon 2005).
- **ISO 2631-2:1989 / BS 6472:1992 building base curve** (z-axis RMS acceleration: 1–4 Hz
  a = 10⁻² f^(−1/2) m/s², 4–8 Hz 5 × 10⁻³ m/s², 8–80 Hz 6.25 × 10⁻⁴ f m/s²) times a multiplying
  factor for the occupancy, converted to velocity per band, v = k a / (2π f_m).  Between 8 and
  80 Hz this is k × 99.5 µm/s, the "ISO" occupancy curves of Gordon (1991) (rounded there to
  100 / 200 / 400 / 800 µm/s).  These are the 1989 edition's curves: the current edition,
  ISO 2631-2:2003, gives a measurement method (the W_m weighting) and no base curve, and
  BS 6472:1992 is replaced by BS 6472-1:2008.  The ``iso-*`` ids keep the 1989 curve and say so.
- **BS 6472-1:2008 vibration dose value ranges** (Table 1, residential buildings, 16 h day and
  8 h night) for intermittent vibration such as train pass-bys: the VDV of the period
  (:mod:`latticecalc.signals.vdv`) against the upper end of a range, :func:`vdv_assessment`.
- **Transit ground-borne vibration impact criteria** (US FTA), overall RMS velocity in VdB
  re 1 µin/s, by land-use category and event frequency: 2006 manual Table 8-1 (the ids without an
  edition, kept for existing projects) and 2018 manual Table 6-3 (the ``fta-2018-*`` ids).  These
  limit the overall (1 s, slow) level, not a band; bands are screened against the same value
  (necessary, not sufficient) and the overall level is checked.

Optionally, the **DIN 4150-3** structural damage guideline: peak particle velocity at the foundation
against a value interpolated linearly in frequency between the table's corner values.

Values whose source is tagged ``from memory`` could not be checked against the primary document
here; they are listed, with where they are used, in the register of values to confirm
(:func:`latticecalc.sources_register.register_entries`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import sympy as sp

from latticecalc.errors import InputError
from latticecalc.sheet import CalcResult, Formula, Source, check, evaluate, quantity_step
from latticecalc.signals.spectra import velocity_from_level
from latticecalc.signals.vdv import VDV_UNIT
from latticecalc.units import Q_, check_dimension

GORDON_1991 = Source(author="Gordon, C. G.", title="Generic criteria for vibration-sensitive equipment. "
                     "Proc. SPIE 1619", year=1991, locator="Table 1, Fig. 1", tag="from memory")
AMICK_2005 = Source(author="Amick, H., Gendreau, M., Busch, T. & Gordon, C.", title="Evolving criteria "
                    "for research facilities: vibration. Proc. SPIE 5933", year=2005,
                    locator="Table 1 (VC curves flat from 1 to 80 Hz)", tag="from memory")
ISO_2631_2_1989 = Source(author="ISO", title="ISO 2631-2:1989 Evaluation of human exposure to whole-body "
                         "vibration – Part 2: Continuous and shock-induced vibration in buildings (1 to 80 Hz)",
                         year=1989, locator="base curve, z-axis acceleration; Annex A multiplying factors",
                         tag="from memory")
ISO_2631_2_2003 = Source(author="ISO", title="ISO 2631-2:2003 Mechanical vibration and shock – Evaluation of "
                         "human exposure to whole-body vibration – Part 2: Vibration in buildings (1 Hz to 80 Hz)",
                         year=2003, locator="W_m frequency weighting; no base curve and no acceptable magnitudes "
                         "(withdrawn from the 1989 edition)", tag="from memory")
BS_6472_1992 = Source(author="BSI", title="BS 6472:1992 Guide to evaluation of human exposure to vibration "
                      "in buildings (1 Hz to 80 Hz)", year=1992, locator="Table 5, multiplying factors",
                      tag="from memory")
BS_6472_1_2008 = Source(author="BSI", title="BS 6472-1:2008 Guide to evaluation of human exposure to vibration "
                        "in buildings – Part 1: Vibration sources other than blasting", year=2008,
                        locator="Table 1, vibration dose value ranges which might result in various probabilities "
                        "of adverse comment within residential buildings",
                        tag="values as reproduced by NoiseNet (UK); the standard itself not opened")
FTA_2006 = Source(author="US Federal Transit Administration", title="Transit Noise and Vibration Impact "
                  "Assessment, FTA-VA-90-1003-06", year=2006,
                  locator="Table 8-1, ground-borne vibration impact criteria (frequent, infrequent)",
                  tag="values as reproduced in environmental impact statements citing the FTA criteria")
FTA_2018 = Source(author="US Federal Transit Administration", title="Transit Noise and Vibration Impact "
                  "Assessment Manual, FTA Report No. 0123", year=2018,
                  locator="Table 6-3 (frequent, occasional, infrequent events)", tag="from memory")

# --- formulas --------------------------------------------------------------------------------
_f, _f0, _a0, _k, _a, _v, _vl, _dl, _margin = sp.symbols("f f_0 a_0 k a v v_lim Delta_L m")
#: ISO 2631-2:1989 base curve, three segments (1–4 Hz, 4–8 Hz, 8–80 Hz); f_0 = 1 Hz.
BASE_CURVE_LOW = Formula("a_b", _a0 * (_f / _f0) ** sp.Rational(-1, 2))
BASE_CURVE_MID = Formula("a_b", _a0)
BASE_CURVE_HIGH = Formula("a_b", _a0 * (_f / _f0))
#: Acceleration limit to velocity per band, times the multiplying factor.
VELOCITY_LIMIT = Formula("v_lim", _k * _a / (2 * sp.pi * _f), {"v_lim": r"v_{\mathrm{lim}}"})
#: Exceedance of a band level over its limit and the insertion loss it requires.
EXCEEDANCE = Formula("Delta_L", 20 * sp.log(_v / _vl, 10), {"v_lim": r"v_{\mathrm{lim}}"})
REQUIRED_LOSS = Formula("IL_req", sp.Max(_dl + _margin, 0), {"IL_req": r"IL_{\mathrm{req}}"})

_BASE_SEGMENTS = ((1.0, 4.0, BASE_CURVE_LOW, 1e-2), (4.0, 8.0, BASE_CURVE_MID, 5e-3),
                  (8.0, 80.0, BASE_CURVE_HIGH, 6.25e-4))


@dataclass(frozen=True, kw_only=True)
class Criterion:
    """A selectable criterion.

    ``kind`` is ``"vc"`` (flat band velocity), ``"iso"`` (base curve × factor), ``"overall"``
    (one VdB value for the overall level) or ``"vdv"`` (a vibration dose value range).  ``value``
    is µm/s for ``vc``, the multiplying factor for ``iso``, VdB for ``overall`` and, for ``vdv``,
    the upper end of the range in m/s^1.75 (the limit checked), ``lower`` its lower end.
    ``edition`` names the published edition the values come from.
    """

    id: str
    title: str
    kind: str
    value: float
    source: Source
    note: str = ""
    edition: str = ""
    lower: float | None = None
    period: str = ""


CRITERIA: dict[str, Criterion] = {}


def _add(c: Criterion) -> None:
    CRITERIA[c.id] = c


for _id, _um in (("vc-a", 50.0), ("vc-b", 25.0), ("vc-c", 12.5), ("vc-d", 6.25), ("vc-e", 3.12)):
    _add(Criterion(id=_id, title=f"{_id.upper()} generic vibration criterion ({_um:g} µm/s; Amick et al. 2005)",
                   kind="vc", value=_um, source=AMICK_2005, edition="Amick et al. 2005"))
for _id, _factor, _what in (("iso-critical", 1.0, "critical working areas (operating theatres)"),
                            ("iso-residential-night", 1.4, "residential, night"),
                            ("iso-residential-day", 2.0, "residential, day (factor 2 to 4)"),
                            ("iso-office", 4.0, "offices"), ("iso-workshop", 8.0, "workshops")):
    _add(Criterion(id=_id, title=f"ISO 2631-2:1989 base curve × {_factor:g} (BS 6472:1992): {_what}", kind="iso",
                   value=_factor, source=BS_6472_1992, edition="ISO 2631-2:1989 / BS 6472:1992",
                   note="continuous vibration; z-axis base curve of ISO 2631-2:1989 (the 2003 edition gives no "
                        "base curve; BS 6472:1992 is replaced by BS 6472-1:2008)"))

#: BS 6472-1:2008 Table 1, residential buildings: VDV ranges (m/s^1.75) by period and probability of comment.
BS_6472_1_2008_TABLE_1 = {
    ("day", "low"): (0.2, 0.4), ("day", "possible"): (0.4, 0.8), ("day", "probable"): (0.8, 1.6),
    ("night", "low"): (0.1, 0.2), ("night", "possible"): (0.2, 0.4), ("night", "probable"): (0.4, 0.8),
}
_COMMENT = {"low": "low probability of adverse comment", "possible": "adverse comment possible",
            "probable": "adverse comment probable"}
_PERIOD = {"day": "16 h day (07:00–23:00)", "night": "8 h night (23:00–07:00)"}
for (_period, _which), (_lo, _hi) in BS_6472_1_2008_TABLE_1.items():
    _add(Criterion(id=f"bs6472-1-2008-{_period}-{_which}", kind="vdv", value=_hi, lower=_lo, period=_period,
                   title=f"BS 6472-1:2008 residential, {_PERIOD[_period]}: VDV ≤ {_hi:g} m/s^1.75, upper end of "
                         f"'{_COMMENT[_which]}' ({_lo:g}–{_hi:g})",
                   source=BS_6472_1_2008, edition="BS 6472-1:2008",
                   note="below the lowest range adverse comment is not expected; above the highest, very likely"))

_FTA_NOTE = "limit on the overall RMS velocity (1 s, slow), re 1 µin/s"
_CATEGORY = {1: "category 1 (vibration-sensitive buildings)", 2: "category 2 (residences)",
             3: "category 3 (institutional, daytime)"}
_EVENTS = {"frequent": "frequent events (> 70/day)", "occasional": "occasional events (30–70/day)",
           "infrequent": "infrequent events (< 30/day)"}
#: FTA 2018 manual, Table 6-3: ground-borne vibration impact criteria (VdB) by category and event rate.
FTA_2018_TABLE_6_3 = {(1, "frequent"): 65.0, (1, "occasional"): 65.0, (1, "infrequent"): 65.0,
                      (2, "frequent"): 72.0, (2, "occasional"): 75.0, (2, "infrequent"): 80.0,
                      (3, "frequent"): 75.0, (3, "occasional"): 78.0, (3, "infrequent"): 83.0}
#: FTA 2006 manual, Table 8-1 (frequent and infrequent events), under the ids projects already use.
FTA_2006_TABLE_8_1 = {"fta-cat1": (1, "", 65.0), "fta-cat2-frequent": (2, "frequent", 72.0),
                      "fta-cat2-infrequent": (2, "infrequent", 80.0), "fta-cat3-frequent": (3, "frequent", 75.0),
                      "fta-cat3-infrequent": (3, "infrequent", 83.0)}
for _id, (_cat, _ev, _vdb) in FTA_2006_TABLE_8_1.items():
    # the reproductions of the 2006 table define frequent as more than 70 events a day and infrequent as
    # fewer; the 2018 manual's occasional column splits the latter, so no bound is printed for infrequent
    _what = f"{_CATEGORY[_cat]}, " + {"": "all event rates", "frequent": _EVENTS["frequent"],
                                      "infrequent": "infrequent events"}[_ev]
    _add(Criterion(id=_id, title=f"FTA 2006 (Table 8-1) {_vdb:g} VdB: {_what}", kind="overall", value=_vdb,
                   source=FTA_2006, note=_FTA_NOTE, edition="FTA 2006"))
# the occasional-events ids came with the 2018 manual's column; kept under their old ids
for _cat in (2, 3):
    _vdb = FTA_2018_TABLE_6_3[(_cat, "occasional")]
    _add(Criterion(id=f"fta-cat{_cat}-occasional", kind="overall", value=_vdb, source=FTA_2018, note=_FTA_NOTE,
                   title=f"FTA 2018 (Table 6-3) {_vdb:g} VdB: {_CATEGORY[_cat]}, {_EVENTS['occasional']}",
                   edition="FTA 2018"))
for (_cat, _ev), _vdb in FTA_2018_TABLE_6_3.items():
    _add(Criterion(id=f"fta-2018-cat{_cat}-{_ev}", kind="overall", value=_vdb, source=FTA_2018, note=_FTA_NOTE,
                   title=f"FTA 2018 (Table 6-3) {_vdb:g} VdB: {_CATEGORY[_cat]}, {_EVENTS[_ev]}",
                   edition="FTA 2018"))


def get_criterion(criterion: str) -> Criterion:
    """The criterion with id ``criterion`` (see :data:`CRITERIA`)."""
    if criterion not in CRITERIA:
        raise InputError("unknown criterion", input_name="criterion", expected="one of " + ", ".join(CRITERIA),
                         got=repr(criterion))
    return CRITERIA[criterion]


@dataclass(frozen=True, kw_only=True)
class CriterionCurve(CalcResult):
    """Limits per band; ``value`` maps ``centre`` (Hz) and ``velocity_rms`` (m/s, NaN where undefined)."""

    criterion: Criterion


def base_curve(*, frequency) -> CalcResult:
    """ISO 2631-2:1989 z-axis base curve, RMS acceleration [m/s²] at ``frequency`` [frequency] (NaN outside 1–80 Hz)."""
    f = check_dimension(frequency, name="frequency", expected="frequency").to("Hz").m
    f = np.atleast_1d(np.asarray(f, dtype=float))
    out = np.full(f.shape, np.nan)
    steps = []
    for k, (lo, hi, formula, a0) in enumerate(_BASE_SEGMENTS):
        sel = (f >= lo) & ((f < hi) if hi < 80.0 else (f <= hi))
        if not sel.any():
            continue
        step = evaluate(formula, id=f"criterion.base-curve-{k + 1}",
                        description=f"ISO 2631-2:1989 base curve, {lo:g}–{hi:g} Hz",
                        values={"a_0": Q_(a0, "m/s^2"), "f": Q_(f[sel], "Hz"), "f_0": Q_(1.0, "Hz")},
                        unit="m/s^2", source=ISO_2631_2_1989)
        out[sel] = np.broadcast_to(step.result.m, sel.sum())
        steps.append(step)
    return CalcResult(value=Q_(out, "m/s^2"), steps=tuple(steps), title="ISO 2631-2:1989 base curve")


def criterion_curve(*, criterion: str, centre) -> CriterionCurve:
    """Band limits of a criterion at the band midband frequencies ``centre`` [frequency], as RMS velocity.

    ``overall`` criteria give the same value in every band (a screening value; the overall level is
    what they limit).
    """
    c = get_criterion(criterion)
    if c.kind == "vdv":
        raise InputError("a vibration dose value criterion limits the VDV of a period, not band levels",
                         input_name="criterion", expected="a band criterion (vc-*, iso-*, fta-*), or "
                         "vdv_assessment() for this one", got=repr(criterion))
    f = np.atleast_1d(check_dimension(centre, name="centre", expected="frequency").to("Hz").m)
    if c.kind == "vc":
        v = np.where((f >= 1.0 / 1.06) & (f <= 80.0 * 1.06), c.value * 1e-6, np.nan)
        steps = (quantity_step(id=f"criterion.{c.id}", description=c.title, value=Q_(c.value, "um/s"),
                               unit="um/s", method="constant RMS velocity per one-third-octave band, 1–80 Hz",
                               source=c.source),)
    elif c.kind == "iso":
        base = base_curve(frequency=Q_(f, "Hz"))
        a = base.value.m
        ok = np.isfinite(a)
        if not ok.any():
            raise InputError("the ISO 2631-2:1989 curve is defined from 1 to 80 Hz only", input_name="centre",
                             expected="band frequencies between 1 and 80 Hz", got=f"{f.min():g}–{f.max():g} Hz")
        lim = evaluate(VELOCITY_LIMIT, id=f"criterion.{c.id}", description=f"{c.title}, as band velocity "
                       "(bands from 1 to 80 Hz)", values={"k": Q_(c.value, ""), "a": Q_(a[ok], "m/s^2"),
                                                          "f": Q_(f[ok], "Hz")},
                       unit="um/s", source=c.source, note=c.note)
        v = np.full(f.shape, np.nan)
        v[ok] = lim.result.to("m/s").m
        steps = base.steps + (lim,)
    else:
        conv = velocity_from_level(Q_(c.value, "dB"), reference="1 microinch/s", id=f"criterion.{c.id}")
        v = np.full(f.shape, float(conv.value.to("m/s").m))
        steps = conv.steps
    return CriterionCurve(value={"centre": Q_(f, "Hz"), "velocity_rms": Q_(v, "m/s")}, steps=tuple(steps),
                          criterion=c, title=c.title)


@dataclass(frozen=True, kw_only=True)
class Assessment(CalcResult):
    """Band levels against a criterion.

    ``value`` maps ``centre`` (Hz), ``nominal``, ``velocity_rms`` (m/s), ``limit`` (m/s),
    ``exceedance`` (dB, NaN where the criterion is undefined) and ``required_loss`` (dB, >= 0).
    """

    criterion: Criterion
    worst_band: str
    worst_exceedance: float


def assess(*, levels, criterion: str, margin=None, overall=None) -> Assessment:
    """Exceedance per band and the insertion loss required per band.

    Parameters
    ----------
    levels:
        A band-level result (``third_octave_levels`` or ``event_spectra``): mapping with
        ``centre``, ``nominal`` and ``velocity_rms``.
    criterion:
        Criterion id (see :data:`CRITERIA`).
    margin:
        Design margin added to each exceedance, in dB (a Quantity in dB or a number); default 0.
    overall:
        For ``overall`` (FTA) criteria: the measured overall RMS velocity [velocity], e.g. the
        maximum 1 s running RMS; default the square root of the sum of the band mean squares.

    Returns
    -------
    Assessment
    """
    try:
        centre = levels["centre"]
        nominal = levels["nominal"]
        v = check_dimension(levels["velocity_rms"], name="levels.velocity_rms", expected="velocity")
    except (KeyError, TypeError):
        raise InputError("needs band levels", input_name="levels",
                         expected="a result with centre, nominal and velocity_rms",
                         got=type(levels).__name__) from None
    m = 0.0
    if margin is not None:
        m = float(margin.m) if hasattr(margin, "m") else float(margin)
    curve = criterion_curve(criterion=criterion, centre=centre)
    lim = curve.value["velocity_rms"].m
    vv = v.to("m/s").m
    ok = np.isfinite(lim) & (vv > 0)
    if not ok.any():
        raise InputError("the criterion is not defined in any of the bands given", input_name="criterion",
                         expected="bands inside the criterion's frequency range", got=str(criterion))
    inside = [str(nominal[i]) for i in np.flatnonzero(ok)]
    where = f"bands {inside[0]} Hz to {inside[-1]} Hz (where the criterion is defined)"
    exc = np.full(vv.shape, np.nan)
    req = np.full(vv.shape, np.nan)
    step_e = evaluate(EXCEEDANCE, id="criterion.exceedance", description=f"Exceedance of the criterion, {where}",
                      values={"v": Q_(vv[ok], "m/s"), "v_lim": Q_(lim[ok], "m/s")}, unit="",
                      source=curve.criterion.source)
    exc[ok] = step_e.result.m
    step_e = _db(step_e, exc[ok])
    step_r = evaluate(REQUIRED_LOSS, id="criterion.required-loss",
                      description=f"Insertion loss required, {where} (exceedance plus margin; none where the "
                      "band is below the criterion)", values={"Delta_L": Q_(exc[ok], ""), "m": Q_(m, "")},
                      unit="", source=Source(author="common practice", title="required insertion loss = "
                                             "exceedance + design margin", tag="common practice"))
    req[ok] = step_r.result.m
    step_r = _db(step_r, req[ok])
    steps = list(curve.steps) + [step_e, step_r]
    k = int(np.nanargmax(np.where(ok, exc, -np.inf)))
    steps.append(check(id="criterion.worst-band", description=f"Worst band ({nominal[k]} Hz) against "
                       f"{curve.criterion.title}", demand=Q_(vv[k], "m/s").to("um/s"),
                       limit=Q_(lim[k], "m/s").to("um/s"), source=curve.criterion.source))
    worst, worst_exc = str(nominal[k]), float(exc[k])
    if curve.criterion.kind == "overall":
        ov = (check_dimension(overall, name="overall", expected="velocity").to("m/s").m if overall is not None
              else float(np.sqrt(np.sum(vv ** 2))))
        steps.append(check(id="criterion.overall", description=f"Overall RMS velocity against {curve.criterion.title}",
                           demand=Q_(ov, "m/s").to("um/s"), limit=Q_(lim[0], "m/s").to("um/s"),
                           source=curve.criterion.source, note=curve.criterion.note))
    return Assessment(value={"centre": centre, "nominal": nominal, "velocity_rms": v,
                             "limit": Q_(lim, "m/s"), "exceedance": Q_(exc, "dB"),
                             "required_loss": Q_(req, "dB")},
                      steps=tuple(steps), criterion=curve.criterion, worst_band=worst,
                      worst_exceedance=worst_exc, title=f"Assessment against {curve.criterion.title}")


def vdv_assessment(*, vdv, criterion: str) -> CalcResult:
    """A period's vibration dose value ``vdv`` [m/s^1.75] against a BS 6472-1:2008 range.

    ``criterion`` is a ``bs6472-1-2008-<day|night>-<low|possible|probable>`` id; the check passes
    when the VDV does not exceed the upper end of that range (so the probability of adverse comment
    is at most the range's).  Compute the VDV of the 16 h day or the 8 h night with
    :mod:`latticecalc.signals.vdv` from the frequency-weighted acceleration.
    """
    c = get_criterion(criterion)
    if c.kind != "vdv":
        raise InputError("not a vibration dose value criterion", input_name="criterion",
                         expected="one of " + ", ".join(k for k, v in CRITERIA.items() if v.kind == "vdv"),
                         got=repr(criterion))
    v = check_dimension(vdv, name="vdv", expected=VDV_UNIT).to(VDV_UNIT)
    lim = quantity_step(id=f"criterion.{c.id}", description=c.title, value=Q_(c.value, VDV_UNIT), unit=VDV_UNIT,
                        method=f"upper end of the range {c.lower:g}–{c.value:g} m/s^1.75 ({c.period})",
                        source=c.source, note=c.note)
    # a check re-reads its limit's unit from text, which a fractional power (m/s^1.75) does not survive:
    # compare the magnitudes in m/s^1.75 and say so in the description
    chk = check(id="criterion.vdv", description=f"Vibration dose value ({c.period}, in m/s^1.75) against {c.title}",
                demand=float(v.m), limit=float(c.value), source=c.source, note=c.note)
    return CalcResult(value=lim.result, steps=(lim, chk), title=f"Vibration dose value against {c.title}")


def _db(step, values):
    from dataclasses import replace

    return replace(step, result=Q_(np.asarray(values, dtype=float), "dB"))


# --- structural damage guideline (DIN 4150-3) ----------------------------------------------------
DIN_4150_3 = Source(author="DIN", title="DIN 4150-3:2016 Vibrations in buildings – Part 3: Effects on structures",
                    year=2016, locator="Table 1 (short-term vibration, foundation), Figure 1",
                    tag="from memory; values seen in a secondary source")

#: Guideline peak particle velocity at the foundation (mm/s) at 1–10 Hz, 10 → 50 Hz, 50 → 100 Hz.
DIN_4150_3_TABLE = {
    "commercial": ((1.0, 20.0), (10.0, 20.0), (50.0, 40.0), (100.0, 50.0)),
    "dwelling": ((1.0, 5.0), (10.0, 5.0), (50.0, 15.0), (100.0, 20.0)),
    "sensitive": ((1.0, 3.0), (10.0, 3.0), (50.0, 8.0), (100.0, 10.0)),
}
_v1, _v2, _f1, _f2 = sp.symbols("v_1 v_2 f_1 f_2")
#: Linear interpolation between two corner values of the guideline (the straight lines of its Figure 1).
GUIDELINE_INTERPOLATION = Formula("v_lim", _v1 + (_v2 - _v1) * (_f - _f1) / (_f2 - _f1), {"v_lim": r"v_{\mathrm{lim}}"})


def din_4150_3_limit(*, building: str, frequency) -> CalcResult:
    """DIN 4150-3 guideline PPV at the foundation [velocity] for a dominant ``frequency`` [frequency].

    Linear interpolation in frequency between the table's corner values (1–10 Hz constant, then
    straight lines to 50 Hz and to 100 Hz); above 100 Hz the 100 Hz value.  ``building`` is
    ``"commercial"``, ``"dwelling"`` or ``"sensitive"``.
    """
    if building not in DIN_4150_3_TABLE:
        raise InputError("unknown building class", input_name="building",
                         expected="one of " + ", ".join(DIN_4150_3_TABLE), got=repr(building))
    f = float(check_dimension(frequency, name="frequency", expected="frequency").to("Hz").m)
    if not f > 0:
        raise InputError("the dominant frequency must be positive", input_name="frequency", expected="> 0 Hz",
                         got=f"{f:g} Hz")
    pts = DIN_4150_3_TABLE[building]
    fc = min(max(f, pts[0][0]), pts[-1][0])
    k = next(i for i in range(1, len(pts)) if fc <= pts[i][0])
    (fa, va), (fb, vb) = pts[k - 1], pts[k]
    step = evaluate(GUIDELINE_INTERPOLATION, id="criterion.din-4150-3", description=f"DIN 4150-3 guideline PPV, "
                    f"{building}, at {f:.3g} Hz", values={"v_1": Q_(va, "mm/s"), "v_2": Q_(vb, "mm/s"),
                                                          "f": Q_(fc, "Hz"), "f_1": Q_(fa, "Hz"),
                                                          "f_2": Q_(fb, "Hz")},
                    unit="mm/s", source=DIN_4150_3,
                    note="frequency held at 1 Hz / 100 Hz outside the table" if fc != f else "")
    return CalcResult(value=step.result, steps=(step,), title="DIN 4150-3 guideline value")


def din_4150_3_assessment(*, ppv, frequency, building: str) -> CalcResult:
    """A measured peak particle velocity [velocity] at its dominant ``frequency`` against DIN 4150-3."""
    v = check_dimension(ppv, name="ppv", expected="velocity")
    lim = din_4150_3_limit(building=building, frequency=frequency)
    chk = check(id="criterion.din-4150-3-check", description=f"Peak particle velocity against DIN 4150-3 "
                f"({building})", demand=v.to("mm/s"), limit=lim.value, source=DIN_4150_3)
    return CalcResult(value=lim.value, steps=lim.steps + (chk,), title="Structural damage guideline (DIN 4150-3)")
