"""Figures for the strut sheet: the frequency histogram under tolerances."""

from __future__ import annotations

from latticecalc.plots.style import PALETTE, styled
from latticecalc.units import format_quantity


@styled
def tolerance_figure(result, *, bins: int = 60):
    """Histogram of the Monte-Carlo frequencies with the worst-case and 5–95 % limits marked.

    Parameters
    ----------
    result:
        A :class:`~latticecalc.physics.tolerance.FrequencyRange`.
    bins:
        Number of histogram bins.

    Returns
    -------
    matplotlib.figure.Figure
    """
    from matplotlib.figure import Figure

    fig = Figure(figsize=(6.4, 3.6))
    ax = fig.add_subplot()
    f = result.samples.to("Hz").magnitude
    ax.hist(f, bins=bins, color=PALETTE["design_light"], edgecolor="white",
            label=f"Monte Carlo ({result.distribution})")
    v = result.value
    for key, style, label in (("worst_low", "--", "worst case"), ("worst_high", "--", None),
                              ("p05", ":", "5 % / 95 %"), ("p95", ":", None), ("nominal", "-", "nominal")):
        ax.axvline(v[key].to("Hz").magnitude, color=PALETTE["ink"], linestyle=style, linewidth=1.2, label=label)
    ax.set_xlabel("bending frequency (Hz)")
    ax.set_ylabel("samples")
    ax.set_title(f"5–95 %: {format_quantity(v['p05'])} – {format_quantity(v['p95'])}; worst case "
                 f"{format_quantity(v['worst_low'])} – {format_quantity(v['worst_high'])}", fontsize=9)
    ax.legend()
    return fig
