"""The column-panel template's inputs turned into the objects its notebooks share.

Every column-panel notebook starts from the same cell, materials and panel size; building them
here, once, keeps the notebooks thin and the same in each section. No physics here: this only
reads declared inputs and calls the library's constructors.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

from latticecalc import materials
from latticecalc.errors import InputError
from latticecalc.materials import Material
from latticecalc.physics.cells import Cell, build_cell
from latticecalc.project.inputs import Inputs


@dataclass(frozen=True, kw_only=True)
class PanelDesign:
    """Cell (with its frame), material per strut group, and the panel's cell counts."""

    cell: Cell
    materials: Mapping[str, Material]
    cells_wide: int
    cells_high: int
    cells_deep: int

    @property
    def lattice(self) -> Material:
        """The lattice struts' material."""
        return self.materials["lattice"]

    @property
    def frame(self) -> Material:
        """The frame members' material."""
        return self.materials["frame"]

    @property
    def counts(self) -> dict[str, int]:
        """``cells_wide``, ``cells_high``, ``cells_deep`` as keyword arguments."""
        return {"cells_wide": self.cells_wide, "cells_high": self.cells_high, "cells_deep": self.cells_deep}

    @property
    def framed(self) -> bool:
        """True when the cell has a frame group."""
        return "frame" in self.cell.group_names


def project_materials(inputs: Inputs) -> Mapping[str, Any] | None:
    """The project's material additions and overrides (the optional ``[materials]`` table)."""
    return inputs.get("materials")


def cell_from_inputs(inputs: Inputs) -> Cell:
    """The cell: a built-in kind, or ``custom`` from ``[cell.custom]`` nodes and struts.

    A custom cell gives ``nodes`` as fractions of the cell width (``[[0, 0, 0], [0.5, 0.5, 0.5], …]``)
    and ``struts`` as pairs of node indices (0-based).
    """
    kind = inputs["cell.kind"]
    nodes = struts = None
    if kind == "custom":
        custom = inputs.get("cell.custom")
        if not custom or "nodes" not in custom or "struts" not in custom:
            raise InputError("a custom cell needs [cell.custom] with 'nodes' and 'struts'", input_name="cell.custom",
                             file=inputs.file, expected="nodes = [[x, y, z], …] (fractions of the cell width), "
                             "struts = [[i, j], …] (0-based node indices)")
        nodes, struts = custom["nodes"], custom["struts"]
    # simple-cubic struts lie on the cube edges, where the frame would go: that cell has no frame
    framed = inputs.get("frame.enabled", True) and kind != "simple-cubic"
    return build_cell(kind, cell_width=inputs["cell.width"], strut_diameter=inputs["lattice.strut_diameter"],
                      frame_diameter=inputs["frame.strut_diameter"] if framed else None, nodes=nodes, struts=struts)


def design_from_inputs(inputs: Inputs) -> PanelDesign:
    """Build the :class:`PanelDesign` every column-panel notebook uses."""
    overrides = project_materials(inputs)
    mats = {"lattice": materials.get(inputs["lattice.material"], overrides=overrides),
            "frame": materials.get(inputs["frame.material"], overrides=overrides)}
    return PanelDesign(cell=cell_from_inputs(inputs), materials=mats, cells_wide=inputs["panel.cells_wide"],
                       cells_high=inputs["panel.cells_high"], cells_deep=inputs["panel.cells_deep"])
