"""Figures for measured vibration.

Band spectra against criteria and the designed band, narrowband spectra with peaks, running RMS
with events, transmissibility with coherence.  All drawn in the house style (:mod:`.style`).
"""

from __future__ import annotations

import numpy as np

from latticecalc.plots.style import PALETTE, band_strip, new_figure, plain_log_ticks, spectrum_view, styled
from latticecalc.units import format_number


def _hz(q):
    return np.atleast_1d(q.to("Hz").magnitude).astype(float)


@styled
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
        (lower, upper) band held under the whole scatter range [frequency], shaded darker.  When its
        lower edge lies above its upper edge there is no such band: the figure says so in words
        instead of drawing an empty strip.
    peaks:
        Peak frequencies [frequency] marked with vertical lines.
    label:
        Legend text of the measured spectrum.
    extra:
        Further ``(levels, label)`` pairs to draw (e.g. the whole-record spectrum beside the max-hold).
    """
    fig = new_figure(7.0, 3.8)
    ax = fig.add_subplot()
    xs = []
    if band is not None:
        lo, hi = (float(_hz(b)[0]) for b in band)
        ax.axvspan(lo, hi, color=PALETTE["band"], lw=0, label=f"designed band (nominal) {lo:.4g}–{hi:.4g} Hz")
        xs += [lo, hi]
    if band_held is not None:
        lo, hi = (float(_hz(b)[0]) for b in band_held)
        if hi > lo:
            ax.axvspan(lo, hi, color=PALETTE["band_strong"], lw=0,
                       label=f"band held under scatter {lo:.4g}–{hi:.4g} Hz")
        else:
            ax.text(0.99, 0.02, f"no band is held under the scatter:\nits lower edge {lo:.4g} Hz lies above "
                    f"its upper edge {hi:.4g} Hz", transform=ax.transAxes, ha="right", va="bottom", fontsize=7,
                    color=PALETTE["limit"], bbox={"boxstyle": "round,pad=0.25", "fc": "white", "ec": "none"})
        xs += [lo, hi]
    if levels is not None:
        c = _hz(levels["centre"])
        ax.step(c, levels["velocity_rms"].to("um/s").magnitude, where="mid", color=PALETTE["ink"], label=label)
        xs += [c.min(), c.max()]
    else:
        ax.set_yticks([])
        ax.grid(False)
    for other, text in (extra or []):
        ax.step(_hz(other["centre"]), other["velocity_rms"].to("um/s").magnitude, where="mid",
                color=PALETTE["context"], linestyle="--", label=text)
    if criterion is not None:
        ax.plot(_hz(criterion.value["centre"]), criterion.value["velocity_rms"].to("um/s").magnitude,
                color=PALETTE["limit"], lw=1.4, label=criterion.criterion.title)
    if peaks is not None:
        for i, fp in enumerate(_hz(peaks)):
            ax.axvline(fp, color=PALETTE["target"], lw=1.0, linestyle=(0, (4, 2)),
                       label="peaks to target" if i == 0 else None)
            xs.append(fp)
    ax.set_xscale("log")
    if xs:
        ax.set_xlim(min(xs) / 1.25, max(xs) * 1.25)
    if levels is not None:
        ax.set_yscale("log")
        ax.set_ylabel("RMS velocity (µm/s)")
        plain_log_ticks(ax, "y")
    plain_log_ticks(ax, "x")
    ax.set_xlabel("one-third-octave band midband frequency (Hz)" if levels is not None else "frequency (Hz)")
    ax.legend(loc="lower left")
    return fig


@styled
def narrowband_figure(spectrum, *, peaks=None, highest=None, span_db: float = 60.0):
    """Narrowband velocity level (dB re 1 nm/s per bin) with the peaks found.

    The level axis runs from ``span_db`` below the highest bin to just above it; the DC bin and
    the bins a high-pass pushed below that floor are not drawn (:func:`.style.spectrum_view`).
    """
    fig = new_figure(7.0, 3.4)
    ax = fig.add_subplot()
    f = _hz(spectrum.value["frequency"])
    lev = np.asarray(spectrum.value["level"].magnitude, dtype=float)
    keep, (bottom, top) = spectrum_view(f, lev, span_db=span_db)
    if highest is not None:
        keep &= f <= float(_hz(highest)[0])
    ax.plot(f[keep], lev[keep], color=PALETTE["ink"], linewidth=0.8)
    if peaks is not None and len(peaks):
        fp_all, lv_all = _hz(peaks.value["frequency"]), peaks.value["level"].magnitude
        ax.plot(fp_all, lv_all, "v", color=PALETTE["target"], label="peaks found")
        for fp, lv in zip(fp_all, lv_all):
            ax.annotate(f"{format_number(fp, 4)} Hz", (fp, lv), textcoords="offset points", xytext=(3, 4),
                        fontsize=7, color=PALETTE["target"])
        ax.legend(loc="upper right")
    ax.set_ylim(bottom, top + 4)
    if keep.any():
        ax.set_xlim(f[keep].min(), f[keep].max())
    ax.set_xlabel("frequency (Hz)")
    ax.set_ylabel(f"velocity level per {format_number(spectrum.resolution.to('Hz').magnitude, 3)} Hz bin\n"
                  "(dB re 1 nm/s)")
    return fig


@styled
def running_rms_figure(rms, *, events=None, threshold=None, fast=None):
    """Running RMS against time with the events shaded."""
    fig = new_figure(7.0, 3.0)
    ax = fig.add_subplot()
    unit = "mm/s" if rms.value["rms"].check("[length]/[time]") else "m/s^2"
    if fast is not None:
        ax.plot(fast.value["time"].to("s").magnitude, fast.value["rms"].to(unit).magnitude,
                color=PALETTE["context_light"], linewidth=0.5,
                label=f"τ = {format_number(fast.time_constant.to('s').magnitude, 3)} s")
    ax.plot(rms.value["time"].to("s").magnitude, rms.value["rms"].to(unit).magnitude, color=PALETTE["ink"],
            linewidth=0.9, label=f"τ = {format_number(rms.time_constant.to('s').magnitude, 3)} s")
    if events is not None:
        for i, (a, b) in enumerate(zip(events.value["start"].to("s").magnitude,
                                       events.value["end"].to("s").magnitude)):
            ax.axvspan(a, b, color=PALETTE["band"], lw=0, label="events" if i == 0 else None)
        ax.axhline(events.threshold.to(unit).magnitude, color=PALETTE["limit"], linestyle="--", linewidth=0.9,
                   label="threshold")
    ax.set_xlabel("time (s)")
    ax.set_ylabel(f"running RMS ({'mm/s' if unit == 'mm/s' else 'm/s²'})")
    ax.legend(loc="upper right")
    return fig


@styled
def transmissibility_figure(frf, *, band=None, level=None, model=None, highest=None, coherence_floor: float = 0.5):
    """Transmissibility (dB) against frequency on one axis, its line drawn faint where the coherence is low.

    The coherence is not a second panel: each stretch of the transmissibility line is as opaque
    as the coherence there (solid at 1, faint below ``coherence_floor``), and a thin strip along
    the bottom of the axis shades the coherence itself, dark where it is high.  The measured band is
    a labelled strip.  ``model`` may be ``(frequency, transmissibility_dB)`` arrays of a prediction.
    """
    from matplotlib.collections import LineCollection
    from matplotlib.colors import LinearSegmentedColormap, to_rgba

    fig = new_figure(7.0, 3.9)
    ax = fig.add_subplot()
    f = _hz(frf.value["frequency"])
    keep = f > 0
    if highest is not None:
        keep &= f <= float(_hz(highest)[0])
    f = f[keep]
    lev = np.asarray(frf.value["level"].magnitude, dtype=float)[keep]
    coh = np.clip(np.asarray(frf.value["coherence"].magnitude, dtype=float)[keep], 0.0, 1.0)
    if band is not None:
        band_strip(ax, float(_hz(band.value["lower"])[0]), float(_hz(band.value["upper"])[0]),
                   label="measured band", orientation="vertical")
    points = np.column_stack([f, lev])
    segments = np.stack([points[:-1], points[1:]], axis=1)
    seg_coh = np.minimum(coh[:-1], coh[1:])
    alpha = np.where(seg_coh >= coherence_floor, 0.35 + 0.65 * seg_coh, 0.18)
    colours = np.array([to_rgba(PALETTE["ink"], a) for a in alpha])
    ax.add_collection(LineCollection(segments, colors=colours, linewidths=1.1))
    ax.plot([], [], color=PALETTE["ink"], lw=1.1, label="H1 (line opacity follows the coherence)")
    if model is not None:
        ax.plot(model[0], model[1], color=PALETTE["design"], linestyle="--", label="prediction")
    if level is not None:
        ax.axhline(level, color=PALETTE["limit"], linestyle=":", lw=1.0, label=f"{format_number(level, 3)} dB")
    ax.set_xlim(f.min(), f.max())
    bottom, top = float(np.nanmin(lev)), float(np.nanmax(lev))
    pad = 0.08 * (top - bottom)
    ax.set_ylim(bottom - 2.5 * pad, top + pad)
    # the coherence strip along the bottom of the axis: clear where the coherence is 1, red as it falls to 0
    strip = ax.inset_axes([0.0, 0.0, 1.0, 0.04], sharex=ax)
    cmap = LinearSegmentedColormap.from_list("coherence", [PALETTE["limit"], "#ffffff"])
    strip.imshow(coh[None, :], aspect="auto", cmap=cmap, vmin=0, vmax=1, extent=(f.min(), f.max(), 0, 1),
                 interpolation="nearest")
    strip.set_axis_off()
    ax.text(0.005, 0.05, "coherence strip: red where the coherence falls below 1; line faint below "
            f"{format_number(coherence_floor, 2)}", transform=ax.transAxes, fontsize=6.5, color=PALETTE["context"],
            va="bottom")
    ax.set_xlabel("frequency (Hz)")
    ax.set_ylabel("transmissibility, output over input (dB)")
    ax.legend(loc="upper right")
    return fig
