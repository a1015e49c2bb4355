"""Lattice unit cells as data: nodes, struts, and a group per strut.

A :class:`Cell` describes one cubic cell of edge ``a`` of an infinite, periodic strut lattice.

Conventions (the finite-element, density and mass code all rely on them)
-------------------------------------------------------------------------
* **Cube.**  The cell occupies the closed cube [0, a]³; ``nodes`` are in metres, every node lies
  inside or on that cube, and each position appears once.
* **Periodic images are explicit.**  Every node on the face x = 0 has an image node on x = a
  (same y, z), and likewise for y and z, so nodes on edges and corners appear with all their
  images (a corner node appears 8 times, at the 8 corners).  Nodes on opposite faces are paired
  by :func:`periodic_pairs` (for Bloch conditions: u(x = a) = e^{i k a} u(x = 0)).
* **Struts never cross the cube's surface.**  A strut lies inside the cube or on its surface.
  A strut lying *on* a face is shared with the neighbouring cell, and its periodic image on the
  opposite face is also present.  Each strut therefore carries a weight, ``weights``: the share
  of that strut belonging to this cell, 1 / 2^k where k is the number of axes along which both
  ends lie on the same boundary plane (1 inside the cube, 1/2 on a face, 1/4 on a cube edge).
  Summing ``weight × volume`` over the cell's struts gives the volume per cell of the infinite
  lattice; in a Bloch finite-element model the same weights scale each strut's stiffness and
  mass (a face strut and its image become one strut after the periodic condensation).
* **Groups.**  Each strut belongs to a group (``"lattice"``, ``"frame"``), each group with its
  own diameter (``diameters``) and, in the calculations, its own material.  ``frame_diameter``
  adds the 12 cube edges (split at any lattice node lying on them) as the ``"frame"`` group.
* **Sections.**  A group's struts are solid circular rods of its diameter unless
  ``wall_thicknesses`` gives the group a wall thickness t: then they are tubes of outer diameter
  D and inner diameter D − 2t (see :meth:`Cell.with_wall_thicknesses`).  Every model (mass, FE
  sections, buckling) reads the section from the cell.

Octet truss: the face-centred cubic cell of edge a = √2 l has 14 nodes (8 corners, 6 face
centres) and 36 struts of length l: 24 face half-diagonals of weight 1/2 and 12 interior struts
between adjacent face centres, i.e. 12 + 12 = 24 struts per cell of the infinite lattice, the
count behind ρ̄ = 6√2 π (r/l)² (Deshpande, Fleck & Ashby 2001).

Strut fit: the shortest strut of a group must be at least :data:`MIN_SLENDERNESS` diameters
long (an :class:`~latticecalc.errors.InputError` otherwise: the struts would merge into a
solid at the nodes and no strut formula applies); below :data:`WARN_SLENDERNESS` a
:class:`SlendernessWarning` is issued (slender-strut formulas lose accuracy; a common-practice
limit, see the density sheet for the overlap error actually incurred).
"""

from __future__ import annotations

import dataclasses
import functools
import itertools
import math
import warnings
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from types import MappingProxyType
from typing import Any

import numpy as np
import pint

from latticecalc.errors import InputError
from latticecalc.physics.beams import INNER_DIAMETER, check_wall_thickness
from latticecalc.sheet import COMMON_PRACTICE, CalcResult, Source, quantity_step
from latticecalc.units import Q_, check_dimension, check_positive, format_quantity

#: Built-in lattice kinds (plus ``"custom"`` for a user's node and strut lists).
KINDS = ("octet", "simple-cubic", "bcc", "fcc", "diamond")

#: Error when the shortest strut of a group is shorter than this many diameters.
MIN_SLENDERNESS = 2.0
#: Warning below this length-to-diameter ratio (common practice).
WARN_SLENDERNESS = 5.0

#: Mean nodal connectivity at and above which a lattice is stretch-dominated.
STRETCH_CONNECTIVITY = 12.0

DESHPANDE_ASHBY_FLECK_2001 = Source(
    author="Deshpande, V. S., Ashby, M. F. & Fleck, N. A.",
    title="Foam topology: bending versus stretching dominated architectures, Acta Mater. 49",
    year=2001, locator="pp. 1035-1040, Maxwell criterion, Z = 6 necessary, Z = 12 sufficient",
    tag="from memory")
MAXWELL_1864 = Source(author="Maxwell, J. C.",
                      title="On the calculation of the equilibrium and stiffness of frames, Phil. Mag. 27",
                      year=1864, locator="pp. 294-299; b - 3j + 6 in 3D (Calladine 1978)",
                      tag="from memory")

_TOL = 1e-9  # relative to the cell width: coordinates closer than this count as equal


class SlendernessWarning(UserWarning):
    """A strut is stubby enough (l/d below :data:`WARN_SLENDERNESS`) for slender-strut formulas to err."""


# --- built-in lattices, in fractions of the cell width --------------------------------------
_CORNERS = [tuple(map(float, c)) for c in itertools.product((0, 1), repeat=3)]
_FACE_CENTRES = [(0.0, 0.5, 0.5), (1.0, 0.5, 0.5), (0.5, 0.0, 0.5), (0.5, 1.0, 0.5),
                 (0.5, 0.5, 0.0), (0.5, 0.5, 1.0)]


def _face_corners(fc: tuple[float, float, float]) -> list[tuple[float, ...]]:
    """The 4 cube corners on the face whose centre is ``fc``."""
    axis = next(i for i, v in enumerate(fc) if v in (0.0, 1.0))
    return [c for c in _CORNERS if c[axis] == fc[axis]]


def _face_diagonal_struts() -> list[tuple[tuple, tuple]]:
    return [(fc, c) for fc in _FACE_CENTRES for c in _face_corners(fc)]


def _octahedron_struts() -> list[tuple[tuple, tuple]]:
    out = []
    for p, q in itertools.combinations(_FACE_CENTRES, 2):
        if np.isclose(np.linalg.norm(np.subtract(p, q)), math.sqrt(0.5)):
            out.append((p, q))
    return out


def _cube_edges() -> list[tuple[tuple, tuple]]:
    return [(p, q) for p, q in itertools.combinations(_CORNERS, 2)
            if np.isclose(np.linalg.norm(np.subtract(p, q)), 1.0)]


def _diamond_struts() -> list[tuple[tuple, tuple]]:
    fcc_sites = _CORNERS + _FACE_CENTRES
    inner = [(0.25, 0.25, 0.25), (0.75, 0.75, 0.25), (0.75, 0.25, 0.75), (0.25, 0.75, 0.75)]
    bond = math.sqrt(3) / 4
    return [(p, s) for p in inner for s in fcc_sites
            if np.isclose(np.linalg.norm(np.subtract(p, s)), bond)]


def _builtin(kind: str) -> tuple[list[tuple], list[tuple[tuple, tuple]]]:
    """Nodes and strut end points (fractions of a) of a built-in kind."""
    if kind == "octet":
        return _CORNERS + _FACE_CENTRES, _face_diagonal_struts() + _octahedron_struts()
    if kind == "fcc":
        return _CORNERS + _FACE_CENTRES, _face_diagonal_struts()
    if kind == "bcc":
        centre = (0.5, 0.5, 0.5)
        return _CORNERS + [centre], [(centre, c) for c in _CORNERS]
    if kind == "simple-cubic":
        return list(_CORNERS), _cube_edges()
    if kind == "diamond":
        inner = [(0.25, 0.25, 0.25), (0.75, 0.75, 0.25), (0.75, 0.25, 0.75), (0.25, 0.75, 0.75)]
        return _CORNERS + _FACE_CENTRES + inner, _diamond_struts()
    raise InputError("unknown cell kind", input_name="kind",
                     expected="one of " + ", ".join(KINDS) + " (or 'custom' with nodes and struts)",
                     got=repr(kind))


#: Length of the lattice strut of each built-in kind, as a fraction of the cell width.
STRUT_LENGTH_FRACTION = {"octet": 1 / math.sqrt(2), "fcc": 1 / math.sqrt(2), "bcc": math.sqrt(3) / 2,
                         "simple-cubic": 1.0, "diamond": math.sqrt(3) / 4}


# --- the cell --------------------------------------------------------------------------------
@dataclass(frozen=True, kw_only=True, eq=False)
class Cell:
    """One cubic cell of a periodic strut lattice (see the module docstring for conventions).

    Attributes
    ----------
    kind:
        ``"octet"``, ``"simple-cubic"``, ``"bcc"``, ``"fcc"``, ``"diamond"`` or ``"custom"``.
    cell_width:
        Cube edge a [length].
    nodes:
        N × 3 node coordinates [length], in [0, a]³.
    struts:
        M × 2 integer array of node indices.
    groups:
        Group name of each strut (``"lattice"``, ``"frame"``, ...).
    diameters:
        Strut diameter of each group [length].
    weights:
        Share of each strut belonging to this cell (1, 1/2 on a face, 1/4 on an edge).
    point_masses:
        Masses added at mid-span of every strut of a group: group -> (mass [mass], rotary inertia
        [mass × length²]) (see :meth:`with_point_mass`); empty by default.
    wall_thicknesses:
        Wall thickness [length] of each group whose struts are tubes (hollow circles of outer
        diameter ``diameters[group]``); a group not listed is solid.  Empty by default.
    """

    kind: str
    cell_width: pint.Quantity
    nodes: pint.Quantity
    struts: np.ndarray
    groups: tuple[str, ...]
    diameters: Mapping[str, pint.Quantity]
    weights: np.ndarray
    point_masses: Mapping[str, tuple[pint.Quantity, pint.Quantity]] = dataclasses.field(
        default_factory=lambda: MappingProxyType({}))
    wall_thicknesses: Mapping[str, pint.Quantity] = dataclasses.field(
        default_factory=lambda: MappingProxyType({}))

    # geometry --------------------------------------------------------------------------------
    @property
    def group_names(self) -> tuple[str, ...]:
        """The groups present, in order of first appearance."""
        return tuple(dict.fromkeys(self.groups))

    def group_mask(self, name: str) -> np.ndarray:
        """Boolean mask of the struts in group ``name``."""
        if name not in self.group_names:
            raise InputError("no such strut group in the cell", input_name="group",
                             expected="one of " + ", ".join(self.group_names), got=repr(name))
        return np.array([g == name for g in self.groups], dtype=bool)

    @property
    def strut_vectors(self) -> pint.Quantity:
        """M × 3 vectors from each strut's first node to its second [m]."""
        x = self.nodes.to("m").magnitude
        return Q_(x[self.struts[:, 1]] - x[self.struts[:, 0]], "m")

    @property
    def strut_lengths(self) -> pint.Quantity:
        """Length of each strut [m]."""
        return Q_(np.linalg.norm(self.strut_vectors.magnitude, axis=1), "m")

    @property
    def strut_diameters(self) -> pint.Quantity:
        """Diameter of each strut [m], from its group (the outer diameter of a tube)."""
        return Q_(np.array([self.diameters[g].to("m").magnitude for g in self.groups]), "m")

    def is_hollow(self, group: str) -> bool:
        """True when the struts of ``group`` are tubes (the group has a wall thickness)."""
        self.group_mask(group)
        return group in self.wall_thicknesses

    def wall_thickness(self, group: str) -> pint.Quantity | None:
        """Wall thickness of the tubes of ``group`` [length], or None for solid rods."""
        self.group_mask(group)
        return self.wall_thicknesses.get(group)

    def inner_diameter(self, group: str) -> pint.Quantity:
        """Inner diameter d_i = D − 2t of the tubes of ``group`` [m]; 0 m for solid rods."""
        t = self.wall_thickness(group)
        if t is None:
            return Q_(0.0, "m")
        return INNER_DIAMETER.evaluate({"D": self.diameters[group], "t": t}).to("m")

    def slenderness(self, group: str = "lattice") -> float:
        """Shortest strut length over diameter in ``group`` (frame: cube edge over diameter)."""
        mask = self.group_mask(group)
        d = self.diameters[group].to("m").magnitude
        if group == "frame":
            return float(self.cell_width.to("m").magnitude / d)
        return float(self.strut_lengths.magnitude[mask].min() / d)

    # periodic bookkeeping ----------------------------------------------------------------------
    def _boundary_flags(self) -> tuple[np.ndarray, np.ndarray]:
        x = self.nodes.to("m").magnitude / self.cell_width.to("m").magnitude
        return np.abs(x) < _TOL, np.abs(x - 1.0) < _TOL

    @property
    def node_weights(self) -> np.ndarray:
        """Share of each node belonging to this cell: 1 inside, 1/2 on a face, 1/4 edge, 1/8 corner."""
        lo, hi = self._boundary_flags()
        return 0.5 ** (lo | hi).sum(axis=1)

    @property
    def struts_per_cell(self) -> float:
        """Struts per cell of the infinite lattice, Σ weights."""
        return float(self.weights.sum())

    @property
    def nodes_per_cell(self) -> float:
        """Joints per cell of the infinite lattice (nodes weighted by their share)."""
        return float(self.node_weights[self._connected].sum())

    @property
    def connected_nodes(self) -> np.ndarray:
        """Mask of nodes that some strut of the infinite lattice reaches (images included)."""
        return self._connected.copy()

    @functools.cached_property
    def _connected(self) -> np.ndarray:
        # kept: a cell's nodes and struts never change, and every band estimate asks for its regime
        used = np.zeros(len(self.nodes), dtype=bool)
        used[self.struts.ravel()] = True
        # an image of a used node is used (it is the same joint of the infinite lattice)
        for axis in range(3):
            for i, j in periodic_pairs(self, axis):
                if used[i] or used[j]:
                    used[i] = used[j] = True
        for axis in range(3):  # edges and corners need a second sweep
            for i, j in periodic_pairs(self, axis):
                if used[i] or used[j]:
                    used[i] = used[j] = True
        return used

    @property
    def connectivity(self) -> float:
        """Mean nodal connectivity Z = 2 b / j of the infinite lattice (struts per joint)."""
        return 2.0 * self.struts_per_cell / self.nodes_per_cell

    @property
    def maxwell_number(self) -> int:
        """Maxwell's number M = b − 3j + 6 of the cell's struts and nodes as a finite pin-jointed frame.

        Every drawn strut and every node reached by a strut counts once (Maxwell 1864).
        """
        joints = int(np.unique(self.struts).size)
        return maxwell_number(struts=len(self.struts), joints=joints)

    @property
    def maxwell_number_per_cell(self) -> float:
        """M per cell of the infinite lattice, b − 3j with periodic shares (0 at Z = 6)."""
        return self.struts_per_cell - 3.0 * self.nodes_per_cell

    @property
    def regime(self) -> str:
        """``"stretch-dominated"`` when Z ≥ 12, else ``"bending-dominated"`` (Deshpande et al. 2001)."""
        return "stretch-dominated" if self.connectivity >= STRETCH_CONNECTIVITY - 1e-9 \
            else "bending-dominated"

    # copies ----------------------------------------------------------------------------------------
    def with_diameters(self, diameters: Mapping[str, Any] | None = None, **by_group: Any) -> Cell:
        """A copy with some groups' diameters changed, e.g. ``cell.with_diameters(lattice=Q_(3, "mm"))``."""
        new = dict(self.diameters)
        for name, d in {**(diameters or {}), **by_group}.items():
            if name not in new:
                raise InputError("no such strut group in the cell", input_name="diameters",
                                 expected="one of " + ", ".join(new), got=repr(name))
            new[name] = _check_size(d, name=f"{name} diameter")
        cell = dataclasses.replace(self, diameters=MappingProxyType(new))
        _check_fit(cell)
        for name, t in cell.wall_thicknesses.items():  # a tube's wall must still fit its new diameter
            check_wall_thickness(t, outer_diameter=cell.diameters[name], name=f"{name} wall thickness")
        return cell

    def with_wall_thicknesses(self, wall_thicknesses: Mapping[str, Any] | None = None, **by_group: Any) -> Cell:
        """A copy whose groups are tubes of the given wall thickness [length].

        E.g. ``cell.with_wall_thicknesses(frame=Q_(1, "mm"))``.  The group's diameter is the tube's
        outer diameter D; the wall thickness t must lie in 0 < t < D/2.  ``None`` or zero makes the
        group solid again.
        """
        new = dict(self.wall_thicknesses)
        for name, t in {**(wall_thicknesses or {}), **by_group}.items():
            if name not in self.diameters:
                raise InputError("no such strut group in the cell", input_name="wall_thicknesses",
                                 expected="one of " + ", ".join(self.diameters), got=repr(name))
            checked = check_wall_thickness(t, outer_diameter=self.diameters[name],
                                           name=f"{name} wall thickness")
            if checked is None:
                new.pop(name, None)
            else:
                new[name] = checked.to("m")
        return dataclasses.replace(self, wall_thicknesses=MappingProxyType(new))

    def with_point_mass(self, group: str, *, mass: Any, rotary_inertia: Any = None) -> Cell:
        """A copy with a mass [mass] at mid-span of every strut of ``group`` (zero mass removes it).

        ``rotary_inertia`` [mass × length²] about any axis through its centre (0 when not given).
        """
        if group not in self.group_names:
            raise InputError("no such strut group in the cell", input_name="point_masses",
                             expected="one of " + ", ".join(self.group_names), got=repr(group))
        m = check_dimension(mass, name=f"{group} added mass", expected="mass").to("kg")
        j = check_dimension(Q_(0.0, "kg*m^2") if rotary_inertia is None else rotary_inertia,
                            name=f"{group} added rotary inertia", expected="kg*m^2").to("kg*m^2")
        if not (math.isfinite(float(m.m)) and m.m >= 0 and math.isfinite(float(j.m)) and j.m >= 0):
            raise InputError("an added strut mass must be finite and not negative", input_name="lattice.added_mass",
                             expected=">= 0 kg", got=format_quantity(m))
        new = dict(self.point_masses)
        if m.m > 0:
            new[group] = (m, j)
        else:
            new.pop(group, None)
        return dataclasses.replace(self, point_masses=MappingProxyType(new))

    def with_cell_width(self, cell_width: Any) -> Cell:
        """A copy scaled to a new cell width (diameters unchanged)."""
        a = _check_size(cell_width, name="cell_width")
        scale = float(a.to("m").magnitude / self.cell_width.to("m").magnitude)
        nodes = Q_(self.nodes.to("m").magnitude * scale, "m")
        cell = dataclasses.replace(self, cell_width=a.to("m"), nodes=nodes)
        _check_fit(cell)
        return cell

    def summary(self) -> str:
        """One line: kind, width, diameters, struts per cell, Z, regime."""
        dia = ", ".join(f"{g} {format_quantity(d.to('mm'))}" + (
            f" tube, wall {format_quantity(self.wall_thicknesses[g].to('mm'))}" if g in self.wall_thicknesses else "")
            for g, d in self.diameters.items())
        return (f"{self.kind} cell, a = {format_quantity(self.cell_width.to('mm'))}, {dia}; "
                f"{self.struts_per_cell:g} struts and {self.nodes_per_cell:g} joints per cell, "
                f"Z = {self.connectivity:.3g}, {self.regime}")

    def __repr__(self) -> str:
        return f"Cell({self.summary()})"


def maxwell_number(*, struts: int, joints: int, dimension: int = 3) -> int:
    """Maxwell's number of a pin-jointed frame: b − 3j + 6 in 3D, b − 2j + 3 in 2D (Maxwell 1864).

    Parameters
    ----------
    struts:
        Number of bars b.
    joints:
        Number of joints j.
    dimension:
        2 or 3.
    """
    if dimension == 3:
        return int(struts) - 3 * int(joints) + 6
    if dimension == 2:
        return int(struts) - 2 * int(joints) + 3
    raise InputError("frames are 2D or 3D", input_name="dimension", expected="2 or 3", got=repr(dimension))


def periodic_pairs(cell: Cell, axis: int | str) -> np.ndarray:
    """Pairs (i, j) of node indices with node i on the face ``axis = 0`` and j its image on ``axis = a``.

    Parameters
    ----------
    cell:
        The cell.
    axis:
        0, 1, 2 or ``"x"``, ``"y"``, ``"z"``.

    Returns
    -------
    numpy.ndarray
        K × 2 integer array; node j = node i + a along ``axis``.
    """
    ax = {"x": 0, "y": 1, "z": 2}.get(axis, axis)
    if ax not in (0, 1, 2):
        raise InputError("unknown axis", input_name="axis", expected="0, 1, 2, 'x', 'y' or 'z'",
                         got=repr(axis))
    x = cell.nodes.to("m").magnitude / cell.cell_width.to("m").magnitude
    lo = np.flatnonzero(np.abs(x[:, ax]) < _TOL)
    hi = np.flatnonzero(np.abs(x[:, ax] - 1.0) < _TOL)
    others = [k for k in range(3) if k != ax]
    pairs = []
    for i in lo:
        d = np.abs(x[hi][:, others] - x[i, others]).max(axis=1)
        k = np.flatnonzero(d < _TOL)
        if k.size:
            pairs.append((i, hi[k[0]]))
    return np.array(pairs, dtype=int).reshape(-1, 2)


# --- building ----------------------------------------------------------------------------------
def _check_size(value: Any, *, name: str) -> pint.Quantity:
    q = check_positive(check_dimension(value, name=name, expected="length"), name=name)
    if np.ndim(q.magnitude) != 0:
        raise InputError("must be a single length", input_name=name, expected="a scalar length",
                         got=format_quantity(q))
    return q.to("m")


def _check_fit(cell: Cell) -> None:
    for group in cell.group_names:
        ratio = cell.slenderness(group)
        name = "strut_diameter" if group == "lattice" else f"{group}_diameter"
        if ratio < MIN_SLENDERNESS:
            raise InputError(
                f"the {group} struts do not fit the cell: length / diameter = {ratio:.3g}",
                input_name=name,
                expected=f"a diameter at most 1/{MIN_SLENDERNESS:g} of the shortest {group} strut "
                         f"(length / diameter >= {MIN_SLENDERNESS:g})",
                got=format_quantity(cell.diameters[group].to("mm")),
                hint="Use thinner struts or a wider cell")
        if ratio < WARN_SLENDERNESS:
            warnings.warn(f"{name}: {group} struts are stubby (length / diameter = {ratio:.3g} < "
                          f"{WARN_SLENDERNESS:g}); slender-strut formulas lose accuracy",
                          SlendernessWarning, stacklevel=3)


def _snap(x: np.ndarray) -> np.ndarray:
    x = np.where(np.abs(x) < _TOL, 0.0, x)
    return np.where(np.abs(x - 1.0) < _TOL, 1.0, x)


def _dedupe_nodes(frac: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Unique rows of ``frac`` (within tolerance) and the index map from the old rows."""
    unique: list[np.ndarray] = []
    index = np.empty(len(frac), dtype=int)
    for k, p in enumerate(frac):
        for u, q in enumerate(unique):
            if np.abs(p - q).max() < _TOL:
                index[k] = u
                break
        else:
            index[k] = len(unique)
            unique.append(p)
    return np.array(unique).reshape(-1, 3), index


def _strut_weights(frac: np.ndarray, struts: np.ndarray) -> np.ndarray:
    a, b = frac[struts[:, 0]], frac[struts[:, 1]]
    same_plane = ((np.abs(a) < _TOL) & (np.abs(b) < _TOL)) | ((np.abs(a - 1) < _TOL) & (np.abs(b - 1) < _TOL))
    return 0.5 ** same_plane.sum(axis=1)


def _split_frame(frac: np.ndarray) -> tuple[np.ndarray, list[tuple[int, int]]]:
    """Add any missing corners; return the nodes and the frame struts along the 12 cube edges."""
    nodes = list(frac)
    for c in _CORNERS:
        if not any(np.abs(np.asarray(c) - p).max() < _TOL for p in nodes):
            nodes.append(np.asarray(c, dtype=float))
    arr = np.array(nodes)
    struts = []
    for p, q in _cube_edges():
        p, q = np.asarray(p), np.asarray(q)
        axis = int(np.argmax(np.abs(q - p)))
        others = [k for k in range(3) if k != axis]
        on = np.flatnonzero(np.abs(arr[:, others] - p[others]).max(axis=1) < _TOL)
        on = on[np.argsort(arr[on, axis])]
        struts.extend((int(i), int(j)) for i, j in zip(on[:-1], on[1:], strict=True))
    return arr, struts


def _check_periodic(frac: np.ndarray, struts: np.ndarray, *, name: str) -> None:
    """Every boundary node and every strut lying on a face must have its image on the opposite face."""
    keyset = {tuple(np.round(p, 9)) for p in frac}
    for ax in range(3):
        for p in frac:
            for src, dst in ((0.0, 1.0), (1.0, 0.0)):
                if abs(p[ax] - src) < _TOL:
                    image = p.copy()
                    image[ax] = dst
                    if tuple(np.round(image, 9)) not in keyset:
                        raise InputError(
                            "the cell is not periodic: a node on a face has no image on the opposite face",
                            input_name=name,
                            expected=f"a node at {np.round(image, 6).tolist()} (fractions of a)",
                            got=f"only the node at {np.round(p, 6).tolist()}",
                            hint="Add the image node (and any face strut's image) so opposite faces match")
    lookup = {tuple(np.round(p, 9)): i for i, p in enumerate(frac)}
    pairs = {tuple(sorted((int(i), int(j)))) for i, j in struts}
    for i, j in struts:
        a, b = frac[i], frac[j]
        for ax in range(3):
            for src, dst in ((0.0, 1.0), (1.0, 0.0)):
                if abs(a[ax] - src) < _TOL and abs(b[ax] - src) < _TOL:
                    ia, ib = a.copy(), b.copy()
                    ia[ax] = ib[ax] = dst
                    k = (lookup.get(tuple(np.round(ia, 9))), lookup.get(tuple(np.round(ib, 9))))
                    if None in k or tuple(sorted(k)) not in pairs:
                        raise InputError(
                            "the cell is not periodic: a strut on a face has no image on the opposite face",
                            input_name=name,
                            expected=f"a strut from {np.round(ia, 6).tolist()} to {np.round(ib, 6).tolist()}",
                            got=f"only the strut from {np.round(a, 6).tolist()} to {np.round(b, 6).tolist()}",
                            hint="Add the image strut so opposite faces match")


def _assemble(*, kind: str, a: pint.Quantity, frac: np.ndarray, struts: np.ndarray, groups: Sequence[str],
              diameters: Mapping[str, pint.Quantity], frame_diameter: pint.Quantity | None) -> Cell:
    frac = _snap(np.asarray(frac, dtype=float))
    struts = np.asarray(struts, dtype=int).reshape(-1, 2)
    groups = list(groups)
    diameters = dict(diameters)
    if frame_diameter is not None:
        if "frame" in groups:
            raise InputError("the cell already has a frame group", input_name="frame_diameter",
                             expected="no frame_diameter when the struts already include a 'frame' group",
                             got=format_quantity(frame_diameter))
        frac, frame = _split_frame(frac)
        existing = {tuple(sorted(map(int, s))) for s in struts}
        if any(tuple(sorted(s)) in existing for s in frame):
            raise InputError("the frame would coincide with lattice struts on the cube edges",
                             input_name="frame_diameter",
                             expected="a lattice with no struts along the cube edges (not simple-cubic)",
                             got=kind, hint="Choose another kind, or leave out the frame")
        struts = np.vstack([struts, np.array(frame, dtype=int).reshape(-1, 2)])
        groups += ["frame"] * len(frame)
        diameters["frame"] = frame_diameter
    _check_periodic(frac, struts, name="nodes")
    cell = Cell(kind=kind, cell_width=a, nodes=Q_(frac * a.to("m").magnitude, "m"), struts=struts,
                groups=tuple(groups), diameters=MappingProxyType(diameters),
                weights=_strut_weights(frac, struts))
    _check_fit(cell)
    return cell


def build_cell(kind: str, *, cell_width: Any, strut_diameter: Any, frame_diameter: Any = None,
               nodes: Any = None, struts: Any = None) -> Cell:
    """Build a lattice cell of a built-in kind (or ``"custom"`` from node and strut lists).

    Parameters
    ----------
    kind:
        ``"octet"`` (octet truss, Z = 12), ``"simple-cubic"`` (struts on the cube edges),
        ``"bcc"`` (body-centred cubic: 8 half body diagonals), ``"fcc"`` (face diagonals only),
        ``"diamond"`` (tetrahedral bonds, Z = 4), or ``"custom"`` (give ``nodes`` and ``struts``).
    cell_width:
        Cube edge a [length].
    strut_diameter:
        Diameter of the lattice struts [length].
    frame_diameter:
        Diameter of the frame struts along the 12 cube edges [length]; ``None`` for no frame.
    nodes, struts:
        For ``"custom"`` only: see :func:`cell_from_lists`.

    Returns
    -------
    Cell
        The cell in [0, a]³ with periodic images explicit (module docstring).
    """
    if kind == "custom":
        if nodes is None or struts is None:
            raise InputError("a custom cell needs its nodes and struts", input_name="nodes",
                             expected="nodes (N × 3) and struts (M × 2 node indices)", got="none given")
        return cell_from_lists(nodes=nodes, struts=struts, cell_width=cell_width,
                               diameters={"lattice": strut_diameter}, frame_diameter=frame_diameter)
    if not isinstance(kind, str) or kind not in KINDS:
        raise InputError("unknown cell kind", input_name="kind",
                         expected="one of " + ", ".join(KINDS) + ", custom", got=repr(kind))
    if nodes is not None or struts is not None:
        raise InputError("nodes and struts are only for the 'custom' kind", input_name="nodes",
                         expected="kind='custom'", got=repr(kind))
    a = _check_size(cell_width, name="cell_width")
    d = _check_size(strut_diameter, name="strut_diameter")
    df = None if frame_diameter is None else _check_size(frame_diameter, name="frame_diameter")
    points, segments = _builtin(kind)
    frac, index = _dedupe_nodes(np.array([p for seg in segments for p in seg] + list(points), dtype=float))
    strut_idx = index[: 2 * len(segments)].reshape(-1, 2)
    return _assemble(kind=kind, a=a, frac=frac, struts=strut_idx, groups=["lattice"] * len(strut_idx),
                     diameters={"lattice": d}, frame_diameter=df)


def cell_from_lists(*, nodes: Any, struts: Any, cell_width: Any, diameters: Mapping[str, Any],
                    groups: Sequence[str] | None = None, frame_diameter: Any = None,
                    kind: str = "custom") -> Cell:
    """A user-defined cell from a node list and a strut list.

    Parameters
    ----------
    nodes:
        N × 3 coordinates: a Quantity [length], or plain numbers read as *fractions of the cell
        width* (0 to 1).  Every node must lie in the cube [0, a]³, and every node on a face must
        have its image on the opposite face.
    struts:
        M × 2 node indices (0-based).  A strut on a face needs its image strut on the opposite face.
    cell_width:
        Cube edge a [length].
    diameters:
        Diameter of each group [length], e.g. ``{"lattice": "2 mm"}``.
    groups:
        Group name of each strut; all ``"lattice"`` when omitted.
    frame_diameter:
        Adds the cube-edge frame group [length].
    kind:
        A label for the cell.

    Returns
    -------
    Cell
    """
    a = _check_size(cell_width, name="cell_width")
    if isinstance(nodes, pint.Quantity):
        xyz = check_dimension(nodes, name="nodes", expected="length").to("m").magnitude / a.magnitude
    else:
        try:
            xyz = np.asarray(nodes, dtype=float)
        except (TypeError, ValueError):
            raise InputError("nodes must be numbers", input_name="nodes",
                             expected="N × 3 coordinates (fractions of the cell width, or lengths)",
                             got=repr(nodes)[:80]) from None
    xyz = np.asarray(xyz, dtype=float)
    if xyz.ndim != 2 or xyz.shape[1] != 3 or len(xyz) < 2:
        raise InputError("nodes must be an N × 3 table", input_name="nodes",
                         expected="at least 2 rows of 3 coordinates", got=f"shape {xyz.shape}")
    bad = np.flatnonzero(~np.all(np.isfinite(xyz) & (xyz > -_TOL) & (xyz < 1 + _TOL), axis=1))
    if bad.size:
        raise InputError("a node lies outside the cell", input_name=f"nodes[{bad[0]}]",
                         expected=f"coordinates between 0 and the cell width {format_quantity(a.to('mm'))}",
                         got=str((xyz[bad[0]] * a.to("mm").magnitude).round(6).tolist()) + " mm")
    try:
        idx = np.asarray(struts)
        if idx.size and not np.all(np.equal(np.mod(idx.astype(float), 1), 0)):
            raise ValueError
        idx = idx.astype(int)
    except (TypeError, ValueError):
        raise InputError("struts must be pairs of whole node indices", input_name="struts",
                         expected="M × 2 integers", got=repr(struts)[:80]) from None
    if idx.ndim != 2 or idx.shape[1] != 2 or len(idx) == 0:
        raise InputError("struts must be an M × 2 table of node indices", input_name="struts",
                         expected="at least one row of 2 node indices", got=f"shape {idx.shape}")
    out = np.flatnonzero((idx < 0).any(axis=1) | (idx >= len(xyz)).any(axis=1))
    if out.size:
        raise InputError("a strut refers to a node that does not exist", input_name=f"struts[{out[0]}]",
                         expected=f"node indices 0 to {len(xyz) - 1}", got=str(idx[out[0]].tolist()))
    xyz = _snap(xyz)
    zero = np.flatnonzero(np.linalg.norm(xyz[idx[:, 1]] - xyz[idx[:, 0]], axis=1) < _TOL)
    if zero.size:
        raise InputError("a strut has zero length", input_name=f"struts[{zero[0]}]",
                         expected="two distinct node positions", got=str(idx[zero[0]].tolist()))
    uniq, index = _dedupe_nodes(xyz)
    if len(uniq) < len(xyz):
        raise InputError("two nodes share one position", input_name="nodes",
                         expected="each position once", got=f"{len(xyz) - len(uniq)} duplicate(s)")
    seen = set()
    for k, s in enumerate(idx):
        key = tuple(sorted(s.tolist()))
        if key in seen:
            raise InputError("a strut is listed twice", input_name=f"struts[{k}]",
                             expected="each strut once", got=str(s.tolist()))
        seen.add(key)
    groups = list(groups) if groups is not None else ["lattice"] * len(idx)
    if len(groups) != len(idx):
        raise InputError("one group name per strut is needed", input_name="groups",
                         expected=f"{len(idx)} names", got=f"{len(groups)}")
    dia = {}
    for g in dict.fromkeys(groups):
        if g not in diameters:
            raise InputError("a strut group has no diameter", input_name="diameters",
                             expected=f"a diameter for group {g!r}", got=", ".join(diameters) or "none")
        dia[g] = _check_size(diameters[g], name=f"{g} diameter")
    df = None if frame_diameter is None else _check_size(frame_diameter, name="frame_diameter")
    return _assemble(kind=kind, a=a, frac=xyz, struts=idx, groups=groups, diameters=dia, frame_diameter=df)


def describe_cell(cell: Cell, *, id_prefix: str = "cell") -> CalcResult:
    """The cell's geometry as sheet steps: strut lengths, counts per cell, connectivity and Maxwell number.

    Parameters
    ----------
    cell:
        The cell.
    id_prefix:
        Prefix of the step ids.
    """
    p = id_prefix
    geometry = Source(author="derived", title=f"{cell.kind} cell geometry in latticecalc.physics.cells",
                      tag="derived")
    steps = [quantity_step(id=f"{p}.width", description="Cell width a (cube edge)", value=cell.cell_width,
                           unit="mm", method="input")]
    for g in cell.group_names:
        mask = cell.group_mask(g)
        lengths = cell.strut_lengths[mask].to("mm")
        lo, hi = lengths.min(), lengths.max()
        text = "" if np.isclose(lo.magnitude, hi.magnitude) else f" (shortest {format_quantity(lo)})"
        steps += [
            quantity_step(id=f"{p}.{g}.strut-length", description=f"Longest {g} strut between nodes{text}",
                          value=hi, unit="mm", method="from the node coordinates", source=geometry),
            quantity_step(id=f"{p}.{g}.struts-per-cell", description=f"{g.capitalize()} struts per cell of "
                          "the infinite lattice (face struts 1/2, edge struts 1/4)",
                          value=Q_(float(cell.weights[mask].sum()), ""), method="Σ of strut shares",
                          source=geometry),
            quantity_step(id=f"{p}.{g}.slenderness", description=f"Slenderness of the shortest {g} strut, "
                          "length over diameter", value=Q_(cell.slenderness(g), ""),
                          method=f"error below {MIN_SLENDERNESS:g}, warning below {WARN_SLENDERNESS:g}",
                          source=COMMON_PRACTICE),
        ]
        if cell.is_hollow(g):
            steps.append(quantity_step(
                id=f"{p}.{g}.wall-thickness", description=f"{g.capitalize()} members are tubes: wall thickness "
                f"(outer diameter {format_quantity(cell.diameters[g].to('mm'))})", value=cell.wall_thickness(g),
                unit="mm", method="input", source=geometry))
    steps += [
        quantity_step(id=f"{p}.joints-per-cell", description="Joints per cell of the infinite lattice",
                      value=Q_(cell.nodes_per_cell, ""), method="nodes weighted by their share", source=geometry),
        quantity_step(id=f"{p}.connectivity", description="Mean nodal connectivity Z = 2b/j (struts per joint)",
                      value=Q_(cell.connectivity, ""), method="all groups, infinite lattice",
                      source=DESHPANDE_ASHBY_FLECK_2001,
                      note=f"{cell.regime}: Z ≥ {STRETCH_CONNECTIVITY:g} is stretch-dominated, "
                           "Z < 12 bending-dominated (Z = 6 is Maxwell's minimum for rigidity)."),
        quantity_step(id=f"{p}.maxwell", description="Maxwell's number b − 3j + 6 of the cell drawn as a "
                      "finite pin-jointed frame", value=Q_(cell.maxwell_number, ""),
                      method=f"b = {len(cell.struts)}, j = {np.unique(cell.struts).size}", source=MAXWELL_1864,
                      sig=3),
        quantity_step(id=f"{p}.maxwell-per-cell", description="Maxwell count per cell of the infinite "
                      "lattice, b − 3j with periodic shares (negative: mechanisms, bending carries load)",
                      value=Q_(cell.maxwell_number_per_cell, ""), method="struts and joints per cell",
                      source=MAXWELL_1864),
    ]
    return CalcResult(value=cell, steps=tuple(steps), title=f"Lattice cell: {cell.kind}")
