"""Coverage: whether the designed stop band covers the measured peaks under the material's scatter.

The band is given by plain edges (from the sizing estimate, or later from the numerical
dispersion) and a scatter range of frequency factors.  At fixed geometry and density every
frequency of the lattice scales with √E (Euler–Bernoulli, f ∝ √(E I / ρ A), Rao 2017 eq. 8.82),
so a modulus range E_low..E_high moves the whole band by the factors √(E_low/E_nom) and
√(E_high/E_nom) (:func:`frequency_factors`).  A peak is *covered* when it lies inside the band for
every factor in the range (above the highest lower edge and below the lowest upper edge),
*nominally covered* when only the nominal band holds it.
"""

from __future__ import annotations

import json
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import sympy as sp

from latticecalc.errors import InputError, RecordError
from latticecalc.physics.beams import RAO_2017
from latticecalc.sheet import CalcResult, Formula, check, evaluate, quantity_step
from latticecalc.units import Q_, check_dimension, check_positive

_E, _En = sp.symbols("E E_nom")
#: Frequency factor of a modulus change at fixed geometry and density (f ∝ √E).
FREQUENCY_FACTOR = Formula("s", sp.sqrt(_E / _En), {"E_nom": r"E_{\mathrm{nom}}"})
_s, _f = sp.symbols("s f")
#: A band edge moved by a frequency factor.
SCALED_EDGE = Formula("f_new", _s * _f, {"f_new": r"f_{\mathrm{new}}"})


@dataclass(frozen=True, kw_only=True)
class Coverage(CalcResult):
    """Result of :func:`band_coverage`.

    ``value`` maps ``frequency`` (peaks, Hz), ``status`` ("covered", "nominal only", "not
    covered"), ``margin_lower`` and ``margin_upper`` (Hz, to the worst-case edges; negative
    outside), ``margin_lower_pct`` and ``margin_upper_pct`` (% of the peak frequency), and the band
    edges ``lower``, ``upper`` (nominal) and ``lower_worst``, ``upper_worst`` (guaranteed band).
    """

    all_covered: bool


def frequency_factors(*, nominal_modulus, low_modulus, high_modulus) -> CalcResult:
    """Band frequency factors √(E/E_nom) for a modulus range [pressure]; ``value`` = (low, high)."""
    en = check_positive(check_dimension(nominal_modulus, name="nominal_modulus", expected="pressure"),
                        name="nominal_modulus")
    lo = check_positive(check_dimension(low_modulus, name="low_modulus", expected="pressure"), name="low_modulus")
    hi = check_positive(check_dimension(high_modulus, name="high_modulus", expected="pressure"),
                        name="high_modulus")
    if lo > hi:
        raise InputError("the low modulus exceeds the high modulus", input_name="low_modulus",
                         expected=f"<= {hi:~P}", got=f"{lo:~P}")
    s_lo = evaluate(FREQUENCY_FACTOR, id="coverage.factor-low", description="Frequency factor, lowest modulus",
                    values={"E": lo, "E_nom": en}, unit="", source=RAO_2017, sig=3)
    s_hi = evaluate(FREQUENCY_FACTOR, id="coverage.factor-high", description="Frequency factor, highest modulus",
                    values={"E": hi, "E_nom": en}, unit="", source=RAO_2017, sig=3)
    return CalcResult(value=(float(s_lo.result.m), float(s_hi.result.m)), steps=(s_lo, s_hi),
                      title="Band scatter from the modulus range")


def band_coverage(*, lower, upper, peaks, scatter_low: float = 1.0, scatter_high: float = 1.0,
                  id_prefix: str = "coverage") -> Coverage:
    """Each peak covered or not by the band [lower, upper] moved by factors scatter_low..scatter_high.

    Parameters
    ----------
    lower, upper:
        Nominal band edges [frequency].
    peaks:
        Peak frequencies [frequency] (Quantity array).
    scatter_low, scatter_high:
        Frequency factors of the band's lowest and highest position (e.g. from
        :func:`frequency_factors`); 1.0 and 1.0 for no scatter.
    id_prefix:
        Step id prefix.
    """
    f1 = check_positive(check_dimension(lower, name="lower", expected="frequency"), name="lower").to("Hz").m
    f2 = check_positive(check_dimension(upper, name="upper", expected="frequency"), name="upper").to("Hz").m
    if not f2 > f1:
        raise InputError("the band's upper edge must lie above its lower edge", input_name="upper",
                         expected=f"> {f1:g} Hz", got=f"{f2:g} Hz")
    fp = np.atleast_1d(check_dimension(peaks, name="peaks", expected="frequency").to("Hz").m).astype(float)
    if not (0 < scatter_low <= 1.0 <= scatter_high):
        raise InputError("scatter factors must bracket 1", input_name="scatter_low",
                         expected="0 < scatter_low <= 1 <= scatter_high", got=f"{scatter_low}, {scatter_high}")
    lo_w, hi_w = f1 * scatter_high, f2 * scatter_low
    steps = [quantity_step(id=f"{id_prefix}.band", description="Designed band, nominal", value=Q_([f1, f2], "Hz"),
                           unit="Hz", method="from the band estimate")]
    if lo_w >= hi_w:
        steps.append(quantity_step(id=f"{id_prefix}.band-worst", description="No frequency lies in the band for "
                                   "every modulus in the range", value=Q_([lo_w, hi_w], "Hz"), unit="Hz",
                                   method=f"lower edge × {scatter_high:g}, upper edge × {scatter_low:g}"))
    else:
        steps.append(quantity_step(id=f"{id_prefix}.band-worst", description="Band held under the whole scatter "
                                   "range (highest lower edge to lowest upper edge)", value=Q_([lo_w, hi_w], "Hz"),
                                   unit="Hz", method=f"lower edge × {scatter_high:g}, upper edge × {scatter_low:g}"))
    m_lo = fp - lo_w
    m_hi = hi_w - fp
    status = []
    for k, f in enumerate(fp):
        if m_lo[k] >= 0 and m_hi[k] >= 0:
            status.append("covered")
        elif f1 <= f <= f2:
            status.append("nominal only")
        else:
            status.append("not covered")
        steps.append(check(id=f"{id_prefix}.peak{k + 1}-lower", description=f"Panel's own stop band: peak {k + 1} "
                           f"({f:.3g} Hz) above the band's highest lower edge", demand=Q_(f, "Hz"),
                           limit=Q_(lo_w, "Hz"), sense="min"))
        steps.append(check(id=f"{id_prefix}.peak{k + 1}-upper", description=f"Panel's own stop band: peak {k + 1} "
                           f"({f:.3g} Hz) below the band's lowest upper edge", demand=Q_(f, "Hz"), limit=Q_(hi_w, "Hz"),
                           sense="max"))
    return Coverage(value={"frequency": Q_(fp, "Hz"), "status": tuple(status), "margin_lower": Q_(m_lo, "Hz"),
                           "margin_upper": Q_(m_hi, "Hz"), "margin_lower_pct": Q_(100 * m_lo / fp, "percent"),
                           "margin_upper_pct": Q_(100 * m_hi / fp, "percent"), "lower": Q_(f1, "Hz"),
                           "upper": Q_(f2, "Hz"), "lower_worst": Q_(lo_w, "Hz"), "upper_worst": Q_(hi_w, "Hz")},
                    steps=tuple(steps), all_covered=all(s == "covered" for s in status),
                    title="Band coverage of the measured peaks")


def survey_from_export(path) -> dict:
    """Target peaks (and the max-hold band spectrum, when present) from a site-survey export JSON.

    Reads the ``results`` rows of ``out/<calc>.json`` written by ``latticecalc export`` for a
    ``site-survey`` project: ``peaks.target-frequencies`` (Hz), and if shown there
    ``bands.midband`` with ``maxhold.velocity-rms``.  Returns a dict with ``targets`` [Hz] and
    optionally ``centre`` [Hz] and ``velocity_rms`` [m/s].
    """
    p = Path(path)
    if not p.is_file():
        raise RecordError("survey export not found", input_name="coverage.survey_results",
                          expected="the JSON written by 'latticecalc export' for a site-survey project",
                          got=str(p), file=str(p))
    try:
        data = json.loads(p.read_text(encoding="utf-8"))
        rows = {r["id"]: r for r in data["results"]}
    except (ValueError, KeyError, TypeError) as exc:
        raise RecordError(f"not a calc package JSON ({exc})", file=str(p)) from None
    if "peaks.target-frequencies" not in rows:
        raise RecordError("no peaks to target in this export", input_name="peaks.target-frequencies",
                          expected="a site-survey export", got=", ".join(list(rows)[:5]) + " ...", file=str(p))
    r = rows["peaks.target-frequencies"]
    out = {"targets": Q_(np.atleast_1d(np.asarray(r["value"], dtype=float)), r["unit"] or "Hz").to("Hz")}
    if "bands.midband" in rows and "maxhold.velocity-rms" in rows:
        c, v = rows["bands.midband"], rows["maxhold.velocity-rms"]
        out["centre"] = Q_(np.asarray(c["value"], dtype=float), c["unit"]).to("Hz")
        out["velocity_rms"] = Q_(np.asarray(v["value"], dtype=float), v["unit"].replace("µ", "u")).to("m/s")
    return out


RECEIVER_DIRECTIONS = ("normal", "along", "vertical")


def survey_requirement(path, *, direction: str | None = None) -> dict:
    """The requirement a column panel must meet, from a site-survey export JSON.

    Returns a dict with ``targets`` [Hz] and ``losses`` [dB] (the insertion loss each targeted peak
    needs, ``peaks.target-losses``), ``direction`` (the building direction the survey assessed, from
    its ``record.direction`` input), ``criterion`` (its id) and, when exported, the max-hold band
    spectrum ``centre`` [Hz] / ``velocity_rms`` [m/s].

    Raises a named error when the export has no targeted peaks, or when ``direction`` is given and the
    survey assessed another direction (or did not say which).
    """
    out = survey_from_export(path)
    p = Path(path)
    data = json.loads(p.read_text(encoding="utf-8"))
    rows = {r["id"]: r for r in data["results"]}
    inputs = {r.get("id"): r.get("value") for r in data.get("inputs", []) if isinstance(r, dict)}
    if out["targets"].size == 0:
        raise RecordError("the survey found no peak that needs insertion loss: there is nothing to target",
                          input_name="coverage.survey_results", expected="a survey export with peaks to target "
                          "(peaks.target-frequencies not empty)", got="no targeted peaks", file=str(p))
    if "peaks.target-losses" not in rows:
        raise RecordError("the survey export does not give the required insertion loss per peak",
                          input_name="coverage.survey_results", expected="peaks.target-losses in the export "
                          "(re-export the survey with this kit version)", file=str(p))
    r = rows["peaks.target-losses"]
    out["losses"] = Q_(np.atleast_1d(np.asarray(r["value"], dtype=float)), "dB")
    recorded = inputs.get("record.direction")
    out["direction"] = recorded if recorded in RECEIVER_DIRECTIONS else None
    out["criterion"] = inputs.get("criterion.id")
    if direction is not None:
        if direction not in RECEIVER_DIRECTIONS:
            raise InputError("unknown ground-motion direction", input_name="receiver.direction",
                             expected=", ".join(RECEIVER_DIRECTIONS), got=repr(direction))
        if out["direction"] is None:
            raise InputError("the survey does not say which building direction it recorded", input_name=
                             "receiver.direction", expected="a survey export whose record.direction is set",
                             got=f"receiver.direction = {direction!r}, survey {p.name} without record.direction",
                             file=str(p))
        if out["direction"] != direction:
            raise InputError("the survey did not record this direction", input_name="receiver.direction",
                             expected=f"{out['direction']!r} (the direction the survey assessed)",
                             got=repr(direction), file=str(p))
    return out


def scaled_band(*, lower, upper, nominal_modulus, modulus, id_prefix: str = "band.updated") -> CalcResult:
    """Band edges [frequency] moved from ``nominal_modulus`` to ``modulus`` [pressure] (f ∝ √E).

    ``value`` maps ``lower``, ``upper`` (Hz) and ``factor``.
    """
    f1 = check_positive(check_dimension(lower, name="lower", expected="frequency"), name="lower")
    f2 = check_positive(check_dimension(upper, name="upper", expected="frequency"), name="upper")
    en = check_positive(check_dimension(nominal_modulus, name="nominal_modulus", expected="pressure"),
                        name="nominal_modulus")
    e = check_positive(check_dimension(modulus, name="modulus", expected="pressure"), name="modulus")
    s = evaluate(FREQUENCY_FACTOR, id=f"{id_prefix}.factor", description="Frequency factor of the modulus change",
                 values={"E": e, "E_nom": en}, unit="", source=RAO_2017, sig=4)
    lo = evaluate(SCALED_EDGE, id=f"{id_prefix}.lower", description="Updated lower band edge",
                  values={"s": s.result, "f": f1}, unit="Hz", source=RAO_2017)
    hi = evaluate(SCALED_EDGE, id=f"{id_prefix}.upper", description="Updated upper band edge",
                  values={"s": s.result, "f": f2}, unit="Hz", source=RAO_2017)
    return CalcResult(value={"lower": lo.result, "upper": hi.result, "factor": float(s.result.m)},
                      steps=(s, lo, hi), title="Band moved to the calibrated modulus")


def scatter_factors(*, lower, lower_min, lower_max, upper, upper_min, upper_max) -> CalcResult:
    """Frequency factors (low, high) of a band estimate's scatter range [frequency inputs].

    The smaller of lower_min/lower and upper_min/upper, and the larger of lower_max/lower and
    upper_max/upper: the band is taken to move as a whole within these factors.
    """
    vals = {}
    for name, q in (("lower", lower), ("lower_min", lower_min), ("lower_max", lower_max), ("upper", upper),
                    ("upper_min", upper_min), ("upper_max", upper_max)):
        vals[name] = float(check_positive(check_dimension(q, name=name, expected="frequency"), name=name).to("Hz").m)
    s_lo = min(vals["lower_min"] / vals["lower"], vals["upper_min"] / vals["upper"], 1.0)
    s_hi = max(vals["lower_max"] / vals["lower"], vals["upper_max"] / vals["upper"], 1.0)
    step = quantity_step(id="coverage.scatter", description="Band frequency factors under the scatter range",
                         value=Q_([s_lo, s_hi], ""), sig=3,
                         method="ratios of the band estimate's edge ranges to its nominal edges (widest of the two "
                                "edges); the band is moved as a whole")
    return CalcResult(value=(s_lo, s_hi), steps=(step,), title="Band scatter factors")
