"""Finite-element model of a strut frame: 3D Timoshenko beam elements, 6 DOF per node.

Each strut of a cell is divided into ``n`` two-node elements.  The element uses the
interdependent interpolation of Timoshenko beam theory (cubic transverse displacement, quadratic
rotation, constant shear strain), which gives the exact static stiffness of a shear-deformable
beam and a consistent mass matrix with translational and rotary inertia:

* Reddy, J. N., "On locking-free shear deformable beam finite elements", *Comput. Methods Appl.
  Mech. Engrg.* 149 (1997) 113–132 (the interpolation);
* Friedman, Z. & Kosmatka, J. B., "An improved two-node Timoshenko beam finite element",
  *Comput. Struct.* 47 (1993) 473–481 (the same element; stiffness and consistent mass);
* Przemieniecki, J. S., *Theory of Matrix Structural Analysis* (1968), §5.6 (the closed-form
  stiffness with the shear parameter Φ = 12 E I / (κ G A L²)), §11 (consistent mass);
* Cowper, G. R., "The shear coefficient in Timoshenko's beam theory", *J. Appl. Mech.* 33 (1966)
  335–340: κ = 6(1 + ν)/(7 + 6ν) for a solid circle.

``theory="euler-bernoulli"`` sets Φ = 0 and drops the rotary inertia of bending (the classical
Hermite-cubic element).  Element matrices are integrated by 4-point Gauss quadrature, exact for
these polynomials, vectorised over all elements, and assembled into sparse matrices.

The struts can also be reduced one at a time (Craig–Bampton with the strut's two end nodes as
the interface: static constraint modes plus the lowest fixed–fixed modes of the strut interior),
which :mod:`latticecalc.physics.bloch` and :mod:`latticecalc.physics.panel` use to keep the
Bloch and frequency-response problems small.  Craig, R. R. & Bampton, M. C. C., "Coupling of
substructures for dynamic analyses", *AIAA J.* 6 (1968) 1313–1319.

Rigid node zones (``end_zones``, or ``node_zones="rigid"`` where a cell is meshed): where stocky
struts meet, each strut's end is buried in its neighbours over a length l_r.  That length is taken
rigid: the flexible elements run between the zones' ends, each zone end follows its joint as a
rigid body, u_end = u_joint + θ_joint × r with r the joint-to-zone-end vector (the rigid end
offset of frame analysis, common practice), and the zone's mass, ρ A l_r with its rotary inertia
about the joint, moves with the joint as a rigid body.  The strut's total mass is unchanged.  The
zone length at a node is the longest length over which another strut meeting there stands out of
the strut's surface, so that its section is enlarged (:func:`node_zone_lengths`): for struts of
radii r_i, r_j at an angle θ between their axes, l_r = (r_j + r_i cos θ) / sin θ, where the two
surfaces part (derived from the geometry of two cylinders; r for crossing struts, √2 r for equal
struts at the 70.5° of a bcc node, 0 for a strut continued in line).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import scipy.linalg as sla
import scipy.sparse as sp
import scipy.sparse.linalg as spla
import sympy as sp_sym

from latticecalc.errors import InputError, ModelError
from latticecalc.physics.beams import (
    AREA_CIRCLE,
    COWPER_1966,
    COWPER_CIRCLE,
    NODE_ZONE_CYLINDER,
    NODE_ZONE_SOURCE,
    NODE_ZONE_SPHERE,
    SECOND_MOMENT_CIRCLE,
    SECTION_SOURCE,
    SHEAR_MODULUS,
)
from latticecalc.sheet import CalcResult, Formula, Source, evaluate, quantity_step
from latticecalc.units import Q_, check_dimension, check_positive

THEORIES = ("timoshenko", "euler-bernoulli")

REDDY_1997 = Source(author="Reddy, J. N.",
                    title="On locking-free shear deformable beam finite elements, "
                          "Comput. Methods Appl. Mech. Engrg. 149, 113-132", year=1997,
                    locator="interdependent interpolation element")
PRZEMIENIECKI_1968 = Source(author="Przemieniecki, J. S.", title="Theory of Matrix Structural Analysis",
                            year=1968, locator="§5.6 (stiffness with shear), §11 (consistent mass)")
CRAIG_BAMPTON_1968 = Source(author="Craig, R. R. & Bampton, M. C. C.",
                            title="Coupling of substructures for dynamic analyses, AIAA J. 6, 1313-1319",
                            year=1968)
RIGID_OFFSET = Source(author="common practice", title="rigid end offsets of frame members: a member end "
                      "follows its joint as a rigid body, u_end = u_joint + θ_joint × r; the offset's mass is a "
                      "rigid body on the joint", tag="common practice")

#: Models of the node region: ``"none"`` (struts node to node) or ``"rigid"`` (rigid end zones).
NODE_ZONES = ("none", "rigid")
#: Strut groups given rigid node zones: the soft lattice struts.  A frame member is far stiffer than
#: the node material around it, so the node does not stiffen it.
ZONE_GROUPS = ("lattice",)
#: Zones covering more than this share of a strut (both ends together) are refused: no beam is left.
MAX_ZONE_SHARE = 0.8

_GAUSS_X, _GAUSS_W = np.polynomial.legendre.leggauss(4)
_XI = 0.5 * (_GAUSS_X + 1.0)          # Gauss points on [0, 1]
_WXI = 0.5 * _GAUSS_W
_ZERO_TOL = 1e-9                      # relative size of a "zero" eigenvalue / pivot


# --------------------------------------------------------------------------------------------
# sections and materials (plain SI floats inside)
# --------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class Section:
    """Properties of one strut group, SI floats: E, G (Pa), ρ (kg/m³), d (m), A (m²), I, J (m⁴), κ, η."""

    E: float
    G: float
    rho: float
    d: float
    nu: float
    A: float
    I: float  # noqa: E741 - engineering symbol
    J: float
    kappa: float
    eta: float = 0.0
    #: Second moment for bending in the element's local x–z plane (m⁴); None: the same as ``I``
    #: (a circle).  A rectangle has ``I`` for local x–y bending and ``I2`` for x–z.
    I2: float | None = None


_d = sp_sym.Symbol("d")
#: Torsion constant of a solid circle (polar second moment), Roark (2002) Table 10.1 case 1 [from memory].
POLAR_MOMENT_CIRCLE = Formula("J", sp_sym.pi * _d**4 / 32)


def section_steps(group: str, *, diameter, youngs_modulus, poissons_ratio, id_prefix: str,
                  wall_thickness=None) -> tuple:
    """Sheet steps for one group's section: area, second moment, torsion constant, G and Cowper's κ.

    With a ``wall_thickness`` [length] the section is a tube of outer diameter ``diameter``: the steps
    add its inner diameter and diameter ratio m, and use A = π(D² − d_i²)/4, I = π(D⁴ − d_i⁴)/64,
    J = 2I (Roark, Table A.1, from memory) and Cowper's κ of the hollow circle (Cowper 1966, Table 1).
    """
    from latticecalc.physics.beams import (
        AREA_TUBE,
        COWPER_1966_TUBE,
        COWPER_TUBE,
        DIAMETER_RATIO,
        INNER_DIAMETER,
        POLAR_MOMENT_TUBE,
        SECOND_MOMENT_TUBE,
        TUBE_SECTION_SOURCE,
        check_wall_thickness,
    )

    t = check_wall_thickness(wall_thickness, outer_diameter=diameter, name=f"{group} wall thickness")
    if t is not None:
        di = evaluate(INNER_DIAMETER, id=f"{id_prefix}.{group}.inner-diameter",
                      description=f"Inner diameter of the tube, {group}", values={"D": diameter, "t": t},
                      unit="mm", source=TUBE_SECTION_SOURCE)
        dd = {"D": diameter, "d_i": di.result}
        m = evaluate(DIAMETER_RATIO, id=f"{id_prefix}.{group}.diameter-ratio",
                     description=f"Inner over outer diameter of the tube, {group}", values=dd, unit="",
                     source=TUBE_SECTION_SOURCE, sig=6)
        return (
            di,
            evaluate(AREA_TUBE, id=f"{id_prefix}.{group}.area", description=f"Tube area, {group}", values=dd,
                     unit="mm^2", source=TUBE_SECTION_SOURCE),
            evaluate(SECOND_MOMENT_TUBE, id=f"{id_prefix}.{group}.second-moment",
                     description=f"Second moment of area of the tube, {group}", values=dd, unit="mm^4",
                     source=TUBE_SECTION_SOURCE),
            evaluate(POLAR_MOMENT_TUBE, id=f"{id_prefix}.{group}.torsion-constant",
                     description=f"Torsion constant of the closed tube (J = 2I), {group}", values=dd,
                     unit="mm^4", source=TUBE_SECTION_SOURCE),
            evaluate(SHEAR_MODULUS, id=f"{id_prefix}.{group}.shear-modulus", description=f"Shear modulus, {group}",
                     values={"E": youngs_modulus, "nu": poissons_ratio}, unit="MPa", source=SECTION_SOURCE),
            m,
            evaluate(COWPER_TUBE, id=f"{id_prefix}.{group}.kappa",
                     description=f"Shear coefficient of the hollow circle (Cowper), {group}",
                     values={"nu": poissons_ratio, "m": m.result}, unit="", source=COWPER_1966_TUBE, sig=6),
        )
    d = {"d": diameter}
    return (
        evaluate(AREA_CIRCLE, id=f"{id_prefix}.{group}.area", description=f"Strut area, {group}", values=d,
                 unit="mm^2", source=SECTION_SOURCE),
        evaluate(SECOND_MOMENT_CIRCLE, id=f"{id_prefix}.{group}.second-moment",
                 description=f"Second moment of area, {group}", values=d, unit="mm^4", source=SECTION_SOURCE),
        evaluate(POLAR_MOMENT_CIRCLE, id=f"{id_prefix}.{group}.torsion-constant",
                 description=f"Torsion constant, {group}", values=d, unit="mm^4", source=SECTION_SOURCE),
        evaluate(SHEAR_MODULUS, id=f"{id_prefix}.{group}.shear-modulus", description=f"Shear modulus, {group}",
                 values={"E": youngs_modulus, "nu": poissons_ratio}, unit="MPa", source=SECTION_SOURCE),
        evaluate(COWPER_CIRCLE, id=f"{id_prefix}.{group}.kappa",
                 description=f"Shear coefficient of the solid circle (Cowper), {group}",
                 values={"nu": poissons_ratio}, unit="", source=COWPER_1966, sig=6),
    )


def _material_value(material: Any, attr: str, *, group: str, expected: str, unit: str) -> float:
    if not hasattr(material, attr):
        raise InputError("material is missing a property", input_name=f"materials[{group!r}]",
                         expected=f"an object with .{attr} ({expected})", got=type(material).__name__)
    q = check_dimension(getattr(material, attr), name=f"materials[{group!r}].{attr}", expected=expected)
    return float(q.to(unit).magnitude)


MODULI = ("dynamic", "static", "long-term")


def _modulus_of(material: Any, modulus: str, group: str):
    if modulus not in MODULI:
        raise InputError("unknown modulus choice", input_name="modulus", expected=", ".join(MODULI),
                         got=repr(modulus))
    if modulus == "dynamic" and callable(getattr(material, "dynamic_modulus", None)):
        return material.dynamic_modulus()
    if modulus == "long-term" and callable(getattr(material, "long_term_modulus", None)):
        return material.long_term_modulus()
    if not hasattr(material, "youngs_modulus"):
        raise InputError("material is missing a property", input_name=f"materials[{group!r}]",
                         expected="an object with .youngs_modulus (pressure)", got=type(material).__name__)
    return material.youngs_modulus


def sections_for(cell: Any, materials: Mapping[str, Any], *, modulus: str = "dynamic", with_steps: bool = False,
                 id_prefix: str = "section"):
    """Section of every strut group of ``cell``, from ``cell.diameters`` and ``materials``.

    Parameters
    ----------
    cell:
        Anything with ``.groups`` (group name per strut) and ``.diameters`` (group -> diameter
        [length]); optionally ``.wall_thicknesses`` (group -> wall thickness [length]) for groups
        whose struts are tubes (the diameter is then the outer diameter).
    materials:
        Mapping of group name to a material with ``youngs_modulus`` [pressure],
        ``poissons_ratio`` [-], ``density`` [density] and optionally ``loss_factor`` [-].
    modulus:
        ``"dynamic"`` (the material's ``dynamic_modulus()`` where it has one: vibration),
        ``"static"`` (``youngs_modulus``) or ``"long-term"`` (``long_term_modulus()``: creep).
    with_steps:
        Also return the sheet steps of the section properties (``(sections, steps)``).
    id_prefix:
        Prefix of those steps' ids.

    Returns
    -------
    dict
        Group -> :class:`Section` (or ``(dict, steps)`` with ``with_steps``).
    """
    if not isinstance(materials, Mapping):
        raise InputError("materials must map each strut group to a material", input_name="materials",
                         expected="a dict such as {'lattice': tpu, 'frame': pla}",
                         got=type(materials).__name__)
    out: dict[str, Section] = {}
    steps: list = []
    for g in sorted(set(np.asarray(cell.groups).tolist())):
        if g not in materials:
            raise InputError("no material for a strut group", input_name="materials",
                             expected=f"a material for group {g!r}", got=", ".join(map(repr, materials)))
        if g not in cell.diameters:
            raise InputError("no diameter for a strut group", input_name="cell.diameters",
                             expected=f"a diameter for group {g!r}", got=", ".join(map(repr, cell.diameters)))
        m = materials[g]
        d_q = check_positive(check_dimension(cell.diameters[g], name=f"diameters[{g!r}]", expected="length"),
                             name=f"diameters[{g!r}]")
        E = float(check_dimension(_modulus_of(m, modulus, g), name=f"materials[{g!r}].youngs_modulus",
                                  expected="pressure").to("Pa").magnitude)
        rho = _material_value(m, "density", group=g, expected="density", unit="kg/m^3")
        nu = float(check_dimension(getattr(m, "poissons_ratio", None),
                                   name=f"materials[{g!r}].poissons_ratio",
                                   expected="dimensionless").to("").magnitude)
        eta_q = getattr(m, "loss_factor", 0.0)
        eta = float(check_dimension(eta_q, name=f"materials[{g!r}].loss_factor",
                                    expected="dimensionless").to("").magnitude)
        if not (E > 0 and rho > 0):
            raise InputError("Young's modulus and density must be positive", input_name=f"materials[{g!r}]",
                             expected="> 0", got=f"E = {E} Pa, ρ = {rho} kg/m³")
        if not (-1.0 < nu < 0.5):
            raise InputError("Poisson's ratio out of range", input_name=f"materials[{g!r}].poissons_ratio",
                             expected="-1 < ν < 0.5", got=f"{nu}")
        if not (0.0 <= eta < 1.0):
            raise InputError("loss factor out of range", input_name=f"materials[{g!r}].loss_factor",
                             expected="0 <= η < 1", got=f"{eta}")
        st = section_steps(g, diameter=d_q, youngs_modulus=Q_(E, "Pa"), poissons_ratio=Q_(nu, ""),
                           id_prefix=id_prefix, wall_thickness=(getattr(cell, "wall_thicknesses", None) or {}).get(g))
        si = {x.id.rsplit(".", 1)[1]: float(x.result.to_base_units().magnitude) for x in st}
        out[g] = Section(E=E, G=si["shear-modulus"], rho=rho, d=float(d_q.to("m").magnitude), nu=nu, A=si["area"],
                         I=si["second-moment"], J=si["torsion-constant"], kappa=si["kappa"], eta=eta)
        steps.extend(st)
    if with_steps:
        return out, tuple(steps)
    return out


# --------------------------------------------------------------------------------------------
# element matrices
# --------------------------------------------------------------------------------------------
def _plane_shapes(L: np.ndarray, phi: np.ndarray):
    """Shape functions of the interdependent interpolation, (ne, ng, 4), and their x-derivatives.

    DOFs (w1, θ1, w2, θ2) with θ = dw/dx in the slender limit; ξ = x/L at the Gauss points.
    """
    x = _XI[None, :]
    L_ = L[:, None]
    p = phi[:, None]
    mu = 1.0 / (1.0 + p)
    N = np.stack([mu * (1 - 3 * x**2 + 2 * x**3 + p * (1 - x)),
                  mu * L_ * (x - 2 * x**2 + x**3 + p * (x - x**2) / 2),
                  mu * (3 * x**2 - 2 * x**3 + p * x),
                  mu * L_ * (-x**2 + x**3 - p * (x - x**2) / 2)], axis=-1)
    dN = np.stack([mu * (-6 * x + 6 * x**2 - p) / L_,
                   mu * (1 - 4 * x + 3 * x**2 + p * (1 - 2 * x) / 2),
                   mu * (6 * x - 6 * x**2 + p) / L_,
                   mu * (-2 * x + 3 * x**2 - p * (1 - 2 * x) / 2)], axis=-1)
    R = np.stack([mu * 6 * (x**2 - x) / L_,
                  mu * (1 - 4 * x + 3 * x**2 + p * (1 - x)),
                  -mu * 6 * (x**2 - x) / L_,
                  mu * (-2 * x + 3 * x**2 + p * x)], axis=-1)
    dR = np.stack([mu * 6 * (2 * x - 1) / L_**2,
                   mu * (-4 + 6 * x - p) / L_,
                   -mu * 6 * (2 * x - 1) / L_**2,
                   mu * (-2 + 6 * x + p) / L_], axis=-1)
    return N, dN, R, dR


def plane_bending_matrices(*, L, EI, kGA, rhoA, rhoI, theory: str = "timoshenko"):
    """Bending stiffness and consistent mass in one plane, (ne, 4, 4), DOFs (w1, θ1, w2, θ2).

    All arguments are arrays over elements in SI units.  ``kGA`` is κ G A; ``rhoI`` the rotary
    inertia per length (dropped for Euler–Bernoulli).
    """
    L = np.asarray(L, float)
    if theory == "timoshenko":
        phi = 12.0 * EI / (kGA * L**2)
        rot = rhoI
    else:
        phi = np.zeros_like(L)
        rot = np.zeros_like(L)
        kGA = np.zeros_like(L)
    N, dN, R, dR = _plane_shapes(L, phi)
    wL = _WXI[None, :] * L[:, None]                      # (ne, ng) integration weights in x
    gamma = dN - R                                       # shear strain; zero when Φ = 0
    K = (np.einsum("eg,egi,egj->eij", wL * np.asarray(EI, float)[:, None], dR, dR)
         + np.einsum("eg,egi,egj->eij", wL * np.asarray(kGA, float)[:, None], gamma, gamma))
    M = (np.einsum("eg,egi,egj->eij", wL * np.asarray(rhoA, float)[:, None], N, N)
         + np.einsum("eg,egi,egj->eij", wL * np.asarray(rot, float)[:, None], R, R))
    return K, M


def local_element_matrices(L: np.ndarray, sec: Sequence[Section], theory: str):
    """Local 12×12 stiffness and mass of each element, (ne, 12, 12).

    Local DOFs per node (u, v, w, θx, θy, θz); x along the element.
    """
    L = np.asarray(L, float)
    ne = L.size
    E = np.array([s.E for s in sec])
    G = np.array([s.G for s in sec])
    rho = np.array([s.rho for s in sec])
    A = np.array([s.A for s in sec])
    In = np.array([s.I for s in sec])
    In2 = np.array([s.I if s.I2 is None else s.I2 for s in sec])
    J = np.array([s.J for s in sec])
    kap = np.array([s.kappa for s in sec])
    Kb, Mb = plane_bending_matrices(L=L, EI=E * In, kGA=kap * G * A, rhoA=rho * A, rhoI=rho * In,
                                    theory=theory)
    if np.array_equal(In, In2):
        Kb2, Mb2 = Kb, Mb
    else:
        Kb2, Mb2 = plane_bending_matrices(L=L, EI=E * In2, kGA=kap * G * A, rhoA=rho * A, rhoI=rho * In2,
                                          theory=theory)
    K = np.zeros((ne, 12, 12))
    M = np.zeros((ne, 12, 12))
    bar = np.array([[1.0, -1.0], [-1.0, 1.0]])
    cons = np.array([[2.0, 1.0], [1.0, 2.0]]) / 6.0
    K[:, 0:12:6, 0:12:6] = (E * A / L)[:, None, None] * bar
    M[:, 0:12:6, 0:12:6] = (rho * A * L)[:, None, None] * cons
    K[:, 3:12:6, 3:12:6] = (G * J / L)[:, None, None] * bar
    M[:, 3:12:6, 3:12:6] = (rho * J * L)[:, None, None] * cons
    xy = np.array([1, 5, 7, 11])                 # v, θz: θz = dv/dx
    xz = np.array([2, 4, 8, 10])                 # w, θy: θy = -dw/dx
    sgn = np.array([1.0, -1.0, 1.0, -1.0])
    K[:, xy[:, None], xy[None, :]] += Kb
    M[:, xy[:, None], xy[None, :]] += Mb
    K[:, xz[:, None], xz[None, :]] += Kb2 * sgn[:, None] * sgn[None, :]
    M[:, xz[:, None], xz[None, :]] += Mb2 * sgn[:, None] * sgn[None, :]
    return K, M


def rotations(p1: np.ndarray, p2: np.ndarray) -> np.ndarray:
    """Direction-cosine matrices Λ (ne, 3, 3), rows = local x, y, z in global coordinates."""
    d = np.asarray(p2, float) - np.asarray(p1, float)
    L = np.linalg.norm(d, axis=1)
    ex = d / L[:, None]
    ref = np.where((np.abs(ex[:, 2]) > 0.9)[:, None], np.array([0.0, 1.0, 0.0]), np.array([0.0, 0.0, 1.0]))
    ey = np.cross(ref, ex)
    ey /= np.linalg.norm(ey, axis=1)[:, None]
    ez = np.cross(ex, ey)
    return np.stack([ex, ey, ez], axis=1)


def _rotate_rows(lam: np.ndarray, X: np.ndarray) -> np.ndarray:
    """Tᵀ X for T block-diagonal in the 3 × 3 blocks ``lam`` (ne, 3, 3); X (ne, 3 b, k), b blocks."""
    ne, rows, k = X.shape
    Xb = X.reshape(ne, rows // 3, 3, k)
    return (np.swapaxes(lam, 1, 2)[:, None] @ Xb).reshape(ne, rows, k)


def _transform(lam: np.ndarray, n_nodes: int = 2) -> np.ndarray:
    ne = lam.shape[0]
    T = np.zeros((ne, 6 * n_nodes, 6 * n_nodes))
    for b in range(2 * n_nodes):
        T[:, 3 * b:3 * b + 3, 3 * b:3 * b + 3] = lam
    return T


# --------------------------------------------------------------------------------------------
# rigid node zones
# --------------------------------------------------------------------------------------------
def check_node_zones(node_zones: Any) -> str:
    """Validate a node-zone model name (one of :data:`NODE_ZONES`)."""
    if node_zones not in NODE_ZONES:
        raise InputError("unknown model of the node region", input_name="node_zones",
                         expected=" or ".join(map(repr, NODE_ZONES)), got=repr(node_zones))
    return node_zones


def _skew(r: np.ndarray) -> np.ndarray:
    """[r]× of (..., 3) vectors: [r]× b = r × b, shape (..., 3, 3)."""
    r = np.asarray(r, float)
    out = np.zeros(r.shape[:-1] + (3, 3))
    out[..., 0, 1], out[..., 0, 2] = -r[..., 2], r[..., 1]
    out[..., 1, 0], out[..., 1, 2] = r[..., 2], -r[..., 0]
    out[..., 2, 0], out[..., 2, 1] = -r[..., 1], r[..., 0]
    return out


def rigid_offset_matrix(offset1: np.ndarray, offset2: np.ndarray) -> np.ndarray:
    """H (n, 12, 12) with [u_end; θ_end] = H [u_joint; θ_joint] at both ends of n members.

    ``offset1``, ``offset2`` (n, 3): the vector from each joint to the member's (flexible) end, in
    the axes the DOFs are given in.  u_end = u_joint + θ_joint × r = u_joint − [r]× θ_joint.
    """
    o1 = np.atleast_2d(np.asarray(offset1, float))
    o2 = np.atleast_2d(np.asarray(offset2, float))
    H = np.broadcast_to(np.eye(12), (o1.shape[0], 12, 12)).copy()
    H[:, 0:3, 3:6] = -_skew(o1)
    H[:, 6:9, 9:12] = -_skew(o2)
    return H


def zone_mass_local(length: float, section: Section, theory: str, *, sign: float = 1.0) -> np.ndarray:
    """6 × 6 rigid-body mass, about the joint, of a zone of ``length`` m along local ±x (``sign``).

    Mass m = ρ A l, first moment S = m l/2 (±x), inertia about the joint: ρ J l about x and
    ρ A l³/3 (+ ρ I l, the section's rotary inertia, for Timoshenko) about y and z, so that
    M = [[m 1, −[S]×], [[S]×, J_O]] (the kinetic energy of a rigid body moving with the joint).
    """
    sec = section
    m = sec.rho * sec.A * length
    S = np.array([sign * m * length / 2.0, 0.0, 0.0])
    rot = theory == "timoshenko"
    i_z = sec.I
    i_y = sec.I if sec.I2 is None else sec.I2
    J = np.diag([sec.rho * sec.J * length,
                 sec.rho * sec.A * length**3 / 3.0 + (sec.rho * i_y * length if rot else 0.0),
                 sec.rho * sec.A * length**3 / 3.0 + (sec.rho * i_z * length if rot else 0.0)])
    M = np.zeros((6, 6))
    M[:3, :3] = m * np.eye(3)
    M[:3, 3:] = -_skew(S)
    M[3:, :3] = _skew(S)
    M[3:, 3:] = J
    return M


def check_end_zones(end_zones: Any, *, nodes: np.ndarray, struts: np.ndarray) -> np.ndarray | None:
    """``end_zones`` as an (n_struts, 2) array of zone lengths (m) at each strut end, or None.

    None, or all zeros, is no zone.  Raises ModelError where the zones of a strut leave less than
    1 − :data:`MAX_ZONE_SHARE` of it flexible.
    """
    if end_zones is None:
        return None
    z = np.asarray(end_zones, float)
    ns = np.asarray(struts).shape[0]
    if z.shape != (ns, 2) or not np.all(np.isfinite(z)) or np.any(z < 0):
        raise InputError("end zones must be two non-negative lengths (m) per strut", input_name="end_zones",
                         expected=f"an array of shape ({ns}, 2), >= 0", got=f"shape {z.shape}")
    if not np.any(z > 0):
        return None
    nodes = np.asarray(nodes, float)
    struts = np.asarray(struts, int)
    L = np.linalg.norm(nodes[struts[:, 1]] - nodes[struts[:, 0]], axis=1)
    bad = np.flatnonzero(z.sum(axis=1) > MAX_ZONE_SHARE * L)
    if bad.size:
        s = int(bad[0])
        raise ModelError("the rigid node zones cover most of a strut: it is no longer a beam",
                         input_name=f"end_zones[{s}]",
                         expected=f"zones together below {MAX_ZONE_SHARE:.0%} of the strut length",
                         got=f"{z[s, 0] * 1e3:.4g} mm + {z[s, 1] * 1e3:.4g} mm on a {L[s] * 1e3:.4g} mm strut",
                         hint="The struts are too stocky for a beam model of the nodes: use a solid model")
    return z


def periodic_images(nodes: np.ndarray, period: float) -> np.ndarray:
    """Index of a representative for each node, nodes a whole number of ``period`` apart sharing one."""
    nodes = np.asarray(nodes, float)
    frac = (nodes - nodes.min(axis=0)) / period
    key = np.round(frac - np.floor(frac + 1e-7), 6) % 1.0
    key = np.round(key, 6)
    _, first, inverse = np.unique(key, axis=0, return_index=True, return_inverse=True)
    return first[inverse.ravel()]


@dataclass(frozen=True)
class ZoneGeometry:
    """Zone length (m) at each strut end and the strut pair that governs it.

    Arrays (n_struts, 2): ``length``; ``other`` the governing strut (−1 where none), ``d_self`` and
    ``d_other`` the two diameters (m), ``angle`` the angle between their axes (rad) and ``rule``
    (``"cylinder"``: the two cylinders part at (r_j + r_i cos θ)/sin θ; ``"sphere"``: a thicker
    strut's rounded end at the node reaches √(r_j² − r_i²); ``""`` no zone).
    """

    length: np.ndarray
    other: np.ndarray
    d_self: np.ndarray
    d_other: np.ndarray
    angle: np.ndarray
    rule: np.ndarray


def node_zone_geometry(*, nodes: np.ndarray, struts: np.ndarray, groups: Sequence[str],
                       sections: Mapping[str, Section], zone_groups: Sequence[str] = ZONE_GROUPS,
                       joint_master: np.ndarray | None = None) -> ZoneGeometry:
    """Rigid zone length at both ends of every strut, from the geometry of the struts at each node.

    At a node, strut i (radius r_i) is held over the length along its axis where another strut j
    (radius r_j) meeting it there at an angle θ between their axes stands out of its surface: the
    surfaces part at (r_j + r_i cos θ) / sin θ (r_j for crossing struts; 0 or less for a strut
    continued in line).  A thicker strut's rounded end (a sphere of radius r_j at the node) stands
    out up to √(r_j² − r_i²).  The zone is the longest over the other struts at the node (derived
    from the geometry of the struts as cylinders with rounded ends, as the density model takes them).

    Parameters
    ----------
    nodes, struts, groups:
        Joints (m), strut node pairs and group names.
    sections:
        Group -> :class:`Section` (``d`` the outer diameter).
    zone_groups:
        Groups that get zones; the others keep none (but hold the struts they meet).
    joint_master:
        For a periodic cell: the joint each joint is an image of; the struts at all images of a node
        meet there.  None: every joint is its own.
    """
    return _zone_geometry(nodes, struts, groups, {g: sections[g].d for g in set(groups)}, zone_groups, joint_master)


def _zone_geometry(nodes, struts, groups, diameters: Mapping[str, float], zone_groups, joint_master) -> ZoneGeometry:
    nodes = np.asarray(nodes, float)
    struts = np.asarray(struts, int)
    ns = struts.shape[0]
    master = np.arange(len(nodes)) if joint_master is None else np.asarray(joint_master, int)
    vec = nodes[struts[:, 1]] - nodes[struts[:, 0]]
    e = vec / np.linalg.norm(vec, axis=1)[:, None]
    d = np.array([diameters[g] for g in groups], float)
    # entries: (strut, end); direction pointing from the node into the strut
    ent_node = master[struts].ravel()                       # (2 ns,) order: s0e0, s0e1, s1e0, ...
    ent_dir = np.stack([e, -e], axis=1).reshape(-1, 3)
    ent_strut = np.repeat(np.arange(ns), 2)
    zone = np.array([g in zone_groups for g in groups])
    length = np.zeros(2 * ns)
    other = -np.ones(2 * ns, int)
    angle = np.zeros(2 * ns)
    rule = np.array([""] * (2 * ns), dtype=object)
    order = np.argsort(ent_node, kind="stable")
    bounds = np.flatnonzero(np.diff(ent_node[order])) + 1
    for members in np.split(order, bounds):
        if members.size < 2:
            continue
        for i in members:
            if not zone[ent_strut[i]]:
                continue
            js = members[members != i]
            c = np.clip(ent_dir[js] @ ent_dir[i], -1.0, 1.0)
            sn = np.sqrt(1.0 - c**2)
            ri, rj = d[ent_strut[i]] / 2.0, d[ent_strut[js]] / 2.0
            # in line (sin θ = 0): a strut continued through the node, or a periodic copy of the same
            # strut: no hold
            with np.errstate(divide="ignore", invalid="ignore"):
                cyl = np.where(sn > 1e-6, (rj + ri * c) / np.where(sn > 1e-6, sn, 1.0), 0.0)
            sph = np.sqrt(np.clip(rj**2 - ri**2, 0.0, None))
            cand = np.maximum(cyl, sph)
            k = int(np.argmax(cand))
            if cand[k] > 0:
                length[i] = cand[k]
                other[i] = ent_strut[js[k]]
                angle[i] = float(np.arccos(c[k]))
                rule[i] = "cylinder" if cyl[k] >= sph[k] else "sphere"
    dd = d[np.maximum(other, 0)]
    return ZoneGeometry(length=length.reshape(ns, 2), other=other.reshape(ns, 2),
                        d_self=np.repeat(d, 2).reshape(ns, 2), d_other=np.where(other >= 0, dd, 0.0).reshape(ns, 2),
                        angle=angle.reshape(ns, 2), rule=rule.reshape(ns, 2))


def node_zone_lengths(*, nodes: np.ndarray, struts: np.ndarray, groups: Sequence[str],
                      sections: Mapping[str, Section], zone_groups: Sequence[str] = ZONE_GROUPS,
                      joint_master: np.ndarray | None = None) -> np.ndarray:
    """Zone length (m) at both ends of every strut, (n_struts, 2); see :func:`node_zone_geometry`."""
    return node_zone_geometry(nodes=nodes, struts=struts, groups=groups, sections=sections,
                              zone_groups=zone_groups, joint_master=joint_master).length


def end_zones_for(node_zones: str, *, nodes: np.ndarray, struts: np.ndarray, groups: Sequence[str],
                  sections: Mapping[str, Section], joint_master: np.ndarray | None = None,
                  zone_groups: Sequence[str] = ZONE_GROUPS) -> np.ndarray | None:
    """The ``end_zones`` array of a node-zone model: None for ``"none"``, the node geometry for ``"rigid"``.

    ``zone_groups``: the groups given zones (a graded panel's ``lattice.zone<k>`` groups).
    """
    if check_node_zones(node_zones) == "none":
        return None
    z = node_zone_lengths(nodes=nodes, struts=struts, groups=groups, sections=sections, joint_master=joint_master,
                          zone_groups=zone_groups)
    return check_end_zones(z, nodes=nodes, struts=struts)


@dataclass(frozen=True, kw_only=True)
class NodeZones(CalcResult):
    """Result of :func:`cell_node_zones`; ``value``: zone lengths (l₁, l₂) at the ends of the strut shown [mm].

    ``strut`` is that strut (the longest of the group, the least held of those), ``length`` its
    node-to-node length; ``lengths`` (n_struts, 2) [mm] the zones of every strut of the cell.
    """

    strut: int
    length: Any
    lengths: Any
    geometry: ZoneGeometry


def cell_node_zones(cell: Any, *, group: str = "lattice", periodic: bool = True,
                    id_prefix: str = "strut.node-zone") -> NodeZones:
    """Rigid node-zone lengths of ``cell``'s struts, with the steps for its longest strut of ``group``.

    Parameters
    ----------
    cell:
        A cell (``.nodes`` [length], ``.struts``, ``.groups``, ``.diameters``, ``.cell_width``).
    group:
        The strut group given zones and shown (the resonating lattice struts).
    periodic:
        True: the cell in its infinite lattice, so the struts of the neighbouring cells meeting at a
        node on the cell's faces count (nodes a cell width apart are one node); False: the cell's
        own joints only.
    id_prefix:
        Prefix of the step ids.

    Returns
    -------
    NodeZones
        Zone lengths at both ends of the longest strut of ``group`` (of several equally long, the
        one with the longest flexible length), each shown as the evaluated rule for the strut that
        holds it longest.
    """
    nodes, struts, groups = cell_geometry(cell)
    if group not in groups:
        raise InputError("no such strut group in the cell", input_name="group",
                         expected=" or ".join(map(repr, sorted(set(groups)))), got=repr(group))
    diameters = {}
    for g in set(groups):
        d_q = check_positive(check_dimension(cell.diameters[g], name=f"diameters[{g!r}]", expected="length"),
                             name=f"diameters[{g!r}]")
        diameters[g] = float(d_q.to("m").magnitude)
    master = None
    if periodic:
        width = float(cell.cell_width.to("m").magnitude) if hasattr(cell, "cell_width") else float(np.ptp(nodes))
        master = periodic_images(nodes, width)
    geo = _zone_geometry(nodes, struts, groups, diameters, (group,), master)
    L = np.linalg.norm(nodes[struts[:, 1]] - nodes[struts[:, 0]], axis=1)
    mine = np.flatnonzero(np.array(groups) == group)
    longest = mine[L[mine] >= L[mine].max() * (1 - 1e-9)]
    s = int(longest[np.argmin(geo.length[longest].sum(axis=1))])
    check_end_zones(geo.length, nodes=nodes, struts=struts)
    steps = []
    ends = (0, 1) if abs(geo.length[s, 0] - geo.length[s, 1]) > 1e-9 * L[s] else (0,)
    for end in ends:
        where = "at each end" if len(ends) == 1 else f"at end {end + 1} (node {struts[s, end]})"
        sid = f"{id_prefix}.length" if len(ends) == 1 else f"{id_prefix}.length-end{end + 1}"
        rule = geo.rule[s, end]
        di = Q_(geo.d_self[s, end] * 1e3, "mm")
        dj = Q_(geo.d_other[s, end] * 1e3, "mm")
        o = int(geo.other[s, end])
        held = f"held by a {groups[o]} strut" if o >= 0 else "no other strut at the node"
        if rule == "cylinder":
            steps.append(evaluate(NODE_ZONE_CYLINDER, id=sid, unit="mm", source=NODE_ZONE_SOURCE,
                                  description=f"Rigid node zone of the longest {group} strut {where}: "
                                  f"{held} at θ = {np.degrees(geo.angle[s, end]):.4g}°",
                                  values={"d_i": di, "d_j": dj, "theta": Q_(np.degrees(geo.angle[s, end]), "degree")}))
        elif rule == "sphere":
            steps.append(evaluate(NODE_ZONE_SPHERE, id=sid, unit="mm", source=NODE_ZONE_SOURCE,
                                  description=f"Rigid node zone of the longest {group} strut {where}: inside "
                                  "the rounded end of a thicker strut", values={"d_i": di, "d_j": dj}))
        else:
            steps.append(quantity_step(id=sid, description=f"Rigid node zone of the longest {group} strut {where}",
                                       value=Q_(0.0, "mm"), unit="mm", method=held, source=NODE_ZONE_SOURCE))
    value = Q_(geo.length[s] * 1e3, "mm")
    return NodeZones(value=value, steps=tuple(steps), strut=s, length=Q_(L[s] * 1e3, "mm"),
                     lengths=Q_(geo.length * 1e3, "mm"), geometry=geo,
                     title=f"Rigid node zones of the {group} struts")


# --------------------------------------------------------------------------------------------
# mesh
# --------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class FrameMesh:
    """A strut frame divided into elements (SI floats).

    ``nodes[:n_joints]`` are the joints (the cell's own nodes); the rest are the interior nodes
    of the struts, ``n_elements - 1`` per strut in strut order.  With ``end_zones`` the interior
    nodes divide the flexible length between the zones, and the first and last element of a strut
    reach their joint through a rigid offset.
    """

    nodes: np.ndarray
    n_joints: int
    struts: np.ndarray
    strut_groups: tuple[str, ...]
    n_elements: int
    elements: np.ndarray = field(repr=False)
    element_strut: np.ndarray = field(repr=False)
    #: Rigid zone length (m) at both ends of each strut, (n_struts, 2), or None (no zones).
    end_zones: np.ndarray | None = field(default=None, repr=False)

    @property
    def n_dofs(self) -> int:
        """Six per node."""
        return 6 * self.nodes.shape[0]

    def strut_nodes(self, s: int) -> np.ndarray:
        """Node indices along strut ``s``, end to end."""
        n = self.n_elements
        inner = self.n_joints + s * (n - 1) + np.arange(n - 1)
        return np.concatenate([[self.struts[s, 0]], inner, [self.struts[s, 1]]])


def check_n_elements(n_elements: Any) -> int:
    """Validate a mesh density (elements per strut)."""
    if isinstance(n_elements, bool) or not isinstance(n_elements, (int, np.integer)) or n_elements < 1:
        raise InputError("mesh density must be a whole number of elements per strut, at least 1",
                         input_name="n_elements", expected="an integer >= 1", got=repr(n_elements))
    return int(n_elements)


def cell_geometry(cell: Any) -> tuple[np.ndarray, np.ndarray, tuple[str, ...]]:
    """Joints (m), struts and groups of ``cell`` as plain arrays, with the geometry checked."""
    for attr in ("nodes", "struts", "groups", "diameters"):
        if not hasattr(cell, attr):
            raise InputError("not a cell", input_name="cell",
                             expected="an object with .nodes, .struts, .groups, .diameters",
                             got=f"{type(cell).__name__} without .{attr}")
    nodes_q = check_dimension(cell.nodes, name="cell.nodes", expected="length")
    nodes = np.asarray(nodes_q.to("m").magnitude, float)
    struts = np.asarray(cell.struts)
    groups = tuple(str(g) for g in np.asarray(cell.groups).tolist())
    if nodes.ndim != 2 or nodes.shape[1] != 3:
        raise ModelError("node coordinates must be an N×3 array", input_name="cell.nodes",
                         expected="shape (N, 3)", got=f"shape {nodes.shape}")
    if struts.ndim != 2 or struts.shape[1] != 2 or not np.issubdtype(struts.dtype, np.integer):
        raise ModelError("struts must be an M×2 integer array", input_name="cell.struts",
                         expected="shape (M, 2) of node indices", got=f"shape {struts.shape}, {struts.dtype}")
    if len(groups) != struts.shape[0]:
        raise ModelError("one group per strut", input_name="cell.groups",
                         expected=f"{struts.shape[0]} names", got=f"{len(groups)}")
    if struts.size and (struts.min() < 0 or struts.max() >= nodes.shape[0]):
        raise ModelError("a strut refers to a node that does not exist", input_name="cell.struts",
                         expected=f"indices 0..{nodes.shape[0] - 1}", got=f"{struts.min()}..{struts.max()}")
    lengths = np.linalg.norm(nodes[struts[:, 1]] - nodes[struts[:, 0]], axis=1)
    scale = float(np.ptp(nodes, axis=0).max()) if nodes.size else 1.0
    short = np.flatnonzero(lengths <= 1e-9 * max(scale, 1e-300))
    if short.size:
        s = int(short[0])
        raise ModelError("a strut has zero length", input_name=f"cell.struts[{s}]",
                         expected="two distinct node positions",
                         got=f"nodes {struts[s, 0]} and {struts[s, 1]} at the same point")
    return nodes, struts.astype(int), groups


def mesh_frame(*, nodes: np.ndarray, struts: np.ndarray, groups: Sequence[str], n_elements: int,
               end_zones: np.ndarray | None = None) -> FrameMesh:
    """Divide every strut into ``n_elements`` equal elements (plain arrays, metres).

    ``end_zones`` (n_struts, 2), m: rigid zone lengths at the strut ends (see :func:`node_zone_lengths`);
    the elements then divide the flexible length between them.
    """
    n = check_n_elements(n_elements)
    nodes = np.asarray(nodes, float)
    struts = np.asarray(struts, int)
    zones = check_end_zones(end_zones, nodes=nodes, struts=struts)
    n0, ns = nodes.shape[0], struts.shape[0]
    t = np.arange(1, n) / n
    p1, p2 = nodes[struts[:, 0]], nodes[struts[:, 1]]
    if zones is not None:
        ex = (p2 - p1) / np.linalg.norm(p2 - p1, axis=1)[:, None]
        p1, p2 = p1 + zones[:, :1] * ex, p2 - zones[:, 1:] * ex
    inner = (p1[:, None, :] + (p2 - p1)[:, None, :] * t[None, :, None]).reshape(-1, 3)
    all_nodes = np.vstack([nodes, inner])
    chain = np.empty((ns, n + 1), int)
    chain[:, 0] = struts[:, 0]
    chain[:, -1] = struts[:, 1]
    chain[:, 1:-1] = n0 + np.arange(ns)[:, None] * (n - 1) + np.arange(n - 1)[None, :]
    elements = np.stack([chain[:, :-1], chain[:, 1:]], axis=-1).reshape(-1, 2)
    element_strut = np.repeat(np.arange(ns), n)
    return FrameMesh(nodes=all_nodes, n_joints=n0, struts=struts, strut_groups=tuple(groups),
                     n_elements=n, elements=elements, element_strut=element_strut, end_zones=zones)


# --------------------------------------------------------------------------------------------
# assembly
# --------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class Assembled:
    """Sparse global matrices (CSR, N·m and kg), total and by strut group."""

    K: sp.csr_matrix
    M: sp.csr_matrix
    K_by_group: dict[str, sp.csr_matrix]
    M_by_group: dict[str, sp.csr_matrix]

    def damped_stiffness(self, sections: Mapping[str, Section]) -> sp.csr_matrix:
        """K(1 + iη) summed over groups (structural damping by a loss factor per material)."""
        out = None
        for g, Kg in self.K_by_group.items():
            term = Kg * (1.0 + 1j * sections[g].eta)
            out = term if out is None else out + term
        return out.tocsr()


def _element_offsets(mesh: FrameMesh) -> tuple[np.ndarray, np.ndarray]:
    """Vectors (ne, 3) from each element's nodes to its flexible ends: the rigid zones at the joints."""
    ne = mesh.elements.shape[0]
    o1, o2 = np.zeros((ne, 3)), np.zeros((ne, 3))
    z = mesh.end_zones
    if z is None:
        return o1, o2
    joints = mesh.nodes[:mesh.n_joints]
    d = joints[mesh.struts[:, 1]] - joints[mesh.struts[:, 0]]
    ex = d / np.linalg.norm(d, axis=1)[:, None]
    n = mesh.n_elements
    first = np.arange(mesh.struts.shape[0]) * n
    last = first + n - 1
    o1[first] = z[:, :1] * ex
    o2[last] = -z[:, 1:] * ex
    return o1, o2


def global_element_matrices(mesh: FrameMesh, sections: Mapping[str, Section], theory: str):
    """Element stiffness and mass in global axes, (ne, 12, 12), and the element groups.

    With rigid node zones the first and last element of a strut are joined to their joint through
    the rigid offset (:func:`rigid_offset_matrix`): K ← Hᵀ K H, M ← Hᵀ M H.
    """
    el = mesh.elements
    p1, p2 = mesh.nodes[el[:, 0]], mesh.nodes[el[:, 1]]
    if mesh.end_zones is not None:
        o1, o2 = _element_offsets(mesh)
        p1, p2 = p1 + o1, p2 + o2
    L = np.linalg.norm(p2 - p1, axis=1)
    egroups = [mesh.strut_groups[s] for s in mesh.element_strut]
    Kl, Ml = local_element_matrices(L, [sections[g] for g in egroups], theory)
    T = _transform(rotations(p1, p2))
    Tt = np.swapaxes(T, 1, 2)
    K = Tt @ Kl @ T
    M = Tt @ Ml @ T
    if mesh.end_zones is not None:
        H = rigid_offset_matrix(o1, o2)
        Ht = np.swapaxes(H, 1, 2)
        K = Ht @ K @ H
        M = Ht @ M @ H
    return K, M, np.array(egroups)


def zone_mass_matrix(mesh: FrameMesh, sections: Mapping[str, Section], theory: str,
                     group: str | None = None) -> sp.csr_matrix:
    """Rigid-body mass of the node zones (of one strut group, or all), on the joints' DOFs of ``mesh``."""
    n = mesh.n_dofs
    z = mesh.end_zones
    if z is None:
        return sp.csr_matrix((n, n))
    joints = mesh.nodes[:mesh.n_joints]
    lam = rotations(joints[mesh.struts[:, 0]], joints[mesh.struts[:, 1]])
    rows, cols, vals = [], [], []
    for s, g in enumerate(mesh.strut_groups):
        if group is not None and g != group:
            continue
        for end, sign in ((0, 1.0), (1, -1.0)):
            if z[s, end] <= 0:
                continue
            T6 = _transform(lam[s:s + 1], n_nodes=1)[0]
            Mg = T6.T @ zone_mass_local(z[s, end], sections[g], theory, sign=sign) @ T6
            dofs = 6 * mesh.struts[s, end] + np.arange(6)
            rows.append(np.repeat(dofs, 6))
            cols.append(np.tile(dofs, 6))
            vals.append(Mg.ravel())
    if not vals:
        return sp.csr_matrix((n, n))
    return sp.csr_matrix((np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))), shape=(n, n))


def _element_dofs(elements: np.ndarray) -> np.ndarray:
    return (6 * elements[:, :, None] + np.arange(6)[None, None, :]).reshape(len(elements), 12)


def assemble(mesh: FrameMesh, sections: Mapping[str, Section], *, theory: str = "timoshenko") -> Assembled:
    """Assemble the sparse stiffness and consistent mass matrices of ``mesh``.

    The rigid node zones of ``mesh.end_zones`` (if any) add their rigid-body mass on the joints.
    """
    K, M, egroups = global_element_matrices(mesh, sections, theory)
    dofs = _element_dofs(mesh.elements)
    rows = np.repeat(dofs, 12, axis=1)
    cols = np.tile(dofs, (1, 12))
    n = mesh.n_dofs
    Kg, Mg = {}, {}
    for g in sorted(set(egroups.tolist())):
        sel = egroups == g
        Kg[g] = sp.csr_matrix((K[sel].ravel(), (rows[sel].ravel(), cols[sel].ravel())), shape=(n, n))
        Mg[g] = sp.csr_matrix((M[sel].ravel(), (rows[sel].ravel(), cols[sel].ravel())), shape=(n, n))
        if mesh.end_zones is not None:
            Mg[g] = (Mg[g] + zone_mass_matrix(mesh, sections, theory, group=g)).tocsr()
    return Assembled(K=sum(Kg.values()).tocsr(), M=sum(Mg.values()).tocsr(), K_by_group=Kg, M_by_group=Mg)


def used_dofs(mesh: FrameMesh) -> np.ndarray:
    """DOF indices of nodes that belong to at least one element (free-standing joints dropped)."""
    used = np.zeros(mesh.nodes.shape[0], bool)
    used[mesh.elements.ravel()] = True
    return (6 * np.flatnonzero(used)[:, None] + np.arange(6)).ravel()


# --------------------------------------------------------------------------------------------
# eigen and static solvers
# --------------------------------------------------------------------------------------------
def lowest_modes(K, M, n_modes: int, *, hermitian_dense_limit: int = 1200, shift: float | None = None):
    """Lowest ``n_modes`` eigenpairs of K x = ω² M x (ω² ascending, clipped at 0).

    Dense LAPACK below ``hermitian_dense_limit`` DOFs; otherwise ARPACK shift-invert with a small
    negative shift, which keeps the factorisation regular when there are zero (rigid or Γ-point)
    modes.
    """
    n = K.shape[0]
    k = min(n_modes, n)
    if n <= hermitian_dense_limit:
        Kd = K.toarray() if sp.issparse(K) else np.asarray(K)
        Md = M.toarray() if sp.issparse(M) else np.asarray(M)
        w, v = sla.eigh(Kd, Md, subset_by_index=[0, k - 1])
    else:
        if shift is None:
            diag = np.abs(K.diagonal()).mean() / max(np.abs(M.diagonal()).mean(), 1e-300)
            shift = -1e-4 * diag
        k = min(k, n - 2)
        w, v = spla.eigsh(K, k=k, M=M, sigma=shift, which="LM")
        order = np.argsort(w.real)
        w, v = w[order].real, v[:, order]
    return np.clip(np.real(w), 0.0, None), v


def _raise_if_mechanism(w2: np.ndarray, *, expected_zero: int, scale: float, where: str):
    zero = int(np.sum(w2 <= _ZERO_TOL * scale))
    if zero > expected_zero:
        raise ModelError("the frame is a mechanism: it has more zero-frequency modes than rigid-body motions",
                         input_name=where, expected=f"{expected_zero} zero-frequency modes",
                         got=f"{zero}",
                         hint="Check that every strut is connected and that fixed nodes restrain the frame")


def _frequency_scale(K, M) -> float:
    kd = np.abs(K.diagonal())
    md = np.abs(M.diagonal())
    return float(np.median(kd[kd > 0]) / max(np.median(md[md > 0]), 1e-300))


# --------------------------------------------------------------------------------------------
# public: a model, its modes, a static solve
# --------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class FrameModel:
    """A meshed and assembled frame (SI floats inside)."""

    mesh: FrameMesh
    sections: dict[str, Section]
    matrices: Assembled
    theory: str

    @property
    def n_dofs(self) -> int:
        """Degrees of freedom of the assembled model (six per node)."""
        return self.mesh.n_dofs


def _check_theory(theory: str) -> str:
    if theory not in THEORIES:
        raise InputError("unknown beam theory", input_name="theory",
                         expected=" or ".join(map(repr, THEORIES)), got=repr(theory))
    return theory


def build_frame(*, nodes: np.ndarray, struts: np.ndarray, groups: Sequence[str],
                sections: Mapping[str, Section], n_elements: int, theory: str = "timoshenko",
                end_zones: np.ndarray | None = None) -> FrameModel:
    """Mesh and assemble a frame from plain arrays (metres) and :class:`Section` objects.

    ``end_zones`` (n_struts, 2), m: rigid node zones at the strut ends (None: none).
    """
    mesh = mesh_frame(nodes=nodes, struts=struts, groups=groups, n_elements=n_elements, end_zones=end_zones)
    return FrameModel(mesh=mesh, sections=dict(sections), matrices=assemble(mesh, sections, theory=theory),
                      theory=_check_theory(theory))


def frame_model(cell: Any, *, materials: Mapping[str, Any], n_elements: int = 8,
                theory: str = "timoshenko", node_zones: str = "none") -> FrameModel:
    """Mesh and assemble ``cell`` (duck-typed: ``.nodes``, ``.struts``, ``.groups``, ``.diameters``).

    ``node_zones="rigid"`` gives the lattice struts rigid zones at the nodes of the free-standing
    frame (:func:`node_zone_lengths` on the cell's own joints).
    """
    _check_theory(theory)
    nodes, struts, groups = cell_geometry(cell)
    sections = sections_for(cell, materials)
    zones = end_zones_for(node_zones, nodes=nodes, struts=struts, groups=groups, sections=sections)
    return build_frame(nodes=nodes, struts=struts, groups=groups, sections=sections,
                       n_elements=n_elements, theory=theory, end_zones=zones)


def _free_dofs(model: FrameModel, fixed: Sequence[int]) -> np.ndarray:
    fixed = np.asarray(list(fixed), int)
    n_j = model.mesh.n_joints
    if fixed.size and (fixed.min() < 0 or fixed.max() >= n_j):
        raise InputError("a fixed node does not exist", input_name="fixed",
                         expected=f"node indices 0..{n_j - 1}", got=repr(fixed.tolist()))
    dofs = used_dofs(model.mesh)
    fixed_dofs = (6 * fixed[:, None] + np.arange(6)).ravel()
    return np.setdiff1d(dofs, fixed_dofs)


@dataclass(frozen=True, kw_only=True)
class FrameModes(CalcResult):
    """Result of :func:`frame_modes`; ``value``: natural frequencies (Hz), lowest first."""

    shapes: np.ndarray
    n_dofs: int
    n_elements: int
    theory: str
    model: FrameModel


def frame_modes(cell: Any, *, materials: Mapping[str, Any], fixed: Sequence[int] = (), n_elements: int = 8,
                n_modes: int = 10, theory: str = "timoshenko", id_prefix: str = "frame",
                node_zones: str = "none") -> FrameModes:
    """Natural frequencies of ``cell`` taken as a free-standing frame (no periodicity).

    Parameters
    ----------
    cell:
        A cell from :mod:`latticecalc.physics.cells` (``.nodes`` [length] N×3, ``.struts`` M×2,
        ``.groups`` per strut, ``.diameters`` group -> [length]).
    materials:
        Group name -> material (``youngs_modulus`` [pressure], ``poissons_ratio`` [-],
        ``density`` [density]).
    fixed:
        Indices of nodes fixed in all six DOFs; empty for a free-free frame (six zero modes).
    n_elements:
        Elements per strut, >= 1.
    n_modes:
        Number of frequencies returned (rigid-body zeros included for a free frame).
    theory:
        ``"timoshenko"`` (shear deformation and rotary inertia) or ``"euler-bernoulli"``.
    id_prefix:
        Prefix of the step ids.
    node_zones:
        ``"none"`` (struts node to node) or ``"rigid"`` (rigid zones at the nodes of the lattice
        struts, see :func:`node_zone_lengths`).

    Returns
    -------
    FrameModes
        ``.value`` natural frequencies [Hz], ascending; ``.shapes`` mode shapes on all DOFs
        (columns, zero at fixed DOFs).
    """
    if isinstance(n_modes, bool) or not isinstance(n_modes, (int, np.integer)) or n_modes < 1:
        raise InputError("number of modes must be a whole number >= 1", input_name="n_modes",
                         expected="an integer >= 1", got=repr(n_modes))
    model = frame_model(cell, materials=materials, n_elements=n_elements, theory=theory, node_zones=node_zones)
    free = _free_dofs(model, fixed)
    K = model.matrices.K[free][:, free]
    M = model.matrices.M[free][:, free]
    w2, v = lowest_modes(K, M, int(n_modes))
    _raise_if_mechanism(w2, expected_zero=0 if len(fixed) else 6, scale=_frequency_scale(K, M), where="cell")
    shapes = np.zeros((model.n_dofs, v.shape[1]), dtype=v.dtype)
    shapes[free] = v
    f = Q_(np.sqrt(w2) / (2 * np.pi), "Hz")
    steps = (
        quantity_step(id=f"{id_prefix}.dofs", description="Degrees of freedom of the frame model",
                      value=Q_(len(free), ""), method=f"{n_elements} {theory} beam elements per strut, "
                      "6 DOF per node, fixed and unconnected nodes removed"
                      + ("; rigid node zones on the lattice struts" if node_zones == "rigid" else ""),
                      source=REDDY_1997, sig=6),
        quantity_step(id=f"{id_prefix}.f-lowest", description="Lowest non-zero natural frequency",
                      value=f[f.magnitude > 1e-6 * max(f.magnitude.max(), 1e-300)][:1].sum()
                      if np.any(f.magnitude > 0) else Q_(0.0, "Hz"),
                      unit="Hz", method="FE modal analysis, consistent mass", source=REDDY_1997),
    )
    return FrameModes(value=f, steps=steps, shapes=shapes, n_dofs=len(free), n_elements=model.mesh.n_elements,
                      theory=theory, model=model, title="Natural frequencies of the free-standing cell frame")


def static_solve(model: FrameModel, *, fixed_dofs: np.ndarray, loads: np.ndarray) -> np.ndarray:
    """Displacements (m, rad) on all DOFs for ``loads`` (N, N·m, length n_dofs), fixed DOFs zero.

    Raises ModelError when the stiffness of the free DOFs is singular (a mechanism).
    """
    n = model.n_dofs
    free = np.setdiff1d(used_dofs(model.mesh), np.asarray(fixed_dofs, int))
    K = model.matrices.K[free][:, free].tocsc()
    f = np.asarray(loads, float)[free]
    scale = np.abs(K.diagonal()).max()
    tol = 1e-6 * max(np.abs(loads).max(), 1e-30) + 1e-12 * scale
    u_free = None
    try:
        # symmetric ordering with diagonal pivots: a fraction of the fill (and time) of the default
        lu = spla.splu(K, permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0, options={"SymmetricMode": True})
        u_free = lu.solve(f)
        if not (np.all(np.isfinite(u_free)) and np.abs(K @ u_free - f).max() <= tol):
            u_free = None
    except RuntimeError:
        u_free = None
    if u_free is None:
        try:
            u_free = spla.splu(K).solve(f)
        except RuntimeError as exc:
            raise ModelError("the frame is a mechanism: its stiffness matrix is singular", input_name="fixed",
                             expected="supports that stop every rigid-body motion", got=str(exc)) from None
    resid = np.abs(K @ u_free - f).max()
    if not np.all(np.isfinite(u_free)) or resid > tol:
        raise ModelError("the frame is a mechanism: the static solve did not converge", input_name="fixed",
                         expected="supports that stop every rigid-body motion", got=f"residual {resid:.3g}")
    u = np.zeros(n)
    u[free] = u_free
    return u


# --------------------------------------------------------------------------------------------
# strut-level Craig–Bampton reduction
# --------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class StrutReduction:
    """Craig–Bampton reduction of each strut to its two end nodes plus fixed–fixed modes.

    Arrays over struts ``s`` (global axes): ``K_bb``, ``M_bb`` (s, 12, 12) for the end DOFs,
    ``C`` (s, m, 12) the mass coupling of the modal coordinates to the end DOFs,
    ``omega2`` (s, m) the fixed–fixed modal stiffnesses (modes mass-normalised), and the
    recovery ``psi`` (s, ni, 12), ``phi`` (s, ni, m) of the interior DOFs.
    """

    K_bb: np.ndarray
    M_bb: np.ndarray
    C: np.ndarray
    omega2: np.ndarray
    psi: np.ndarray
    phi: np.ndarray
    struts: np.ndarray
    groups: tuple[str, ...]
    n_modes: int


def check_point_masses(point_masses: Mapping[str, Any] | None, n_elements: int) -> dict[str, tuple[float, float]]:
    """Validate ``{group: (mass kg, rotary inertia kg·m²)}`` of masses at strut mid-span (SI floats).

    A mass sits on the strut's middle node, so the strut needs an even number of elements.
    """
    out: dict[str, tuple[float, float]] = {}
    for g, pm in (point_masses or {}).items():
        mass, inertia = (float(pm[0]), float(pm[1]))
        if not (np.isfinite(mass) and np.isfinite(inertia) and mass >= 0 and inertia >= 0):
            raise InputError("an added strut mass must be finite and not negative", input_name=f"point_masses[{g!r}]",
                             expected="mass >= 0 kg, rotary inertia >= 0 kg·m²", got=f"{mass}, {inertia}")
        if mass > 0 and n_elements % 2:
            raise InputError("a mass at mid-span needs an even number of elements per strut",
                             input_name="n_elements", expected="an even integer", got=str(n_elements))
        if mass > 0:
            out[str(g)] = (mass, inertia)
    return out


def cell_point_masses(cell: Any) -> dict[str, tuple[float, float]]:
    """A cell's added strut masses as SI floats, {group: (kg, kg·m²)} (empty when it has none)."""
    return {g: (float(m.to("kg").m), float(j.to("kg*m^2").m))
            for g, (m, j) in getattr(cell, "point_masses", {}).items()}


def point_mass_matrix(mesh: FrameMesh, point_masses: Mapping[str, Any] | None) -> sp.csr_matrix:
    """Lumped masses at strut mid-span, on all DOFs of ``mesh``.

    Mass on the translations and rotary inertia on the rotations of the middle node of each strut of
    a group listed in ``point_masses`` ({group: (kg, kg·m²)}).
    """
    pm = check_point_masses(point_masses, mesh.n_elements)
    diag = np.zeros(mesh.n_dofs)
    half = mesh.n_elements // 2
    for s, g in enumerate(mesh.strut_groups):
        if g in pm:
            node = mesh.strut_nodes(s)[half]
            diag[6 * node:6 * node + 3] += pm[g][0]
            diag[6 * node + 3:6 * node + 6] += pm[g][1]
    return sp.diags(diag).tocsr()


#: Relative gap in ω² below which two strut modes count as one repeated frequency (a round strut bends
#: alike in its two planes).
REPEATED_MODE_RTOL = 1e-6


def closed_mode_count(eigenvalues: Sequence[np.ndarray], m: int, rtol: float = REPEATED_MODE_RTOL) -> int:
    """The smallest count ≥ ``m`` that splits no repeated eigenvalue of any of the ascending ``eigenvalues``.

    Within a repeated eigenvalue the eigensolver's vectors are any basis of the pair's plane; keeping one
    of the pair would keep an arbitrary direction, and the reduced model would change with the last bit
    of its inputs.  The whole pair is kept instead.
    """
    cap = max((len(w) for w in eigenvalues), default=0)
    m = min(m, cap)
    while 0 < m < cap and any(m < len(w) and w[m] - w[m - 1] <= rtol * abs(w[m]) for w in eigenvalues):
        m += 1
    return m


def reduce_struts(*, nodes: np.ndarray, struts: np.ndarray, groups: Sequence[str],
                  sections: Mapping[str, Section], n_elements: int, n_modes: int,
                  theory: str = "timoshenko", point_masses: Mapping[str, Any] | None = None,
                  end_zones: np.ndarray | None = None) -> StrutReduction:
    """Reduce every strut to its end nodes and ``n_modes`` fixed-interface modes.

    Struts of equal length, section, added mass and node zones share one reduction in local axes,
    rotated to each strut.
    ``n_modes`` is capped at the strut's interior DOFs (6 (n − 1)); with all of them kept the
    reduction is exact.  It is raised when the last kept mode would split a repeated frequency
    (:func:`closed_mode_count`); the result's ``n_modes`` is the count kept.
    ``point_masses`` ({group: (mass kg, rotary inertia kg·m²)}) puts a lumped mass on the middle node
    of every strut of that group.  ``end_zones`` (n_struts, 2), m: rigid node zones; the flexible
    length between them is meshed and reduced, its end DOFs are tied to the joints by the rigid
    offsets (K_bb ← Hᵀ K_bb H, C ← C H, ψ ← ψ H) and each zone's rigid-body mass is added on its joint.
    """
    n = check_n_elements(n_elements)
    pm = check_point_masses(point_masses, n)
    nodes = np.asarray(nodes, float)
    struts = np.asarray(struts, int)
    zones = check_end_zones(end_zones, nodes=nodes, struts=struts)
    p1, p2 = nodes[struts[:, 0]], nodes[struts[:, 1]]
    L = np.linalg.norm(p2 - p1, axis=1)
    ni = 6 * (n - 1)
    m = int(min(max(n_modes, 0), ni))
    ns = struts.shape[0]
    keys: dict[tuple, list[int]] = {}
    scale = max(L.max(), 1e-300)
    for s in range(ns):
        zkey = () if zones is None else (round(zones[s, 0] / scale, 10), round(zones[s, 1] / scale, 10))
        # struts of equal length, section and added mass share one reduction, whatever their group is
        # called (a graded panel's identical zones are then reduced exactly as the uniform panel)
        keys.setdefault((round(L[s] / scale, 10), sections[groups[s]], pm.get(groups[s]), *zkey), []).append(s)
    bnd = np.r_[0:6, 6 * n:6 * n + 6]
    inn = np.arange(6, 6 * n)
    kinds = []
    for members in keys.values():
        s0 = members[0]
        g = groups[s0]
        z1, z2 = (0.0, 0.0) if zones is None else (zones[s0, 0], zones[s0, 1])
        Le = (L[s0] - z1 - z2) / n
        Ke, Me = local_element_matrices(np.full(n, Le), [sections[g]] * n, theory)
        N = 6 * (n + 1)
        Ks = np.zeros((N, N))
        Ms = np.zeros((N, N))
        for e in range(n):
            sl = slice(6 * e, 6 * e + 12)
            Ks[sl, sl] += Ke[e]
            Ms[sl, sl] += Me[e]
        if g in pm:
            mid = 6 * (n // 2)
            Ms[mid:mid + 3, mid:mid + 3] += pm[g][0] * np.eye(3)
            Ms[mid + 3:mid + 6, mid + 3:mid + 6] += pm[g][1] * np.eye(3)
        if n > 1:
            Kii = Ks[np.ix_(inn, inn)]
            psi = -np.linalg.solve(Kii, Ks[np.ix_(inn, bnd)])
            w2_all, phi_all = sla.eigh(Kii, Ms[np.ix_(inn, inn)])
        else:
            psi = np.zeros((0, 12))
            w2_all, phi_all = np.zeros(0), np.zeros((0, 0))
        kinds.append((members, g, z1, z2, Ks, Ms, psi, w2_all, phi_all))
    m = closed_mode_count([w2_all for *_, w2_all, _phi_all in kinds], m)
    Kbb_l = np.zeros((ns, 12, 12))
    Mbb_l = np.zeros((ns, 12, 12))
    C_l = np.zeros((ns, m, 12))
    om2 = np.zeros((ns, m))
    psi_l = np.zeros((ns, ni, 12))
    phi_l = np.zeros((ns, ni, m))
    for members, g, z1, z2, Ks, Ms, psi, w2_all, phi_all in kinds:
        w2, phi = w2_all[:m], phi_all[:, :m]
        Tb = np.vstack([np.eye(12), psi])          # ordering: bnd then inn
        order = np.r_[bnd, inn]
        Ko = Ks[np.ix_(order, order)]
        Mo = Ms[np.ix_(order, order)]
        Kbb = Tb.T @ Ko @ Tb
        Mbb = Tb.T @ Mo @ Tb
        C = phi.T @ (Mo[12:, :12] + Mo[12:, 12:] @ psi) if n > 1 else np.zeros((0, 12))
        if z1 > 0 or z2 > 0:
            # the flexible ends are z1, z2 inside the joints along local x: rigid offsets and zone masses
            H = rigid_offset_matrix([[z1, 0.0, 0.0]], [[-z2, 0.0, 0.0]])[0]
            Kbb = H.T @ Kbb @ H
            Mbb = H.T @ Mbb @ H
            for end, zl, sign in ((0, z1, 1.0), (1, z2, -1.0)):
                if zl > 0:
                    Mbb[6 * end:6 * end + 6, 6 * end:6 * end + 6] += zone_mass_local(zl, sections[g], theory,
                                                                                     sign=sign)
            C = C @ H
            psi = psi @ H
        idx = np.asarray(members)
        Kbb_l[idx] = 0.5 * (Kbb + Kbb.T)
        Mbb_l[idx] = 0.5 * (Mbb + Mbb.T)
        if m:
            C_l[idx] = C
            om2[idx] = w2
            phi_l[idx] = phi
        psi_l[idx] = psi
    lam = rotations(p1, p2)
    T = _transform(lam)
    Tt = np.swapaxes(T, 1, 2)
    K_bb = Tt @ Kbb_l @ T
    M_bb = Tt @ Mbb_l @ T
    C = C_l @ T
    # interior displacement in global axes: Ti^T (psi T u_b + phi q), Ti block-diagonal in Λ
    psi_g = _rotate_rows(lam, psi_l @ T) if n > 1 else psi_l
    phi_g = _rotate_rows(lam, phi_l) if n > 1 else phi_l
    return StrutReduction(K_bb=K_bb, M_bb=M_bb, C=C, omega2=om2, psi=psi_g, phi=phi_g, struts=struts,
                          groups=tuple(groups), n_modes=m)


def reduced_matrices(red: StrutReduction, *, n_joints: int, group: str | None = None,
                     stiffness_factor: Mapping[str, complex] | None = None):
    """Assemble the reduced stiffness and mass (joint DOFs first, then strut modal DOFs), dense.

    ``group`` keeps only the struts of one group (for energy fractions); ``stiffness_factor``
    multiplies each group's stiffness (``1 + iη`` for structural damping).
    """
    ns, m = red.omega2.shape
    nj = 6 * n_joints
    n = nj + ns * m
    dt = complex if stiffness_factor else float
    K = np.zeros((n, n), dtype=dt)
    M = np.zeros((n, n))
    dofs = _element_dofs(red.struts)
    for s in range(ns):
        g = red.groups[s]
        if group is not None and g != group:
            continue
        f = stiffness_factor.get(g, 1.0) if stiffness_factor else 1.0
        d = dofs[s]
        K[np.ix_(d, d)] += f * red.K_bb[s]
        M[np.ix_(d, d)] += red.M_bb[s]
        if m:
            q = nj + s * m + np.arange(m)
            K[q, q] += f * red.omega2[s]
            M[q, q] += 1.0
            M[np.ix_(q, d)] += red.C[s]
            M[np.ix_(d, q)] += red.C[s].T
    return K, M
