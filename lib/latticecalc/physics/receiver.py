"""The receiver: the column with its panels, and the insertion loss at the floor it carries.

The panel does not stand in the load path.  Ground vibration climbs the column to the floor; the
panel, fixed to a column face by brackets, acts on the column only through the forces its
resonating struts send back through those brackets.  This module predicts what the floor feels.

Model
-----
* The column: Timoshenko beam elements on its axis (:mod:`latticecalc.physics.frame_fe`, the same
  element as the struts), base nodes moving with a unit harmonic ground displacement in one
  direction (rotations held), the floor as a tributary mass at the head and the head restraints as
  springs to the ground motion (:mod:`latticecalc.physics.column`).
* Each panel: the kit's frame model of the tiled cells, placed on a column face.  Every strut is
  reduced to its end joints plus its lowest fixed–fixed modes (fixed-interface component modes,
  Craig, R. R. & Bampton, M. C. C., *AIAA J.* 6 (1968) 1313–1319) before the sweep; at each
  frequency the strut modes are condensed exactly, so one sparse complex solve per frequency gives
  the response of column and panels together (all three ground directions share the factorisation).
* Fixings: at chosen joints on the panel's back face, a spring per direction (normal, along,
  vertical) between the joint and the column face point at the same height; the face point follows
  the column node through a rigid offset, u_P = u_C + θ_C × r.
* Damping: structural, K (1 + iη) per material (column, lattice, frame) and per fixing.

The insertion loss at the receiver is IL = 20 log10(|H without panels| / |H with panels|), H the
head displacement over the ground displacement in the excitation direction.

Hand estimates beside it (:func:`receiver_estimates`; a graded panel's zone by zone,
:func:`zoned_receiver_estimates`): the resonating mass ratio μ (strut modal
mass moving with the host over the column mass along the panel height), the locally resonant host
band f_t … f_t √(1 + μ) (Sugino, C., Xia, Y., Leadenham, S., Ruzzene, M. & Erturk, A., "A general
theory for bandgap estimation in locally resonant metastructures", *J. Sound Vib.* 406 (2017)
104–123), Den Hartog's optimum absorber (*Mechanical Vibrations*, 4th ed. 1956, §3.3), and an
upper bound of any single absorber's insertion loss.
"""

from __future__ import annotations

import dataclasses
import functools
import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
import pint
import scipy.sparse as sp
import sympy as sym

from latticecalc.cache import cached_arrays, fingerprint
from latticecalc.errors import InputError, ModelError
from latticecalc.physics import frame_fe as fe
from latticecalc.physics import zoning as zn
from latticecalc.physics.beams import (
    AREA_CIRCLE,
    MIDSPAN_MASS_FREQUENCY_CC,
    MIDSPAN_MASS_RESONATING_CC,
    RAYLEIGH_MIDSPAN_CC,
    SECOND_MOMENT_CIRCLE,
)
from latticecalc.physics.bloch import _cell_key, progress_iter
from latticecalc.physics.column import Column, column_levels, column_properties, head_springs
from latticecalc.physics.panel import panel_frame, symmetric_solve, zoned_frame
from latticecalc.physics.threads import single_thread
from latticecalc.sheet import CalcResult, Formula, Source, check, evaluate, quantity_step
from latticecalc.units import Q_, check_dimension, check_positive, format_quantity

DIRECTIONS = ("along", "normal", "vertical")
#: Largest distance between column nodes, unless given.
COLUMN_SPACING = Q_(0.25, "m")
_AXIS = {"along": 0, "normal": 1, "vertical": 2}
#: Face name -> (unit vector along the face, outward normal), in column axes.
FACES = {"front": ((1.0, 0.0, 0.0), (0.0, 1.0, 0.0)), "back": ((-1.0, 0.0, 0.0), (0.0, -1.0, 0.0)),
         "right": ((0.0, -1.0, 0.0), (1.0, 0.0, 0.0)), "left": ((0.0, 1.0, 0.0), (-1.0, 0.0, 0.0))}

SUGINO_2017 = Source(author="Sugino, C., Xia, Y., Leadenham, S., Ruzzene, M. & Erturk, A.",
                     title="A general theory for bandgap estimation in locally resonant metastructures, "
                           "J. Sound Vib. 406, 104-123", year=2017,
                     locator="bandgap f_t … f_t √(1 + μ), μ the added resonating mass over the host mass")
DEN_HARTOG_1956 = Source(author="Den Hartog, J. P.", title="Mechanical Vibrations, 4th ed.", year=1956,
                         locator="§3.3 damped vibration absorber: optimum tuning, optimum damping, fixed points")
BOUND_SOURCE = Source(author="Den Hartog, J. P.", title="Mechanical Vibrations, 4th ed.", year=1956,
                      locator="§3.2 two-mass absorber model with hysteretic damping; bound from "
                              "|Z_h + Z_a| ≤ |Z_h| + |Z_a| (derived)")
#: Rayleigh's clamped strut with a central mass: the formulas live in physics/beams.py (the band estimate uses
#: them too).
RAYLEIGH_STRUT = RAYLEIGH_MIDSPAN_CC
REDUCTION_SOURCE = fe.CRAIG_BAMPTON_1968
CREMER_HECKL = Source(author="Cremer, L., Heckl, M. & Petersson, B. A. T.", title="Structure-Borne Sound, 3rd ed.",
                      year=2005, locator="§3.7 complex modulus; insertion loss as the ratio of responses "
                                         "without and with the added element")

# --- hand formulas (each shown on the sheet is the one evaluated) -----------------------------------------
_M, _m, _w, _N, _E, _I, _L = sym.symbols("M_a m_s w N E I L")
_mu, _f, _ft, _eta_a, _eta_h, _IL = sym.symbols("mu f f_t eta_a eta_h IL")
_mres, _mh = sym.symbols("m_res m_h")
#: Effective mass of a clamped strut with a central mass M_a moving with its supports, by Rayleigh's
#: static-deflection shape y = 4ξ²(3 − 4ξ) (ξ ≤ ½): (M_a + m_s/2)² / (M_a + 13 m_s/35); N struts,
#: direction weight w = 1 − (d·e)² (the share of the support motion across the strut).
RESONATING_MASS = MIDSPAN_MASS_RESONATING_CC
STRUT_TUNING = MIDSPAN_MASS_FREQUENCY_CC
MASS_RATIO = Formula("mu", _mres / _mh, latex_names={"mu": r"\mu", "m_res": r"m_\mathrm{res}",
                                                     "m_h": r"m_\mathrm{host}"})
SUGINO_UPPER = Formula("f_u", _ft * sym.sqrt(1 + _mu), latex_names={"f_u": r"f_\mathrm{u}", "f_t": r"f_\mathrm{t}",
                                                                    "mu": r"\mu"})
SUGINO_WIDTH = Formula("Delta_f", _ft * (sym.sqrt(1 + _mu) - 1),
                       latex_names={"Delta_f": r"\Delta f", "f_t": r"f_\mathrm{t}", "mu": r"\mu"})
DH_TUNING = Formula("q_opt", 1 / (1 + _mu), latex_names={"q_opt": r"f_\mathrm{a}/f_\mathrm{h}", "mu": r"\mu"})
DH_DAMPING = Formula("zeta_opt", sym.sqrt(3 * _mu / (8 * (1 + _mu) ** 3)),
                     latex_names={"zeta_opt": r"\zeta_\mathrm{opt}", "mu": r"\mu"})
DH_AMPLITUDE = Formula("A_fp", sym.sqrt(1 + 2 / _mu), latex_names={"A_fp": r"A_\mathrm{fixed\,pt}", "mu": r"\mu"})
_bound_expr = 20 * sym.log(1 + _mu * sym.sqrt(1 + _eta_a**2) * sym.sqrt(1 + _eta_h**2) / (_eta_a * _eta_h), 10)
#: Upper bound of the insertion loss a single absorber of mass ratio μ and loss factor η_a can give a
#: host of loss factor η_h, at any frequency and tuning (largest at the host's own resonance).
IL_BOUND = Formula("IL_max", _bound_expr, latex_names={"IL_max": r"\mathrm{IL}_\mathrm{max}", "mu": r"\mu",
                                                        "eta_a": r"\eta_\mathrm{a}", "eta_h": r"\eta_\mathrm{h}"})
_mass_expr = 10 * sym.log((1 + _mu) ** 2 + (_mu / _eta_a) ** 2, 10)
#: Insertion loss of an absorber tuned to the frequency, on a host that moves as a mass there (its own
#: resonances away from it): 20 log10 |1 + μ (1 + iη_a)/(iη_a)|.
IL_MASS_HOST = Formula("IL_m", _mass_expr, latex_names={"IL_m": r"\mathrm{IL}_\mathrm{mass}", "mu": r"\mu",
                                                         "eta_a": r"\eta_\mathrm{a}"})


#: The mass ratio that :data:`IL_BOUND` needs to reach IL: that formula solved for μ (its one positive root,
#: written out so that no kernel solves it at run time; tests/validation put it back into IL_BOUND and check
#: it against sympy's own solution).
MASS_RATIO_FOR_BOUND = Formula(
    "mu_min", _eta_a * _eta_h * (10 ** (_IL / 20) - 1) / (sym.sqrt(1 + _eta_a**2) * sym.sqrt(1 + _eta_h**2)),
    latex_names={"mu_min": r"\mu_\mathrm{min}", "eta_a": r"\eta_\mathrm{a}", "eta_h": r"\eta_\mathrm{h}",
                 "IL": r"\mathrm{IL}_\mathrm{req}"})
#: The mass ratio that :data:`IL_MASS_HOST` needs to reach IL: (1 + μ)² + (μ/η_a)² = 10^(IL/10) solved for its
#: positive root (as above, checked in tests/validation against sympy's solution).
MASS_RATIO_FOR_MASS_HOST = Formula(
    "mu_req", _eta_a * (sym.sqrt(10 ** (_IL / 10) * (1 + _eta_a**2) - 1) - _eta_a) / (1 + _eta_a**2),
    latex_names={"mu_req": r"\mu_\mathrm{req}", "eta_a": r"\eta_\mathrm{a}", "IL": r"\mathrm{IL}_\mathrm{req}"})


# --------------------------------------------------------------------------------------------------------
# inputs: placement and fixings
# --------------------------------------------------------------------------------------------------------
@dataclass(frozen=True, kw_only=True)
class Fixings:
    """Brackets between the panel's back-face joints and the column face.

    Parameters
    ----------
    levels:
        Joint levels (0 = the panel's bottom, ``cells_high`` = its top) that carry brackets; every
        back-face joint at a listed level is fixed (on the frame members when the cell has a frame).
    normal, along, vertical:
        Stiffness of one bracket in each direction [force / length]; brackets are never rigid.
    loss_factor:
        Loss factor of the brackets (their pads), ≥ 0.
    joints:
        Explicit joint indices of the panel (:func:`latticecalc.physics.panel.panel_frame` numbering)
        instead of ``levels``; each must lie on the back face.
    """

    levels: tuple[int, ...] = ()
    normal: pint.Quantity
    along: pint.Quantity
    vertical: pint.Quantity
    loss_factor: float = 0.0
    joints: tuple[int, ...] = ()

    def __post_init__(self) -> None:
        for name in ("normal", "along", "vertical"):
            q = check_dimension(getattr(self, name), name=f"fixing.{name}_stiffness", expected="stiffness")
            if not (math.isfinite(float(q.m)) and q.m > 0):
                raise InputError("a bracket stiffness must be positive and finite (brackets are never rigid)",
                                 input_name=f"fixing.{name}_stiffness", expected="> 0 N/m",
                                 got=format_quantity(q))
        if not (0.0 <= float(self.loss_factor) < 1.0):
            raise InputError("bracket loss factor out of range", input_name="fixing.loss_factor",
                             expected="0 <= η < 1", got=repr(self.loss_factor))
        if not self.levels and not self.joints:
            raise InputError("the panel needs brackets", input_name="fixing.levels",
                             expected="at least one joint level (0 = panel bottom)")


@dataclass(frozen=True, kw_only=True)
class Placement:
    """Which column faces carry a panel, and the height of the panels' bottom above the column base."""

    faces: tuple[str, ...] = ("front",)
    base_height: pint.Quantity = Q_(0.0, "m")

    def __post_init__(self) -> None:
        if not self.faces:
            raise InputError("no face carries a panel", input_name="placement.faces",
                             expected="one or more of " + ", ".join(FACES))
        for f in self.faces:
            if f not in FACES:
                raise InputError("unknown column face", input_name="placement.faces",
                                 expected=", ".join(FACES), got=repr(f))
        if len(set(self.faces)) != len(self.faces):
            raise InputError("a face is listed twice", input_name="placement.faces", expected="each face once",
                             got=", ".join(self.faces))
        z0 = check_dimension(self.base_height, name="placement.base_height", expected="length")
        if not z0.m >= 0:
            raise InputError("the panel cannot start below the column base", input_name="placement.base_height",
                             expected=">= 0 m", got=format_quantity(z0))


@dataclass(frozen=True)
class _PlacedPanel:
    nodes: np.ndarray          # joints in column axes (m)
    struts: np.ndarray
    groups: tuple[str, ...]
    fixed: np.ndarray          # joint indices with brackets
    face: str
    e_s: np.ndarray
    e_n: np.ndarray
    height: float
    z0: float


def place_panels(cell: Any, *, nx: int, ny: int, column: Column, placement: Placement,
                 fixings: Fixings, zoning: Any = None) -> list[_PlacedPanel]:
    """Tile the panel and put one copy on each face, with its bracket joints; checks that it fits.

    With a ``zoning`` (:class:`~latticecalc.physics.zoning.Zoning`) the lattice struts carry their
    zone's group (``lattice.zone<k>``).
    """
    pan = panel_frame(cell, nx=nx, ny=ny)
    zoning = zn.check_zoning(zoning, cells_high=pan.ny, input_name="panel.cells_high")
    if zoning is not None:
        groups, _ = zn.zoned_groups(pan.groups, zoning=zoning, nodes=pan.nodes, struts=pan.struts,
                                    cell_width=pan.cell_width, cells_high=pan.ny)
        pan = dataclasses.replace(pan, groups=groups)
    a = pan.cell_width
    H = float(column.height.to("m").m)
    z0 = float(placement.base_height.to("m").m)
    height = ny * a
    if z0 + height > H * (1 + 1e-9):
        raise InputError("the panel is taller than the column above its base height", input_name="panel.cells_high",
                         expected=f"base height + cells_high × cell width <= column height {H:g} m",
                         got=f"{z0:g} m + {ny} × {a:g} m = {z0 + height:g} m")
    rel = pan.nodes - pan.nodes.min(axis=0)
    back = np.abs(rel[:, 1]) < 1e-9 * a
    framed = "frame" in set(pan.groups)
    on_frame = np.zeros(len(rel), bool)
    if framed:
        fs = np.array([g == "frame" for g in pan.groups])
        on_frame[pan.struts[fs].ravel()] = True
    if fixings.joints:
        fixed = np.asarray(fixings.joints, int)
        bad = [int(j) for j in fixed if j < 0 or j >= len(rel) or not back[j]]
        if bad:
            raise InputError("a fixing is at a joint that is not on the column face", input_name="fixing.joints",
                             expected=f"joints on the panel's back face (y = 0), indices 0..{len(rel) - 1}",
                             got=", ".join(map(str, bad)))
    else:
        bad = [lv for lv in fixings.levels if isinstance(lv, bool) or not isinstance(lv, (int, np.integer))
               or lv < 0 or lv > ny]
        if bad:
            raise InputError("a fixing level is not a joint level of the panel", input_name="fixing.levels",
                             expected=f"whole numbers 0..{ny} (0 = panel bottom, {ny} = top)",
                             got=", ".join(map(repr, bad)))
        level = np.round(rel[:, 2] / a).astype(int)
        at = np.abs(rel[:, 2] - level * a) < 1e-9 * a
        want = np.isin(level, np.asarray(fixings.levels, int)) & at & back & (on_frame if framed else True)
        fixed = np.flatnonzero(want)
        if not fixed.size:
            raise InputError("no back-face joint at the fixing levels", input_name="fixing.levels",
                             expected="levels with joints on the column face", got=repr(list(fixings.levels)))
    out = []
    for face in placement.faces:
        width = column.face_width[face]
        if nx * a > width * (1 + 1e-9):
            raise InputError("the panel is wider than the column face it is fixed to", input_name="panel.cells_wide",
                             expected=f"cells_wide × cell width <= {width:g} m ({face} face)",
                             got=f"{nx} × {a:g} m = {nx * a:g} m")
        e_s, e_n = (np.array(v) for v in FACES[face])
        half = column.face_half_depth[face]
        nodes = (half * e_n[None, :] + (rel[:, 0:1] - nx * a / 2) * e_s[None, :] + rel[:, 1:2] * e_n[None, :]
                 + (rel[:, 2:3] + z0) * np.array([0.0, 0.0, 1.0])[None, :])
        out.append(_PlacedPanel(nodes=nodes, struts=pan.struts, groups=pan.groups, fixed=fixed, face=face,
                                e_s=e_s, e_n=e_n, height=height, z0=z0))
    return out


# --------------------------------------------------------------------------------------------------------
# the coupled system: entries assembled into a fixed sparse pattern, values per frequency
# --------------------------------------------------------------------------------------------------------
class Entries:
    """Stiffness, mass and loss-factor entries (row, col) of a symmetric system, plus condensed strut blocks.

    Public so that tests can build small systems (a host with one absorber) with the same machinery.
    """

    def __init__(self) -> None:
        self.r: list[np.ndarray] = []
        self.c: list[np.ndarray] = []
        self.k: list[np.ndarray] = []
        self.m: list[np.ndarray] = []
        self.e: list[np.ndarray] = []
        self.cond: list[tuple[np.ndarray, fe.StrutReduction, np.ndarray]] = []

    def blocks(self, dofs: np.ndarray, K: np.ndarray, M: np.ndarray, eta: np.ndarray) -> None:
        """Add dense blocks: ``dofs`` (nb, k), ``K`` and ``M`` (nb, k, k), one loss factor per block."""
        nb, k = dofs.shape
        self.r.append(np.repeat(dofs, k, axis=1).ravel())
        self.c.append(np.tile(dofs, (1, k)).ravel())
        self.k.append(np.asarray(K, float).ravel())
        self.m.append(np.asarray(M, float).ravel())
        self.e.append(np.repeat(np.asarray(eta, float), k * k))

    def sparse(self, dof_map: np.ndarray, K: sp.spmatrix, M: sp.spmatrix | None, eta: float) -> None:
        """Add a sparse stiffness (and mass) whose row ``i`` is DOF ``dof_map[i]`` of the system."""
        Kc = sp.coo_matrix(K)
        self.r.append(dof_map[Kc.row])
        self.c.append(dof_map[Kc.col])
        self.k.append(Kc.data.astype(float))
        self.m.append(np.zeros(Kc.nnz))
        self.e.append(np.full(Kc.nnz, float(eta)))
        if M is not None:
            Mc = sp.coo_matrix(M)
            self.r.append(dof_map[Mc.row])
            self.c.append(dof_map[Mc.col])
            self.k.append(np.zeros(Mc.nnz))
            self.m.append(Mc.data.astype(float))
            self.e.append(np.zeros(Mc.nnz))

    def matrices(self, n: int) -> tuple[sp.csr_matrix, sp.csr_matrix]:
        """Undamped stiffness and mass (n × n, sparse) of the plain entries (condensed struts left out)."""
        r, c = np.concatenate(self.r), np.concatenate(self.c)
        K = sp.csr_matrix((np.concatenate(self.k), (r, c)), shape=(n, n))
        M = sp.csr_matrix((np.concatenate(self.m), (r, c)), shape=(n, n))
        return K, M

    def condensed(self, dofs: np.ndarray, red: fe.StrutReduction, factor: np.ndarray) -> None:
        """Strut modal coordinates condensed per frequency: −ω⁴ Cᵀ (Ω² (1 + iη) − ω²)⁻¹ C on the end DOFs."""
        self.blocks(dofs, np.zeros((len(dofs), 12, 12)), np.zeros((len(dofs), 12, 12)), np.zeros(len(dofs)))
        if red.n_modes:
            self.cond.append((dofs, red, factor))


class DynamicSystem:
    """The sparse dynamic stiffness A(ω) = K(1 + iη) − ω² M (+ strut condensation), prescribed base DOFs."""

    def __init__(self, ent: Entries, n: int, prescribed: np.ndarray) -> None:
        cond_r = [np.repeat(d, 12, axis=1).ravel() for d, _, _ in ent.cond]
        cond_c = [np.tile(d, (1, 12)).ravel() for d, _, _ in ent.cond]
        rows = np.concatenate(ent.r + cond_r)
        cols = np.concatenate(ent.c + cond_c)
        self.k = np.concatenate(ent.k)
        self.m = np.concatenate(ent.m)
        self.eta = np.concatenate(ent.e)
        self.static_kd = self.k * (1.0 + 1j * self.eta)
        self.cond = ent.cond
        self.n_static = self.k.size
        is_p = np.zeros(n, bool)
        is_p[prescribed] = True
        self.free = np.flatnonzero(~is_p)
        self.prescribed = np.asarray(prescribed)
        nf, npr = self.free.size, self.prescribed.size
        fi = -np.ones(n, int)
        fi[self.free] = np.arange(nf)
        pi = -np.ones(n, int)
        pi[self.prescribed] = np.arange(npr)
        fr, fc, pc = fi[rows], fi[cols], pi[cols]
        ff = np.flatnonzero((fr >= 0) & (fc >= 0))
        key = fc[ff] * nf + fr[ff]
        uniq, inv = np.unique(key, return_inverse=True)
        self.S_ff = sp.csr_matrix((np.ones(ff.size), (inv.ravel(), ff)), shape=(uniq.size, rows.size))
        self.indices = (uniq % nf).astype(np.int32)
        self.indptr = np.searchsorted(uniq // nf, np.arange(nf + 1)).astype(np.int32)
        fp = np.flatnonzero((fr >= 0) & (pc >= 0))
        self.S_fp = sp.csr_matrix((np.ones(fp.size), (fr[fp] * npr + pc[fp], fp)), shape=(nf * npr, rows.size))
        self.nf, self.npr, self.n = nf, npr, n

    def values(self, omega: float) -> np.ndarray:
        """Entry values of A(ω) at the angular frequency ``omega`` [rad/s] (condensed struts last)."""
        w2 = omega * omega
        parts = [self.static_kd - w2 * self.m]
        for _dofs, red, factor in self.cond:
            coef = w2 * w2 / (red.omega2 * factor[:, None] - w2)                       # (s, m)
            Ct = np.transpose(red.C, (0, 2, 1))
            parts.append(-((Ct * coef[:, None, :]) @ red.C).ravel())
        return np.concatenate(parts)

    def solve(self, omega: float, motions: np.ndarray) -> np.ndarray:
        """Displacements on all DOFs (n × k) for prescribed motions (npr × k)."""
        vals = self.values(omega)
        A = sp.csc_matrix((self.S_ff @ vals, self.indices, self.indptr), shape=(self.nf, self.nf))
        Afp = (self.S_fp @ vals).reshape(self.nf, self.npr)
        rhs = -(Afp @ motions)
        x = _factor_solve(A, rhs)
        u = np.zeros((self.n, motions.shape[1]), complex)
        u[self.free] = x
        u[self.prescribed] = motions
        return u


def _factor_solve(A, b):
    return symmetric_solve(A, b, what="the column with its panels", input_name="fixing",
                           expected="brackets that hold every panel")


def _skew(r: np.ndarray) -> np.ndarray:
    return np.array([[0.0, -r[2], r[1]], [r[2], 0.0, -r[0]], [-r[1], r[0], 0.0]])


@dataclass(frozen=True)
class _Model:
    system: DynamicSystem
    entries: Entries
    head: int
    mid: int
    column_z: np.ndarray
    n_dofs: int


def _build(cell: Any, *, materials: Mapping[str, Any], nx: int, ny: int, column: Column, placement: Placement,
           fixings: Fixings, n_elements: int, strut_modes: int | None, theory: str, with_panels: bool,
           column_spacing: float, point_masses: Mapping[str, Any] | None, node_zones: str = "none",
           zoning: Any = None) -> _Model:
    """Assemble column (+ panels): ``strut_modes`` None means the full strut mesh (the reference model)."""
    props = column_properties(column)
    csec = props.section
    panels = place_panels(cell, nx=nx, ny=ny, column=column, placement=placement, fixings=fixings,
                          zoning=zoning) if with_panels else []
    fix_z = np.unique(np.concatenate([p.nodes[p.fixed, 2] for p in panels])) if panels else np.zeros(0)
    z0 = float(placement.base_height.to("m").m)
    mid_z = z0 + ny * float(cell.cell_width.to("m").m) / 2
    zc = column_levels(column, levels=np.concatenate([fix_z, [min(mid_z, float(column.height.to("m").m))]]),
                       max_spacing=column_spacing)
    nc = zc.size
    ent = Entries()
    # column elements
    cnodes = np.column_stack([np.zeros(nc), np.zeros(nc), zc])
    p1, p2 = cnodes[:-1], cnodes[1:]
    Kl, Ml = fe.local_element_matrices(np.diff(zc), [csec] * (nc - 1), theory)
    T = fe._transform(fe.rotations(p1, p2))
    Kg = np.einsum("eki,ekl,elj->eij", T, Kl, T)
    Mg = np.einsum("eki,ekl,elj->eij", T, Ml, T)
    el = np.column_stack([np.arange(nc - 1), np.arange(1, nc)])
    dofs = (6 * el[:, :, None] + np.arange(6)).reshape(-1, 12)
    ent.blocks(dofs, Kg, Mg, np.full(nc - 1, csec.eta))
    head = nc - 1
    # floor mass and head restraints (springs from the head to the base, which moves with the ground)
    M_head = float(column.head_mass.to("kg").m)
    ent.blocks((6 * head + np.arange(3))[:, None], np.zeros((3, 1, 1)), np.full((3, 1, 1), M_head), np.zeros(3))
    k_t, k_r = head_springs(column, props)
    spring_dofs, spring_k = [], []
    if k_t > 0:
        spring_dofs += [(6 * head + i, i) for i in (0, 1)]
        spring_k += [k_t, k_t]
    if k_r > 0:
        spring_dofs += [(6 * head + i, i) for i in (3, 4, 5)]
        spring_k += [k_r] * 3
    if spring_dofs:
        sd = np.array(spring_dofs)
        kk = np.array(spring_k)[:, None, None] * np.array([[1.0, -1.0], [-1.0, 1.0]])[None]
        ent.blocks(sd, kk, np.zeros_like(kk), np.zeros(len(sd)))
    n = 6 * nc
    kf_local = (np.array([fixings.along.to("N/m").m, fixings.normal.to("N/m").m, fixings.vertical.to("N/m").m],
                         float) if panels else None)
    zs = zoned_frame(cell, materials=materials, nx=nx, ny=ny, zoning=zoning)[1] if panels else None
    sections = zs.sections if panels else {}
    for p in panels:
        nj = len(p.nodes)
        zones = fe.end_zones_for(node_zones, nodes=p.nodes, struts=p.struts, groups=p.groups, sections=sections,
                                 zone_groups=zs.zone_groups)
        if strut_modes is None:
            model = fe.build_frame(nodes=p.nodes, struts=p.struts, groups=p.groups, sections=sections,
                                   n_elements=n_elements, theory=theory, end_zones=zones)
            dof_map = n + np.arange(model.n_dofs)
            for g, Kg_ in model.matrices.K_by_group.items():
                ent.sparse(dof_map, Kg_, model.matrices.M_by_group[g], sections[g].eta)
            if point_masses:
                ent.sparse(dof_map, sp.csr_matrix(model.matrices.K.shape), fe.point_mass_matrix(model.mesh,
                           point_masses), 0.0)
            n_p = model.n_dofs
        else:
            red = fe.reduce_struts(nodes=p.nodes, struts=p.struts, groups=p.groups, sections=sections,
                                   n_elements=n_elements, n_modes=strut_modes, theory=theory,
                                   point_masses=point_masses, end_zones=zones)
            eta = np.array([sections[g].eta for g in p.groups])
            sd = n + (6 * p.struts[:, :, None] + np.arange(6)).reshape(-1, 12)
            ent.blocks(sd, red.K_bb, red.M_bb, eta)
            ent.condensed(sd, red, 1.0 + 1j * eta)
            n_p = 6 * nj
        # brackets: joint translation against the column face point at the same height
        R = np.column_stack([p.e_s, p.e_n, [0.0, 0.0, 1.0]])
        Kf = R @ np.diag(kf_local) @ R.T
        blocks, bdofs = [], []
        for j in p.fixed:
            zj = p.nodes[j, 2]
            ci = int(np.argmin(np.abs(zc - zj)))
            if abs(zc[ci] - zj) > 1e-9:
                raise ModelError("internal: no column node at a bracket height", input_name="fixing",
                                 expected=f"a node at {zj:g} m")
            r = p.nodes[j] - cnodes[ci]
            B = np.hstack([np.eye(3), -np.eye(3), _skew(r)])          # u_J − (u_C + θ_C × r)
            blocks.append(B.T @ Kf @ B)
            bdofs.append(np.concatenate([n + 6 * j + np.arange(3), 6 * ci + np.arange(6)]))
        ent.blocks(np.array(bdofs), np.array(blocks), np.zeros((len(blocks), 9, 9)),
                   np.full(len(blocks), fixings.loss_factor))
        n += n_p
    mid = int(np.argmin(np.abs(zc - mid_z)))
    system = DynamicSystem(ent, n, prescribed=np.arange(6))
    return _Model(system=system, entries=ent, head=head, mid=mid, column_z=zc, n_dofs=n)


def _sweep(model: _Model, omegas: np.ndarray, directions: Sequence[str], *, progress: Any, desc: str):
    motions = np.zeros((6, len(directions)))
    for k, d in enumerate(directions):
        motions[_AXIS[d], k] = 1.0
    head = np.zeros((len(omegas), len(directions)), complex)
    mid = np.zeros_like(head)
    with single_thread():
        for i in progress_iter(range(len(omegas)), progress=progress, desc=desc):
            u = model.system.solve(float(omegas[i]), motions)
            for k, d in enumerate(directions):
                head[i, k] = u[6 * model.head + _AXIS[d], k]
                mid[i, k] = u[6 * model.mid + _AXIS[d], k]
    return head, mid


# --------------------------------------------------------------------------------------------------------
# public: the coupled response
# --------------------------------------------------------------------------------------------------------
@dataclass(frozen=True, kw_only=True)
class ReceiverResponse(CalcResult):
    """Result of :func:`coupled_response`.

    ``value`` maps ``frequency`` (Hz), and per direction (``along``, ``normal``, ``vertical``
    present as computed): ``head_bare``, ``head_with`` (complex ratios, head over ground),
    ``mid_bare``, ``mid_with`` (column at the panels' mid-height), ``insertion_loss`` (dB), and
    ``check``: the reduced model against the full strut mesh at a few frequencies, and the
    convergence with the number of kept strut modes.
    """

    directions: tuple[str, ...]
    n_dofs_reduced: int
    n_dofs_full: int
    strut_modes: int


def frequencies_for(*, f_min: Any, f_max: Any, n: int, include: Any = None) -> pint.Quantity:
    """``n`` frequencies spaced evenly on a log scale from ``f_min`` to ``f_max`` [frequency], plus ``include``."""
    lo = check_positive(check_dimension(f_min, name="receiver.f_min", expected="frequency"),
                        name="receiver.f_min").to("Hz").m
    hi = check_positive(check_dimension(f_max, name="receiver.f_max", expected="frequency"),
                        name="receiver.f_max").to("Hz").m
    if not hi > lo:
        raise InputError("the top frequency must lie above the bottom one", input_name="receiver.f_max",
                         expected=f"> {lo:g} Hz", got=f"{hi:g} Hz")
    if isinstance(n, bool) or not isinstance(n, (int, np.integer)) or n < 2:
        raise InputError("number of frequencies must be a whole number >= 2", input_name="receiver.frequencies",
                         expected="an integer >= 2", got=repr(n))
    f = np.geomspace(lo, hi, int(n))
    if include is not None:
        extra = np.atleast_1d(check_dimension(include, name="include", expected="frequency").to("Hz").m)
        f = np.unique(np.concatenate([f, extra[(extra >= lo) & (extra <= hi)]]))
    return Q_(f, "Hz")


def _il_db(bare: np.ndarray, with_: np.ndarray) -> np.ndarray:
    return 20.0 * np.log10(np.maximum(np.abs(bare), 1e-300) / np.maximum(np.abs(with_), 1e-300))


def coupled_response(cell: Any, *, materials: Mapping[str, Any], nx: int, ny: int, column: Column,
                     fixings: Fixings, placement: Placement = Placement(), frequencies: Any,
                     directions: Sequence[str] = DIRECTIONS, n_elements: int = 8, strut_modes: int = 8,
                     theory: str = "timoshenko", check_frequencies: Any = None,
                     mode_counts: Sequence[int] = (1, 2, 4), column_spacing: Any = None,
                     point_masses: Mapping[str, Any] | None = None, node_zones: str = "none", cache: Any = None,
                     progress: Any = None, id_prefix: str = "receiver", zoning: Any = None) -> ReceiverResponse:
    """Response of the column head to ground motion, without and with the panels, and the insertion loss.

    Parameters
    ----------
    cell:
        A periodic cell (:mod:`latticecalc.physics.cells`) with its groups and diameters.
    materials:
        Strut group -> material (``youngs_modulus`` [pressure], ``poissons_ratio``, ``density``
        [density], ``loss_factor``); the dynamic modulus is used.
    nx, ny:
        Cells across the face and up the column, per panel (one cell thick).
    column:
        The :class:`~latticecalc.physics.column.Column` with its floor mass and head restraint.
    fixings:
        The brackets (:class:`Fixings`).
    placement:
        Faces carrying a panel and the panels' base height (:class:`Placement`).
    frequencies:
        Frequencies of the sweep [frequency] (see :func:`frequencies_for`).
    directions:
        Ground-motion directions: ``"along"`` (x, along the front face), ``"normal"`` (y) and/or
        ``"vertical"`` (z); each is a separate excitation.
    n_elements:
        Beam elements per strut (even when ``point_masses`` are given).
    strut_modes:
        Fixed–fixed modes kept per strut in the swept model.
    theory:
        ``"timoshenko"`` or ``"euler-bernoulli"``.
    check_frequencies:
        Frequencies [frequency] at which the swept model is checked against the full strut mesh and
        against fewer strut modes (``mode_counts``); None for none.
    mode_counts:
        Strut-mode counts of the convergence check (the swept count is added).
    column_spacing:
        Largest distance between column nodes [length]; default :data:`COLUMN_SPACING`.
    point_masses:
        ``{group: (mass kg, rotary inertia kg·m²)}`` added at mid-span of every strut of the group.
    node_zones:
        ``"none"`` or ``"rigid"``: rigid zones at the lattice struts' ends from the node geometry
        (:func:`latticecalc.physics.frame_fe.end_zones_for`), as in the Bloch and panel models.
    cache, progress:
        Result cache folder (None: no cache) and progress display, as for
        :func:`latticecalc.physics.bloch.dispersion`.
    id_prefix:
        Prefix of the step ids.
    zoning:
        A :class:`~latticecalc.physics.zoning.Zoning` of the panels (zones of cell rows, each with its own
        lattice strut diameter, added mass and material; heights adding up to ``ny``), or None for uniform
        panels.  ``point_masses`` then adds to the zones' own added masses by group name.

    Returns
    -------
    ReceiverResponse
        ``.value["insertion_loss"][direction]`` in dB at ``.value["frequency"]``.
    """
    dirs = tuple(directions)
    for d in dirs:
        if d not in DIRECTIONS:
            raise InputError("unknown ground-motion direction", input_name="receiver.directions",
                             expected=", ".join(DIRECTIONS), got=repr(d))
    if not dirs:
        raise InputError("no ground-motion direction", input_name="receiver.directions",
                         expected="one or more of " + ", ".join(DIRECTIONS))
    n = fe.check_n_elements(n_elements)
    fe._check_theory(theory)
    freqs = np.atleast_1d(check_dimension(frequencies, name="frequencies", expected="frequency").to("Hz").m)
    if freqs.size < 1 or not np.all(np.isfinite(freqs)) or np.any(freqs <= 0):
        raise InputError("frequencies must be positive and finite", input_name="frequencies", expected="> 0 Hz")
    column_spacing = COLUMN_SPACING if column_spacing is None else column_spacing
    spacing = float(check_positive(check_dimension(column_spacing, name="column_spacing", expected="length"),
                                   name="column_spacing").to("m").m)
    if zoning is None:
        own = fe.cell_point_masses(cell)
    else:
        own = zoned_frame(cell, materials=materials, nx=nx, ny=ny, zoning=zoning)[1].point_masses
    pm = fe.check_point_masses({**own, **dict(point_masses or {})}, n)
    chk = np.zeros(0) if check_frequencies is None else np.atleast_1d(
        check_dimension(check_frequencies, name="check_frequencies", expected="frequency").to("Hz").m)
    counts = sorted({int(c) for c in mode_counts if 0 <= int(c) < strut_modes} | {int(strut_modes)})
    zones_model = fe.check_node_zones(node_zones)
    args = dict(materials=materials, nx=nx, ny=ny, column=column, placement=placement, fixings=fixings,
                n_elements=n, theory=theory, column_spacing=spacing, point_masses=pm, node_zones=zones_model,
                zoning=zoning)

    def compute():
        bare = _build(cell, strut_modes=strut_modes, with_panels=False, **args)
        withp = _build(cell, strut_modes=strut_modes, with_panels=True, **args)
        om = 2 * np.pi * freqs
        hb, mb = _sweep(bare, om, dirs, progress=None, desc="bare column")
        hw, mw = _sweep(withp, om, dirs, progress=progress, desc="column with panels")
        out = {"hb": hb, "mb": mb, "hw": hw, "mw": mw, "n_red": np.array(withp.n_dofs),
               "counts": np.array(counts, int)}
        if chk.size:
            omc = 2 * np.pi * chk
            hbc, _ = _sweep(bare, omc, dirs, progress=None, desc="")
            full = _build(cell, strut_modes=None, with_panels=True, **args)
            hf, _ = _sweep(full, omc, dirs, progress=None, desc="")
            out["n_full"] = np.array(full.n_dofs)
            out["chk_bare"] = hbc
            out["chk_full"] = hf
            conv = []
            for c in counts:
                mdl = withp if c == strut_modes else _build(cell, strut_modes=c, with_panels=True, **args)
                conv.append(_sweep(mdl, omc, dirs, progress=None, desc="")[0])
            out["chk_conv"] = np.array(conv)
        return out

    key = fingerprint("receiver-v1", _cell_key(cell, materials), nx, ny, _column_key(column), _fix_key(fixings),
                      placement.faces, float(placement.base_height.to("m").m), freqs, dirs, n, strut_modes, theory,
                      chk, counts, spacing, sorted(pm.items()), zones_model,
                      *(() if zoning is None else (("zoning", zoning.key()),)))
    data = cached_arrays(cache, key, compute)
    value: dict[str, Any] = {"frequency": Q_(freqs, "Hz")}
    il = {}
    for k, d in enumerate(dirs):
        value.setdefault("head_bare", {})[d] = data["hb"][:, k]
        value.setdefault("head_with", {})[d] = data["hw"][:, k]
        value.setdefault("mid_bare", {})[d] = data["mb"][:, k]
        value.setdefault("mid_with", {})[d] = data["mw"][:, k]
        il[d] = _il_db(data["hb"][:, k], data["hw"][:, k])
    value["insertion_loss"] = il
    method = (f"column: {len(placement.faces)} face(s) with a {nx} × {ny}-cell panel; Timoshenko column elements "
              f"at most {spacing:g} m long; struts of {n} {theory} elements reduced to end joints + {strut_modes} "
              f"fixed–fixed modes, condensed per frequency; node zones: {zones_model}; one sparse solve per "
              "frequency" + ("" if zoning is None else "; graded: " + zn.zoning_text(zoning)))
    steps = [quantity_step(id=f"{id_prefix}.dofs", description="Degrees of freedom of each frequency solve "
                           "(column and panel joints)", value=Q_(int(data["n_red"]), ""), method=method, sig=6,
                           source=REDUCTION_SOURCE)]
    check_value = None
    n_full = 0
    if "chk_full" in data:
        n_full = int(data["n_full"])
        full_il = np.column_stack([_il_db(data["chk_bare"][:, k], data["chk_full"][:, k]) for k in range(len(dirs))])
        conv = {}
        for ci, c in enumerate(data["counts"]):
            conv[int(c)] = np.column_stack([_il_db(data["chk_bare"][:, k], data["chk_conv"][ci][:, k])
                                            for k in range(len(dirs))])
        swept = conv[int(strut_modes)]
        err = np.abs(swept - full_il)
        check_value = {"frequency": Q_(chk, "Hz"), "full_db": full_il, "reduced_db": swept, "error_db": err,
                       "convergence": {c: np.abs(v - full_il).max() for c, v in conv.items()}}
        steps.append(quantity_step(id=f"{id_prefix}.dofs-full", description="Degrees of freedom of the full model "
                                   "(every strut element kept)", value=Q_(n_full, ""), sig=6,
                                   method="direct sparse solve at the check frequencies", source=fe.REDDY_1997))
        steps.append(quantity_step(id=f"{id_prefix}.reduction-error", description="Largest difference in insertion "
                                   "loss, reduced against full model", value=Q_(float(err.max()), "dB"), sig=2,
                                   method="at " + ", ".join(format_quantity(Q_(f, "Hz")) for f in chk)
                                   + "; directions " + ", ".join(dirs), source=REDUCTION_SOURCE))
    return ReceiverResponse(value={**value, "check": check_value}, steps=tuple(steps), directions=dirs,
                            n_dofs_reduced=int(data["n_red"]), n_dofs_full=n_full, strut_modes=int(strut_modes),
                            title="Column with panels: response at the floor and insertion loss")


def _column_key(c: Column) -> tuple:
    m = c.material
    return (c.shape, str(c.width), str(c.depth), str(c.height), str(c.head_mass), c.head, str(c.head_translation),
            str(c.head_rotation), str(m.youngs_modulus), m.poissons_ratio, str(m.density), m.loss_factor,
            m.dynamic_to_static)


def _fix_key(f: Fixings) -> tuple:
    return (tuple(f.levels), tuple(f.joints), str(f.normal), str(f.along), str(f.vertical), f.loss_factor)


def column_modes(column: Column, *, n_modes: int = 8, theory: str = "timoshenko", column_spacing: Any = None,
                 id_prefix: str = "receiver.column") -> CalcResult:
    """Natural frequencies of the bare FE column (base fixed, head mass and restraints), lowest first.

    ``value`` maps ``frequency`` (Hz) and ``kind`` (``"along"``, ``"normal"``, ``"vertical"`` or
    ``"torsion"``: the motion that dominates the mode's kinetic energy).
    """
    spacing = float(check_dimension(COLUMN_SPACING if column_spacing is None else column_spacing,
                                    name="column_spacing", expected="length").to("m").m)
    # the bare column needs no cell; a stand-in with a width for the mid-height node
    stub = _NoCell()
    mdl = _build(stub, materials={}, nx=1, ny=1, column=column, placement=Placement(), fixings=_NO_FIX,
                 n_elements=2, strut_modes=0, theory=theory, with_panels=False, column_spacing=spacing,
                 point_masses=None)
    K, M = mdl.entries.matrices(mdl.n_dofs)
    free = mdl.system.free
    w2, v = fe.lowest_modes(K[free][:, free], M[free][:, free], int(n_modes), hermitian_dense_limit=5000)
    shapes = np.zeros((mdl.n_dofs, v.shape[1]))
    shapes[free] = v
    Mv = M @ shapes
    kinds = []
    for j in range(shapes.shape[1]):
        e = shapes[:, j] * Mv[:, j]
        share = [e[0::6].sum(), e[1::6].sum(), e[2::6].sum(), e[5::6].sum()]
        kinds.append(("along", "normal", "vertical", "torsion")[int(np.argmax(share))])
    f = Q_(np.sqrt(w2) / (2 * np.pi), "Hz")
    step = quantity_step(id=f"{id_prefix}.fe-frequencies", description="Natural frequencies of the bare column (FE)",
                         value=f, unit="Hz", method=f"{theory} column elements at most {spacing:g} m long, base "
                         "fixed, head mass and restraints; " + ", ".join(kinds), source=fe.REDDY_1997)
    return CalcResult(value={"frequency": f, "kind": tuple(kinds)}, steps=(step,),
                      title="Bare column: natural frequencies by FE")


class _NoCell:
    """Stands in for a cell where the bare column is built (only the width is read)."""

    cell_width = Q_(1.0, "m")


_NO_FIX = None


# --------------------------------------------------------------------------------------------------------
# one-third-octave bands and the requirement
# --------------------------------------------------------------------------------------------------------
@dataclass(frozen=True, kw_only=True)
class BandInsertionLoss(CalcResult):
    """``value`` maps ``centre``, ``lower``, ``upper`` (Hz) and ``insertion_loss`` (dB, NaN where not swept)."""


def band_insertion_loss(*, frequency: Any, bare: np.ndarray, with_panels: np.ndarray, centre: Any, lower: Any,
                        upper: Any, id: str = "receiver.band-il") -> BandInsertionLoss:
    """Insertion loss per band: 10 log10(∫|H_bare|² df / ∫|H_with|² df) over each band's edges.

    The ground motion is taken as flat in frequency within each band (its band level is what the
    survey gives); bands not fully inside the swept range give NaN.
    """
    f = check_dimension(frequency, name="frequency", expected="frequency").to("Hz").m
    c = np.atleast_1d(check_dimension(centre, name="centre", expected="frequency").to("Hz").m)
    lo = np.atleast_1d(check_dimension(lower, name="lower", expected="frequency").to("Hz").m)
    hi = np.atleast_1d(check_dimension(upper, name="upper", expected="frequency").to("Hz").m)
    out = np.full(c.size, np.nan)
    for i in range(c.size):
        if lo[i] < f[0] or hi[i] > f[-1]:
            continue
        grid = np.unique(np.concatenate([[lo[i], hi[i]], f[(f > lo[i]) & (f < hi[i])]]))
        pb = np.interp(grid, f, np.abs(bare) ** 2)
        pw = np.interp(grid, f, np.abs(with_panels) ** 2)
        out[i] = 10 * np.log10(np.trapezoid(pb, grid) / max(np.trapezoid(pw, grid), 1e-300))
    step = quantity_step(id=id, description="Insertion loss at the floor per one-third-octave band",
                         value=Q_(out, "dB"), method="ratio of band-integrated squared responses without and with "
                         "the panels; ground motion flat within each band; linear interpolation between swept "
                         "frequencies", source=CREMER_HECKL)
    return BandInsertionLoss(value={"centre": Q_(c, "Hz"), "lower": Q_(lo, "Hz"), "upper": Q_(hi, "Hz"),
                                    "insertion_loss": Q_(out, "dB")}, steps=(step,),
                             title="Insertion loss per one-third-octave band")


@dataclass(frozen=True, kw_only=True)
class PeakChecks(CalcResult):
    """Result of :func:`peak_checks`: ``value`` maps ``frequency``, ``predicted`` and ``required`` (dB)."""

    all_ok: bool


def peak_checks(*, frequency: Any, insertion_loss: np.ndarray, peaks: Any, required: Any,
                required_source: str = "site survey", id_prefix: str = "receiver") -> PeakChecks:
    """For each targeted peak N: ``<prefix>.il-peak<N>`` (the computed IL there) and ``<prefix>.check-peak<N>``.

    The check reads "predicted insertion loss ≥ required insertion loss".  The IL at a peak is read
    off the swept curve (the peaks are among the swept frequencies when :func:`frequencies_for` got
    them in ``include``; otherwise interpolated linearly).
    """
    f = check_dimension(frequency, name="frequency", expected="frequency").to("Hz").m
    fp = np.atleast_1d(check_dimension(peaks, name="peaks", expected="frequency").to("Hz").m)
    req = np.atleast_1d(Q_(required).to("dB").m if isinstance(required, pint.Quantity) else np.asarray(required))
    if fp.size == 0:
        raise InputError("no targeted peaks to check", input_name="coverage.survey_results",
                         expected="a survey export with peaks to target (peaks.target-frequencies)")
    if req.size != fp.size:
        raise InputError("one required insertion loss per targeted peak", input_name="required",
                         expected=f"{fp.size} values", got=f"{req.size}")
    outside = fp[(fp < f[0]) | (fp > f[-1])]
    if outside.size:
        raise InputError("a targeted peak lies outside the swept frequencies", input_name="receiver.f_max",
                         expected=f"{f[0]:g}–{f[-1]:g} Hz to include every peak",
                         got=", ".join(f"{x:g} Hz" for x in outside))
    il = np.interp(fp, f, insertion_loss)
    steps = []
    for k in range(fp.size):
        steps.append(quantity_step(id=f"{id_prefix}.required-peak{k + 1}", description=f"Insertion loss required "
                                   f"at peak {k + 1} ({fp[k]:.4g} Hz)", value=Q_(float(req[k]), "dB"), sig=3,
                                   method=required_source, source=CREMER_HECKL))
        steps.append(quantity_step(id=f"{id_prefix}.il-peak{k + 1}", description=f"Predicted insertion loss at the "
                                   f"floor, peak {k + 1} ({fp[k]:.4g} Hz)", value=Q_(float(il[k]), "dB"), sig=3,
                                   method="coupled column–panel model (this section)", source=CREMER_HECKL))
        steps.append(check(id=f"{id_prefix}.check-peak{k + 1}", description=f"Peak {k + 1} ({fp[k]:.4g} Hz): "
                           "predicted insertion loss at the floor against the survey's required loss",
                           demand=Q_(float(il[k]), "dB"), limit=Q_(float(req[k]), "dB"), sense="min",
                           source=CREMER_HECKL, sig=3))
    ok = all(s.ok for s in steps if hasattr(s, "ok"))
    return PeakChecks(value={"frequency": Q_(fp, "Hz"), "predicted": Q_(il, "dB"), "required": Q_(req, "dB")},
                      steps=tuple(steps), all_ok=ok, title="Insertion loss at the floor against the requirement")


# --------------------------------------------------------------------------------------------------------
# hand estimates
# --------------------------------------------------------------------------------------------------------
@dataclass(frozen=True, kw_only=True)
class ReceiverEstimates(CalcResult):
    """Result of :func:`receiver_estimates` and :func:`zoned_receiver_estimates`.

    ``value`` maps ``mass_ratio``, ``tuning`` (Hz), ``band`` ((low, high) Hz), ``bound`` (dB, any
    single absorber, best case), ``mass_host_il`` (dB, absorber tuned on a mass-like host); with a
    requirement also ``mass_ratio_needed``, ``mass_ratio_min`` and ``resonating_mass_needed`` (kg).
    ``zone_tunings`` and ``zone_resonating_masses``: each zone's of a graded panel (empty for a uniform one).
    """

    mass_ratio: float
    resonating_mass: pint.Quantity
    host_mass: pint.Quantity
    zone_tunings: tuple = ()
    zone_resonating_masses: tuple = ()


def strut_families(cell: Any, *, nx: int, ny: int, faces: Sequence[str], direction: str, group: str = "lattice"):
    """Struts of ``group`` in the placed panels, by (length m, direction weight 1 − (d·e)²): count."""
    pan = panel_frame(cell, nx=nx, ny=ny)
    nodes = pan.nodes
    fam: dict[tuple[float, float], int] = {}
    d = np.zeros(3)
    for face in faces:
        e_s, e_n = (np.array(v) for v in FACES[face])
        R = np.column_stack([e_s, e_n, [0.0, 0.0, 1.0]])
        d[:] = 0.0
        d[_AXIS[direction]] = 1.0
        d_local = R.T @ d
        for s, g in enumerate(pan.groups):
            if g != group:
                continue
            v = nodes[pan.struts[s, 1]] - nodes[pan.struts[s, 0]]
            L = float(np.linalg.norm(v))
            w = 1.0 - float((v / L) @ d_local) ** 2
            key = (round(L, 9), round(w, 9))
            fam[key] = fam.get(key, 0) + 1
    return fam


@dataclass(frozen=True)
class StrutResonance:
    """The resonating mass of a cell's lattice struts over the panels' height and their tuning.

    ``resonating_mass`` [kg] is the sum over the strut families, ``tuning`` the step of the strut tuning
    (the most numerous family's), ``steps`` the node-zone and family steps that give them (the tuning
    step not among them).
    """

    resonating_mass: pint.Quantity
    tuning: Any
    steps: tuple


def _check_direction(direction: str) -> None:
    if direction not in DIRECTIONS:
        raise InputError("unknown ground-motion direction", input_name="receiver.direction",
                         expected=", ".join(DIRECTIONS), got=repr(direction))


def strut_resonance(cell: Any, *, material: Any, nx: int, ny: int, faces: Sequence[str], direction: str,
                    added_mass: Any = None, node_zones: str = "none", id_prefix: str = "receiver",
                    label: str = "") -> StrutResonance:
    """Resonating mass of the lattice struts of ``nx`` × ``ny`` cells on each face, and their tuning (Rayleigh).

    Parameters as for :func:`receiver_estimates`; the tuning is the first bending frequency of the most
    numerous strut family. ``label`` starts the steps' descriptions (e.g. ``"Zone 2: "``).
    """
    _check_direction(direction)
    if added_mass is None:
        added_mass = getattr(cell, "point_masses", {}).get("lattice", (Q_(0.0, "kg"),))[0]
    Ma = check_dimension(added_mass, name="lattice.added_mass", expected="mass").to("kg")
    if not Ma.m >= 0:
        raise InputError("the added strut mass cannot be negative", input_name="lattice.added_mass",
                         expected=">= 0 kg", got=format_quantity(Ma))
    d = cell.diameters["lattice"]
    E = material.dynamic_modulus()
    rho = material.density
    A = AREA_CIRCLE.evaluate({"d": d})
    Iq = SECOND_MOMENT_CIRCLE.evaluate({"d": d})
    fam = strut_families(cell, nx=nx, ny=ny, faces=faces, direction=direction)
    steps = []
    zone_sum = 0.0
    if fe.check_node_zones(node_zones) == "rigid":
        nz = fe.cell_node_zones(cell, id_prefix=f"{id_prefix}.node-zone")
        zone_sum = float(sum(q.to("m").m for q in nz.value))
        steps += list(nz.steps)
    total = Q_(0.0, "kg")
    tuning = None
    for i, ((L, w), count) in enumerate(sorted(fam.items(), key=lambda kv: -kv[1])):
        # rigid node zones move with the nodes: only the flexible length bends and resonates
        Lq = Q_(max(L - zone_sum, 0.5 * L), "m")
        ms = (rho * A * Lq).to("kg")
        st = evaluate(RESONATING_MASS, id=f"{id_prefix}.resonating-mass-{i + 1}",
                      description=f"{label}Resonating mass of {count} lattice struts, bending length "
                      f"{format_quantity(Lq.to('mm'))}"
                      + (" between rigid node zones" if zone_sum else "") + f", direction weight {w:.3g}",
                      values={"N": Q_(count, ""), "w": Q_(w, ""), "M_a": Ma, "m_s": ms}, unit="kg",
                      source=RAYLEIGH_STRUT)
        steps.append(st)
        total = total + st.result
        if tuning is None:
            tuning = evaluate(STRUT_TUNING, id=f"{id_prefix}.f-tuning", description=f"{label}Tuning frequency: "
                              "first bending frequency of a clamped lattice strut with its added mass (Rayleigh)",
                              values={"E": E, "I": Iq, "L": Lq, "M_a": Ma, "m_s": ms}, unit="Hz",
                              source=RAYLEIGH_STRUT)
    if tuning is None:
        raise InputError("the cell has no lattice struts", input_name="cell", expected="a 'lattice' strut group")
    return StrutResonance(resonating_mass=total, tuning=tuning, steps=tuple(steps))


def _column_estimates(*, resonating: Any, tuning: Any, steps: Sequence[Any], height: pint.Quantity, column: Column,
                      eta_a: float, required: Any, id_prefix: str, loss_note: str = "",
                      title: str = "What the panels can do to the column: hand estimates",
                      **extra: Any) -> ReceiverEstimates:
    """From the resonating mass step and the tuning step on: μ, the host band, Den Hartog, the bound, the μ needed.

    ``resonating`` and ``tuning`` are the steps of the panels' resonating mass [kg] and of the band's tuning
    [Hz], ``steps`` those before them, ``height`` the panels' height (the host: the column over it), ``eta_a``
    the absorber's loss factor (``loss_note`` says where it comes from when it is not plainly the lattice's).
    """
    total = resonating.result.to("kg")
    props = column_properties(column, id_prefix=f"{id_prefix}.column")
    host = (props.value * height).to("kg")
    host_step = quantity_step(id=f"{id_prefix}.host-mass", description="Host mass: the column over the panels' height",
                              value=host, unit="kg", method=f"{format_quantity(props.value)} × "
                              f"{format_quantity(height)}", source=SUGINO_2017)
    mu = evaluate(MASS_RATIO, id=f"{id_prefix}.mass-ratio", description="Resonating mass ratio μ",
                  values={"m_res": total, "m_h": host}, unit="", source=SUGINO_2017, sig=3)
    up = evaluate(SUGINO_UPPER, id=f"{id_prefix}.band-high", description="Locally resonant host band, upper edge "
                  "(lower edge: the tuning frequency)", values={"f_t": tuning.result, "mu": mu.result}, unit="Hz",
                  source=SUGINO_2017)
    width = evaluate(SUGINO_WIDTH, id=f"{id_prefix}.band-width", description="Width of the host band",
                     values={"f_t": tuning.result, "mu": mu.result}, unit="Hz", source=SUGINO_2017, sig=3)
    q = evaluate(DH_TUNING, id=f"{id_prefix}.dh-tuning", description="Den Hartog optimum tuning (absorber over "
                 "host frequency)", values={"mu": mu.result}, unit="", source=DEN_HARTOG_1956, sig=4)
    z = evaluate(DH_DAMPING, id=f"{id_prefix}.dh-damping", description="Den Hartog optimum absorber damping ratio "
                 "(loss factor ≈ 2ζ at resonance)", values={"mu": mu.result}, unit="", source=DEN_HARTOG_1956, sig=3)
    amp = evaluate(DH_AMPLITUDE, id=f"{id_prefix}.dh-amplitude", description="Den Hartog fixed-point amplitude of "
                   "the host with the optimum absorber (over its static deflection)", values={"mu": mu.result},
                   unit="", source=DEN_HARTOG_1956, sig=3)
    eta_a = Q_(float(eta_a), "")
    eta_h = Q_(float(column.material.loss_factor), "")
    loss = f"; {loss_note}" if loss_note else ""
    bound = evaluate(IL_BOUND, id=f"{id_prefix}.il-bound", description="Upper bound of the insertion loss of one "
                     "absorber of this mass ratio and loss factor (best case: host resonant at the peak)",
                     values={"mu": mu.result, "eta_a": eta_a, "eta_h": eta_h}, unit="", source=BOUND_SOURCE, sig=3,
                     note="value in dB" + loss)
    mass_host = evaluate(IL_MASS_HOST, id=f"{id_prefix}.il-mass-host", description="Insertion loss of the absorber "
                         "tuned to the peak, on a column moving as a mass there (its own resonances away)",
                         values={"mu": mu.result, "eta_a": eta_a}, unit="", source=BOUND_SOURCE, sig=3,
                         note="value in dB" + loss)
    steps = [*steps, resonating, host_step, mu, tuning, up, width, q, z, amp, bound, mass_host]
    value = {"mass_ratio": float(mu.result.m), "tuning": tuning.result, "band": (tuning.result, up.result),
             "bound": float(bound.result.m), "mass_host_il": float(mass_host.result.m)}
    if required is not None:
        il_req = float(np.max(np.atleast_1d(Q_(required).to("dB").m if isinstance(required, pint.Quantity)
                                            else required)))
        need_min = evaluate(MASS_RATIO_FOR_BOUND, id=f"{id_prefix}.mass-ratio-min", description="Least mass ratio "
                            "with which even the best case reaches the required loss",
                            values={"IL": Q_(il_req, ""), "eta_a": eta_a, "eta_h": eta_h}, unit="",
                            source=BOUND_SOURCE, sig=3, note=loss_note)
        need = evaluate(MASS_RATIO_FOR_MASS_HOST, id=f"{id_prefix}.mass-ratio-needed", description="Mass ratio "
                        "needed for the required loss at the present lattice loss factor (absorber tuned to the "
                        "peak, column moving as a mass there)", values={"IL": Q_(il_req, ""), "eta_a": eta_a},
                        unit="", source=BOUND_SOURCE, sig=3, note=loss_note)
        steps += [need_min, need]
        value["mass_ratio_needed"] = float(need.result.m)
        value["mass_ratio_min"] = float(need_min.result.m)
        value["resonating_mass_needed"] = (need.result * host).to("kg")
    return ReceiverEstimates(value=value, steps=tuple(steps), mass_ratio=float(mu.result.m), resonating_mass=total,
                             host_mass=host, title=title, **extra)


def _panel_height(cell: Any, ny: int) -> pint.Quantity:
    return Q_(ny * float(cell.cell_width.to("m").m), "m")


def receiver_estimates(cell: Any, *, material: Any, nx: int, ny: int, column: Column, faces: Sequence[str],
                       direction: str, added_mass: Any = None, required: Any = None, node_zones: str = "none",
                       zoning: Any = None, id_prefix: str = "receiver") -> ReceiverEstimates:
    """Hand estimates of what the panels can do to the column: μ, the host band, Den Hartog, the bound.

    A graded panel (``zoning`` given) gets :func:`zoned_receiver_estimates`, zone by zone.

    Parameters
    ----------
    cell:
        The cell (lattice group ``"lattice"``, diameter ``cell.diameters["lattice"]``).
    material:
        The lattice material (dynamic modulus, density, loss factor).
    nx, ny:
        Cells across and up, per panel.
    column:
        The column; its loss factor is the host's.
    faces:
        Faces carrying a panel.
    direction:
        Ground-motion direction (``"along"``, ``"normal"``, ``"vertical"``).
    node_zones:
        ``"none"`` or ``"rigid"``: with rigid node zones (the cell's, from
        :func:`latticecalc.physics.frame_fe.cell_node_zones`) only the flexible length between them
        bends and resonates (both tuning and resonating mass).
    added_mass:
        Mass added at mid-span of every lattice strut [mass]; default: the cell's own
        (``cell.point_masses["lattice"]``), none when it has none.
    required:
        Required insertion loss [dB] (a Quantity or number; the largest is used) for the mass ratio
        that would be needed; None to skip.
    zoning:
        The :class:`~latticecalc.physics.zoning.Zoning` of a graded panel (each zone's added mass is its own:
        ``added_mass`` must then be None), or None for a uniform panel.
    id_prefix:
        Prefix of the step ids.
    """
    if zoning is not None:
        if added_mass is not None:
            raise InputError("a graded panel's added masses are its zones'", input_name="added_mass",
                             expected="None with a zoning", got=format_quantity(Q_(added_mass)))
        return zoned_receiver_estimates(cell, zoning=zoning, material=material, nx=nx, ny=ny, column=column,
                                        faces=faces, direction=direction, required=required, node_zones=node_zones,
                                        id_prefix=id_prefix)
    sr = strut_resonance(cell, material=material, nx=nx, ny=ny, faces=faces, direction=direction,
                         added_mass=added_mass, node_zones=node_zones, id_prefix=id_prefix)
    res_step = quantity_step(id=f"{id_prefix}.resonating-mass", description="Resonating mass moving with the column "
                             f"({direction} ground motion, {len(faces)} panel(s))", value=sr.resonating_mass,
                             unit="kg", method="sum of the lattice strut families above", source=RAYLEIGH_STRUT)
    return _column_estimates(resonating=res_step, tuning=sr.tuning, steps=sr.steps, height=_panel_height(cell, ny),
                             column=column, eta_a=float(material.loss_factor), required=required, id_prefix=id_prefix)


def zoned_resonating_mass(count: int) -> Formula:
    """m_res = (m_res,1 n_1 + … + m_res,z n_z) / n: the resonating mass of a panel of ``count`` zones.

    m_res,k is zone k's resonating mass over the panels' full height (its cell in every row), n_k its rows,
    n the panel's rows (:data:`ZONED_SUM`).
    """
    if isinstance(count, bool) or not isinstance(count, (int, np.integer)) or count < 1:
        raise InputError("a graded panel needs at least one zone", input_name="zoning", expected="1, 2, 3, ...",
                         got=repr(count))
    return _zoned_resonating_mass(int(count))


@functools.cache
def _zoned_resonating_mass(count: int) -> Formula:
    ms = sym.symbols(" ".join(f"m_res_{k + 1}" for k in range(count)), seq=True)
    ns = sym.symbols(" ".join(f"n_{k + 1}" for k in range(count)), seq=True)
    n = sym.Symbol("n")
    names = {"m_res": r"m_\mathrm{res}", "n": "n"}
    names.update({f"m_res_{k + 1}": rf"m_{{\mathrm{{res}},{k + 1}}}" for k in range(count)})
    names.update({f"n_{k + 1}": rf"n_{{{k + 1}}}" for k in range(count)})
    return Formula("m_res", sym.Add(*(m * nk for m, nk in zip(ms, ns))) / n, latex_names=names)


#: Why the graded panel's resonating mass is the row-weighted sum of its zones'.
ZONED_SUM = Source(author="derived", title="Rayleigh's resonating mass is a sum over the struts, and the struts of "
                   "one cell row are the same in every row: a zone of n_k of the panel's n rows brings n_k/n of "
                   "its cell's value over the full height",
                   locator="an upper bound at a peak: every zone counted as if tuned to it (a zone tuned elsewhere "
                           "brings less there)", tag="derived")


def zoned_receiver_estimates(cell: Any, *, zoning: Any, material: Any, nx: int, ny: int, column: Column,
                             faces: Sequence[str], direction: str, required: Any = None, node_zones: str = "none",
                             id_prefix: str = "receiver") -> ReceiverEstimates:
    """The hand estimates of :func:`receiver_estimates` for a graded panel: each zone's struts over its rows.

    Each zone's resonating mass and strut tuning are those of its own cell
    (:meth:`~latticecalc.physics.zoning.Zoning.zone_cell`, with its added mass, and its material) over the
    panels' full height (:func:`strut_resonance`); the panel's resonating mass is their sum weighted by the
    zones' rows (:func:`zoned_resonating_mass`, :data:`ZONED_SUM`): an upper bound of what the panel brings at a
    peak, every zone counted as if tuned to it. From it on the steps are those of :func:`receiver_estimates`,
    with the lowest zone tuning as the band's tuning (the lower edge of the graded panel's resonances) and as
    the absorber's loss factor the least of the zones' lattice materials' (the most favourable: the estimates
    stay upper bounds). Identical zones give :func:`receiver_estimates` of the uniform panel.

    ``value`` and the attributes are those of :func:`receiver_estimates`; ``zone_tunings`` [Hz] and
    ``zone_resonating_masses`` [kg] (over the full height) are each zone's, bottom first.

    Parameters
    ----------
    cell:
        The panel's cell (zone k's strut diameter and added mass replace its lattice's).
    zoning:
        The :class:`~latticecalc.physics.zoning.Zoning`; its heights add up to ``ny``.
    material:
        The panel's lattice material (a zone without its own).
    nx, ny, column, faces, direction, required, node_zones, id_prefix:
        As for :func:`receiver_estimates`; zone k's steps are under ``<id_prefix>.zone<k>``.
    """
    zoning = zn.check_zoning(zoning, cells_high=ny, input_name="ny")
    if zoning is None:
        raise InputError("a graded panel needs its zoning", input_name="zoning", expected="a Zoning", got="None")
    _check_direction(direction)
    steps: list[Any] = []
    zone_masses, zone_tunings, values = [], [], {"n": Q_(int(ny), "")}
    losses = []
    for k, z in enumerate(zoning.zones):
        zp = f"{id_prefix}.zone{k + 1}"
        mat = zoning.zone_materials({zn.ZONED_GROUP: material}, k)[zn.ZONED_GROUP]
        losses.append(float(mat.loss_factor))
        sr = strut_resonance(zoning.zone_cell(cell, k), material=mat, nx=nx, ny=ny, faces=faces,
                             direction=direction, node_zones=node_zones, id_prefix=zp, label=f"Zone {k + 1}: ")
        res = quantity_step(id=f"{zp}.resonating-mass", description=f"Zone {k + 1} ({z.cells_high} of {ny} rows): "
                            "resonating mass of its lattice struts were they in every row of the panels",
                            value=sr.resonating_mass, unit="kg", method="sum of the zone's strut families above",
                            source=RAYLEIGH_STRUT)
        steps += [*sr.steps, res, sr.tuning]
        zone_masses.append(res.result)
        zone_tunings.append(sr.tuning.result)
        values[f"m_res_{k + 1}"] = res.result
        values[f"n_{k + 1}"] = Q_(int(z.cells_high), "")
    res_step = evaluate(zoned_resonating_mass(len(zoning.zones)), id=f"{id_prefix}.resonating-mass",
                        description=f"Resonating mass moving with the column ({direction} ground motion, "
                        f"{len(faces)} panel(s)): each zone's over its share of the rows", values=values, unit="kg",
                        source=ZONED_SUM, note="an upper bound at a peak: every zone counted as if tuned to it")
    low = int(np.argmin([f.to("Hz").m for f in zone_tunings]))
    tuning = quantity_step(id=f"{id_prefix}.f-tuning", description="Tuning frequency of the band: the lowest of the "
                           f"zones' strut tunings (zone {low + 1})", value=zone_tunings[low], unit="Hz",
                           method="least of the zone tunings above", source=RAYLEIGH_STRUT,
                           note="the graded panel's resonances start at its lowest zone's; the band above it uses "
                                "the summed mass ratio")
    loss_note = ""
    if len(set(losses)) > 1:
        loss_note = "η_a the least of the zones' lattice loss factors (the most favourable)"
    return _column_estimates(resonating=res_step, tuning=tuning, steps=steps, height=_panel_height(cell, ny),
                             column=column, eta_a=min(losses), required=required, id_prefix=id_prefix,
                             loss_note=loss_note, title="What the graded panels can do to the column: hand "
                             "estimates, zone by zone", zone_tunings=tuple(zone_tunings),
                             zone_resonating_masses=tuple(zone_masses))


def bound_checks(*, predicted: Any, bound_db: float, peaks: Any, id_prefix: str = "receiver") -> CalcResult:
    """Each peak's computed insertion loss must not exceed the single-absorber bound (a model plausibility check)."""
    il = np.atleast_1d(Q_(predicted).to("dB").m)
    fp = np.atleast_1d(check_dimension(peaks, name="peaks", expected="frequency").to("Hz").m)
    steps = tuple(check(id=f"{id_prefix}.bound-peak{k + 1}", description=f"Peak {k + 1} ({fp[k]:.4g} Hz): computed "
                        "insertion loss within the single-absorber bound", demand=Q_(float(il[k]), "dB"),
                        limit=Q_(bound_db, "dB"), sense="max", source=BOUND_SOURCE, sig=3)
                  for k in range(fp.size))
    return CalcResult(value=il, steps=steps, title="Computed insertion loss against the hand bound")


def receiver_level(*, centre: Any, velocity_rms: Any, band_il: Any, limit: Any,
                   id: str = "receiver.level") -> CalcResult:
    """Predicted floor band levels: the survey's band velocity reduced by the band insertion loss [velocity]."""
    v = check_dimension(velocity_rms, name="velocity_rms", expected="velocity").to("um/s")
    il = Q_(band_il).to("dB").m
    pred = v.m * 10 ** (-np.nan_to_num(il, nan=0.0) / 20)
    step = quantity_step(id=id, description="Predicted floor velocity per band (survey max-hold less the band "
                         "insertion loss; bands outside the sweep unchanged)", value=Q_(pred, "um/s"), unit="um/s",
                         method="v_pred = v_survey × 10^(−IL/20)", source=CREMER_HECKL)
    return CalcResult(value={"centre": Q_(centre).to("Hz"), "survey": v, "predicted": Q_(pred, "um/s"),
                             "limit": Q_(limit).to("um/s")}, steps=(step,), title="Predicted floor level")
