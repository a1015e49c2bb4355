"""Figures for the floor check: response at the floor, insertion loss, band levels, the added-mass sweep."""

from __future__ import annotations

import numpy as np

from latticecalc.plots.style import PALETTE, plain_log_ticks, styled

_BARE = PALETTE["context"]
_WITH = PALETTE["design"]
_REQ = PALETTE["limit"]
_BOUND = PALETTE["band_strong"]


@styled
def floor_response_figure(response, *, direction: str, peaks=None, required=None, band=None):
    """Two stacked axes: floor over ground with and without panels (dB), and the insertion loss (dB).

    Parameters
    ----------
    response:
        A :class:`~latticecalc.physics.receiver.ReceiverResponse`.
    direction:
        The ground-motion direction shown.
    peaks, required:
        Targeted peak frequencies [frequency] and their required insertion loss [dB], drawn as marks.
    band:
        Optional ``(low, high)`` [frequency] of the hand estimate's host band, shaded.
    """
    from matplotlib.figure import Figure

    f = response["frequency"].to("Hz").m
    hb = 20 * np.log10(np.maximum(np.abs(response["head_bare"][direction]), 1e-300))
    hw = 20 * np.log10(np.maximum(np.abs(response["head_with"][direction]), 1e-300))
    il = response["insertion_loss"][direction]
    fig = Figure(figsize=(7.0, 5.2))
    ax1, ax2 = fig.subplots(2, 1, sharex=True, gridspec_kw={"height_ratios": [3, 2]})
    ax1.semilogx(f, hb, color=_BARE, lw=1.2, label="column alone")
    ax1.semilogx(f, hw, color=_WITH, lw=1.0, ls="--", label="column with panels")
    ax1.set_ylabel(f"floor over ground, {direction} (dB)")
    ax1.legend(loc="upper left")
    ax2.semilogx(f, il, color=_WITH, lw=1.2, label="predicted insertion loss")
    ax2.axhline(0, color=PALETTE["context_light"], lw=0.6)
    if band is not None:
        lo, hi = (float(b.to("Hz").m) for b in band)
        for ax in (ax1, ax2):
            ax.axvspan(lo, max(hi, lo * 1.002), color=PALETTE["band"], zorder=0,
                       label="host band (hand estimate)" if ax is ax2 else None)
    if peaks is not None and required is not None:
        fp = np.atleast_1d(peaks.to("Hz").m)
        rq = np.atleast_1d(required.to("dB").m)
        ax2.plot(fp, rq, "v", color=_REQ, ms=7, label="required at targeted peak")
        for x in fp:
            ax1.axvline(x, color=_REQ, lw=0.6, ls=":")
        top = max(float(np.nanmax(il)), float(rq.max())) * 1.15 + 0.5
        ax2.set_ylim(min(float(np.nanmin(il)), 0.0) - 0.5, top)
    ax2.set_ylabel("insertion loss (dB)")
    ax2.set_xlabel("frequency (Hz)")
    ax2.legend(loc="upper left")
    ax2.set_xlim(f.min(), f.max())
    plain_log_ticks(ax2, "x")
    return fig


@styled
def floor_levels_figure(level, *, band_il=None):
    """Survey max-hold band velocity, the predicted floor velocity with the panels, and the criterion."""
    from matplotlib.figure import Figure

    c = level["centre"].to("Hz").m
    fig = Figure(figsize=(7.0, 3.6))
    ax = fig.add_subplot()
    x = np.arange(c.size)
    ax.bar(x - 0.2, level["survey"].to("um/s").m, width=0.4, color=_BARE, label="survey (max-hold)")
    ax.bar(x + 0.2, level["predicted"].to("um/s").m, width=0.4, color=_WITH, label="predicted with panels")
    lim = level["limit"].to("um/s").m
    ax.step(np.r_[x - 0.5, x[-1] + 0.5], np.r_[lim, lim[-1]], where="post", color=_REQ, lw=1.2, label="criterion")
    ax.set_yscale("log")
    ax.set_xticks(x)
    ax.set_xticklabels([f"{v:.3g}" for v in c], rotation=90, fontsize=6)
    ax.set_xlabel("one-third-octave band centre (Hz)")
    ax.set_ylabel("RMS velocity (µm/s)")
    plain_log_ticks(ax, "y")
    ax.grid(False, axis="x")
    ax.legend(loc="upper left")
    return fig


@styled
def mass_sweep_figure(sweep, *, required=None, current=None):
    """Insertion loss at the peak against the panels' mass: coupled model, hand estimate and bound."""
    from matplotlib.figure import Figure

    v = sweep.value
    m = v["panel_mass"]
    ok = np.isfinite(m)
    fig = Figure(figsize=(7.0, 3.8))
    ax = fig.add_subplot()
    ax.plot(m[ok], v["insertion_loss"][ok], "o-", color=_WITH, label="coupled column model")
    ax.plot(m[ok], v["estimate"][ok], "s--", color=PALETTE["context"], ms=4, label="hand estimate (mass-like column)")
    ax.plot(m[ok], v["bound"][ok], ":", color=_BOUND, label="single-absorber bound (column resonant)")
    for mi, ma in zip(m[ok], v["added_mass"][ok], strict=True):
        ax.annotate(f"{ma * 1e3:g} g", (mi, 0), textcoords="offset points", xytext=(0, 4), fontsize=6,
                    ha="center", color="0.35")
    if required is not None:
        ax.axhline(float(required), color=_REQ, lw=1.0, label="required")
    if current is not None:
        ax.axvline(float(current), color=PALETTE["context"], lw=0.6, ls="--", label="this design's panels")
    ax.set_xlabel("mass of the panels on the column (kg); added mass per strut marked")
    ax.set_ylabel("insertion loss at the peak (dB)")
    shown = [np.nanmax(v["insertion_loss"][ok]), np.nanmax(v["estimate"][ok])] + (
        [float(required)] if required is not None else [])
    top = 1.3 * max(shown) + 0.5
    bottom = min(0.0, float(np.nanmin(v["insertion_loss"])) - 0.5)
    ax.set_ylim(bottom, top)
    if np.nanmax(v["bound"][ok]) > top:
        ax.text(0.99, 0.97, f"bound reaches {np.nanmax(v['bound'][ok]):.0f} dB (off scale)", transform=ax.transAxes,
                ha="right", va="top", fontsize=7, color=_BOUND)
    ax.legend(loc="upper left")
    return fig


@styled
def insertion_loss_directions_figure(response, *, peaks=None):
    """Predicted insertion loss at the floor for each computed ground-motion direction."""
    from matplotlib.figure import Figure

    f = response["frequency"].to("Hz").m
    fig = Figure(figsize=(7.0, 3.2))
    ax = fig.add_subplot()
    styles = {"normal": ("-", _WITH), "along": ("--", PALETTE["accent"]), "vertical": (":", _BARE)}
    for d, il in response["insertion_loss"].items():
        ls, c = styles.get(d, ("-", "k"))
        ax.semilogx(f, il, ls=ls, color=c, lw=1.2, label=d)
    if peaks is not None:
        for x in np.atleast_1d(peaks.to("Hz").m):
            ax.axvline(x, color=_REQ, lw=0.6, ls=":")
    ax.axhline(0, color=PALETTE["context_light"], lw=0.6)
    ax.set_xlabel("frequency (Hz)")
    ax.set_ylabel("insertion loss at the floor (dB)")
    ax.legend(loc="upper left", title="ground motion", title_fontsize=7)
    ax.set_xlim(f.min(), f.max())
    plain_log_ticks(ax, "x")
    return fig
