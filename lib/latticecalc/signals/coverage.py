"""Coverage: whether the designed stop band covers the measured peaks under the material's scatter.

The band is given by plain edges (from the sizing estimate, or later from the numerical
dispersion) and a scatter range of frequency factors.  At fixed geometry and density every
frequency of the lattice scales with √E (Euler–Bernoulli, f ∝ √(E I / ρ A), Rao 2017 eq. 8.82),
so a modulus range E_low..E_high moves the whole band by the factors √(E_low/E_nom) and
√(E_high/E_nom) (:func:`frequency_factors`).  A peak is *covered* when it lies inside the band for
every factor in the range (above the highest lower edge and below the lowest upper edge),
*nominally covered* when only the nominal band holds it.

:func:`band_margins` is the check with its uncertainties listed one by one, each a pair of
frequency factors (low, high) on the whole band:

* modulus scatter, f ∝ √E: the batch tolerance on the catalogue modulus, or the calibrated
  modulus with its worst-case half-width (:func:`modulus_scatter`);
* temperature range: the material's ``modulus_low_factor``/``modulus_high_factor`` (:func:`temperature_range`);
* strut geometry, f ∝ d/L², and density, f ∝ 1/√ρ (:func:`strut_geometry`, :func:`density_scatter`); for
  struts carrying a mass at mid-span, the ratios of the Rayleigh frequency with that mass (f → d²/L^1.5 as
  the mass dominates; the density then matters less);
* end fixity: the frequency factor of the modelled clamped–clamped strut ends against a bracket
  such as clamped–pinned, (λ_cp/λ_cc)² = (3.9266/4.7300)² = 0.689 (Rao 2017 Table 8.1; :func:`end_fixity`),
  the bare strut's bracket also for struts with a mass (no closed form for a clamped–pinned strut with one);
* the spread of the measured peak, ± Δ: the band must hold the peak anywhere in f ± Δ, the same as
  the band moved by f/(f + Δ) and f/(f − Δ) (:func:`peak_spread`).

A peak passes only inside the band held under all of them at once (worst case: the product of the
factors); a root-sum-square of the factors' deviations is shown for information.  The margins
table gives each uncertainty alone, so the governing one is named.
"""

from __future__ import annotations

import json
from collections.abc import Sequence
from dataclasses import dataclass
from functools import cache
from pathlib import Path

import numpy as np
import pint
import sympy as sp

from latticecalc.errors import InputError, RecordError
from latticecalc.physics import tolerance as tol
from latticecalc.physics.beams import RAO_2017, eigenvalue
from latticecalc.sheet import COMMON_PRACTICE, CalcResult, Formula, Source, check, evaluate, quantity_step
from latticecalc.units import Q_, check_dimension, check_positive, format_number, format_quantity

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


def _peak_status(margin_lower: float, margin_upper: float, f: float, f1: float, f2: float) -> str:
    """"covered" (inside the held band), "nominal only" (inside [f1, f2] alone) or "not covered"."""
    if margin_lower >= 0 and margin_upper >= 0:
        return "covered"
    return "nominal only" if f1 <= f <= f2 else "not covered"


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
        status.append(_peak_status(m_lo[k], m_hi[k], f, f1, f2))
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


_SURVEY_INPUT = "coverage.survey_results"
#: Most values one result row of an export may hold.
MAX_EXPORT_VALUES = 100_000


def _survey_export(path) -> tuple[dict, dict]:
    """``(data, rows by id)`` of a site-survey export, read through :mod:`latticecalc.files`."""
    from latticecalc.files import read_json

    p = Path(path)
    data = read_json(p, what="the survey export", input_name=_SURVEY_INPUT, file=str(p))
    results = data.get("results") if isinstance(data, dict) else None
    if not isinstance(results, list):
        raise RecordError("not a calc package JSON", input_name=_SURVEY_INPUT, file=str(p),
                          expected="the JSON written by 'latticecalc export' for a site-survey project "
                          "(a 'results' list)", got="no 'results' list")
    return data, {r.get("id"): r for r in results if isinstance(r, dict)}


def _survey_values(rows: dict, key: str, *, unit: str | None, default_unit: str = "", file: str):
    """The values of result ``key`` as a 1-D Quantity in ``unit``, or RecordError naming the step and file.

    With ``unit`` None: a float array (the row's unit ignored).
    """
    from latticecalc.files import excerpt, not_a_number

    row = rows[key]
    value, text = row.get("value"), row.get("unit") or default_unit
    items = value if isinstance(value, list) else [value]
    if len(items) > MAX_EXPORT_VALUES:
        raise RecordError(f"step {key} has too many values", input_name=_SURVEY_INPUT, file=file,
                          expected=f"at most {MAX_EXPORT_VALUES}", got=str(len(items)))
    for v in items:
        got = not_a_number(v)
        if got is not None:
            raise RecordError(f"the values of step {key} are not numbers", input_name=_SURVEY_INPUT, file=file,
                              expected="a finite number or a list of them", got=got)
    numbers = np.atleast_1d(np.asarray(items, dtype=float))
    if unit is None:
        return numbers
    if not isinstance(text, str) or len(text) > 40:
        raise RecordError(f"the unit of step {key} is not a unit", input_name=_SURVEY_INPUT, file=file,
                          expected=f"a unit convertible to {unit}", got=f"a {type(text).__name__}")
    try:
        return Q_(numbers, text.replace("µ", "u")).to(unit)
    except (pint.errors.PintError, ValueError, TypeError, AttributeError, SyntaxError):
        raise RecordError(f"the unit of step {key} does not fit", input_name=_SURVEY_INPUT, file=file,
                          expected=f"a unit convertible to {unit}", got=excerpt(text, limit=40)) from None


def survey_from_export(path) -> dict:
    """Target peaks (and the max-hold band spectrum, when present) from a site-survey export JSON.

    Reads the ``results`` rows of ``out/<calc>.json`` written by ``latticecalc export`` for a
    ``site-survey`` project: ``peaks.target-frequencies`` (Hz), and if shown there
    ``bands.midband`` with ``maxhold.velocity-rms``.  Returns a dict with ``targets`` [Hz] and
    optionally ``centre`` [Hz] and ``velocity_rms`` [m/s].

    The file is read through :mod:`latticecalc.files` (a regular UTF-8 file within the JSON
    cap); a value that is not a number, or a unit that does not fit, is a
    :class:`~latticecalc.errors.RecordError` naming the step and the file.
    """
    p = Path(path)
    _, rows = _survey_export(p)
    if "peaks.target-frequencies" not in rows:
        raise RecordError("no peaks to target in this export", input_name="peaks.target-frequencies",
                          expected="a site-survey export", got=f"{len(rows)} other results", file=str(p))
    out = {"targets": _survey_values(rows, "peaks.target-frequencies", unit="Hz", default_unit="Hz", file=str(p))}
    if "bands.midband" in rows and "maxhold.velocity-rms" in rows:
        out["centre"] = _survey_values(rows, "bands.midband", unit="Hz", file=str(p))
        out["velocity_rms"] = _survey_values(rows, "maxhold.velocity-rms", unit="m/s", file=str(p))
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
    data, rows = _survey_export(p)
    listed = data.get("inputs", [])
    inputs = {r.get("id"): r.get("value") for r in (listed if isinstance(listed, list) else [])
              if isinstance(r, dict)}
    if out["targets"].size == 0:
        raise RecordError("the survey found no peak that needs insertion loss: there is nothing to target",
                          input_name="coverage.survey_results", expected="a survey export with peaks to target "
                          "(peaks.target-frequencies not empty)", got="no targeted peaks", file=str(p))
    if "peaks.target-losses" not in rows:
        raise RecordError("the survey export does not give the required insertion loss per peak",
                          input_name="coverage.survey_results", expected="peaks.target-losses in the export "
                          "(re-export the survey with this kit version)", file=str(p))
    out["losses"] = Q_(_survey_values(rows, "peaks.target-losses", unit=None, file=str(p)), "dB")
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


# --------------------------------------------------------------------------------------------------------
# margins that carry the uncertainties, one by one
# --------------------------------------------------------------------------------------------------------
RAO_TABLE_8_1 = Source(author="Rao, S. S.", title="Mechanical Vibrations, 6th ed.", year=2017,
                       locator="Table 8.1: first-mode λ₁ = 4.7300 clamped–clamped, 3.9266 clamped–pinned, "
                               "π pinned–pinned (f ∝ λ², eq. 8.82)")
#: The strut end condition the frame model (and the band it computes) holds: rigid nodes.
MODELLED_FIXITY = "clamped-clamped"
#: End conditions the modelled one may be bracketed with (the same one: no bracket).
FIXITY_BRACKETS = ("clamped-pinned", "pinned-pinned", "clamped-clamped")
#: Default bracket: one end of a strut free to rotate (a node that is not rigid).
DEFAULT_FIXITY_BRACKET = "clamped-pinned"
#: Default ± spread of a measured peak's frequency, as a fraction of the peak.
DEFAULT_PEAK_SPREAD = 0.02

_lb, _lm = sp.symbols("lambda_b lambda_m")
#: Frequency factor of a change of end fixity: f ∝ λ₁² at fixed strut (Rao 2017 eq. 8.82, Table 8.1).
FIXITY_FACTOR = Formula("s_fix", (_lb / _lm) ** 2, {"s_fix": r"s_{\mathrm{fix}}",
                                                    "lambda_b": r"\lambda_{1,\mathrm{bracket}}",
                                                    "lambda_m": r"\lambda_{1,\mathrm{model}}"})
_fpk, _dpk = sp.symbols("f_p Delta_p")
_PEAK_NAMES = {"f_p": r"f_{\mathrm{p}}", "Delta_p": r"\Delta_{\mathrm{p}}"}
#: The peak at its highest, f + Δ, inside the band ⇔ the band moved down by f/(f + Δ) holds f.
PEAK_FACTOR_LOW = Formula("s_low", _fpk / (_fpk + _dpk), {**_PEAK_NAMES, "s_low": r"s_{\mathrm{p,low}}"})
#: The peak at its lowest, f − Δ, inside the band ⇔ the band moved up by f/(f − Δ) holds f.
PEAK_FACTOR_HIGH = Formula("s_high", _fpk / (_fpk - _dpk), {**_PEAK_NAMES, "s_high": r"s_{\mathrm{p,high}}"})
WORST_CASE_COMBINATION = Source(author="common practice", title="worst case: every uncertainty at its limit at "
                                "once; the band moves by the product of the frequency factors", tag="common practice")
RSS_COMBINATION = Source(author="common practice", title="root-sum-square of the factors' deviations from 1, "
                         "as for independent errors (information only, not the verdict)", tag="common practice")

#: Symbols of the factors in the combined formulas, by uncertainty key.
_FACTOR_SYMBOLS = {"modulus": "E", "temperature": "T", "geometry": "geo", "density": "rho", "fixity": "fix",
                   "peak-spread": "p"}
_FACTOR_LATEX = {"modulus": "s_{E}", "temperature": "s_{T}", "geometry": r"s_{\mathrm{geo}}", "density": r"s_{\rho}",
                 "fixity": r"s_{\mathrm{fix}}", "peak-spread": r"s_{\mathrm{p}}"}


@dataclass(frozen=True, kw_only=True)
class BandUncertainty(CalcResult):
    """One uncertainty as frequency factors on the whole band; ``value`` = (low, high).

    ``low`` and ``high`` are floats, or arrays with one value per peak when ``per_peak`` (the
    measured peak's spread).  ``key`` names it in the combined formulas, ``label`` in the table,
    ``basis`` says what it rests on (inputs and their sources).
    """

    key: str
    label: str
    basis: str
    low: object
    high: object
    per_peak: bool = False


def _uncertainty(*, key, label, basis, low, high, steps, per_peak=False, title="") -> BandUncertainty:
    lo = np.asarray(low, dtype=float)
    hi = np.asarray(high, dtype=float)
    if np.any(~np.isfinite(lo)) or np.any(~np.isfinite(hi)) or np.any(lo <= 0) or np.any(lo > 1 + 1e-12) \
            or np.any(hi < 1 - 1e-12):
        raise InputError("frequency factors must bracket 1", input_name=key,
                         expected="0 < low <= 1 <= high", got=f"{low}, {high}")
    if not per_peak:
        lo, hi = float(lo), float(hi)
    return BandUncertainty(value=(lo, hi), steps=tuple(steps), key=key, label=label, basis=basis, low=lo,
                           high=hi, per_peak=per_peak, title=title or label)


def modulus_scatter(*, nominal_modulus, tolerance, basis: str, source: Source | None = None,
                    label: str = "Modulus scatter", id_prefix: str = "coverage.modulus") -> BandUncertainty:
    """Band factors √((E ∓ ΔE)/E) of a ± modulus half-width (f ∝ √E, Rao 2017 eq. 8.82).

    Parameters
    ----------
    nominal_modulus:
        The dynamic modulus the band was computed with [pressure] (the calibrated one, when calibrated).
    tolerance:
        ± half-width: a pressure (a calibration's worst-case bound) or a dimensionless fraction
        (the supplier's batch tolerance).
    basis:
        What the half-width rests on, for the margins table.
    source:
        Where the half-width comes from (shown on the steps; the factor formula is Rao's).
    label, id_prefix:
        Table label and step id prefix.
    """
    en = check_positive(check_dimension(nominal_modulus, name="nominal_modulus", expected="pressure"),
                        name="nominal_modulus").to("MPa")
    hw = tol.half_width(en, tolerance, name="modulus tolerance").to("MPa")
    text = f" (± {format_quantity(hw)}: {basis})"
    lo = evaluate(FREQUENCY_FACTOR, id=f"{id_prefix}.factor-low", description="Band frequency factor, lowest "
                  "modulus" + text, values={"E": en - hw, "E_nom": en}, unit="", source=source or RAO_2017, sig=4)
    hi = evaluate(FREQUENCY_FACTOR, id=f"{id_prefix}.factor-high", description="Band frequency factor, highest "
                  "modulus" + text, values={"E": en + hw, "E_nom": en}, unit="", source=source or RAO_2017, sig=4)
    return _uncertainty(key="modulus", label=label, basis=f"E = {format_quantity(en)} ± {format_quantity(hw)} "
                        f"({format_number(float((100 * hw / en).to('').m), 3)} %): {basis}",
                        low=lo.result.m, high=hi.result.m, steps=(lo, hi))


def temperature_range(*, material, id_prefix: str = "coverage.temperature") -> BandUncertainty:
    """Band factors √k of the material's dynamic modulus over its service temperatures.

    ``material`` is a :class:`~latticecalc.materials.Material`; k are its ``modulus_low_factor``
    and ``modulus_high_factor`` (f ∝ √E).  A material that does not state them gives factors of 1
    and the basis says so.
    """
    en = material.dynamic_modulus()
    e_lo, e_hi = material.modulus_range()
    stated = material.is_stated("modulus_low_factor") and material.is_stated("modulus_high_factor")
    where = material.service_temperature or "service temperatures"
    src = material.source("modulus_low_factor")
    lo = evaluate(FREQUENCY_FACTOR, id=f"{id_prefix}.factor-low", description="Band frequency factor at the warm "
                  f"end of {where} (modulus × {material.modulus_low_factor:g})", values={"E": e_lo, "E_nom": en},
                  unit="", source=RAO_2017, sig=4)
    hi = evaluate(FREQUENCY_FACTOR, id=f"{id_prefix}.factor-high", description="Band frequency factor at the cold "
                  f"end of {where} (modulus × {material.modulus_high_factor:g})", values={"E": e_hi, "E_nom": en},
                  unit="", source=RAO_2017, sig=4)
    basis = (f"{material.name}: modulus × {material.modulus_low_factor:g} … × {material.modulus_high_factor:g} "
             f"over {where} ({src.cite()})" if stated else
             f"{material.name} states no temperature factors: none applied (state modulus_low_factor and "
             "modulus_high_factor for the service temperatures)")
    return _uncertainty(key="temperature", label="Temperature range", basis=basis, low=lo.result.m,
                        high=hi.result.m, steps=(lo, hi))


def strut_geometry(*, length, diameter, length_tolerance, diameter_tolerance, added_mass=None, density=None,
                   basis: str = "", id_prefix: str = "coverage.geometry") -> BandUncertainty:
    """Band factors of the strut diameter and length tolerances (f ∝ d/L², worst corners).

    ``length``, ``diameter`` [length] of the resonating (longest lattice) strut; tolerances ± half-widths
    [length or fraction]; ``added_mass`` [mass] at the strut's mid-span with the strut ``density``: the
    factors of the strut with that mass (f ∝ d²/L^1.5 as the mass dominates).  See
    :func:`latticecalc.physics.tolerance.strut_frequency_factors`.
    """
    res = tol.strut_frequency_factors(length=length, diameter=diameter, length_tolerance=length_tolerance,
                                      diameter_tolerance=diameter_tolerance, added_mass=added_mass,
                                      density=density, id_prefix=id_prefix)
    L = check_dimension(length, name="length", expected="length").to("mm")
    d = check_dimension(diameter, name="diameter", expected="length").to("mm")
    hl = tol.half_width(L, length_tolerance, name="length_tolerance").to("mm")
    hd = tol.half_width(d, diameter_tolerance, name="diameter_tolerance").to("mm")
    text = f"d = {format_quantity(d)} ± {format_quantity(hd)}, L = {format_quantity(L)} ± {format_quantity(hl)}"
    return _uncertainty(key="geometry", label="Strut geometry", basis=text + (f": {basis}" if basis else ""),
                        low=res.value[0], high=res.value[1], steps=res.steps)


def density_scatter(*, density, density_tolerance, added_mass=None, length=None, diameter=None, basis: str = "",
                    id_prefix: str = "coverage.density") -> BandUncertainty:
    """Band factors of a density tolerance (f ∝ 1/√ρ); ``density`` [density], tolerance ± (density or fraction).

    With ``added_mass`` at the strut's mid-span (and the strut ``length`` and ``diameter``) the factors of
    the strut with that mass, which the density moves less.
    """
    res = tol.density_frequency_factors(density=density, density_tolerance=density_tolerance,
                                        added_mass=added_mass, length=length, diameter=diameter,
                                        id_prefix=id_prefix)
    rho = check_dimension(density, name="density", expected="density").to("kg/m^3")
    hr = tol.half_width(rho, density_tolerance, name="density_tolerance")
    text = f"ρ = {format_quantity(rho)} ± {format_quantity(hr)}"
    return _uncertainty(key="density", label="Density", basis=text + (f": {basis}" if basis else ""),
                        low=res.value[0], high=res.value[1], steps=res.steps)


def end_fixity(*, bracket: str = DEFAULT_FIXITY_BRACKET, modelled: str = MODELLED_FIXITY,
               id_prefix: str = "coverage.fixity") -> BandUncertainty:
    """Band factors of the strut end fixity: the modelled condition against a bracket (f ∝ λ₁²).

    The frame model holds the strut ends rigidly (clamped–clamped); a real node lets them rotate
    somewhat, so the strut frequencies lie between the bracket's and the model's.  The factor
    (λ₁,bracket/λ₁,model)² is the band's lower bound when the bracket is the softer one: for
    clamped–pinned (3.9266/4.7300)² = 0.689 (Rao 2017 Table 8.1).  ``bracket = modelled``: no bracket.
    """
    for name, val in (("bracket", bracket), ("modelled", modelled)):
        if val not in FIXITY_BRACKETS:
            raise InputError("unknown end fixity", input_name=f"coverage.fixity_{name}",
                             expected=", ".join(FIXITY_BRACKETS), got=repr(val))
    lam_m = quantity_step(id=f"{id_prefix}.lambda-model", description=f"First-mode eigenvalue, {modelled} (the "
                          "modelled strut ends)", value=Q_(eigenvalue(supports=modelled, mode=1), ""), sig=5,
                          method="first root of the characteristic equation", source=RAO_TABLE_8_1)
    lam_b = quantity_step(id=f"{id_prefix}.lambda-bracket", description=f"First-mode eigenvalue, {bracket} (the "
                          "fixity bracket)", value=Q_(eigenvalue(supports=bracket, mode=1), ""), sig=5,
                          method="first root of the characteristic equation", source=RAO_TABLE_8_1)
    s = evaluate(FIXITY_FACTOR, id=f"{id_prefix}.factor", description=f"Band frequency factor of the fixity "
                 f"bracket: {bracket} struts against the modelled {modelled}",
                 values={"lambda_b": lam_b.result, "lambda_m": lam_m.result}, unit="", source=RAO_TABLE_8_1, sig=4)
    f = float(s.result.m)
    basis = (f"{bracket} against the modelled {modelled}: (λ_b/λ_m)² = {f:.4g} (Rao 2017 Table 8.1)"
             if bracket != modelled else "no bracket: the modelled strut ends are taken as built")
    return _uncertainty(key="fixity", label="End fixity", basis=basis, low=min(f, 1.0), high=max(f, 1.0),
                        steps=(lam_m, lam_b, s))


def peak_spread(*, peaks, fraction=None, spread=None, resolution=None,
                id_prefix: str = "coverage.spread") -> BandUncertainty:
    """Band-equivalent factors of the spread ± Δ of each measured peak's frequency.

    The band must hold the peak anywhere in f ± Δ: f + Δ below the upper edge is f below the upper
    edge × f/(f + Δ), and f − Δ above the lower edge is f above the lower edge × f/(f − Δ).

    Parameters
    ----------
    peaks:
        Peak frequencies [frequency].
    fraction:
        ± spread as a fraction of each peak (default :data:`DEFAULT_PEAK_SPREAD` when ``spread`` is None).
    spread:
        ± spread [frequency], the same for every peak; replaces ``fraction``.
    resolution:
        Frequency resolution of the survey's spectrum [frequency], or None: a peak is not known closer
        than one bin, so Δ is at least this.
    id_prefix:
        Step id prefix.
    """
    fp = np.atleast_1d(check_positive(check_dimension(peaks, name="peaks", expected="frequency"),
                                      name="peaks").to("Hz").m).astype(float)
    if spread is not None:
        dv = float(check_positive(check_dimension(spread, name="coverage.peak_spread_hz", expected="frequency"),
                                  name="coverage.peak_spread_hz", allow_zero=True).to("Hz").m)
        delta = np.full(fp.shape, dv)
        how = f"± {format_number(dv, 3)} Hz (coverage.peak_spread_hz)"
    else:
        frac = DEFAULT_PEAK_SPREAD if fraction is None else float(fraction)
        if not 0 <= frac < 1:
            raise InputError("a peak spread is a fraction of the peak below 1", input_name="coverage.peak_spread",
                             expected="0 <= spread < 1 (0.02 for ± 2 %)", got=f"{frac:g}")
        delta = frac * fp
        how = f"± {format_number(100 * frac, 3)} % of the peak (coverage.peak_spread)"
    if resolution is not None:
        res = float(check_positive(check_dimension(resolution, name="resolution", expected="frequency"),
                                   name="resolution").to("Hz").m)
        if np.any(delta < res):
            how += f", at least the survey's resolution {format_number(res, 3)} Hz"
        delta = np.maximum(delta, res)
    if np.any(delta >= fp):
        raise InputError("the peak spread is as large as the peak", input_name="coverage.peak_spread",
                         expected="a spread smaller than every peak", got=how)
    d_step = quantity_step(id=f"{id_prefix}.half-width", description="± spread of each measured peak's frequency",
                           value=Q_(delta, "Hz"), unit="Hz", sig=3, method=how, source=COMMON_PRACTICE)
    lo = evaluate(PEAK_FACTOR_LOW, id=f"{id_prefix}.factor-low", description="Band-equivalent factor of the peak "
                  "at its highest (f + Δ must lie below the upper edge)", values={"f_p": Q_(fp, "Hz"),
                  "Delta_p": d_step.result}, unit="", sig=4, source=COMMON_PRACTICE)
    hi = evaluate(PEAK_FACTOR_HIGH, id=f"{id_prefix}.factor-high", description="Band-equivalent factor of the peak "
                  "at its lowest (f − Δ must lie above the lower edge)", values={"f_p": Q_(fp, "Hz"),
                  "Delta_p": d_step.result}, unit="", sig=4, source=COMMON_PRACTICE)
    return _uncertainty(key="peak-spread", label="Measured peak spread", basis=how,
                        low=np.atleast_1d(lo.result.m), high=np.atleast_1d(hi.result.m),
                        steps=(d_step, lo, hi), per_peak=True)


def survey_resolution(path):
    """The frequency resolution of a site-survey export's narrowband spectrum [Hz], or None when not exported.

    Read from the result ``narrowband.resolution`` (the resolution the peaks were found at) or, failing
    that, the survey's input ``spectra.resolution``.
    """
    p = Path(path)
    try:
        data = json.loads(p.read_text(encoding="utf-8"))
    except (OSError, ValueError) as exc:
        raise RecordError(f"survey export not readable ({exc})", input_name="coverage.survey_results",
                          file=str(p)) from None
    found = {}
    for group in ("results", "inputs"):
        for row in data.get(group, []) if isinstance(data, dict) else []:
            if isinstance(row, dict) and row.get("id") in ("narrowband.resolution", "spectra.resolution"):
                found.setdefault(row["id"], row)
    for key in ("narrowband.resolution", "spectra.resolution"):
        row = found.get(key)
        if row is None:
            continue
        try:
            q = Q_(float(row["value"]), str(row.get("unit") or "Hz"))
            return check_positive(check_dimension(q, name=key, expected="frequency"), name=key).to("Hz")
        except (TypeError, ValueError, KeyError):
            continue
    return None


def calibration_scatter(exported, *, nominal_modulus, id_prefix: str = "coverage.modulus") -> BandUncertainty:
    """The modulus scatter of a calibrated lattice: the calibration's worst-case half-width.

    ``exported`` is a :class:`latticecalc.signals.frf.ExportedCalibration` (its ``bound`` carries the
    coupon's frequency, geometry and density tolerances); ``nominal_modulus`` [pressure] the
    calibrated dynamic modulus the band was computed with.  An export without a bound (made before
    the tolerances were propagated) is refused: it would hide the coupon's tolerances.
    """
    if getattr(exported, "bound", None) is None:
        raise RecordError("the prototype-test export gives no worst-case bound of the calibrated modulus",
                          input_name="lattice.calibration", expected="calibration.bound in the export (re-run and "
                          "re-export the prototype test with this kit version, with its coupon tolerances)",
                          got="calibration.modulus without calibration.bound")
    src = exported.source
    return modulus_scatter(nominal_modulus=nominal_modulus, tolerance=exported.bound, source=src,
                           label="Modulus scatter (calibrated)", id_prefix=id_prefix,
                           basis=f"calibration's worst-case bound (coupon frequency, geometry and density "
                                 f"tolerances), {src.cite()}")


def _symbol_name(key: str) -> str:
    return "s_" + _FACTOR_SYMBOLS.get(key, key.replace("-", "_"))


@cache
def _combined_formulas(keys: tuple[str, ...]) -> tuple[Formula, Formula, Formula, Formula]:
    """Worst-case (product) and root-sum-square combined factors over the uncertainties ``keys``."""
    syms = [sp.Symbol(_symbol_name(k)) for k in keys]
    names = {s.name: _FACTOR_LATEX.get(k, r"s_{\mathrm{" + k.replace("-", "") + "}}") for s, k in zip(syms, keys)}
    prod = sp.Mul(*syms, evaluate=False) if len(syms) > 1 else syms[0]
    worst_low = Formula("S_low", prod, {**names, "S_low": r"S_{\mathrm{low}}"})
    worst_high = Formula("S_high", prod, {**names, "S_high": r"S_{\mathrm{high}}"})
    rss_low = Formula("S_low_rss", 1 - sp.sqrt(sum((1 - s) ** 2 for s in syms)),
                      {**names, "S_low_rss": r"S_{\mathrm{low,RSS}}"})
    rss_high = Formula("S_high_rss", 1 + sp.sqrt(sum((s - 1) ** 2 for s in syms)),
                       {**names, "S_high_rss": r"S_{\mathrm{high,RSS}}"})
    return worst_low, worst_high, rss_low, rss_high


#: Columns of :meth:`Margins.rows`.
MARGIN_COLUMNS = ("uncertainty", "basis", "factor low", "factor high", "held lower edge (Hz)",
                  "held upper edge (Hz)", "utilisation", "")


@dataclass(frozen=True, kw_only=True)
class Margins(Coverage):
    """Result of :func:`band_margins`: the coverage verdict with every uncertainty listed.

    ``value`` has the keys of :class:`Coverage` (the held edges ``lower_worst``/``upper_worst`` are
    arrays, one per peak, under every uncertainty) plus ``governing`` (label of the uncertainty that
    alone uses most of each peak's margin), ``covered_rss`` (information) and ``band_held`` (the edges
    held under the band's own uncertainties, without the peaks' spread, for a figure).
    """

    uncertainties: tuple[BandUncertainty, ...]
    low: np.ndarray          # (n_uncertainties, n_peaks) factors
    high: np.ndarray
    alone: np.ndarray        # (n_uncertainties, n_peaks) utilisation with that uncertainty alone
    combined: tuple[np.ndarray, np.ndarray]
    rss: tuple[np.ndarray, np.ndarray]

    def rows(self, k: int = 0) -> list[list[str]]:
        """The margins table of peak ``k`` (0-based): each uncertainty alone, then combined (:data:`MARGIN_COLUMNS`)."""
        f1, f2 = (float(self.value[e].to("Hz").m) for e in ("lower", "upper"))
        fk = float(self.value["frequency"].to("Hz").m[k])
        gov = int(np.argmax(self.alone[:, k]))
        out = [["none (nominal band)", "designed band", "1", "1", f"{f1:.4g}", f"{f2:.4g}",
                f"{max(f1 / fk, fk / f2):.3f}", ""]]
        for i, u in enumerate(self.uncertainties):
            lo, hi = self.low[i, k], self.high[i, k]
            out.append([u.label, u.basis, f"{lo:.4f}", f"{hi:.4f}", f"{f1 * hi:.4g}", f"{f2 * lo:.4g}",
                        f"{self.alone[i, k]:.3f}", "governs" if i == gov else ""])
        for name, (lo_a, hi_a), verdict in (("Combined, worst case (the verdict)", self.combined,
                                             self.value["status"][k]),
                                            ("Combined, root-sum-square (information)", self.rss,
                                             "covered" if self.value["covered_rss"][k] else "not covered")):
            lo, hi = float(lo_a[k]), float(hi_a[k])
            util = max(f1 * hi / fk, fk / (f2 * lo)) if lo > 0 else float("inf")
            out.append([name, verdict, f"{lo:.4f}", f"{hi:.4f}", f"{f1 * hi:.4g}", f"{f2 * lo:.4g}",
                        f"{util:.3f}", ""])
        return out


def band_margins(*, lower, upper, peaks, uncertainties: Sequence[BandUncertainty],
                 id_prefix: str = "coverage") -> Margins:
    """Each peak checked against the band held under every uncertainty at once, with the margins table.

    The band [lower, upper] moves as a whole by each uncertainty's frequency factors; under all of
    them together (worst case) its lower edge rises to lower × Π high and its upper edge falls to
    upper × Π low.  A peak is covered when it lies inside that held band.  The root-sum-square
    combination 1 ∓ √(Σ (s − 1)²) is given for information.  For each peak, the uncertainty whose
    band alone gives the highest utilisation governs.

    Parameters
    ----------
    lower, upper:
        Nominal band edges [frequency] (the computed gap, with the modelled clamped strut ends).
    peaks:
        Peak frequencies [frequency].
    uncertainties:
        :class:`BandUncertainty` results (:func:`modulus_scatter`, :func:`temperature_range`,
        :func:`strut_geometry`, :func:`density_scatter`, :func:`end_fixity`, :func:`peak_spread`),
        each key once.
    id_prefix:
        Step id prefix.
    """
    f1 = check_positive(check_dimension(lower, name="lower", expected="frequency"), name="lower").to("Hz").m
    f2 = check_positive(check_dimension(upper, name="upper", expected="frequency"), name="upper").to("Hz").m
    f1, f2 = float(f1), float(f2)
    if not f2 > f1:
        raise InputError("the band's upper edge must lie above its lower edge", input_name="upper",
                         expected=f"> {f1:g} Hz", got=f"{f2:g} Hz")
    fp = np.atleast_1d(check_positive(check_dimension(peaks, name="peaks", expected="frequency"),
                                      name="peaks").to("Hz").m).astype(float)
    uncs = tuple(uncertainties)
    if not uncs or not all(isinstance(u, BandUncertainty) for u in uncs):
        raise InputError("band_margins needs a list of uncertainties", input_name="uncertainties",
                         expected="BandUncertainty results (modulus_scatter(), end_fixity(), …)",
                         got=repr([type(u).__name__ for u in uncs]))
    keys = tuple(u.key for u in uncs)
    if len(set(keys)) != len(keys):
        raise InputError("an uncertainty is listed twice", input_name="uncertainties",
                         expected="each key once", got=", ".join(keys))
    n = fp.size
    low = np.empty((len(uncs), n))
    high = np.empty((len(uncs), n))
    for i, u in enumerate(uncs):
        lo, hi = np.asarray(u.low, dtype=float), np.asarray(u.high, dtype=float)
        if u.per_peak and lo.size != n:
            raise InputError("a per-peak uncertainty has one factor per peak", input_name=u.key,
                             expected=f"{n} factors", got=f"{lo.size}")
        low[i], high[i] = np.broadcast_to(lo, (n,)), np.broadcast_to(hi, (n,))
    p = id_prefix
    steps = [quantity_step(id=f"{p}.band", description="Designed band, nominal (modelled clamped strut ends)",
                           value=Q_([f1, f2], "Hz"), unit="Hz", method="from the designed band")]
    for u in uncs:
        steps.extend(u.steps)

    def vals(arr):
        return {_symbol_name(k): Q_(arr[i] if uncs[i].per_peak else float(arr[i, 0]), "") for i, k in enumerate(keys)}

    w_lo_f, w_hi_f, r_lo_f, r_hi_f = _combined_formulas(keys)
    s_lo = evaluate(w_lo_f, id=f"{p}.combined-low", description="Combined lowest band factor, worst case (every "
                    "uncertainty at its low end at once)", values=vals(low), unit="", sig=4,
                    source=WORST_CASE_COMBINATION)
    s_hi = evaluate(w_hi_f, id=f"{p}.combined-high", description="Combined highest band factor, worst case (every "
                    "uncertainty at its high end at once)", values=vals(high), unit="", sig=4,
                    source=WORST_CASE_COMBINATION)
    r_lo = evaluate(r_lo_f, id=f"{p}.rss-low", description="Combined lowest band factor, root-sum-square "
                    "(information only)", values=vals(low), unit="", sig=4, source=RSS_COMBINATION)
    r_hi = evaluate(r_hi_f, id=f"{p}.rss-high", description="Combined highest band factor, root-sum-square "
                    "(information only)", values=vals(high), unit="", sig=4, source=RSS_COMBINATION)
    S_lo = np.broadcast_to(np.asarray(s_lo.result.m, dtype=float), (n,)).copy()
    S_hi = np.broadcast_to(np.asarray(s_hi.result.m, dtype=float), (n,)).copy()
    R_lo = np.broadcast_to(np.asarray(r_lo.result.m, dtype=float), (n,)).copy()
    R_hi = np.broadcast_to(np.asarray(r_hi.result.m, dtype=float), (n,)).copy()
    held_lo = evaluate(SCALED_EDGE, id=f"{p}.held-lower", description="Lower band edge held under every uncertainty "
                       "(nominal lower edge × combined highest factor)", values={"s": s_hi.result, "f": Q_(f1, "Hz")},
                       unit="Hz", source=WORST_CASE_COMBINATION)
    held_hi = evaluate(SCALED_EDGE, id=f"{p}.held-upper", description="Upper band edge held under every uncertainty "
                       "(nominal upper edge × combined lowest factor)", values={"s": s_lo.result, "f": Q_(f2, "Hz")},
                       unit="Hz", source=WORST_CASE_COMBINATION)
    steps += [s_lo, s_hi, r_lo, r_hi, held_lo, held_hi]
    lo_w = np.broadcast_to(np.asarray(held_lo.result.m, dtype=float), (n,)).copy()
    hi_w = np.broadcast_to(np.asarray(held_hi.result.m, dtype=float), (n,)).copy()
    if np.any(lo_w >= hi_w):
        steps.append(quantity_step(id=f"{p}.held-empty", description="No frequency lies in the band under every "
                                   "uncertainty at once (held lower edge at or above the held upper edge)",
                                   value=Q_(hi_w - lo_w, "Hz"), unit="Hz", sig=3,
                                   method="held upper edge − held lower edge"))
    alone = np.maximum(f1 * high / fp[None, :], fp[None, :] / (f2 * low))
    labels = [u.label for u in uncs]
    governing, status, rss_ok = [], [], []
    m_lo, m_hi = fp - lo_w, hi_w - fp
    for k, f in enumerate(fp):
        gov = int(np.argmax(alone[:, k]))
        governing.append(labels[gov])
        status.append(_peak_status(m_lo[k], m_hi[k], f, f1, f2))
        rss_ok.append(bool(f1 * R_hi[k] <= f <= f2 * R_lo[k]))
        i_lo, i_hi = int(np.argmax(high[:, k])), int(np.argmin(low[:, k]))
        gov_text = (f"Governing uncertainty for this peak: {labels[gov]} (alone: utilisation {alone[gov, k]:.3f}). "
                    f"Root-sum-square (information): held band {f1 * R_hi[k]:.4g}–{f2 * R_lo[k]:.4g} Hz, "
                    + ("covered." if rss_ok[-1] else "not covered."))
        steps.append(check(id=f"{p}.peak{k + 1}-lower", description=f"Panel's own stop band: peak {k + 1} "
                           f"({f:.3g} Hz) above the lower edge held under every uncertainty (worst case; "
                           f"this edge moves most with: {labels[i_lo]})", demand=Q_(f, "Hz"), limit=Q_(lo_w[k], "Hz"),
                           sense="min", source=WORST_CASE_COMBINATION, note=gov_text))
        steps.append(check(id=f"{p}.peak{k + 1}-upper", description=f"Panel's own stop band: peak {k + 1} "
                           f"({f:.3g} Hz) below the upper edge held under every uncertainty (worst case; "
                           f"this edge moves most with: {labels[i_hi]})", demand=Q_(f, "Hz"), limit=Q_(hi_w[k], "Hz"),
                           sense="max", source=WORST_CASE_COMBINATION, note=gov_text))
    band_only = [i for i, u in enumerate(uncs) if not u.per_peak]
    b_lo = f1 * float(np.prod(high[band_only, 0])) if band_only else f1
    b_hi = f2 * float(np.prod(low[band_only, 0])) if band_only else f2
    value = {"frequency": Q_(fp, "Hz"), "status": tuple(status), "margin_lower": Q_(m_lo, "Hz"),
             "margin_upper": Q_(m_hi, "Hz"), "margin_lower_pct": Q_(100 * m_lo / fp, "percent"),
             "margin_upper_pct": Q_(100 * m_hi / fp, "percent"), "lower": Q_(f1, "Hz"), "upper": Q_(f2, "Hz"),
             "lower_worst": Q_(lo_w, "Hz"), "upper_worst": Q_(hi_w, "Hz"), "governing": tuple(governing),
             "covered_rss": tuple(rss_ok), "band_held": (Q_(b_lo, "Hz"), Q_(b_hi, "Hz"))}
    return Margins(value=value, steps=tuple(steps), all_covered=all(s == "covered" for s in status),
                   uncertainties=uncs, low=low, high=high, alone=alone, combined=(S_lo, S_hi), rss=(R_lo, R_hi),
                   title="Band coverage of the measured peaks, with every uncertainty")
