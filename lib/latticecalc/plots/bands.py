"""Figures for the band sheet: the band against the strut modes, the chain dispersion, the sweeps."""

from __future__ import annotations

import numpy as np

from latticecalc.plots.style import PALETTE, plain_log_ticks, styled


@styled
def band_figure(estimate, *, measured=None):
    """The estimated band, its fixity bracket and scatter, the strut-mode cluster and the Bragg frequency.

    Parameters
    ----------
    estimate:
        A :class:`~latticecalc.physics.bands.BandEstimate`.
    measured:
        Optional measured peak or dip frequencies [frequency] to mark for comparison.

    Returns
    -------
    matplotlib.figure.Figure
    """
    from matplotlib.figure import Figure

    v = {k: float(q.to("Hz").magnitude) for k, q in estimate.value.items()}
    fig = Figure(figsize=(6.8, 3.4))
    ax = fig.add_subplot()
    ax.axvspan(v["envelope_low"], v["envelope_high"], color=PALETTE["band"], label="envelope (fixity, scatter)")
    ax.axvspan(v["f_low_min"], v["f_high_max"], color=PALETTE["band_strong"], label="clamped–clamped, with scatter")
    ax.axvspan(v["f_low"], v["f_high"], color=PALETTE["design"], label="nominal band")
    ys = {"clamped-clamped": 0.75, "clamped-pinned": 0.55, "pinned-pinned": 0.35}
    for _, mode, fix, f in estimate.cluster:
        ax.plot(f.to("Hz").magnitude, ys[fix], marker="o^s"[min(mode, 3) - 1], color=PALETTE["ink"], linestyle="none",
                markersize=5)
    ax.text(0.01, 0.80, "strut modes, clamped ends", transform=ax.transAxes, fontsize=7)
    ax.text(0.01, 0.60, "strut modes, one end pinned", transform=ax.transAxes, fontsize=7)
    ax.text(0.01, 0.40, "strut modes, pinned ends", transform=ax.transAxes, fontsize=7)
    ax.text(0.01, 0.05, "● mode 1   ▲ mode 2   ■ mode 3", transform=ax.transAxes, fontsize=7)
    ax.axvline(v["f_bragg"], color=PALETTE["limit"], linestyle="--", label="Bragg c/(2a)")
    if measured is not None:
        for i, f in enumerate(np.atleast_1d(measured.to("Hz").magnitude)):
            ax.axvline(f, color=PALETTE["target"], linestyle=":", label="measured" if i == 0 else None)
    ax.set_xscale("log")
    plain_log_ticks(ax, "x")
    ax.set_ylim(0, 1)
    ax.grid(False, axis="y")
    ax.set_yticks([])
    ax.set_xlabel("frequency (Hz)")
    ax.legend(loc="upper right")
    return fig


@styled
def dispersion_figure(chain):
    """Acoustic and optical branches of a mass-in-mass chain with the gap shaded."""
    from matplotlib.figure import Figure

    fig = Figure(figsize=(4.8, 3.6))
    ax = fig.add_subplot()
    qa = np.linspace(0.0, 1.0, len(chain.wavenumber))
    ax.plot(qa, chain.acoustic.to("Hz").magnitude, color=PALETTE["ink"], label="acoustic")
    ax.plot(qa, chain.optical.to("Hz").magnitude, color=PALETTE["design"], label="optical")
    ax.axhspan(chain.value["gap_low"].to("Hz").magnitude, chain.value["gap_high"].to("Hz").magnitude,
               color=PALETTE["band"], label="band gap")
    ax.set_xlabel("q a / π")
    ax.set_ylabel("frequency (Hz)")
    ax.legend()
    return fig


@styled
def sweep_figure(sweep, *, target=None):
    """Band edges and Bragg frequency against the swept parameter.

    Parameters
    ----------
    sweep:
        A :class:`~latticecalc.physics.sweep.BandSweep`.
    target:
        Optional (low, high) frequency range to reach [frequency], drawn as a band.
    """
    from matplotlib.figure import Figure

    x = sweep.value["parameter_values"].to(sweep.unit).magnitude
    hz = {k: sweep.value[k].to("Hz").magnitude for k in ("f_low", "f_high", "f_low_pinned", "f_high_pinned",
                                                        "f_bragg")}
    fig = Figure(figsize=(5.6, 3.6))
    ax = fig.add_subplot()
    ax.fill_between(x, hz["f_low"], hz["f_high"], color=PALETTE["design"], alpha=0.6, label="band, clamped struts")
    ax.fill_between(x, hz["f_low_pinned"], hz["f_high_pinned"], color=PALETTE["band_strong"], alpha=0.6,
                    label="band, pinned struts")
    ax.plot(x, hz["f_bragg"], color=PALETTE["limit"], linestyle="--", label="Bragg c/(2a)")
    if target is not None:
        lo, hi = (t.to("Hz").magnitude for t in target)
        ax.axhspan(lo, hi, color=PALETTE["target"], alpha=0.15, label="target range")
    ax.set_yscale("log")
    plain_log_ticks(ax, "y")
    ax.set_xlabel(f"{sweep.label} ({sweep.unit})")
    ax.set_ylabel("frequency (Hz)")
    ax.legend()
    return fig
