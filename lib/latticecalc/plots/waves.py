"""Figures for the numerical check: dispersion diagram, panel transmissibility, band-edge mode shapes."""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np


def _hz(q) -> float:
    return float(q.to("Hz").magnitude)


def dispersion_plot(result, *, estimate: tuple | None = None, f_max=None):
    """Bands along the path, each point coloured by the lattice struts' share of kinetic energy.

    Parameters
    ----------
    result:
        A :class:`~latticecalc.physics.bloch.Dispersion`.
    estimate:
        Optional ``(low, high)`` [frequency] of the hand estimate, drawn as a hatched band.
    f_max:
        Optional upper limit of the frequency axis [frequency].

    Returns
    -------
    matplotlib.figure.Figure
    """
    from matplotlib.figure import Figure

    s = result["k"].magnitude
    f = result["frequencies"].to("Hz").magnitude
    e = np.asarray(result["strut_energy"])
    fig = Figure(figsize=(7.0, 4.2))
    ax = fig.add_subplot()
    for gi, g in enumerate(result["gaps"]):
        ax.axhspan(_hz(g.low), _hz(g.high), color="#f3d9a4", zorder=0,
                   label="complete gap (computed)" if gi == 0 else None)
    if estimate is not None:
        ax.axhspan(_hz(estimate[0]), _hz(estimate[1]), facecolor="none", edgecolor="#b33", hatch="//",
                   zorder=0, label="hand estimate")
    S = np.repeat(s[:, None], f.shape[1], axis=1)
    sc = ax.scatter(S.ravel(), f.ravel(), c=e.ravel(), cmap="viridis", vmin=0, vmax=1, s=6, zorder=2)
    cb = fig.colorbar(sc, ax=ax, pad=0.01)
    cb.set_label("kinetic energy in lattice struts")
    for t in result.ticks:
        ax.axvline(t, color="0.7", lw=0.6, zorder=1)
    ax.set_xticks(result.ticks)
    ax.set_xticklabels(result.tick_labels)
    ax.set_xlim(s.min(), s.max())
    top = _hz(f_max) if f_max is not None else np.nanmax(f) * 1.05
    ax.set_ylim(0, top)
    ax.set_ylabel("frequency (Hz)")
    ax.set_xlabel("wave vector along the path")
    if result["gaps"] or estimate is not None:
        ax.legend(fontsize=7, loc="upper left", frameon=True)
    fig.tight_layout()
    return fig


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
        ax.axvspan(_hz(estimate[0]), _hz(estimate[1]), facecolor="none", edgecolor="#b33", hatch="//",
                   label="hand estimate")
    if gap is not None:
        ax.axvspan(_hz(gap.low), _hz(gap.high), color="#f3d9a4", label="infinite-lattice gap")
    for r in results:
        ax.plot(r["frequency"].to("Hz").magnitude, r["level"], lw=1.2, label=f"panel {r.nx} × {r.ny} cells")
        band = r["band"]
        if band is not None:
            ax.axvspan(_hz(band[0]), _hz(band[1]), ymax=0.04, color="k", alpha=0.6)
    if threshold_db is not None:
        ax.axhline(-abs(threshold_db), color="0.4", ls="--", lw=0.8, label=f"−{abs(threshold_db):g} dB")
    ax.axhline(0, color="0.6", lw=0.6)
    ax.set_xlabel("frequency (Hz)")
    ax.set_ylabel("transmissibility, top / base (dB)")
    ax.legend(fontsize=7, frameon=False, loc="lower left")
    fig.tight_layout()
    return fig


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

    fig = Figure(figsize=(3.4 * len(shapes), 3.6))
    cmap = colormaps["plasma"]
    for i, sh in enumerate(shapes):
        ax = fig.add_subplot(1, len(shapes), i + 1, projection="3d")
        size = float(np.ptp(sh.lines.reshape(-1, 3), axis=0).max())
        for seg, d in zip(sh.lines, sh.displacement):
            ax.plot(*seg.T, color="0.85", lw=0.6)
            moved = seg + scale * size * d
            mag = float(np.linalg.norm(d, axis=1).mean())
            ax.plot(*moved.T, color=cmap(min(mag, 1.0)), lw=1.4)
        ax.set_axis_off()
        cap = titles[i] if titles else ""
        ax.set_title(f"{cap}\n{_hz(sh.frequency):.1f} Hz, lattice share {sh.strut_energy:.0%}", fontsize=8)
    fig.tight_layout()
    return fig


def cell_count_plot(study):
    """Mean transmissibility in the band against the number of cells up the panel."""
    from matplotlib.figure import Figure

    fig = Figure(figsize=(4.4, 3.2))
    ax = fig.add_subplot()
    ax.plot(study.value["cells"], study.value["mean_level"], "o-", color="k")
    ax.set_xlabel("cells up the panel")
    ax.set_ylabel("mean level in the band (dB)")
    ax.grid(alpha=0.3)
    fig.tight_layout()
    return fig
