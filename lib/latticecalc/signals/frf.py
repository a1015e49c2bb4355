"""Prototype tests: transmissibility by the H1 estimator, coherence, attenuation band, calibration.

- H1 = G_xy / G_xx and ordinary coherence γ² = |G_xy|² / (G_xx G_yy) from Welch-averaged auto- and
  cross-spectra (Bendat & Piersol, *Random Data*, 4th ed. 2010, §9.2; H1 is unbiased by noise on
  the output, biased low by noise on the input).
- The measured attenuation band: the widest frequency range, inside a search range, where
  |T| stays below a chosen level (e.g. −10 dB); edges interpolated linearly in dB between bins.
- Calibration of the elastomer's dynamic modulus: at fixed geometry and density every resonance
  of the strut scales with √E (Euler–Bernoulli f_n = λ_n²/(2π L²) √(E I/(ρ A)), Rao 2017 eq.
  8.82), so E_cal = E_nom (f_measured / f_predicted)².  With the frequency alone uncertain,
  u(E_cal) = 2 E_cal u(f) / f_measured (JCGM 100:2008, law of propagation of uncertainty).
  From a strut (:func:`calibrate_from_strut`) the coupon's geometry and density are uncertain too:
  the same formula solved for E by sympy, E = 64 π² f² L⁴ ρ / (λ⁴ d²) for a solid circle, gives
  the sensitivities (2, 4, −2, 1), so the worst-case relative half-width is
  δ_E = 2 Δf/f + 4 ΔL/L + 2 Δd/d + Δρ/ρ and the standard uncertainty, each input uniform over its
  tolerance, w_E = (1/√3) √((2 Δf/f)² + (4 ΔL/L)² + (2 Δd/d)² + (Δρ/ρ)²) (JCGM 100:2008 §5.1.2,
  §4.3.7).  ±0.15 mm on a 3 mm strut alone gives δ_E = 10 %.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pint
import sympy as sp

from latticecalc.errors import InputError, LatticeCalcError, RecordError
from latticecalc.physics import beams, tolerance
from latticecalc.sheet import CalcResult, Formula, Source, evaluate, quantity_step
from latticecalc.units import Q_, check_dimension, check_positive, format_quantity

BENDAT_PIERSOL_2010 = Source(author="Bendat, J. S. & Piersol, A. G.", title="Random Data: Analysis and "
                             "Measurement Procedures, 4th ed.", year=2010, locator="§9.2.2 (H1), §9.2.3 "
                             "(coherence)", tag="from memory")
GUM_2008 = tolerance.GUM_2008

_Gxy, _Gxx, _Gyy = sp.symbols("G_xy G_xx G_yy")
H1 = Formula("H_1", _Gxy / _Gxx, {"G_xy": "G_{xy}", "G_xx": "G_{xx}", "H_1": "H_{1}"})
COHERENCE = Formula("gamma2", sp.Abs(_Gxy) ** 2 / (_Gxx * _Gyy),
                    {"gamma2": r"\gamma^2_{xy}", "G_xy": "G_{xy}", "G_xx": "G_{xx}", "G_yy": "G_{yy}"})
_T = sp.Symbol("T")
TRANSMISSIBILITY_DB = Formula("L_T", 20 * sp.log(_T, 10), {"L_T": "L_{T}"})
_En, _fm, _fp, _uf, _Ec = sp.symbols("E_nom f_meas f_pred u_f E_cal")
_L_s, _d_s, _rho_s, _lam_s = sp.symbols("L d rho lambda_n")
CALIBRATED_MODULUS = Formula("E_cal", _En * (_fm / _fp) ** 2,
                             {"E_nom": r"E_{\mathrm{nom}}", "f_meas": r"f_{\mathrm{meas}}",
                              "f_pred": r"f_{\mathrm{pred}}", "E_cal": r"E_{\mathrm{cal}}"})
MODULUS_UNCERTAINTY = Formula("u_E", 2 * _Ec * _uf / _fm,
                              {"E_cal": r"E_{\mathrm{cal}}", "f_meas": r"f_{\mathrm{meas}}", "u_E": "u_{E}",
                               "u_f": "u_{f}"})


#: The calibrated modulus straight from the strut formula: E = 64 π² f² L⁴ ρ / (λ⁴ d²), the Euler–Bernoulli frequency
#: of a solid circular strut (Rao 2017 eq. 8.82) solved for E; written out so that no kernel solves it at import
#: (tests/signals check it is sympy's solution of beams.EULER_BERNOULLI_FREQUENCY).
STRUT_MODULUS = Formula("E_cal", 64 * sp.pi**2 * _L_s**4 * _fm**2 * _rho_s / (_d_s**2 * _lam_s**4),
                        {"E_cal": r"E_{\mathrm{cal}}", "f_meas": r"f_{\mathrm{meas}}"})
#: The inputs of a strut calibration that carry a tolerance, in the order shown.
CALIBRATION_INPUTS = ("f_meas", "L", "d", "rho")
#: Worst-case relative half-width of the calibrated modulus, δ_E = Σ |∂ln E/∂ln x| Δx/x (derived).
MODULUS_RELATIVE_BOUND = tolerance.relative_bound(STRUT_MODULUS, CALIBRATION_INPUTS, target="delta_E",
                                                  target_latex=r"\delta_{E}")
#: Relative standard uncertainty of the calibrated modulus, each input uniform over ± Δx (derived).
MODULUS_RELATIVE_UNCERTAINTY = tolerance.relative_standard_uncertainty(STRUT_MODULUS, CALIBRATION_INPUTS,
                                                                       target="w_E", target_latex="w_{E}")
_dE, _wE = sp.symbols("delta_E w_E")
MODULUS_BOUND = Formula("U_E", _dE * _Ec, {"U_E": r"\Delta E_{\mathrm{cal}}", "delta_E": r"\delta_{E}",
                                           "E_cal": r"E_{\mathrm{cal}}"})
MODULUS_STANDARD_UNCERTAINTY = Formula("u_E", _wE * _Ec, {"u_E": "u_{E}", "w_E": "w_{E}",
                                                          "E_cal": r"E_{\mathrm{cal}}"})
#: Half-width of a uniform distribution with standard uncertainty u (JCGM 100:2008 §4.3.7: u = a/√3).
HALF_WIDTH_FROM_STANDARD = Formula("Delta_f_meas", sp.sqrt(3) * _uf,
                                   {"Delta_f_meas": r"\Delta_{f_{\mathrm{meas}}}", "u_f": "u_{f}"})

DEFAULT_RESOLUTION = Q_(0.5, "Hz")


@dataclass(frozen=True, kw_only=True)
class Transmissibility(CalcResult):
    """H1 estimate.

    ``value`` maps ``frequency`` (Hz), ``h1`` (complex, dimensionless), ``magnitude`` (|H1|),
    ``level`` (dB) and ``coherence`` (γ²).
    """

    resolution: object
    averages: int


def _spectra(x: np.ndarray, y: np.ndarray, fs: float, nfft: int):
    """Welch auto- and cross-spectra (Hann, 50 % overlap, one-sided density)."""
    from scipy import signal as ssig  # here, not at the top: every column-panel section imports this module

    kw = {"fs": fs, "window": "hann", "nperseg": nfft, "noverlap": nfft // 2, "detrend": "constant"}
    f, gxx = ssig.welch(x, **kw)
    _, gyy = ssig.welch(y, **kw)
    _, gxy = ssig.csd(x, y, **kw)
    return f, gxx, gyy, gxy


def transmissibility(*, input, output, sample_rate, resolution=DEFAULT_RESOLUTION) -> Transmissibility:
    """Transmissibility output/input by the H1 estimator, with coherence.

    Parameters
    ----------
    input, output:
        1-D signals of equal length and the same dimension [acceleration or velocity].
    sample_rate:
        [frequency].
    resolution:
        Frequency resolution Δf [frequency] of the Welch averaging.
    """
    fs = float(check_positive(check_dimension(sample_rate, name="sample_rate", expected="frequency"),
                              name="sample_rate").to("Hz").m)
    for name, sig in (("input", input), ("output", output)):
        try:
            check_dimension(sig, name=name, expected="acceleration")
        except Exception:
            check_dimension(sig, name=name, expected="velocity")
    unit = "m/s^2" if input.dimensionality == Q_(1, "m/s^2").dimensionality else "m/s"
    x = np.asarray(input.to(unit).m, dtype=float)
    y = np.asarray(check_dimension(output, name="output", expected=unit).to(unit).m, dtype=float)
    if x.shape != y.shape or x.ndim != 1:
        raise InputError("input and output must be 1-D records of one length", input_name="output",
                         expected=str(x.shape), got=str(y.shape))
    df = float(check_positive(check_dimension(resolution, name="resolution", expected="frequency"),
                              name="resolution").to("Hz").m)
    from scipy import fft as sfft  # here: the column-panel sections import this module but never this function

    nfft = int(sfft.next_fast_len(int(np.ceil(fs / df)), real=True))
    if nfft * 2 > x.size:
        raise InputError("record too short for the resolution asked", input_name="resolution",
                         expected=f">= {2 * nfft / fs:.1f} s of record for {fs / nfft:.3g} Hz (two segments)",
                         got=f"{x.size / fs:.1f} s")
    f, gxx, gyy, gxy = _spectra(x, y, fs, nfft)
    pos = gxx > 0
    u = f"({unit})^2/Hz"
    h = np.zeros(f.shape, dtype=complex)
    g2 = np.zeros(f.shape)
    h[pos] = H1.evaluate({"G_xy": Q_(gxy[pos], u), "G_xx": Q_(gxx[pos], u)}).to("").m
    g2[pos] = np.real(COHERENCE.evaluate({"G_xy": Q_(gxy[pos], u), "G_xx": Q_(gxx[pos], u),
                                          "G_yy": Q_(gyy[pos], u)}).to("").m)
    mag = np.abs(h)
    lev = np.full(f.shape, np.nan)
    nz = mag > 0
    lev[nz] = TRANSMISSIBILITY_DB.evaluate({"T": Q_(mag[nz], "")}).to("").m
    averages = int((x.size - nfft) // (nfft // 2) + 1)
    steps = (
        quantity_step(id="frf.resolution", description="Resolution of the H1 estimate", value=Q_(fs / nfft, "Hz"),
                      unit="Hz", method=f"Welch, Hann, {nfft} samples, 50 % overlap, {averages} averages",
                      source=BENDAT_PIERSOL_2010),
        quantity_step(id="frf.h1", description="Transmissibility |H1| = |G_xy / G_xx| (shown: maximum)",
                      value=Q_(float(mag.max()), ""), method="H1 estimator", source=BENDAT_PIERSOL_2010),
    )
    return Transmissibility(value={"frequency": Q_(f, "Hz"), "h1": Q_(h, ""), "magnitude": Q_(mag, ""),
                                   "level": Q_(lev, "dB"), "coherence": Q_(g2, "")},
                            steps=steps, resolution=Q_(fs / nfft, "Hz"), averages=averages,
                            title="Transmissibility (H1) and coherence")


@dataclass(frozen=True, kw_only=True)
class AttenuationBand(CalcResult):
    """Measured attenuation band.

    ``value`` maps ``lower``, ``upper`` (Hz), ``minimum`` (dB) and ``at`` (Hz, where the minimum is).
    """


def attenuation_band(frf: Transmissibility, *, level=-10.0, lowest=None, highest=None) -> AttenuationBand:
    """The widest range inside [lowest, highest] where the transmissibility stays below ``level``.

    Parameters
    ----------
    frf:
        A :class:`Transmissibility` result.
    level:
        Threshold in dB (number or Quantity in dB), e.g. −10 dB.
    lowest, highest:
        Search range [frequency] (default: the whole estimate above 0 Hz).
    """
    if not isinstance(frf, Transmissibility):
        raise InputError("needs a Transmissibility result", input_name="frf", expected="Transmissibility",
                         got=type(frf).__name__)
    thr = float(level.m) if hasattr(level, "m") else float(level)
    f = frf.value["frequency"].to("Hz").m
    lev = frf.value["level"].m
    lo = 0.0 if lowest is None else check_dimension(lowest, name="lowest", expected="frequency").to("Hz").m
    hi = f[-1] if highest is None else check_dimension(highest, name="highest", expected="frequency").to("Hz").m
    sel = (f > lo) & (f <= hi) & np.isfinite(lev)
    idx = np.flatnonzero(sel)
    below = lev[idx] < thr
    if not below.any():
        raise InputError("the transmissibility never falls below the level in the search range",
                         input_name="level", expected=f"a level above the minimum {np.nanmin(lev[idx]):.1f} dB",
                         got=f"{thr:g} dB")
    edges = np.diff(np.concatenate(([0], below.astype(np.int8), [0])))
    starts, ends = np.flatnonzero(edges == 1), np.flatnonzero(edges == -1) - 1
    k = int(np.argmax(f[idx[ends]] - f[idx[starts]]))
    i0, i1 = idx[starts[k]], idx[ends[k]]

    def cross(a: int, b: int) -> float:
        # linear interpolation in dB between bins a and b where the level crosses thr
        la, lb = lev[a], lev[b]
        return float(f[a] + (thr - la) * (f[b] - f[a]) / (lb - la)) if lb != la else float(f[a])

    f_lo = cross(i0 - 1, i0) if i0 - 1 >= idx[0] else float(f[i0])
    f_hi = cross(i1, i1 + 1) if i1 + 1 <= idx[-1] else float(f[i1])
    j = i0 + int(np.argmin(lev[i0:i1 + 1]))
    steps = (
        quantity_step(id="frf.band", description=f"Measured attenuation band (transmissibility below {thr:g} dB)",
                      value=Q_([f_lo, f_hi], "Hz"), unit="Hz",
                      method=f"widest run of bins below {thr:g} dB in {lo:g}–{hi:g} Hz, edges interpolated "
                             "linearly in dB", source=BENDAT_PIERSOL_2010),
        quantity_step(id="frf.band-minimum", description="Deepest transmissibility in the band",
                      value=Q_(float(lev[j]), "dB"), method=f"at {f[j]:.4g} Hz"),
    )
    return AttenuationBand(value={"lower": Q_(f_lo, "Hz"), "upper": Q_(f_hi, "Hz"),
                                  "minimum": Q_(float(lev[j]), "dB"), "at": Q_(float(f[j]), "Hz")},
                           steps=steps, title="Measured attenuation band")


@dataclass(frozen=True, kw_only=True)
class Calibration(CalcResult):
    """Calibrated modulus; ``value`` is E_cal [pressure]; ``uncertainty`` its standard uncertainty.

    ``bound`` is the worst-case ± half-width [pressure] (every tolerance at its limit, first order)
    when the calibration propagated the coupon's tolerances (:func:`calibrate_from_strut`), else None.
    """

    uncertainty: object
    predicted_frequency: object
    bound: object = None


def calibrate_modulus(*, nominal_modulus, measured_frequency, predicted_frequency,
                      frequency_uncertainty=None, id_prefix: str = "calibration") -> Calibration:
    """Back-calculate the dynamic modulus from a measured resonance or band edge.

    E_cal = E_nom (f_meas / f_pred)², u(E_cal) = 2 E_cal u(f) / f_meas.

    Parameters
    ----------
    nominal_modulus:
        The modulus used for the prediction [pressure].
    measured_frequency:
        Measured resonance or band edge [frequency].
    predicted_frequency:
        The same feature predicted with ``nominal_modulus`` [frequency].
    frequency_uncertainty:
        Standard uncertainty of the measured frequency [frequency] (default 0).
    id_prefix:
        Step id prefix.
    """
    en = check_positive(check_dimension(nominal_modulus, name="nominal_modulus", expected="pressure"),
                        name="nominal_modulus")
    fm = check_positive(check_dimension(measured_frequency, name="measured_frequency", expected="frequency"),
                        name="measured_frequency")
    fp = check_positive(check_dimension(predicted_frequency, name="predicted_frequency", expected="frequency"),
                        name="predicted_frequency")
    uf = Q_(0.0, "Hz") if frequency_uncertainty is None else check_positive(
        check_dimension(frequency_uncertainty, name="frequency_uncertainty", expected="frequency"),
        name="frequency_uncertainty", allow_zero=True)
    e = evaluate(CALIBRATED_MODULUS, id=f"{id_prefix}.modulus", description="Calibrated dynamic modulus "
                 "(frequencies scale with √E at fixed geometry and density)",
                 values={"E_nom": en, "f_meas": fm, "f_pred": fp}, unit="MPa", source=beams.RAO_2017)
    u = evaluate(MODULUS_UNCERTAINTY, id=f"{id_prefix}.uncertainty", description="Standard uncertainty of the "
                 "calibrated modulus, propagated from the measured frequency's",
                 values={"E_cal": e.result, "u_f": uf, "f_meas": fm}, unit="MPa", source=GUM_2008)
    return Calibration(value=e.result, steps=(e, u), uncertainty=u.result, predicted_frequency=fp,
                       title="Calibrated dynamic modulus")


def calibrate_from_strut(*, measured_frequency, length, diameter, nominal_modulus, density,
                         supports: str = "clamped-clamped", mode: int = 1, frequency_uncertainty=None,
                         frequency_half_width=None, length_tolerance=None, diameter_tolerance=None,
                         density_tolerance=None) -> Calibration:
    """Calibrate E from a measured strut resonance, with the coupon's tolerances propagated.

    The resonance is predicted with :func:`beams.bending_frequency` at the nominal modulus and
    E_cal = E_nom (f_meas / f_pred)².  The uncertainty of E_cal carries the measured frequency's and
    the coupon's length, diameter and density tolerances through E = 64 π² f² L⁴ ρ / (λ⁴ d²) (the
    strut formula solved for E): worst case δ_E = 2 Δf/f + 4 ΔL/L + 2 Δd/d + Δρ/ρ (``bound``) and
    standard uncertainty w_E = (1/√3) √(Σ (n_x Δx/x)²) (``uncertainty``, JCGM 100:2008 §5.1.2 with
    each input uniform over ± its half-width, §4.3.7).

    Parameters
    ----------
    measured_frequency:
        Measured strut resonance [frequency].
    length, diameter, nominal_modulus, density, supports, mode:
        As for :func:`latticecalc.physics.beams.bending_frequency` (nominal coupon values).
    frequency_uncertainty:
        Standard uncertainty of the measured frequency [frequency] (e.g. Δf/√12 of a bin); its
        half-width is taken as √3 u (uniform) when ``frequency_half_width`` is not given.
    frequency_half_width:
        ± half-width of the measured frequency [frequency] (e.g. half the frequency resolution).
    length_tolerance, diameter_tolerance, density_tolerance:
        ± half-widths of the coupon's strut length, diameter [length or fraction] and density
        [density or fraction]; ``None`` for none.

    The result's steps include the prediction, the modulus from the strut formula, the uncertainty
    steps and a check that E_cal reproduces the measured frequency.
    """
    pred = beams.bending_frequency(length=length, diameter=diameter, youngs_modulus=nominal_modulus,
                                   density=density, supports=supports, mode=mode, id_prefix="calibration.predicted")
    en = check_positive(check_dimension(nominal_modulus, name="nominal_modulus", expected="pressure"),
                        name="nominal_modulus")
    fm = check_positive(check_dimension(measured_frequency, name="measured_frequency", expected="frequency"),
                        name="measured_frequency").to("Hz")
    L = check_dimension(length, name="length", expected="length").to("mm")
    d = check_dimension(diameter, name="diameter", expected="length").to("mm")
    rho = check_dimension(density, name="density", expected="density").to("kg/m^3")
    uf = None if frequency_uncertainty is None else check_positive(
        check_dimension(frequency_uncertainty, name="frequency_uncertainty", expected="frequency"),
        name="frequency_uncertainty", allow_zero=True).to("Hz")
    steps = list(pred.steps)
    e = evaluate(CALIBRATED_MODULUS, id="calibration.modulus", description="Calibrated dynamic modulus "
                 "(frequencies scale with √E at fixed geometry and density)",
                 values={"E_nom": en, "f_meas": fm, "f_pred": pred.value}, unit="MPa", source=beams.RAO_2017)
    lam = Q_(beams.eigenvalue(supports=supports, mode=mode), "")
    direct = evaluate(STRUT_MODULUS, id="calibration.strut-modulus", unit="MPa", source=beams.RAO_2017,
                      description=f"The same modulus from the strut formula solved for E ({supports}, mode {mode}, "
                                  "solid circle): the formula whose sensitivities carry the tolerances below",
                      values={"f_meas": fm, "L": L, "d": d, "rho": rho, "lambda_n": lam})
    steps += [e, direct]
    if frequency_half_width is not None:
        af = check_positive(check_dimension(frequency_half_width, name="frequency_half_width",
                                            expected="frequency"), name="frequency_half_width",
                            allow_zero=True).to("Hz")
        steps.append(quantity_step(id="calibration.frequency-half-width", description="± half-width of the "
                                   "measured frequency", value=af, unit="Hz", sig=3,
                                   method="given (half the frequency resolution for a spectral bin)"))
    elif uf is not None:
        half = evaluate(HALF_WIDTH_FROM_STANDARD, id="calibration.frequency-half-width", unit="Hz", sig=3,
                        description="± half-width of the measured frequency, uniform over the bin",
                        values={"u_f": uf}, source=GUM_2008)
        af = half.result
        steps.append(half)
    else:
        af = Q_(0.0, "Hz")
    hl = tolerance.half_width(L, length_tolerance, name="length_tolerance").to("mm")
    hd = tolerance.half_width(d, diameter_tolerance, name="diameter_tolerance").to("mm")
    hr = tolerance.half_width(rho, density_tolerance, name="density_tolerance").to("kg/m^3")
    vals = {"f_meas": fm, "Delta_f_meas": af, "L": L, "Delta_L": hl, "d": d, "Delta_d": hd, "rho": rho,
            "Delta_rho": hr}
    given = (f"f = {format_quantity(fm)} ± {format_quantity(af)}, L = {format_quantity(L)} ± {format_quantity(hl)}, "
             f"d = {format_quantity(d)} ± {format_quantity(hd)}, ρ = {format_quantity(rho)} ± {format_quantity(hr)}")
    rel_b = evaluate(MODULUS_RELATIVE_BOUND, id="calibration.relative-bound", unit="percent", sig=3,
                     source=tolerance.WORST_CASE_SOURCE, values=vals,
                     description="Worst-case relative half-width of the calibrated modulus: the exponents of "
                                 f"E = 64π²f²L⁴ρ/(λ⁴d²) times the relative half-widths ({given})")
    bound = evaluate(MODULUS_BOUND, id="calibration.bound", unit="MPa", source=tolerance.WORST_CASE_SOURCE,
                     description="Worst-case ± half-width of the calibrated modulus (every tolerance at its "
                                 "limit at once)", values={"delta_E": rel_b.result, "E_cal": e.result})
    rel_u = evaluate(MODULUS_RELATIVE_UNCERTAINTY, id="calibration.relative-uncertainty", unit="percent", sig=3,
                     source=GUM_2008, values=vals,
                     description="Relative standard uncertainty of the calibrated modulus: law of propagation, "
                                 "each input uniform over its ± half-width (u = Δ/√3)")
    u = evaluate(MODULUS_STANDARD_UNCERTAINTY, id="calibration.uncertainty", unit="MPa", source=GUM_2008,
                 description="Standard uncertainty of the calibrated modulus (frequency, length, diameter and "
                             "density of the coupon)", values={"w_E": rel_u.result, "E_cal": e.result})
    again = beams.bending_frequency(length=length, diameter=diameter, youngs_modulus=e.result, density=density,
                                    supports=supports, mode=mode, id_prefix="calibration.recomputed")
    steps += [rel_b, bound, rel_u, u, again.steps[-1]]
    return Calibration(value=e.result, steps=tuple(steps), uncertainty=u.result, bound=bound.result,
                       predicted_frequency=pred.value,
                       title="Calibrated dynamic modulus from a strut resonance, with its uncertainty")


def resonance(frf: Transmissibility, *, lowest, highest, extremum: str = "max") -> CalcResult:
    """Frequency of the largest (``extremum="max"``) or smallest (``"min"``, an anti-resonance) |H1|.

    Searched in [lowest, highest] [frequency]; standard uncertainty u(f) = Δf/√12 (bin quantisation).
    In a base-excited chain with local resonators the transmissibility minimum lies at the
    resonators' own frequency, where their effective mass grows without bound (Huang et al. 2009).
    """
    if extremum not in ("max", "min"):
        raise InputError("unknown extremum", input_name="extremum", expected="'max' or 'min'", got=repr(extremum))
    f = frf.value["frequency"].to("Hz").m
    lo = check_dimension(lowest, name="lowest", expected="frequency").to("Hz").m
    hi = check_dimension(highest, name="highest", expected="frequency").to("Hz").m
    sel = np.flatnonzero((f >= lo) & (f <= hi))
    if sel.size == 0:
        raise InputError("no bins in the search range", input_name="lowest", expected="a range inside the estimate",
                         got=f"{lo:g}–{hi:g} Hz")
    mags = frf.value["magnitude"].m[sel]
    k = sel[int(np.argmax(mags) if extremum == "max" else np.argmin(mags))]
    df = float(frf.resolution.to("Hz").m)
    u = df / np.sqrt(12.0)
    what = "largest" if extremum == "max" else "smallest"
    step = quantity_step(id=f"frf.{'resonance' if extremum == 'max' else 'antiresonance'}",
                         description=f"Measured {'resonance' if extremum == 'max' else 'anti-resonance'} "
                         f"({what} transmissibility in {lo:g}–{hi:g} Hz)",
                         value=Q_(float(f[k]), "Hz"), unit="Hz",
                         method=f"bin maximum; standard uncertainty Δf/√12 = {u:.3g} Hz")
    return CalcResult(value={"frequency": Q_(float(f[k]), "Hz"), "uncertainty": Q_(u, "Hz")}, steps=(step,),
                      title="Measured resonance")


@dataclass(frozen=True, kw_only=True)
class ExportedCalibration:
    """A calibrated modulus read back from a prototype-test package's JSON."""

    modulus: pint.Quantity
    uncertainty: pint.Quantity | None
    source: Source
    bound: pint.Quantity | None = None
    relative_bound: pint.Quantity | None = None


def calibration_from_export(path) -> ExportedCalibration:
    """The calibrated dynamic modulus (``calibration.modulus``) from a prototype-test export JSON.

    Also read when exported: its standard uncertainty (``calibration.uncertainty``) and the
    worst-case half-width (``calibration.bound``, ``calibration.relative-bound``) that carries the
    coupon's tolerances; exports made before the tolerances were propagated have no bound (None).

    The file is read through :mod:`latticecalc.files` (a regular UTF-8 file within the JSON
    cap).  Each value read must be a finite number with a unit of its dimension (a stress for the
    modulus, its uncertainty and bound; none for the relative bound); otherwise a
    :class:`~latticecalc.errors.RecordError` names ``lattice.calibration``, the step and the file.

    Parameters
    ----------
    path:
        ``out/<calc-id>-rev<rev>.json`` written by ``latticecalc export`` for a ``prototype-test`` project.
    """
    from latticecalc.files import excerpt, not_a_number, read_json

    name = "lattice.calibration"
    p = Path(path)
    data = read_json(p, what="the prototype-test export", input_name=name, file=str(p))
    results = data.get("results") if isinstance(data, dict) else None
    meta = data.get("project") if isinstance(data, dict) else None
    if not isinstance(results, list) or not isinstance(meta, dict):
        raise RecordError("not a calc package JSON", input_name=name, file=str(p),
                          expected="the JSON written by 'latticecalc export': a 'results' list and a 'project' "
                          "object", got="no 'results' list" if not isinstance(results, list) else
                          "no 'project' object")
    rows = {r.get("id"): r for r in results if isinstance(r, dict)}
    if "calibration.modulus" not in rows:
        raise RecordError("no calibrated modulus in this export", input_name=name, file=str(p),
                          expected="a prototype-test export with the step calibration.modulus")

    def quantity(key: str, dimension: str) -> pint.Quantity:
        row = rows[key]
        value, unit = row.get("value"), row.get("unit") or ""
        got = not_a_number(value)
        if got is not None:
            raise RecordError(f"the value of step {key} is not a number", input_name=name, file=str(p),
                              expected=f"a finite number (a {dimension})", got=got)
        if not isinstance(unit, str) or len(unit) > 40:
            raise RecordError(f"the unit of step {key} is not a unit", input_name=name, file=str(p),
                              expected=f"a {dimension} unit such as MPa", got=f"a {type(unit).__name__}")
        try:
            q = Q_(float(value), unit.replace("µ", "u"))
            return check_dimension(q, name=key, expected=dimension)
        except (pint.errors.PintError, LatticeCalcError, ValueError, TypeError, AttributeError, SyntaxError):
            raise RecordError(f"the unit of step {key} is not a {dimension}", input_name=name, file=str(p),
                              expected=f"a {dimension} unit such as MPa" if dimension != "dimensionless" else
                              "no unit", got=excerpt(unit, limit=40)) from None

    def text(key: str, default: str = "") -> str:
        value = meta.get(key, default)
        return value[:200] if isinstance(value, str) else default

    modulus = quantity("calibration.modulus", "pressure")
    source = Source(author=f"{text('prepared_by')}, prototype test {text('calc_id')} "
                    f"rev {text('revision')}".strip(", "), title=text("title", "prototype test") or "prototype test",
                    year=str(data.get("generated", ""))[:4], locator=f"step calibration.modulus, {p.name}")
    return ExportedCalibration(
        modulus=modulus,
        uncertainty=quantity("calibration.uncertainty", "pressure") if "calibration.uncertainty" in rows else None,
        source=source,
        bound=quantity("calibration.bound", "pressure") if "calibration.bound" in rows else None,
        relative_bound=(quantity("calibration.relative-bound", "dimensionless").to("")
                        if "calibration.relative-bound" in rows else None))
