"""Figure of a lattice cell: struts drawn in 3D, coloured by group, line width by diameter."""

from __future__ import annotations

import numpy as np

from latticecalc.plots.style import PALETTE, styled
from latticecalc.units import format_quantity

_COLOURS = {"lattice": PALETTE["design"], "frame": PALETTE["context"]}


@styled
def cell_figure(cell, *, elev: float = 22.0, azim: float = -58.0):
    """3D drawing of ``cell`` in millimetres, one colour per strut group.

    Parameters
    ----------
    cell:
        A :class:`~latticecalc.physics.cells.Cell`.
    elev, azim:
        View angles in degrees.

    Returns
    -------
    matplotlib.figure.Figure
    """
    from matplotlib.figure import Figure

    fig = Figure(figsize=(4.6, 4.2))
    ax = fig.add_subplot(projection="3d")
    x = cell.nodes.to("mm").magnitude
    d_max = max(d.to("mm").magnitude for d in cell.diameters.values())
    for g in cell.group_names:
        width = 0.8 + 3.2 * cell.diameters[g].to("mm").magnitude / d_max
        first = True
        for i, j in cell.struts[cell.group_mask(g)]:
            ax.plot(*np.stack([x[i], x[j]]).T, color=_COLOURS.get(g, PALETTE["accent"]), linewidth=width,
                    label=f"{g}, d = {format_quantity(cell.diameters[g].to('mm'))}" if first else None)
            first = False
    ax.scatter(*x.T, s=6, color=PALETTE["ink"])
    a = cell.cell_width.to("mm").magnitude
    for setter in (ax.set_xlim, ax.set_ylim, ax.set_zlim):
        setter(0, a)
    ax.set_box_aspect((1, 1, 1))
    ax.set_xlabel("x (mm)")
    ax.set_ylabel("y (mm)")
    ax.set_zlabel("z, up (mm)")
    ax.view_init(elev=elev, azim=azim)
    ax.set_title(f"{cell.kind} cell, a = {format_quantity(cell.cell_width.to('mm'))}", fontsize=9)
    ax.legend(loc="upper left")
    return fig
