"""Figures for measured vibration.

Band spectra against criteria and the designed band, narrowband spectra with peaks, running RMS
with events, transmissibility with coherence.
"""

from __future__ import annotations

import numpy as np


def _hz(q):
    return np.atleast_1d(q.to("Hz").magnitude).astype(float)


def band_spectrum_figure(levels, *, criterion=None, band=None, band_held=None, peaks=None, label="measured",
                         extra=None):
    """One-third-octave RMS velocity (µm/s) with a criterion curve, the designed band shaded and peaks.

    Parameters
    ----------
    levels:
        Band levels (mapping with ``centre`` and ``velocity_rms``), or ``None`` to draw only the band
        and the peaks.
    criterion:
        A :class:`~latticecalc.signals.criteria.CriterionCurve` to draw, or ``None``.
    band:
        (lower, upper) nominal designed band [frequency], shaded light.
    band_held:
        (lower, upper) band held under the whole scatter range [frequency], shaded darker.
    peaks:
        Peak frequencies [frequency] marked with vertical lines.
    label:
        Legend text of the measured spectrum.
    extra:
        Further ``(levels, label)`` pairs to draw (e.g. the whole-record spectrum beside the max-hold).
    """
    from matplotlib.figure import Figure

    fig = Figure(figsize=(7.0, 3.8))
    ax = fig.add_subplot()
    if band is not None:
        ax.axvspan(*(float(_hz(b)[0]) for b in band), color="#dde8f3", label="designed band (nominal)")
    if band_held is not None and band_held[1] > band_held[0]:
        ax.axvspan(*(float(_hz(b)[0]) for b in band_held), color="#a9c4e0", label="band held under scatter")
    if levels is not None:
        ax.step(_hz(levels["centre"]), levels["velocity_rms"].to("um/s").magnitude, where="mid", color="k",
                label=label)
    else:
        ax.set_yticks([])
    for other, text in (extra or []):
        ax.step(_hz(other["centre"]), other["velocity_rms"].to("um/s").magnitude, where="mid", color="#777",
                linestyle="--", label=text)
    if criterion is not None:
        ax.plot(_hz(criterion.value["centre"]), criterion.value["velocity_rms"].to("um/s").magnitude,
                color="#b33", label=criterion.criterion.title)
    if peaks is not None:
        for i, fp in enumerate(_hz(peaks)):
            ax.axvline(fp, color="#393", linestyle=":", label="peaks to target" if i == 0 else None)
    ax.set_xscale("log")
    if levels is not None:
        ax.set_yscale("log")
        ax.set_ylabel("RMS velocity (µm/s)")
    ax.set_xlabel("one-third-octave band midband frequency (Hz)" if levels is not None else "frequency (Hz)")
    ax.grid(True, which="both", alpha=0.3)
    ax.legend(fontsize=7, frameon=False, loc="lower left")
    fig.tight_layout()
    return fig


def narrowband_figure(spectrum, *, peaks=None, highest=None):
    """Narrowband velocity level (dB re 1e-9 m/s per bin) with the peaks found."""
    from matplotlib.figure import Figure

    fig = Figure(figsize=(7.0, 3.4))
    ax = fig.add_subplot()
    f = _hz(spectrum.value["frequency"])
    lev = spectrum.value["level"].magnitude
    keep = f > 0
    if highest is not None:
        keep &= f <= float(_hz(highest)[0])
    ax.plot(f[keep], lev[keep], color="k", linewidth=0.8)
    if peaks is not None and len(peaks):
        ax.plot(_hz(peaks.value["frequency"]), peaks.value["level"].magnitude, "v", color="#393",
                label="peaks")
        for fp, lv in zip(_hz(peaks.value["frequency"]), peaks.value["level"].magnitude):
            ax.annotate(f"{fp:.3g} Hz", (fp, lv), textcoords="offset points", xytext=(3, 4), fontsize=7)
        ax.legend(fontsize=7, frameon=False)
    ax.set_xlabel("frequency (Hz)")
    ax.set_ylabel(f"velocity level per {spectrum.resolution.to('Hz').magnitude:.3g} Hz bin\n(dB re 1e-9 m/s)")
    ax.grid(True, alpha=0.3)
    fig.tight_layout()
    return fig


def running_rms_figure(rms, *, events=None, threshold=None, fast=None):
    """Running RMS against time with the events shaded."""
    from matplotlib.figure import Figure

    fig = Figure(figsize=(7.0, 3.0))
    ax = fig.add_subplot()
    unit = "mm/s" if rms.value["rms"].check("[length]/[time]") else "m/s^2"
    if fast is not None:
        ax.plot(fast.value["time"].to("s").magnitude, fast.value["rms"].to(unit).magnitude, color="#999",
                linewidth=0.5, label=f"τ = {fast.time_constant.to('s').magnitude:g} s")
    ax.plot(rms.value["time"].to("s").magnitude, rms.value["rms"].to(unit).magnitude, color="k", linewidth=0.8,
            label=f"τ = {rms.time_constant.to('s').magnitude:g} s")
    if events is not None:
        for i, (a, b) in enumerate(zip(events.value["start"].to("s").magnitude,
                                       events.value["end"].to("s").magnitude)):
            ax.axvspan(a, b, color="#f3e0c0", label="events" if i == 0 else None)
        ax.axhline(events.threshold.to(unit).magnitude, color="#b33", linestyle="--", linewidth=0.8,
                   label="threshold")
    ax.set_xlabel("time (s)")
    ax.set_ylabel(f"running RMS ({'mm/s' if unit == 'mm/s' else 'm/s²'})")
    ax.legend(fontsize=7, frameon=False, loc="upper right")
    fig.tight_layout()
    return fig


def transmissibility_figure(frf, *, band=None, level=None, model=None, highest=None):
    """Transmissibility (dB) and coherence against frequency, the measured band shaded.

    ``model`` may be ``(frequency, transmissibility_dB)`` arrays of a prediction to overlay.
    """
    from matplotlib.figure import Figure

    fig = Figure(figsize=(7.0, 4.4))
    ax, ax2 = fig.subplots(2, 1, sharex=True, gridspec_kw={"height_ratios": [3, 1]})
    f = _hz(frf.value["frequency"])
    keep = f > 0
    if highest is not None:
        keep &= f <= float(_hz(highest)[0])
    if band is not None:
        for a in (ax, ax2):
            a.axvspan(float(_hz(band.value["lower"])[0]), float(_hz(band.value["upper"])[0]), color="#dde8f3",
                      label="measured attenuation band" if a is ax else None)
    ax.plot(f[keep], frf.value["level"].magnitude[keep], color="k", linewidth=0.8, label="H1")
    if model is not None:
        ax.plot(model[0], model[1], color="#4f7fb3", linestyle="--", label="prediction")
    if level is not None:
        ax.axhline(level, color="#b33", linestyle=":", label=f"{level:g} dB")
    ax.set_ylabel("transmissibility (dB)")
    ax.grid(True, alpha=0.3)
    ax.legend(fontsize=7, frameon=False)
    ax2.plot(f[keep], frf.value["coherence"].magnitude[keep], color="k", linewidth=0.8)
    ax2.set_ylim(0, 1.05)
    ax2.set_ylabel("coherence")
    ax2.set_xlabel("frequency (Hz)")
    ax2.grid(True, alpha=0.3)
    fig.tight_layout()
    return fig
