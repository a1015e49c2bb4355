"""Figures for the numerical check: dispersion diagram, panel transmissibility, band-edge mode shapes."""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from latticecalc.plots.style import PALETTE, band_strip, new_figure, styled
from latticecalc.units import format_number


def _hz(q) -> float:
    return float(q.to("Hz").magnitude)


@styled
def dispersion_plot(result, *, estimate: tuple | None = None, f_max=None, peaks=None):
    """Bands along the path, each point coloured by the lattice struts' share of kinetic energy.

    Each complete gap is a shaded strip with its edges written in it; the hand estimate is a
    hatched strip; targeted peaks (``peaks``) are dashed lines labelled with their frequency.  The
    energy share runs from a light sand (frame moving) to the design blue (struts resonating), with
    its scale as a thin bar above the plot.

    Parameters
    ----------
    result:
        A :class:`~latticecalc.physics.bloch.Dispersion`.
    estimate:
        Optional ``(low, high)`` [frequency] of the hand estimate, drawn as a hatched band.
    f_max:
        Optional upper limit of the frequency axis [frequency].
    peaks:
        Optional peak frequencies [frequency] the band targets, drawn as labelled lines.

    Returns
    -------
    matplotlib.figure.Figure
    """
    from matplotlib.colors import LinearSegmentedColormap

    s = result["k"].magnitude
    f = result["frequencies"].to("Hz").magnitude
    e = np.asarray(result["strut_energy"])
    fig = new_figure(7.0, 4.4)
    ax = fig.add_subplot()
    for g in result["gaps"]:
        band_strip(ax, _hz(g.low), _hz(g.high), label="complete gap", color=PALETTE["band"])
    if estimate is not None:
        ax.axhspan(_hz(estimate[0]), _hz(estimate[1]), facecolor="none", edgecolor=PALETTE["limit"], hatch="///",
                   lw=0.6, zorder=0.5, label="hand estimate")
    for t in result.ticks:
        ax.axvline(t, color=PALETTE["context_light"], lw=0.6, zorder=1)
    cmap = LinearSegmentedColormap.from_list("strut-share", ["#efe3c2", PALETTE["design_light"], PALETTE["design"],
                                                             "#14283a"])
    S = np.repeat(s[:, None], f.shape[1], axis=1)
    sc = ax.scatter(S.ravel(), f.ravel(), c=e.ravel(), cmap=cmap, vmin=0, vmax=1, s=5, lw=0, zorder=2)
    top = _hz(f_max) if f_max is not None else float(np.nanmax(f)) * 1.05
    if peaks is not None:
        for fp in np.atleast_1d(peaks.to("Hz").magnitude):
            if fp <= top:
                ax.axhline(fp, color=PALETTE["target"], lw=1.1, ls=(0, (5, 2)), zorder=3)
                ax.text(0.005, fp, f"targeted peak {format_number(fp, 4)} Hz", transform=ax.get_yaxis_transform(),
                        va="bottom", ha="left", fontsize=7, color=PALETTE["target"], zorder=5)
    cb = fig.colorbar(sc, ax=ax, location="top", fraction=0.04, pad=0.02, aspect=60)
    cb.set_label("share of the kinetic energy in the lattice struts", fontsize=7)
    cb.outline.set_linewidth(0.4)
    cb.ax.tick_params(labelsize=6.5)
    ax.set_xticks(result.ticks)
    ax.set_xticklabels(result.tick_labels)
    ax.grid(axis="x", visible=False)
    ax.set_xlim(s.min(), s.max())
    ax.set_ylim(0, top)
    ax.set_ylabel("frequency (Hz)")
    ax.set_xlabel("wave vector along the path through the irreducible zone")
    if estimate is not None:
        ax.legend(loc="upper left")
    return fig


@styled
def transmissibility_plot(results: Sequence, *, estimate: tuple | None = None, gap=None, threshold_db=None):
    """Transmissibility (dB) of one or more panels against frequency, with the bands marked.

    Parameters
    ----------
    results:
        :class:`~latticecalc.physics.panel.Transmissibility` results (e.g. several heights).
    estimate:
        Optional ``(low, high)`` [frequency] of the hand-estimated band.
    gap:
        Optional complete gap of the infinite lattice (a :class:`~latticecalc.physics.bloch.Gap`).
    threshold_db:
        Optional level (dB, positive number) drawn as −threshold.

    Returns
    -------
    matplotlib.figure.Figure
    """
    from matplotlib.figure import Figure

    if not isinstance(results, (list, tuple)):
        results = [results]
    fig = Figure(figsize=(7.0, 3.8))
    ax = fig.add_subplot()
    if estimate is not None:
        ax.axvspan(_hz(estimate[0]), _hz(estimate[1]), facecolor="none", edgecolor=PALETTE["limit"], hatch="//",
                   label="hand estimate")
    if gap is not None:
        ax.axvspan(_hz(gap.low), _hz(gap.high), color=PALETTE["band"], label="infinite-lattice gap")
    for r in results:
        ax.plot(r["frequency"].to("Hz").magnitude, r["level"], lw=1.2, label=f"panel {r.nx} × {r.ny} cells")
        band = r["band"]
        if band is not None:
            ax.axvspan(_hz(band[0]), _hz(band[1]), ymax=0.04, color=PALETTE["ink"], alpha=0.6)
    if threshold_db is not None:
        ax.axhline(-abs(threshold_db), color=PALETTE["context"], ls="--", lw=0.8, label=f"−{abs(threshold_db):g} dB")
    ax.axhline(0, color=PALETTE["context_light"], lw=0.6)
    ax.set_xlabel("frequency (Hz)")
    ax.set_ylabel("transmissibility, top / base (dB)")
    ax.legend(loc="lower left")
    return fig


@styled
def mode_shapes_plot(shapes: Sequence, *, titles: Sequence[str] | None = None, scale: float = 0.15):
    """Deformed cells (real part) for the modes bounding a gap, struts coloured by displacement.

    Parameters
    ----------
    shapes:
        :class:`~latticecalc.physics.bloch.ModeShape` objects.
    titles:
        A caption line per shape.
    scale:
        Largest displacement drawn, as a fraction of the cell size.

    Returns
    -------
    matplotlib.figure.Figure
    """
    from matplotlib import colormaps
    from matplotlib.figure import Figure
    from mpl_toolkits.mplot3d.art3d import Line3DCollection

    fig = Figure(figsize=(3.4 * len(shapes), 3.6))
    cmap = colormaps["plasma"]
    for i, sh in enumerate(shapes):
        ax = fig.add_subplot(1, len(shapes), i + 1, projection="3d")
        lines = np.asarray(sh.lines, dtype=float)
        size = float(np.ptp(lines.reshape(-1, 3), axis=0).max())
        moved = lines + scale * size * np.asarray(sh.displacement, dtype=float)
        mags = np.minimum(np.linalg.norm(sh.displacement, axis=2).mean(axis=1), 1.0)
        # one collection per layer (a line per element cost half a second per figure to build)
        ax.add_collection3d(Line3DCollection(lines, colors="0.85", linewidths=0.6))
        ax.add_collection3d(Line3DCollection(moved, colors=cmap(mags), linewidths=1.4))
        both = np.concatenate([lines.reshape(-1, 3), moved.reshape(-1, 3)])
        lo, hi = both.min(axis=0), both.max(axis=0)
        ax.set_xlim(lo[0], hi[0])
        ax.set_ylim(lo[1], hi[1])
        ax.set_zlim(lo[2], hi[2])
        ax.set_axis_off()
        cap = titles[i] if titles else ""
        ax.set_title(f"{cap}\n{_hz(sh.frequency):.1f} Hz, lattice share {sh.strut_energy:.0%}", fontsize=8)
    return fig


@styled
def cell_count_plot(study):
    """Mean transmissibility in the band against the number of cells up the panel."""
    from matplotlib.figure import Figure

    fig = Figure(figsize=(4.4, 3.2))
    ax = fig.add_subplot()
    ax.plot(study.value["cells"], study.value["mean_level"], "o-", color=PALETTE["design"])
    ax.set_xlabel("cells up the panel")
    ax.set_ylabel("mean level in the band (dB)")
    return fig
