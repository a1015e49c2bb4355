"""Prominent peaks of a spectrum, and the peaks to target ranked by how far they exceed a criterion.

Peaks are local maxima of the level (dB) whose prominence (height above the higher of the two
neighbouring valleys, scipy's definition) is at least a stated value; the width is the half-power
(−3 dB) width, interpolated between bins.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from latticecalc.errors import InputError
from latticecalc.sheet import COMMON_PRACTICE, CalcResult, quantity_step
from latticecalc.signals.spectra import velocity_level
from latticecalc.units import Q_, check_dimension

#: Default minimum prominence of a peak, dB (common practice for tonal components).
DEFAULT_PROMINENCE_DB = 6.0


@dataclass(frozen=True, kw_only=True)
class Peaks(CalcResult):
    """Peaks found, strongest first.

    ``value`` maps ``frequency`` (Hz), ``velocity_rms`` (m/s), ``level`` (dB re 1e-9 m/s),
    ``prominence`` (dB) and ``width`` (Hz, half-power).
    """

    def __len__(self) -> int:
        return len(self.value["frequency"])


def find_peaks(*, frequency, velocity_rms, prominence=DEFAULT_PROMINENCE_DB, lowest=None, highest=None,
               max_peaks: int = 10, id_prefix: str = "peaks") -> Peaks:
    """Prominent peaks of a narrowband or band spectrum.

    Parameters
    ----------
    frequency:
        Bin or band-centre frequencies [frequency], increasing.
    velocity_rms:
        RMS velocity per bin or band [velocity].
    prominence:
        Minimum prominence in dB (number or Quantity in dB).
    lowest, highest:
        Frequency range searched [frequency] (default: all).
    max_peaks:
        Keep at most this many (the highest levels).
    id_prefix:
        Step id prefix.
    """
    from scipy import signal as ssig  # here: scipy.signal costs a kernel ~0.7 s to import

    f = check_dimension(frequency, name="frequency", expected="frequency").to("Hz").m
    v = check_dimension(velocity_rms, name="velocity_rms", expected="velocity").to("m/s").m
    f = np.asarray(f, dtype=float)
    v = np.asarray(v, dtype=float)
    if f.shape != v.shape or f.ndim != 1:
        raise InputError("frequency and velocity_rms must be 1-D arrays of one length", input_name="velocity_rms",
                         expected=str(f.shape), got=str(v.shape))
    p_db = float(prominence.m) if hasattr(prominence, "m") else float(prominence)
    lo = -np.inf if lowest is None else check_dimension(lowest, name="lowest", expected="frequency").to("Hz").m
    hi = np.inf if highest is None else check_dimension(highest, name="highest", expected="frequency").to("Hz").m
    sel = (f >= lo) & (f <= hi) & (v > 0)
    idx_all = np.flatnonzero(sel)
    if idx_all.size < 3:
        raise InputError("too few points to look for peaks", input_name="frequency", expected=">= 3 in range",
                         got=str(idx_all.size))
    fs, vs = f[idx_all], v[idx_all]
    lev = velocity_level(Q_(vs, "m/s"), id=f"{id_prefix}.levels").value.m
    # pad with the lowest level so a maximum at the first or last point can still count
    floor = float(lev.min())
    padded = np.concatenate(([floor], lev, [floor]))
    pk, props = ssig.find_peaks(padded, prominence=p_db)
    pk = pk - 1
    prom = props["prominences"]
    power = np.concatenate(([0.0], vs ** 2, [0.0]))
    widths = ssig.peak_widths(power, pk + 1, rel_height=0.5)
    left = np.interp(widths[2] - 1, np.arange(fs.size), fs)
    right = np.interp(widths[3] - 1, np.arange(fs.size), fs)
    order = np.argsort(lev[pk])[::-1][:max_peaks]
    pk, prom, left, right = pk[order], prom[order], left[order], right[order]
    step = quantity_step(id=f"{id_prefix}.count", description=f"Peaks with prominence >= {p_db:g} dB",
                         value=Q_(pk.size, ""), source=COMMON_PRACTICE,
                         method="local maxima of the level; prominence as in scipy.signal.find_peaks; "
                                "width at half power, interpolated between points")
    freq_step = quantity_step(id=f"{id_prefix}.frequency", description="Peak frequencies (strongest first)",
                              value=Q_(fs[pk], "Hz"), unit="Hz", method="spectrum maxima",
                              source=COMMON_PRACTICE)
    return Peaks(value={"frequency": Q_(fs[pk], "Hz"), "velocity_rms": Q_(vs[pk], "m/s"),
                        "level": Q_(lev[pk], "dB"), "prominence": Q_(prom, "dB"),
                        "width": Q_(np.maximum(right - left, 0.0), "Hz")},
                 steps=(step, freq_step), title="Spectrum peaks")


@dataclass(frozen=True, kw_only=True)
class Targets(CalcResult):
    """Peaks ranked by exceedance of a criterion, largest first.

    ``value`` maps ``frequency`` (Hz), ``band`` (nominal label), ``exceedance`` (dB),
    ``required_loss`` (dB) and ``target`` (bool).
    """

    def __len__(self) -> int:
        return len(self.value["frequency"])


def rank_targets(*, peaks: Peaks, assessment) -> Targets:
    """Rank peaks by how far the band holding each exceeds the criterion of ``assessment``.

    Parameters
    ----------
    peaks:
        A :class:`Peaks` result (narrowband or band peaks).
    assessment:
        A :class:`~latticecalc.signals.criteria.Assessment` of the band spectrum.

    A peak is a *target* when its band needs insertion loss: exceedance plus the assessment's
    design margin above 0 dB (so a band just below the criterion can be a target).
    """
    if not isinstance(peaks, Peaks):
        raise InputError("needs a Peaks result", input_name="peaks", expected="Peaks", got=type(peaks).__name__)
    centre = assessment.value["centre"].to("Hz").m
    f = peaks.value["frequency"].to("Hz").m
    # the band holding a peak: nearest midband on a log scale (band edges are the geometric means)
    k = np.array([int(np.argmin(np.abs(np.log(centre / fi)))) for fi in f], dtype=int)
    exc = assessment.value["exceedance"].m[k] if k.size else np.array([])
    req = assessment.value["required_loss"].m[k] if k.size else np.array([])
    order = np.argsort(np.where(np.isfinite(exc), -exc, np.inf), kind="stable")
    labels = [assessment.value["nominal"][i] for i in k[order]]
    target = np.isfinite(req[order]) & (req[order] > 0)
    step = quantity_step(id="peaks.targets", description="Peaks to target (their band needs insertion loss "
                         f"against {assessment.criterion.title}, margin included)", value=Q_(int(target.sum()), ""),
                         method="band of each peak compared with the criterion; ranked by exceedance",
                         source=assessment.criterion.source)
    freqs = quantity_step(id="peaks.target-frequencies", description="Frequencies of the peaks to target, "
                          "largest exceedance first", value=Q_(f[order][target], "Hz"), unit="Hz",
                          method="peaks whose band needs insertion loss", source=assessment.criterion.source)
    losses = quantity_step(id="peaks.target-losses", description="Insertion loss required at each peak to target",
                           value=Q_(req[order][target], "dB"), method="required loss of the peak's band",
                           source=assessment.criterion.source)
    return Targets(value={"frequency": Q_(f[order], "Hz"), "band": labels, "exceedance": Q_(exc[order], "dB"),
                          "required_loss": Q_(req[order], "dB"), "target": target},
                   steps=(step, freqs, losses), title="Peaks to target")
