"""Spectra of measured vibration: detrending, integration, Welch PSD, band levels, running RMS, events.

Methods (stated on the sheet by each step):

- **Integration** acceleration → velocity in the frequency domain, V(f) = A(f) / (j 2π f), with a
  stated high-pass: bins below f_hp / 2 are set to zero and a half-cosine taper rises to 1 at
  f_hp (Brandt, *Noise and Vibration Analysis*, 2011, §5.? frequency-domain integration).
- **Welch PSD** (Welch 1967): Hann window, 50 % overlap, mean removed per segment, one-sided
  density scaling so that the PSD integrates to the variance; segments are processed in batches,
  so a one-hour record needs memory for one batch only.
- **One-third-octave band levels**: the velocity PSD (G_vv = G_aa / (2π f)²) integrated over each
  IEC 61260-1 band, with the bins at the band edges counted in proportion to their overlap (the
  cumulative integral is interpolated at the exact edges).  The resolution is chosen so that the
  lowest band spans at least 8 bins; a tone at a band's midband frequency then gives its RMS to
  better than 0.5 % (tested), a tone within two bins of an edge is shared between the two bands.
  This is FFT-domain band integration, not an IEC 61260-1 class 1 filter bank.
- **Running RMS**: exponential time weighting with time constant τ (1 s "S", 0.125 s "F"),
  computed recursively (state carried from block to block).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np
import pint
import sympy as sp
from scipy import fft as sfft

from latticecalc.errors import InputError, RecordError
from latticecalc.sheet import COMMON_PRACTICE, CalcResult, Formula, Source, Step, evaluate, quantity_step
from latticecalc.signals.bands import DEFAULT_HIGHEST, DEFAULT_LOWEST, IEC_61260_1, third_octave_bands
from latticecalc.signals.records import release_pages
from latticecalc.units import Q_, check_dimension, check_positive, format_quantity, parse

WELCH_1967 = Source(author="Welch, P. D.", title="The use of fast Fourier transform for the estimation "
                    "of power spectra: a method based on time averaging over short, modified "
                    "periodograms. IEEE Trans. Audio Electroacoust. AU-15", year=1967, locator="pp. 70–73")
BRANDT_2011 = Source(author="Brandt, A.", title="Noise and Vibration Analysis: Signal Analysis and "
                     "Experimental Procedures", year=2011, locator="frequency-domain integration and "
                     "differentiation; PSD scaling", tag="from memory")
IEC_61672_1 = Source(author="IEC", title="IEC 61672-1:2013 Electroacoustics – Sound level meters – "
                     "Part 1: Specifications", year=2013, locator="time weightings F (0.125 s) and S (1 s)",
                     tag="from memory")
ISO_2631_1 = Source(author="ISO", title="ISO 2631-1:1997 Mechanical vibration and shock – Evaluation of "
                    "human exposure to whole-body vibration – Part 1", year=1997,
                    locator="§6.3.1 running r.m.s. method", tag="from memory")
VELOCITY_REFERENCE_SOURCE = Source(author="ISO", title="ISO 1683:2015 Acoustics – Preferred reference "
                                   "values for acoustical and vibratory levels", year=2015,
                                   locator="Table 1, velocity 1 nm/s", tag="from memory")
FTA_VDB = Source(author="US Federal Transit Administration", title="Transit Noise and Vibration Impact "
                 "Assessment Manual, FTA Report No. 0123", year=2018,
                 locator="§5.1, VdB = 20 log10(v / 1 µin/s)")

#: Bins the lowest band must span (sets the Welch resolution).
BINS_PER_BAND = 8
#: Default high-pass of the frequency-domain integration.
DEFAULT_HIGHPASS = Q_(0.5, "Hz")
#: Time constants of the exponential time weightings S and F.
SLOW = Q_(1.0, "s")
FAST = Q_(0.125, "s")
#: Output rate of the running RMS.
RMS_OUTPUT_RATE = Q_(100.0, "Hz")
#: Default narrowband resolution.
NARROWBAND_RESOLUTION = Q_(0.25, "Hz")
#: Event detection defaults (common practice).
EVENT_MIN_DURATION = Q_(2.0, "s")
EVENT_MERGE_GAP = Q_(2.0, "s")
EVENT_PAD = Q_(1.0, "s")
#: Frequency bins per chunk when a whole-record spectrum is converted.
FFT_CHUNK = 1 << 17
#: Segments per FFT batch in the Welch accumulator.
WELCH_BATCH = 32

# --- formulas (the expression shown is the expression evaluated) -----------------------------
_A, _V, _f, _G_aa = sp.symbols("A V f G_aa")
VELOCITY_FROM_ACCELERATION = Formula("V", _A / (sp.I * 2 * sp.pi * _f))
ACCELERATION_FROM_VELOCITY = Formula("A", sp.I * 2 * sp.pi * _f * _V)
# The sheet records real quantities, so the integration and differentiation steps show the modulus
# of the complex formulas above: derived from the same expressions (amplitudes and frequency taken
# positive), not typed again.  |V| = |A| / (2π f) and |A| = 2π f |V|.
_POSITIVE = {_A: sp.Symbol("A", positive=True), _V: sp.Symbol("V", positive=True),
             _f: sp.Symbol("f", positive=True)}
VELOCITY_AMPLITUDE = Formula("V_amp", sp.Abs(VELOCITY_FROM_ACCELERATION.expr.subs(_POSITIVE)),
                             {"V_amp": r"\left|V\right|", "A": r"\left|A\right|"})
ACCELERATION_AMPLITUDE = Formula("A_amp", sp.Abs(ACCELERATION_FROM_VELOCITY.expr.subs(_POSITIVE)),
                                 {"A_amp": r"\left|A\right|", "V": r"\left|V\right|"})
VELOCITY_PSD = Formula("G_vv", _G_aa / (2 * sp.pi * _f) ** 2, {"G_aa": "G_{aa}"})
_v, _v0, _L, _tau, _fs = sp.symbols("v v_0 L tau f_s")
VELOCITY_LEVEL = Formula("L_v", 20 * sp.log(_v / _v0, 10))
VELOCITY_FROM_LEVEL = Formula("v", _v0 * 10 ** (_L / 20))
EXPONENTIAL_COEFFICIENT = Formula("alpha", sp.exp(-1 / (_tau * _fs)))


@dataclass(frozen=True, kw_only=True)
class SignalResult(CalcResult):
    """A processed time signal; ``value`` is the Quantity array."""

    sample_rate: pint.Quantity


@dataclass(frozen=True, kw_only=True)
class Spectrum(CalcResult):
    """A one-sided PSD; ``value`` maps ``frequency`` (Hz) and ``psd`` ((unit)²/Hz)."""

    resolution: pint.Quantity
    averages: int
    quantity: str


@dataclass(frozen=True, kw_only=True)
class BandLevels(CalcResult):
    """One-third-octave band levels.

    ``value`` maps ``centre`` (exact midband frequencies, Hz), ``nominal`` (labels), ``lower`` and
    ``upper`` (edges, Hz), ``velocity_rms`` (m/s per band), ``level`` (dB re 1e-9 m/s) and
    ``overall_rms`` (m/s, all bands together).
    """


@dataclass(frozen=True, kw_only=True)
class Level(CalcResult):
    """A level in dB; ``value`` is a Quantity in dB, ``reference`` the reference value."""

    reference: pint.Quantity


@dataclass(frozen=True, kw_only=True)
class RunningRms(CalcResult):
    """Exponentially weighted running RMS; ``value`` maps ``time`` (s) and ``rms`` (signal unit)."""

    time_constant: pint.Quantity
    maximum: pint.Quantity


@dataclass(frozen=True, kw_only=True)
class Events(CalcResult):
    """Events found in a running RMS; ``value`` maps ``start``, ``end`` (s) and ``peak`` (signal unit)."""

    threshold: pint.Quantity

    def __len__(self) -> int:
        return len(self.value["start"])


@dataclass(frozen=True, kw_only=True)
class EventSpectra(CalcResult):
    """Band levels of each event and their maximum per band (max-hold).

    ``value`` maps ``centre``, ``nominal``, ``velocity_rms`` (max-hold, m/s), ``level`` (dB re
    1e-9 m/s) and ``per_event`` (m/s, shape ``(events, bands)``).
    """


# --- helpers ---------------------------------------------------------------------------------
def _signal(signal, *, name: str = "signal", quantity: str | None = None) -> tuple[pint.Quantity, str]:
    """Check a 1-D signal; return it and its kind ('acceleration' or 'velocity')."""
    if not isinstance(signal, pint.Quantity):
        check_dimension(signal, name=name, expected="acceleration")
    kinds = (quantity,) if quantity else ("acceleration", "velocity")
    for kind in kinds:
        if kind not in ("acceleration", "velocity"):
            raise InputError("unknown quantity", input_name="quantity",
                             expected="'acceleration' or 'velocity'", got=repr(kind))
    for kind in kinds:
        if isinstance(signal, pint.Quantity) and signal.dimensionality != Q_(1.0, _si(kind)).dimensionality:
            continue               # not this kind: skip the failed check, whose message formats every sample
        try:
            q = check_dimension(signal, name=name, expected=kind)
        except Exception:
            continue
        if np.ndim(q.magnitude) != 1:
            raise InputError("a signal is one channel, a 1-D array", input_name=name,
                             expected="shape (samples,)", got=str(np.shape(q.magnitude)))
        if np.size(q.magnitude) < 2:
            raise RecordError("the signal has fewer than two samples", input_name=name,
                              expected="a record", got=str(np.size(q.magnitude)))
        return q, kind
    # raise with the first expected dimension for a clear message
    check_dimension(signal, name=name, expected=kinds[0] if quantity else "acceleration")
    raise AssertionError  # pragma: no cover


def _rate(sample_rate) -> float:
    fs = check_positive(check_dimension(sample_rate, name="sample_rate", expected="frequency"),
                        name="sample_rate")
    return float(fs.to("Hz").m)


def _magnitude(q: pint.Quantity, unit: str) -> np.ndarray:
    """Magnitude in ``unit`` without copying when the unit already matches."""
    if q.units == Q_(1.0, unit).units:
        return q.magnitude
    return np.asarray(q.to(unit).magnitude)


def _si(kind: str) -> str:
    return "m/s^2" if kind == "acceleration" else "m/s"


def _welch(x: np.ndarray, fs: float, nfft: int, *, overlap: float = 0.5, detrend: str = "constant",
           batch: int = WELCH_BATCH) -> tuple[np.ndarray, np.ndarray, int, int]:
    """One-sided Welch PSD of ``x`` (any array-like incl. memmap) with segments of ``nfft`` samples.

    Returns (frequency, psd, averages, nperseg).  A record shorter than ``nfft`` is one Hann-
    windowed periodogram zero-padded to ``nfft`` (same resolution, coarser true bandwidth).
    """
    from scipy import signal as ssig  # here: scipy.signal costs a kernel ~0.7 s to import

    n = x.shape[0]
    nperseg = min(nfft, n)
    step = max(1, int(round(nperseg * (1 - overlap))))
    starts = np.arange(0, n - nperseg + 1, step)
    win = ssig.get_window("hann", nperseg, fftbins=True)
    acc = np.zeros(nfft // 2 + 1)
    for b0 in range(0, starts.size, batch):
        idx = starts[b0:b0 + batch]
        segs = np.stack([np.asarray(x[s:s + nperseg], dtype=float) for s in idx])
        release_pages(x)
        if detrend == "constant":
            segs -= segs.mean(axis=1, keepdims=True)
        elif detrend == "linear":
            segs = ssig.detrend(segs, axis=1, type="linear")
        segs *= win
        spec = sfft.rfft(segs, n=nfft, axis=1)
        acc += (spec.real ** 2 + spec.imag ** 2).sum(axis=0)
        del segs, spec
    psd = acc / (starts.size * fs * float(np.sum(win ** 2)))
    if nfft % 2 == 0:
        psd[1:-1] *= 2.0
    else:
        psd[1:] *= 2.0
    freq = np.arange(nfft // 2 + 1) * fs / nfft
    return freq, psd, int(starts.size), nperseg


def _nfft_for(fs: float, resolution: float) -> int:
    return int(sfft.next_fast_len(int(math.ceil(fs / resolution)), real=True))


# --- public functions ------------------------------------------------------------------------
def detrend(signal, *, sample_rate, kind: str = "linear") -> SignalResult:
    """Remove the mean (``kind="constant"``) or the least-squares line (``"linear"``) of a signal.

    Parameters
    ----------
    signal:
        1-D Quantity array [acceleration or velocity].
    sample_rate:
        [frequency].
    kind:
        ``"linear"`` or ``"constant"``.
    """
    from scipy import signal as ssig  # here: scipy.signal costs a kernel ~0.7 s to import

    q, _ = _signal(signal)
    fs = _rate(sample_rate)
    if kind not in ("linear", "constant"):
        raise InputError("unknown detrend", input_name="kind", expected="'linear' or 'constant'",
                         got=repr(kind))
    out = ssig.detrend(np.asarray(q.magnitude, dtype=float), type=kind)
    step = quantity_step(id="signal.detrend", description=f"Detrended ({kind})", value=Q_(out.size, ""),
                         method=f"least-squares {'line' if kind == 'linear' else 'mean'} removed "
                         f"from {out.size} samples", source=COMMON_PRACTICE)
    return SignalResult(value=Q_(out, q.units), steps=(step,), sample_rate=Q_(fs, "Hz"))


def _highpass_weights(freq: np.ndarray, f_hp: float) -> np.ndarray:
    w = np.ones_like(freq)
    w[freq < f_hp / 2] = 0.0
    ramp = (freq >= f_hp / 2) & (freq < f_hp)
    w[ramp] = 0.5 * (1 - np.cos(np.pi * (freq[ramp] - f_hp / 2) / (f_hp / 2)))
    return w


def to_velocity(signal, *, sample_rate, highpass=DEFAULT_HIGHPASS) -> SignalResult:
    """Integrate an acceleration signal to velocity in the frequency domain.

    V(f) = A(f) / (j 2π f) on the FFT of the whole record; bins below
    ``highpass / 2`` are set to zero and a half-cosine taper rises to 1 at ``highpass``.
    The record is treated as periodic: start and end transients spread over a few periods of
    the high-pass frequency.

    Parameters
    ----------
    signal:
        1-D acceleration [acceleration].
    sample_rate:
        [frequency].
    highpass:
        High-pass frequency of the integration [frequency].

    Returns
    -------
    SignalResult
        Velocity in m/s.
    """
    q, _ = _signal(signal, quantity="acceleration")
    fs = _rate(sample_rate)
    f_hp = float(check_positive(check_dimension(highpass, name="highpass", expected="frequency"),
                                name="highpass").to("Hz").m)
    src = _magnitude(q, "m/s^2")
    n = src.shape[0]
    a = np.empty(n)
    for b0 in range(0, n, FFT_CHUNK * 8):          # a mapped record is copied block by block, its pages let go
        a[b0:b0 + FFT_CHUNK * 8] = src[b0:b0 + FFT_CHUNK * 8]
        release_pages(src)
    spec = sfft.rfft(a)
    del a                       # only the spectrum and then the velocity are held (a record's channel each)
    bin_width = 1.0 / (n * (1.0 / fs))                # as scipy.fft.rfftfreq spaces the bins
    for b0 in range(0, spec.size, FFT_CHUNK):         # in place, chunk by chunk, to bound temporaries
        sl = slice(b0, min(b0 + FFT_CHUNK, spec.size))
        freq = np.arange(sl.start, sl.stop) * bin_width
        w = _highpass_weights(freq, f_hp)
        kept = w > 0                                   # the weights only rise: zero below, kept above
        block = spec[sl]
        if kept.any():
            block[kept] = VELOCITY_FROM_ACCELERATION.evaluate(
                {"A": Q_(block[kept] * w[kept], "m/s^2"), "f": Q_(freq[kept], "Hz")}).to("m/s").magnitude
        block[~kept] = 0.0
    v = sfft.irfft(spec, n=n, overwrite_x=True)
    del spec
    steps = (
        evaluate(VELOCITY_AMPLITUDE, id="signal.integration", description="Acceleration to velocity, "
                 "frequency domain", values={"A": Q_(1.0, "m/s^2"), "f": Q_(f_hp, "Hz")}, unit="m/s",
                 source=BRANDT_2011,
                 note=f"Applied bin by bin as V(f) = A(f) / (j 2π f) (velocity lags acceleration by 90°); the "
                      f"modulus is shown for a unit amplitude at the high-pass frequency. High-pass: zero below "
                      f"{f_hp / 2:g} Hz (including the mean), half-cosine taper to 1 at {f_hp:g} Hz; the "
                      "record is treated as periodic."),
    )
    return SignalResult(value=Q_(v, "m/s"), steps=steps, sample_rate=Q_(fs, "Hz"))


def to_acceleration(signal, *, sample_rate) -> SignalResult:
    """Differentiate a velocity signal in the frequency domain, A(f) = j 2π f V(f) [m/s²]."""
    q, _ = _signal(signal, quantity="velocity")
    fs = _rate(sample_rate)
    v = np.asarray(_magnitude(q, "m/s"), dtype=float)
    spec = sfft.rfft(v)
    freq = sfft.rfftfreq(v.size, 1.0 / fs)
    a_spec = ACCELERATION_FROM_VELOCITY.evaluate({"V": Q_(spec, "m/s"), "f": Q_(freq, "Hz")}).to("m/s^2").m
    a = sfft.irfft(a_spec, n=v.size)
    step = evaluate(ACCELERATION_AMPLITUDE, id="signal.differentiation", description="Velocity to "
                    "acceleration, frequency domain", values={"V": Q_(1.0, "m/s"), "f": Q_(1.0, "Hz")},
                    unit="m/s^2", source=BRANDT_2011,
                    note="Applied bin by bin as A(f) = j 2π f V(f) (acceleration leads velocity by 90°); the "
                         "modulus is shown for a unit velocity at 1 Hz.")
    return SignalResult(value=Q_(a, "m/s^2"), steps=(step,), sample_rate=Q_(fs, "Hz"))


def welch_psd(signal, *, sample_rate, resolution=None, overlap: float = 0.5, detrend: str = "constant",
              id_prefix: str = "psd") -> Spectrum:
    """Welch power spectral density (one-sided, density scaling) at a chosen resolution.

    Parameters
    ----------
    signal:
        1-D Quantity array [acceleration or velocity] (a memory map is read in batches).
    sample_rate:
        [frequency].
    resolution:
        Frequency resolution Δf [frequency]; segment length = sample rate / Δf rounded up to an
        FFT-friendly size.  Default: 8 / record length (about 15 averages).
    overlap:
        Segment overlap fraction (0.5 with the Hann window).
    detrend:
        ``"constant"`` (mean) or ``"linear"`` per segment.
    id_prefix:
        Prefix of the step ids.

    Returns
    -------
    Spectrum
        ``frequency`` (Hz) and ``psd`` in (m/s²)²/Hz or (m/s)²/Hz; the PSD integrates to the
        variance (Parseval).
    """
    q, kind = _signal(signal)
    fs = _rate(sample_rate)
    n = q.magnitude.shape[0]
    if resolution is None:
        df = 8.0 * fs / n
    else:
        df = float(check_positive(check_dimension(resolution, name="resolution", expected="frequency"),
                                  name="resolution").to("Hz").m)
    if not 0 <= overlap < 1:
        raise InputError("overlap must be a fraction", input_name="overlap", expected="0 <= overlap < 1",
                         got=repr(overlap))
    nfft = _nfft_for(fs, df)
    unit = _si(kind)
    freq, psd, avg, nperseg = _welch(_magnitude(q, unit), fs, nfft, overlap=overlap, detrend=detrend)
    steps = (
        quantity_step(id=f"{id_prefix}.resolution", description="Frequency resolution of the Welch PSD",
                      value=Q_(fs / nfft, "Hz"), unit="Hz", source=WELCH_1967,
                      method=f"Hann window, {nperseg} samples per segment, FFT length {nfft}, "
                             f"{overlap:.0%} overlap, {detrend} detrend, density scaling"),
        quantity_step(id=f"{id_prefix}.averages", description="Number of averaged segments",
                      value=Q_(avg, ""), method="count", source=WELCH_1967),
    )
    return Spectrum(value={"frequency": Q_(freq, "Hz"), "psd": Q_(psd, f"({unit})^2/Hz")}, steps=steps,
                    resolution=Q_(fs / nfft, "Hz"), averages=avg, quantity=kind,
                    title="Power spectral density (Welch)")


def velocity_psd(spectrum: Spectrum) -> pint.Quantity:
    """Velocity PSD of a Welch spectrum [(m/s)²/Hz]; acceleration divided by (2π f)² (0 at f = 0)."""
    f = spectrum.value["frequency"].to("Hz").m
    psd = spectrum.value["psd"]
    if spectrum.quantity == "velocity":
        return psd.to("(m/s)^2/Hz")
    out = np.zeros_like(f)
    pos = f > 0
    out[pos] = VELOCITY_PSD.evaluate({"G_aa": Q_(psd.to("(m/s^2)^2/Hz").m[pos], "(m/s^2)^2/Hz"),
                                      "f": Q_(f[pos], "Hz")}).to("(m/s)^2/Hz").m
    return Q_(out, "(m/s)^2/Hz")


def narrowband_spectrum(signal, *, sample_rate, resolution=NARROWBAND_RESOLUTION,
                        quantity: str = "acceleration", highpass=DEFAULT_HIGHPASS) -> Spectrum:
    """Narrowband velocity spectrum: Welch PSD converted to velocity, per-bin RMS and level.

    ``value`` maps ``frequency`` (Hz), ``psd`` ((m/s)²/Hz), ``rms`` (m/s per bin, √(G Δf)) and
    ``level`` (dB re 1e-9 m/s per bin).  Bins below ``highpass`` are set to zero.
    """
    q, kind = _signal(signal, quantity=quantity)
    spec = welch_psd(q, sample_rate=sample_rate, resolution=resolution, id_prefix="narrowband")
    gvv = velocity_psd(spec)
    f = spec.value["frequency"].to("Hz").m
    f_hp = float(check_dimension(highpass, name="highpass", expected="frequency").to("Hz").m)
    g = gvv.m * (f >= f_hp)
    rms = np.sqrt(g * float(spec.resolution.m))
    lev = velocity_level(Q_(np.maximum(rms, 1e-30), "m/s"), id="narrowband.level").value
    conv = evaluate(VELOCITY_PSD, id="narrowband.velocity-psd", description="Velocity PSD from acceleration PSD",
                    values={"G_aa": Q_(1.0, "(m/s^2)^2/Hz"), "f": Q_(1.0, "Hz")}, unit="(m/s)^2/Hz",
                    source=BRANDT_2011, note="Shown for a unit PSD at 1 Hz; applied bin by bin."
                    ) if kind == "acceleration" else None
    steps = spec.steps + ((conv,) if conv else ())
    return Spectrum(value={"frequency": spec.value["frequency"], "psd": Q_(g, "(m/s)^2/Hz"),
                           "rms": Q_(rms, "m/s"), "level": lev}, steps=steps,
                    resolution=spec.resolution, averages=spec.averages, quantity="velocity",
                    title="Narrowband velocity spectrum")


def velocity_level(v_rms, *, reference="1e-9 m/s", id: str = "level.velocity") -> Level:
    """Velocity level L_v = 20 log10(v / v_0) in dB.

    Parameters
    ----------
    v_rms:
        RMS velocity [velocity], scalar or array.
    reference:
        v_0 [velocity]: ``"1e-9 m/s"`` (ISO 1683) or ``"1 microinch/s"`` (VdB, FTA).
    id:
        Step id.

    Returns
    -------
    Level
        ``.value`` in dB re ``reference``.
    """
    v = check_dimension(v_rms, name="v_rms", expected="velocity")
    v0 = parse(reference, name="reference", expected="velocity")
    check_positive(v0, name="reference")
    check_positive(v, name="v_rms")
    vdb = abs(float((v0 / Q_(1.0, "microinch/s")).to("").m) - 1) < 1e-9
    src = FTA_VDB if vdb else VELOCITY_REFERENCE_SOURCE
    ref_text = reference.strip() if isinstance(reference, str) else format_quantity(v0, sig=3)
    step = evaluate(VELOCITY_LEVEL, id=id, description=f"Velocity level re {ref_text}"
                    + (" (VdB)" if vdb else ""), values={"v": v, "v_0": v0}, unit="", source=src)
    step = _as_db(step)
    return Level(value=step.result, steps=(step,), reference=v0, title="Velocity level")


def velocity_from_level(level, *, reference="1e-9 m/s", id: str = "level.to-velocity") -> CalcResult:
    """RMS velocity of a level in dB re ``reference``: v = v_0 10^(L/20) [m/s]."""
    lv = _db_magnitude(level, name="level")
    v0 = parse(reference, name="reference", expected="velocity")
    step = evaluate(VELOCITY_FROM_LEVEL, id=id,
                    description=f"Velocity of a level re {format_quantity(v0, sig=3)}",
                    values={"L": Q_(lv, ""), "v_0": v0}, unit="m/s", sig=4,
                    source=FTA_VDB if abs(float((v0 / Q_(1.0, 'microinch/s')).to('').m) - 1) < 1e-9
                    else VELOCITY_REFERENCE_SOURCE)
    return CalcResult(value=step.result, steps=(step,), title="Velocity from level")


def _db_magnitude(level, *, name: str):
    if isinstance(level, pint.Quantity):
        if str(level.units) in ("decibel", "dB"):
            return level.magnitude
        check_dimension(level, name=name, expected="dimensionless")
        return level.to("").magnitude
    return np.asarray(level, dtype=float) if np.ndim(level) else float(level)


def _as_db(step: Step) -> Step:
    """The same step with its (dimensionless) result labelled dB."""
    from dataclasses import replace

    return replace(step, result=Q_(step.result.to("").magnitude, "dB"))


def _check_band_duration(n: int, fs: float, f1: float, f2: float, nominal: Any) -> None:
    """A record shorter than 1 / (lowest band's width) cannot resolve that band (B·T >= 1)."""
    width0 = f2 - f1
    duration = n / fs
    if duration * width0 < 1.0:
        raise RecordError("record too short for the lowest band", input_name="signal",
                          expected=f">= {1 / width0:.2f} s (bandwidth-time product B·T >= 1 for the "
                          f"{nominal} Hz band)", got=f"{duration:.3f} s",
                          hint="Use a longer record or a higher lowest band")


def _band_velocity_rms(x: np.ndarray, fs: float, f1: np.ndarray, f2: np.ndarray, *, kind: str,
                       bins_per_band: int) -> np.ndarray:
    """Band RMS velocity (m/s) of a signal in SI units: the numbers of :func:`third_octave_levels`, no steps."""
    nfft = _nfft_for(fs, (f2[0] - f1[0]) / bins_per_band)
    freq, psd, _, _ = _welch(x, fs, nfft)
    if kind == "acceleration":
        gvv = np.zeros_like(freq)
        pos = freq > 0
        gvv[pos] = VELOCITY_PSD.evaluate({"G_aa": Q_(psd[pos], "(m/s^2)^2/Hz"),
                                          "f": Q_(freq[pos], "Hz")}).to("(m/s)^2/Hz").m
    else:
        gvv = psd
    df = fs / nfft
    cum = np.concatenate(([0.0], np.cumsum(gvv * df)))
    bounds = np.concatenate(([freq[0] - df / 2], freq + df / 2))
    ms = np.interp(f2, bounds, cum) - np.interp(f1, bounds, cum)
    return np.sqrt(np.maximum(ms, 0.0))


def third_octave_levels(signal, *, sample_rate, quantity: str = "acceleration", lowest=DEFAULT_LOWEST,
                        highest=DEFAULT_HIGHEST, bins_per_band: int = BINS_PER_BAND,
                        id_prefix: str = "bands") -> BandLevels:
    """One-third-octave band RMS velocity and levels from an acceleration or velocity signal.

    Parameters
    ----------
    signal:
        1-D Quantity array [acceleration (m/s²) or velocity (m/s)].
    sample_rate:
        [frequency]; the highest band's upper edge must lie below the Nyquist frequency.
    quantity:
        ``"acceleration"`` or ``"velocity"``: what ``signal`` is.
    lowest, highest:
        Nominal midband frequencies of the first and last band [frequency] (1 Hz to 250 Hz).
    bins_per_band:
        Minimum number of PSD bins across the lowest band (sets the Welch resolution).
    id_prefix:
        Prefix of the step ids.

    Returns
    -------
    BandLevels
        ``.value["centre"]`` exact midband frequencies (Hz), ``["nominal"]`` labels,
        ``["velocity_rms"]`` (m/s), ``["level"]`` (dB re 1e-9 m/s), ``["overall_rms"]``.
    """
    q, kind = _signal(signal, quantity=quantity)
    fs = _rate(sample_rate)
    bands = third_octave_bands(lowest=lowest, highest=highest)
    f1 = bands.lower.to("Hz").m
    f2 = bands.upper.to("Hz").m
    if f2[-1] >= fs / 2:
        raise RecordError("sample rate too low for the bands asked", input_name="sample_rate",
                          expected=f"> {2 * f2[-1]:.1f} Hz (twice the {bands.value['nominal'][-1]} Hz "
                          f"band's upper edge {f2[-1]:.2f} Hz)", got=f"{fs:g} Hz")
    n = q.magnitude.shape[0]
    width0 = f2[0] - f1[0]
    duration = n / fs
    _check_band_duration(n, fs, f1[0], f2[0], bands.value["nominal"][0])
    if isinstance(bins_per_band, bool) or not isinstance(bins_per_band, int) or bins_per_band < 2:
        raise InputError("bins per band must be a whole number >= 2", input_name="bins_per_band",
                         expected=">= 2", got=repr(bins_per_band))
    spec = welch_psd(q, sample_rate=Q_(fs, "Hz"), resolution=Q_(width0 / bins_per_band, "Hz"),
                     id_prefix=f"{id_prefix}.psd")
    gvv = velocity_psd(spec).m
    df = float(spec.resolution.m)
    freq = spec.value["frequency"].m
    # cumulative integral at the bin boundaries (bin k covers f_k ± Δf/2)
    upper_edges = freq + df / 2
    cum = np.concatenate(([0.0], np.cumsum(gvv * df)))
    bounds = np.concatenate(([freq[0] - df / 2], upper_edges))
    ms = np.interp(f2, bounds, cum) - np.interp(f1, bounds, cum)
    vrms = np.sqrt(np.maximum(ms, 0.0))
    rms_step = quantity_step(
        id=f"{id_prefix}.velocity-rms", description="Band RMS velocity (PSD integrated over each band)",
        value=Q_(vrms, "m/s"), unit="mm/s", source=IEC_61260_1,
        method=f"FFT-domain band integration of the Welch velocity PSD, Δf = {df:.4g} Hz "
               f"(>= {bins_per_band} bins across the lowest band); edge bins counted in proportion. "
               "Accuracy: a tone at a midband frequency within 0.5 % of its RMS; not a class 1 filter bank.")
    conv = []
    if kind == "acceleration":
        conv.append(evaluate(VELOCITY_PSD, id=f"{id_prefix}.velocity-psd", description="Velocity PSD from "
                             "acceleration PSD", values={"G_aa": Q_(1.0, "(m/s^2)^2/Hz"), "f": Q_(1.0, "Hz")},
                             unit="(m/s)^2/Hz", source=BRANDT_2011,
                             note="Shown for a unit PSD at 1 Hz; applied bin by bin."))
    bt = width0 * duration
    err = quantity_step(id=f"{id_prefix}.random-error", description="Random error of the lowest band's "
                        "mean square, 1/sqrt(B·T)", value=Q_(1 / math.sqrt(bt), ""),
                        method=f"B = {width0:.4g} Hz, T = {duration:.4g} s",
                        source=Source(author="Bendat, J. S. & Piersol, A. G.", title="Random Data, 4th ed.",
                                      year=2010, locator="§8.2", tag="from memory"), sig=2)
    lev = velocity_level(Q_(np.maximum(vrms, 1e-30), "m/s"), id=f"{id_prefix}.level")
    overall = float(np.sqrt(np.sum(vrms ** 2)))
    ov_step = quantity_step(id=f"{id_prefix}.overall", description=f"Overall RMS velocity, "
                            f"{bands.value['nominal'][0]}–{bands.value['nominal'][-1]} Hz bands",
                            value=Q_(overall, "m/s"), unit="mm/s", method="square root of the sum of "
                            "the band mean squares", source=COMMON_PRACTICE)
    steps = bands.steps + spec.steps + tuple(conv) + (rms_step, err) + lev.steps + (ov_step,)
    return BandLevels(value={"centre": bands.centre, "nominal": bands.value["nominal"], "lower": bands.lower,
                             "upper": bands.upper, "velocity_rms": Q_(vrms, "m/s"), "level": lev.value,
                             "overall_rms": Q_(overall, "m/s")},
                      steps=steps, title="One-third-octave band velocity levels")


def running_rms(signal, *, sample_rate, time_constant=SLOW, output_rate=RMS_OUTPUT_RATE,
                block: int = 1 << 20) -> RunningRms:
    """Exponentially time-weighted running RMS (τ = 1 s "S" or 0.125 s "F").

    x_rms(t) = sqrt((1/τ) ∫ x²(ξ) e^{-(t-ξ)/τ} dξ), computed by the recursion
    y[n] = α y[n-1] + (1 − α) x[n]² with α = exp(−1/(τ f_s)), block by block with the filter
    state carried over, so memory does not grow with the record.

    Parameters
    ----------
    signal:
        1-D Quantity array [acceleration or velocity].
    sample_rate:
        [frequency].
    time_constant:
        τ [time].
    output_rate:
        Rate of the returned running RMS [frequency] (the weighted signal is smooth on the scale of
        τ; it is sampled, not averaged, at this rate).
    block:
        Samples per block of the recursive filter.

    Returns
    -------
    RunningRms
        ``time`` (s) and ``rms`` (signal's unit), ``maximum`` over the record.
    """
    from scipy import signal as ssig  # here: scipy.signal costs a kernel ~0.7 s to import

    q, kind = _signal(signal)
    fs = _rate(sample_rate)
    tau = check_positive(check_dimension(time_constant, name="time_constant", expected="time"),
                         name="time_constant")
    out_fs = float(check_positive(check_dimension(output_rate, name="output_rate", expected="frequency"),
                                  name="output_rate").to("Hz").m)
    tag = f"{float(tau.to('s').m):g}".replace(".", "_")
    coeff = evaluate(EXPONENTIAL_COEFFICIENT, id=f"rms.alpha-{tag}s",
                     description="Exponential averaging coefficient per sample",
                     values={"tau": tau.to("s"), "f_s": Q_(fs, "Hz")}, unit="", source=IEC_61672_1, sig=6)
    alpha = float(coeff.result.m)
    unit = _si(kind)
    x = _magnitude(q, unit)
    n = x.shape[0]
    stride = max(1, int(round(fs / out_fs)))
    zi = np.zeros(1)
    outs = []
    b, a = [1 - alpha], [1.0, -alpha]
    for start in range(0, n, block):
        xb = np.asarray(x[start:start + block], dtype=float)
        yb, zi = ssig.lfilter(b, a, xb * xb, zi=zi)
        first = (-start) % stride
        outs.append(np.sqrt(yb[first::stride]))
    rms = np.concatenate(outs)
    t = np.arange(rms.size) * stride / fs
    peak = float(rms.max())
    label = {1.0: " (S)", 0.125: " (F)"}.get(round(float(tau.to("s").m), 6), "")
    steps = (coeff, quantity_step(
        id=f"rms.max-{tag}s",
        description=f"Maximum running RMS, τ = {float(tau.to('s').m):g} s{label}", value=Q_(peak, unit),
        unit="mm/s" if kind == "velocity" else "m/s^2", source=ISO_2631_1,
        method="recursive exponential averaging of the squared signal, y[n] = α y[n−1] + (1 − α) x[n]²"))
    return RunningRms(value={"time": Q_(t, "s"), "rms": Q_(rms, unit)}, steps=steps, time_constant=tau,
                      maximum=Q_(peak, unit), title="Running RMS")


def find_events(rms: RunningRms, *, threshold=None, factor: float = 3.0, min_duration=EVENT_MIN_DURATION,
                merge_gap=EVENT_MERGE_GAP, pad=EVENT_PAD) -> Events:
    """Events (train pass-bys) where the running RMS exceeds a threshold.

    Parameters
    ----------
    rms:
        A :class:`RunningRms` result.
    threshold:
        Level that starts an event [signal's unit]; default ``factor`` × the median running RMS
        (the background), common practice.
    factor:
        Multiple of the background used when ``threshold`` is not given.
    min_duration:
        Shorter exceedances are ignored [time].
    merge_gap:
        Events closer than this are merged [time].
    pad:
        Time added before and after each event [time].
    """
    if not isinstance(rms, RunningRms):
        raise InputError("needs a running RMS result", input_name="rms", expected="RunningRms",
                         got=type(rms).__name__)
    t = rms.value["time"].to("s").m
    r = rms.value["rms"]
    unit = r.units
    x = r.m
    if threshold is None:
        if not factor > 1:
            raise InputError("the threshold factor must exceed 1", input_name="factor", expected="> 1",
                             got=repr(factor))
        thr = factor * float(np.median(x))
        how = f"{factor:g} × the median running RMS (background)"
    else:
        thr = float(check_dimension(threshold, name="threshold", expected=str(unit)).to(unit).m)
        how = "stated"
    md = float(check_dimension(min_duration, name="min_duration", expected="time").to("s").m)
    gap = float(check_dimension(merge_gap, name="merge_gap", expected="time").to("s").m)
    padding = float(check_dimension(pad, name="pad", expected="time").to("s").m)
    above = x > thr
    edges = np.diff(np.concatenate(([0], above.astype(np.int8), [0])))
    starts = np.flatnonzero(edges == 1)
    ends = np.flatnonzero(edges == -1) - 1
    spans: list[list[float]] = []
    for s, e in zip(starts, ends):
        ts, te = t[s], t[e]
        if spans and ts - spans[-1][1] < gap:
            spans[-1][1] = te
        else:
            spans.append([ts, te])
    spans = [sp_ for sp_ in spans if sp_[1] - sp_[0] >= md]
    t_end = t[-1] if t.size else 0.0
    st = np.array([max(0.0, a - padding) for a, _ in spans])
    en = np.array([min(t_end, b + padding) for _, b in spans])
    peaks = np.array([x[(t >= a) & (t <= b)].max() for a, b in zip(st, en)]) if spans else np.array([])
    steps = (
        quantity_step(id="events.threshold", description="Event threshold on the running RMS",
                      value=Q_(thr, unit), unit="mm/s" if Q_(1, unit).check("[velocity]") else "m/s^2",
                      method=how, source=COMMON_PRACTICE),
        quantity_step(id="events.count", description="Events found", value=Q_(len(spans), ""),
                      method=f"exceedances >= {md:g} s, merged when < {gap:g} s apart, padded ±{padding:g} s",
                      source=COMMON_PRACTICE),
    )
    return Events(value={"start": Q_(st, "s"), "end": Q_(en, "s"), "peak": Q_(peaks, unit)}, steps=steps,
                  threshold=Q_(thr, unit), title="Events")


def event_spectra(signal, *, sample_rate, events: Events, quantity: str = "acceleration",
                  lowest=DEFAULT_LOWEST, highest=DEFAULT_HIGHEST) -> EventSpectra:
    """Band levels over each event and their per-band maximum (max-hold).

    Parameters
    ----------
    signal:
        1-D Quantity array [acceleration or velocity].
    sample_rate:
        [frequency].
    events:
        An :class:`Events` result (times relative to the start of ``signal``).
    quantity, lowest, highest:
        As for :func:`third_octave_levels`.
    """
    q, kind = _signal(signal, quantity=quantity)
    fs = _rate(sample_rate)
    if not isinstance(events, Events) or len(events) == 0:
        raise InputError("no events to analyse", input_name="events", expected="at least one event",
                         got="none", hint="Lower the event threshold or check the record")
    spans = [(int(a * fs), int(math.ceil(b * fs)) + 1)
             for a, b in zip(events.value["start"].to("s").m, events.value["end"].to("s").m)]
    # the last event through the full call (its steps describe the bands); every event's numbers
    # through the same kernel without building steps per event
    i0, i1 = spans[-1]
    last = third_octave_levels(q[i0:i1], sample_rate=Q_(fs, "Hz"), quantity=kind, lowest=lowest,
                               highest=highest, id_prefix=f"event{len(spans)}")
    f1 = last.value["lower"].to("Hz").m
    f2 = last.value["upper"].to("Hz").m
    x = _magnitude(q, _si(kind))
    per = []
    for i0, i1 in spans[:-1]:
        seg = x[i0:i1]
        _check_band_duration(seg.shape[0], fs, f1[0], f2[0], last.value["nominal"][0])
        per.append(_band_velocity_rms(seg, fs, f1, f2, kind=kind, bins_per_band=BINS_PER_BAND))
    per.append(last.value["velocity_rms"].to("m/s").m)
    per_arr = np.vstack(per)
    hold = per_arr.max(axis=0)
    lev = velocity_level(Q_(np.maximum(hold, 1e-30), "m/s"), id="maxhold.level")
    step = quantity_step(id="maxhold.velocity-rms", description=f"Max-hold band RMS velocity over "
                         f"{len(per)} events", value=Q_(hold, "m/s"), unit="mm/s",
                         method="per band, the largest event band RMS", source=COMMON_PRACTICE)
    band_steps = tuple(s for s in last.steps if s.id.startswith(("bands.",)))
    return EventSpectra(value={"centre": last.value["centre"], "nominal": last.value["nominal"],
                               "lower": last.value["lower"], "upper": last.value["upper"],
                               "velocity_rms": Q_(hold, "m/s"), "level": lev.value,
                               "per_event": Q_(per_arr, "m/s")},
                        steps=band_steps + (step,) + lev.steps, title="Event band spectra (max-hold)")


def peak_particle_velocity(signal, *, sample_rate, quantity: str = "acceleration", highpass=DEFAULT_HIGHPASS,
                           resolution=NARROWBAND_RESOLUTION) -> CalcResult:
    """Peak particle velocity (largest |v|) and the dominant frequency (maximum of the velocity PSD).

    ``value`` maps ``ppv`` [velocity] and ``frequency`` [frequency].  An acceleration is integrated
    first (:func:`to_velocity`, with ``highpass``).
    """
    q, kind = _signal(signal, quantity=quantity)
    v = to_velocity(q, sample_rate=sample_rate, highpass=highpass).value if kind == "acceleration" else q
    ppv = float(np.max(np.abs(np.asarray(v.to("m/s").m))))
    nb = narrowband_spectrum(v, sample_rate=sample_rate, resolution=resolution, quantity="velocity",
                             highpass=highpass)
    fdom = float(nb.value["frequency"].m[int(np.argmax(nb.value["psd"].m))])
    steps = (quantity_step(id="ppv.value", description="Peak particle velocity", value=Q_(ppv, "m/s"), unit="mm/s",
                           method="largest absolute velocity sample", source=COMMON_PRACTICE),
             quantity_step(id="ppv.frequency", description="Dominant frequency (maximum of the velocity PSD)",
                           value=Q_(fdom, "Hz"), unit="Hz", method=f"narrowband, Δf = {nb.resolution.m:.3g} Hz",
                           source=COMMON_PRACTICE))
    return CalcResult(value={"ppv": Q_(ppv, "m/s"), "frequency": Q_(fdom, "Hz")}, steps=steps,
                      title="Peak particle velocity")
