"""Graded panels: bands of cell rows up the panel, each with its own lattice struts.

A graded panel is split up its height into zones, each a whole number of cell rows.  The zones share
the cell kind, the cell width and the frame, so the joints stay one regular grid and a zone boundary is
a plane of shared joints; they differ in what sets each zone's strut resonance: the lattice strut
diameter, the mass added at mid-span of every lattice strut (with its rotary inertia) and, optionally,
the lattice material.

Which zone a strut belongs to: the zone of the cell row holding the strut's mid-point.  A strut whose
mid-point lies on a boundary plane between two rows (a strut lying in that plane) belongs to the row
below; a strut in the panel's bottom plane belongs to the first row (common practice: a member on a
joint plane is given to one side, here the lower, so that every strut is counted once).

The models take a zoning as the lattice struts of zone k renamed to the group ``lattice.zone<k>``
(with its own section, added mass and material), every other group (the frame) unchanged.  A panel
without a zoning keeps the group ``lattice`` and runs exactly as before.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from latticecalc.errors import InputError
from latticecalc.units import Q_, check_dimension, format_quantity

#: The strut group the zones replace.
ZONED_GROUP = "lattice"


def zone_group(k: int) -> str:
    """Group name of the lattice struts of zone ``k`` (0-based): ``lattice.zone1``, ``lattice.zone2`` and so on."""
    return f"{ZONED_GROUP}.zone{k + 1}"


@dataclass(frozen=True)
class Zone:
    """One zone of a graded panel.

    Attributes
    ----------
    cells_high:
        Cell rows in the zone (a whole number >= 1).
    strut_diameter:
        Diameter of the zone's lattice struts [length], > 0.
    added_mass:
        Mass at mid-span of every lattice strut of the zone [mass], >= 0 (0: none).
    rotary_inertia:
        Rotary inertia of that mass about its centre [mass × length²], >= 0.
    material:
        The zone's lattice material (None: the panel's lattice material).
    """

    cells_high: int
    strut_diameter: Any
    added_mass: Any = field(default_factory=lambda: Q_(0.0, "kg"))
    rotary_inertia: Any = field(default_factory=lambda: Q_(0.0, "kg*m^2"))
    material: Any = None


@dataclass(frozen=True)
class Zoning:
    """The zones of a graded panel, bottom first; ``input_name`` names the input they came from in errors."""

    zones: tuple[Zone, ...]
    input_name: str = "zoning"

    def __post_init__(self) -> None:
        zones = tuple(self.zones)
        object.__setattr__(self, "zones", zones)
        if not zones:
            raise InputError("a graded panel needs at least one zone", input_name=self.input_name,
                             expected="one or more zones (cells high, strut diameter, added mass)", got="no zones")
        for k, z in enumerate(zones):
            where = f"{self.input_name} zone {k + 1}"
            if not isinstance(z, Zone):
                raise InputError("not a zone", input_name=where, expected="a latticecalc.physics.zoning.Zone",
                                 got=type(z).__name__)
            n = z.cells_high
            if isinstance(n, bool) or not isinstance(n, (int, np.integer)) or n < 1:
                raise InputError("a zone's height must be a whole number of cells >= 1",
                                 input_name=f"{where} cells_high", expected="1, 2, 3, ...", got=repr(n))
            d = check_dimension(z.strut_diameter, name=f"{where} strut_diameter", expected="length")
            if not (np.isfinite(d.to("m").m) and d.to("m").m > 0):
                raise InputError("a zone's strut diameter must be positive", input_name=f"{where} strut_diameter",
                                 expected="> 0 mm", got=format_quantity(d))
            m = check_dimension(z.added_mass, name=f"{where} added_mass", expected="mass")
            j = check_dimension(z.rotary_inertia, name=f"{where} rotary_inertia", expected="kg*m^2")
            if not (np.isfinite(m.to("kg").m) and m.to("kg").m >= 0):
                raise InputError("a zone's added mass cannot be negative", input_name=f"{where} added_mass",
                                 expected=">= 0 kg", got=format_quantity(m))
            if not (np.isfinite(j.to("kg*m^2").m) and j.to("kg*m^2").m >= 0):
                raise InputError("a zone's added rotary inertia cannot be negative",
                                 input_name=f"{where} rotary_inertia", expected=">= 0 kg·m²", got=format_quantity(j))

    @property
    def cells_high(self) -> int:
        """Cell rows of all zones together."""
        return int(sum(z.cells_high for z in self.zones))

    def check_height(self, cells_high: int, *, input_name: str = "panel.cells_high") -> None:
        """An :class:`InputError` unless the zones' heights add up to the panel's ``cells_high``."""
        if self.cells_high != int(cells_high):
            raise InputError("the zones' heights do not add up to the panel's height", input_name=self.input_name,
                             expected=f"cells high of the zones summing to {input_name} = {int(cells_high)}",
                             got=" + ".join(str(z.cells_high) for z in self.zones) + f" = {self.cells_high}")

    def row_zones(self) -> np.ndarray:
        """Zone index (0-based) of each cell row, bottom row first."""
        return np.repeat(np.arange(len(self.zones)), [z.cells_high for z in self.zones])

    def first_rows(self) -> np.ndarray:
        """Index of each zone's bottom cell row."""
        return np.concatenate([[0], np.cumsum([z.cells_high for z in self.zones])[:-1]]).astype(int)

    def zone_cell(self, cell: Any, k: int) -> Any:
        """``cell`` with zone ``k``'s lattice strut diameter and added mass (a :class:`~.cells.Cell`)."""
        z = self.zones[k]
        out = cell.with_diameters(**{ZONED_GROUP: z.strut_diameter})
        return out.with_point_mass(ZONED_GROUP, mass=z.added_mass, rotary_inertia=z.rotary_inertia)

    def zone_materials(self, materials: Mapping[str, Any], k: int) -> dict[str, Any]:
        """``materials`` with zone ``k``'s lattice material where it has one."""
        out = dict(materials)
        if self.zones[k].material is not None:
            out[ZONED_GROUP] = self.zones[k].material
        return out

    def key(self) -> tuple:
        """A plain tuple for result-cache fingerprints (every field that changes a result)."""
        props = ("name", "youngs_modulus", "poissons_ratio", "density", "loss_factor", "dynamic_to_static",
                 "long_term_factor")
        return tuple((int(z.cells_high), str(Q_(z.strut_diameter).to("m")), str(Q_(z.added_mass).to("kg")),
                      str(Q_(z.rotary_inertia).to("kg*m^2")),
                      None if z.material is None else tuple(str(getattr(z.material, a, None)) for a in props))
                     for z in self.zones)


def check_zoning(zoning: Any, *, cells_high: int, input_name: str = "panel.cells_high") -> Zoning | None:
    """``zoning`` checked against the panel's height (None: a uniform panel)."""
    if zoning is None:
        return None
    if not isinstance(zoning, Zoning):
        raise InputError("not a zoning", input_name="zoning", expected="a latticecalc.physics.zoning.Zoning or None",
                         got=type(zoning).__name__)
    zoning.check_height(cells_high, input_name=input_name)
    return zoning


def strut_rows(nodes: np.ndarray, struts: np.ndarray, *, cell_width: float, cells_high: int) -> np.ndarray:
    """Cell row (0-based, bottom first) of each strut: the row holding its mid-point.

    A mid-point on a plane between rows (a strut lying in it) goes to the row below; one in the
    bottom plane to row 0.  ``nodes`` in m, z up, the panel's bottom at the lowest joint.
    """
    z = np.asarray(nodes, float)[:, 2]
    zm = 0.5 * (z[struts[:, 0]] + z[struts[:, 1]]) - z.min()
    rows = np.ceil(zm / cell_width - 1e-9).astype(int) - 1
    return np.clip(rows, 0, int(cells_high) - 1)


def zoned_groups(groups: Sequence[str], *, zoning: Zoning, nodes: np.ndarray, struts: np.ndarray, cell_width: float,
                 cells_high: int) -> tuple[tuple[str, ...], np.ndarray]:
    """Each strut's group in the graded panel, and its zone index (−1 for a strut not zoned).

    The lattice struts of the rows of zone k (:func:`strut_rows`) become ``lattice.zone<k+1>``.
    """
    rows = strut_rows(nodes, struts, cell_width=cell_width, cells_high=cells_high)
    lattice = np.array([g == ZONED_GROUP for g in groups])
    strut_zone = np.where(lattice, zoning.row_zones()[rows], -1)
    return tuple(zone_group(int(k)) if k >= 0 else g for g, k in zip(groups, strut_zone)), strut_zone


@dataclass(frozen=True)
class ZonedStruts:
    """Strut groups, sections and added masses of a (possibly graded) panel, ready for the frame models.

    ``groups`` per strut, ``sections`` group -> :class:`~.frame_fe.Section`, ``point_masses``
    {group: (kg, kg·m²)}, ``zone_groups`` the groups given rigid node zones, ``strut_zone`` the zone
    index of each strut (−1 for a strut not zoned, e.g. a frame member; all 0 without a zoning),
    ``section_steps`` the sheet steps of the sections.
    """

    groups: tuple[str, ...]
    sections: Mapping[str, Any]
    point_masses: Mapping[str, tuple[float, float]]
    zone_groups: tuple[str, ...]
    strut_zone: np.ndarray
    section_steps: tuple = ()


class _ZonedCell:
    """The group/diameter view of a graded panel that :func:`frame_fe.sections_for` reads."""

    def __init__(self, groups: Sequence[str], diameters: Mapping[str, Any], walls: Mapping[str, Any]) -> None:
        self.groups = tuple(groups)
        self.diameters = dict(diameters)
        self.wall_thicknesses = dict(walls)


def zoned_struts(cell: Any, *, materials: Mapping[str, Any], zoning: Zoning | None, nodes: np.ndarray,
                 struts: np.ndarray, groups: Sequence[str], cells_high: int, modulus: str = "dynamic",
                 with_steps: bool = False, id_prefix: str = "section") -> ZonedStruts:
    """Each strut's group, section and added mass: from the cell without a zoning, else from its zone.

    Without a zoning this is exactly what the uniform models use (``frame_fe.sections_for(cell,
    materials)`` and the cell's own added masses).  With one, the lattice struts of the cell rows of zone
    k (:func:`strut_rows`) become the group ``lattice.zone<k+1>`` with the zone's diameter, material and
    added mass; the other groups keep the cell's.
    """
    from latticecalc.physics import frame_fe as fe

    groups = tuple(groups)
    if zoning is None:
        out = fe.sections_for(cell, materials, modulus=modulus, with_steps=with_steps, id_prefix=id_prefix)
        sections, steps = out if with_steps else (out, ())
        zone = np.zeros(len(groups), int)
        return ZonedStruts(groups=groups, sections=sections, point_masses=fe.cell_point_masses(cell),
                           zone_groups=fe.ZONE_GROUPS, strut_zone=zone, section_steps=tuple(steps))
    new_groups, strut_zone = zoned_groups(groups, zoning=zoning, nodes=nodes, struts=struts,
                                          cell_width=float(cell.cell_width.to("m").m), cells_high=cells_high)
    diameters = {g: d for g, d in cell.diameters.items() if g != ZONED_GROUP}
    walls = {g: t for g, t in getattr(cell, "wall_thicknesses", {}).items() if g != ZONED_GROUP}
    mats = {g: m for g, m in materials.items() if g != ZONED_GROUP}
    pm = {g: v for g, v in fe.cell_point_masses(cell).items() if g != ZONED_GROUP}
    for k, z in enumerate(zoning.zones):
        g = zone_group(k)
        diameters[g] = z.strut_diameter
        if ZONED_GROUP in getattr(cell, "wall_thicknesses", {}):
            walls[g] = cell.wall_thicknesses[ZONED_GROUP]
        mats[g] = zoning.zone_materials(materials, k)[ZONED_GROUP]
        mass = float(Q_(z.added_mass).to("kg").m)
        if mass > 0:
            pm[g] = (mass, float(Q_(z.rotary_inertia).to("kg*m^2").m))
    view = _ZonedCell(new_groups, diameters, walls)
    out = fe.sections_for(view, mats, modulus=modulus, with_steps=with_steps, id_prefix=id_prefix)
    sections, steps = out if with_steps else (out, ())
    zone_groups = tuple(zone_group(k) for k in range(len(zoning.zones)))
    return ZonedStruts(groups=new_groups, sections=sections, point_masses=pm, zone_groups=zone_groups,
                       strut_zone=strut_zone, section_steps=tuple(steps))


def zoning_text(zoning: Zoning) -> str:
    """One line: each zone's rows, strut diameter and added mass, bottom first."""
    parts = []
    for k, z in enumerate(zoning.zones):
        text = (f"zone {k + 1} {z.cells_high} cell{'s' if z.cells_high != 1 else ''} high, "
                f"struts {format_quantity(Q_(z.strut_diameter).to('mm'))}")
        if Q_(z.added_mass).to("kg").m > 0:
            text += f", {format_quantity(Q_(z.added_mass).to('kg'))} at mid-span"
        if z.material is not None:
            text += f", {getattr(z.material, 'name', 'own material')}"
        parts.append(text)
    return "; ".join(parts) + " (bottom first)"
