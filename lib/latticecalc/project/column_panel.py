"""The column-panel template's inputs turned into the objects its notebooks share.

Every column-panel notebook starts from the same cell, materials and panel size; building them
here, once, keeps the notebooks thin and the same in each section. No physics here: this only
reads declared inputs and calls the library's constructors.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import pint

from latticecalc import materials
from latticecalc.errors import InputError
from latticecalc.materials import Material
from latticecalc.physics.cells import Cell, build_cell
from latticecalc.project.inputs import Inputs
from latticecalc.project.project import Project
from latticecalc.sheet import CalcResult, quantity_step
from latticecalc.signals.frf import calibration_from_export


@dataclass(frozen=True, kw_only=True)
class PanelDesign:
    """Cell (with its frame), material per strut group, and the panel's cell counts."""

    cell: Cell
    materials: Mapping[str, Material]
    cells_wide: int
    cells_high: int
    cells_deep: int
    calibration: CalcResult | None = None

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


def design_from_inputs(inputs: Inputs, *, folder: Path | None = None) -> PanelDesign:
    """Build the :class:`PanelDesign` every column-panel notebook uses.

    When ``lattice.calibration`` names a prototype-test export (relative to ``folder``, the project
    folder), the lattice material's modulus is scaled so its dynamic modulus is the calibrated one;
    ``design.calibration`` then holds the steps that show it.

    No silent defaults (common practice): the lattice and, when the cell has one, the frame material
    must state their loss factor and dynamic-to-static ratio, and with ``selfweight.long_term`` their
    long-term (creep) factor; a missing one is an :class:`InputError` naming the material and field.
    """
    overrides = project_materials(inputs)
    mats = {"lattice": materials.get(inputs["lattice.material"], overrides=overrides, file=inputs.file),
            "frame": materials.get(inputs["frame.material"], overrides=overrides, file=inputs.file)}
    long_term = bool(inputs.get("selfweight.long_term"))
    materials.require_for_vibration(mats["lattice"], role="lattice", file=inputs.file)
    if long_term:
        materials.require_for_permanent_load(mats["lattice"], role="lattice", file=inputs.file)
    calibration = None
    exported = inputs.get("lattice.calibration")
    if exported:
        if folder is None:
            raise InputError("the calibration file is relative to the project folder; pass folder=",
                             input_name="lattice.calibration", file=inputs.file)
        found = calibration_from_export(Path(folder) / exported)
        calibration = materials.calibrated(mats["lattice"], dynamic_modulus=found.modulus, source=found.source,
                                           id_prefix="lattice.calibrated")
        mats["lattice"] = calibration.material
    cell = cell_from_inputs(inputs)
    if "frame" in cell.group_names:
        materials.require_for_vibration(mats["frame"], role="frame", file=inputs.file)
        if long_term:
            materials.require_for_permanent_load(mats["frame"], role="frame", file=inputs.file)
    return PanelDesign(cell=cell, materials=mats, cells_wide=inputs["panel.cells_wide"],
                       cells_high=inputs["panel.cells_high"], cells_deep=inputs["panel.cells_deep"],
                       calibration=calibration)


def bloch_options(project: Project, design: PanelDesign) -> dict[str, Any]:
    """Options of the Bloch-wave dispersion, the same in every section so the cache serves them all."""
    inp = project.inputs
    return dict(materials=design.materials, n_elements=inp["fe.elements_per_strut"], n_bands=inp["fe.bands"],
                points=inp["fe.path_points"], zone_points=inp["fe.zone_points"],
                strut_modes=inp["fe.strut_modes"], cache=project.cache_dir)


@dataclass(frozen=True, kw_only=True)
class DesignedBand(CalcResult):
    """The band the coverage check uses: the computed complete gap when there is one, else the estimate."""

    low: pint.Quantity
    high: pint.Quantity
    method: str


def designed_band(*, estimate: Mapping[str, pint.Quantity], gaps: Sequence[Any]) -> DesignedBand:
    """Pick the designed band: the complete gap of the Bloch-wave dispersion nearest the hand estimate.

    Parameters
    ----------
    estimate:
        The band estimate's value mapping (``f_low``, ``f_high`` in Hz).
    gaps:
        Complete gaps from :func:`latticecalc.physics.bloch.dispersion` (each with ``low``, ``high``).
        Empty: the hand estimate is used, and the sheet says so.
    """
    lo, hi = estimate["f_low"].to("Hz"), estimate["f_high"].to("Hz")
    centre = (lo + hi) / 2
    gap = min(gaps, key=lambda g: abs(((g.low + g.high) / 2).to("Hz") - centre), default=None)
    if gap is not None:
        low, high = gap.low.to("Hz"), gap.high.to("Hz")
        method = "complete gap of the Bloch-wave dispersion (numerical check section), nearest the estimate"
    else:
        low, high = lo, hi
        method = "hand estimate (no complete gap was computed)"
    steps = (quantity_step(id="coverage.band-low", description="Designed band, lower edge", value=low, unit="Hz",
                           method=method),
             quantity_step(id="coverage.band-high", description="Designed band, upper edge", value=high, unit="Hz",
                           method=method))
    return DesignedBand(value={"low": low, "high": high}, steps=steps, low=low, high=high, method=method,
                        title="Designed stop band for the coverage check")
