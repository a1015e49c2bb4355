"""Self-weight of a lattice panel: shortening, frame stress, buckling and Greenhill's height.

The panel stands on its base with its own weight acting down (axis z, ``cells_high`` cells).
Two load paths are assessed when the cell has a frame, one when it has not:

``lattice-alone``
    The lattice carries its own weight.  Its vertical modulus is the stretch-dominated octet
    value E* = ρ̄ E_s / 9 along ⟨100⟩ (pin-jointed, affine; Deshpande, Fleck & Ashby 2001), the
    simple-cubic lattice's vertical struts counted as posts (below), or for bending-dominated
    cells the scaling E* ≈ ρ̄² E_s (Gibson & Ashby 1997, from memory).
``with-frame``
    Frame and lattice share the weight of both in proportion to their stiffness.  The load paths
    of the frame are counted in the finite panel, not per cell of an infinite lattice: a panel of
    n_x × n_y cells in plan (wide × deep) has n_p = (n_x + 1)(n_y + 1) vertical frame posts at every
    level (a 1 × 1 panel has its four corner posts), so the frame's vertical modulus smeared over
    the panel's plan is E*_f = n_p E_f A_f / (W D).  The weight is the finite panel's own (every
    strut as often as it occurs, outer faces in full, added masses included), smeared over its
    volume: ρ_p = m / (W D H).

For each path: shortening of a prismatic column under its own weight δ = ρ g H² / (2 E) (from
σ(z) = ρ g (H − z), derived; with the panel's smeared ρ_p and E*_f it is the mean settlement of the
posts' tops, m g H / (2 n_p E_f A_f) for the frame alone, also where the weight hangs on the level
joints: the full top level's weight makes up for the unloaded base level); the axial force and
stress in the most heavily loaded vertical frame member, the base stress over its tributary plan
area (a × a for an interior post, a × a/2 on the long side of a panel one cell wide or deep,
a/2 × a/2 for the corner posts of a 1 × 1 panel; conservative, as the smeared density spreads the
heavier perimeter evenly); Euler buckling of that member, P_cr = π² E I / (K a)², and of the most
heavily loaded lattice strut, with effective-length factors K from AISC 360 Commentary Table C-A-7.1 (the recommended
design values by default, the theoretical values on request); and Greenhill's critical height of
the panel as a free-standing heavy column fixed at its base, L_cr = (c E I / q)^{1/3} with
c = (9/4) j², j the first zero of J₋₁/₃ (computed here with scipy, c = 7.8373).

The lattice strut forces follow the affine uniaxial-strain distribution: a strut of section A and
vertical direction cosine t_z carries N = σ a³ A t_z² / Σ_i w_i A_i l_i t_z,i⁴, which balances the
vertical stress σ exactly (for the octet, Σ gives C₁₁ = ρ̄ E_s / 6; derived).

A simple-cubic lattice's vertical struts are posts like the frame's: their modulus is counted the
same way, E* = n_p E_s A / (W D) (ρ̄ E_s / 3 of the infinite lattice, one post per cell), with the
panel's own lattice weight.  Other lattices keep the
per-cell values of the infinite lattice (ρ ρ̄ and E*), whose ratio does not change when the
panel's outer-face struts add weight and stiffness alike.

Tubes: a group the cell gives a wall thickness has A = π(D² − d_i²)/4 and I = π(D⁴ − d_i⁴)/64
(Roark's Formulas, 7th ed., Table A.1, from memory) in the mass, the frame modulus, the stresses
and the Euler loads.

Elastomers creep under the permanent self-weight: the long-term modulus (material
``long_term_factor``) is used by default and the sheet carries a caution.

A graded panel (:func:`graded_panel_self_weight`) stacks its zones bottom first, each with its own
cell's weight, moduli and strut Euler load, as a bar in prismatic segments (Gere & Goodno 2013, §2.3,
from memory): each zone carries the zones above it, and its most heavily loaded strut is checked at the
zone's bottom.  Greenhill's height of the stepped column is bounded by a uniform one (the softest zone's
modulus, the heaviest zone's weight).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from functools import cache
from typing import Any

import numpy as np
import pint
import sympy as sp

from latticecalc.errors import InputError, ModelError
from latticecalc.physics.beams import (
    AREA_CIRCLE,
    AREA_TUBE,
    INNER_DIAMETER,
    SECOND_MOMENT_CIRCLE,
    SECOND_MOMENT_TUBE,
    SECTION_SOURCE,
    TUBE_SECTION_SOURCE,
    check_wall_thickness,
)
from latticecalc.physics.cells import Cell
from latticecalc.physics.density import (
    ADDED_MASS,
    PANEL_STRUTS,
    RelativeDensity,
    _materials_for,
    _positive_int,
    panel_strut_counts,
    panel_volumes,
    relative_density,
    strut_areas,
)
from latticecalc.physics.lazy_scipy import jv
from latticecalc.physics.roots import find_root
from latticecalc.sheet import CalcResult, Formula, Source, check, evaluate, quantity_step
from latticecalc.units import Q_, check_dimension, check_positive, format_quantity

GRAVITY = Q_(9.80665, "m/s^2")

AISC_360_C_A_7_1 = Source(author="AISC", title="ANSI/AISC 360-22 Specification for Structural Steel Buildings, "
                          "Commentary", year=2022, locator="Table C-A-7.1, approximate values of K")
GREENHILL_1881 = Source(author="Greenhill, A. G.", title="Determination of the greatest height consistent with "
                        "stability that a vertical pole or mast can be made, Proc. Camb. Phil. Soc. 4",
                        year=1881, locator="pp. 65-73; see also Timoshenko & Gere, Theory of Elastic Stability, "
                        "§2.13 (from memory)")
EULER_SOURCE = Source(author="Timoshenko, S. P. & Gere, J. M.", title="Theory of Elastic Stability, 2nd ed.",
                      year=1961, locator="§2.1-2.3, P_cr = π² E I / (K L)²", tag="from memory")
DFA_2001 = Source(author="Deshpande, V. S., Fleck, N. A. & Ashby, M. F.",
                  title="Effective properties of the octet-truss lattice material, J. Mech. Phys. Solids 49",
                  year=2001, locator="pin-jointed affine moduli, E₁₀₀ = ρ̄ E_s / 9 (from memory)")
GIBSON_ASHBY_1997 = Source(author="Gibson, L. J. & Ashby, M. F.", title="Cellular Solids, 2nd ed.", year=1997,
                           locator="ch. 5, bending-dominated open cells E*/E_s ≈ ρ̄², constant ≈ 1",
                           tag="from memory")
DERIVED = Source(author="derived", title="statics of a prismatic column under its own weight", tag="derived")
DERIVED_AFFINE = Source(author="derived", title="affine uniaxial strain of pin-jointed struts, virial stress",
                        tag="derived")
DERIVED_POSTS = Source(author="derived", title="load paths of the finite panel: one vertical post on every "
                       "cube-edge line, (n_x + 1)(n_y + 1) per level, each carrying its tributary plan area",
                       tag="derived")
GERE_GOODNO_2013 = Source(author="Gere, J. M. & Goodno, B. J.", title="Mechanics of Materials, 8th ed.", year=2013,
                          locator="§2.3, changes in lengths under nonuniform conditions: a bar of prismatic "
                          "segments, δ = Σ ∫ N(z) dz / (E_i A_i), N(z) the weight below which z carries",
                          tag="from memory")
DERIVED_STEPPED_BOUND = Source(author="derived", title="bounding column of a stepped heavy column: no more bending "
                               "stiffness and no less weight at any height gives no higher critical load (energy "
                               "method: the Rayleigh quotient ∫ E I w''² dz / ∫ N w'² dz falls)", tag="derived")

#: AISC 360 Commentary Table C-A-7.1: end condition -> (case, theoretical K, recommended design K).
EFFECTIVE_LENGTH_FACTORS: Mapping[str, tuple[str, float, float]] = {
    "fixed-fixed": ("a", 0.5, 0.65),
    "fixed-pinned": ("b", 0.7, 0.80),
    "fixed-guided": ("c", 1.0, 1.2),
    "pinned-pinned": ("d", 1.0, 1.0),
    "fixed-free": ("e", 2.0, 2.1),
    "pinned-guided": ("f", 2.0, 2.0),
}
K_VALUES = ("design", "theoretical")
CASES = ("lattice-alone", "with-frame")

# --- formulas (each rendered and evaluated once) -------------------------------------------------
_rho, _g, _H, _E, _I, _K, _L, _q, _c = sp.symbols("rho g H E I K L q c")
_rbar, _Es, _Ef, _Af, _a, _El, _Ec, _N, _A, _P = sp.symbols("rho_rel E_s E_f A_f a E_l E_c N A P_cr")
_S, _t2, _sig = sp.symbols("S t_z2 sigma")
_LATEX = dict(rho_rel=r"\bar{\rho}", E_s=r"E_s", E_f=r"E_f", A_f=r"A_f", E_l=r"E^*_l", E_c=r"E^*_c",
              P_cr=r"P_\mathrm{cr}", t_z2=r"t_z^2", delta=r"\delta", L_cr=r"L_\mathrm{cr}", n_b=r"n_b",
              sigma=r"\sigma", rho=r"\rho", E_star=r"E^*", E_fs=r"E^*_f", N_s=r"N_s", N_f=r"N_f",
              rho_p=r"\rho_p", sigma_f=r"\sigma_f", n_p=r"n_p", n_x=r"n_x", n_y=r"n_y")

SHORTENING = Formula("delta", _rho * _g * _H**2 / (2 * _E), _LATEX)
OCTET_MODULUS = Formula("E_star", _rbar * _Es / 9, _LATEX)
AXIAL_MODULUS = Formula("E_star", _rbar * _Es / 3, _LATEX)
BENDING_MODULUS = Formula("E_star", _rbar**2 * _Es, _LATEX)
_np, _nx, _ny, _W, _D, _m = sp.symbols("n_p n_x n_y W D m")
#: Vertical posts of a panel n_x × n_y cells in plan: one on every cube edge line, shared posts once.
POSTS = Formula("n_p", (_nx + 1) * (_ny + 1), _LATEX)
#: The posts' axial stiffness smeared over the panel's plan W × D.
FRAME_MODULUS = Formula("E_fs", _np * _Ef * _Af / (_W * _D), _LATEX)
POST_LATTICE_MODULUS = Formula("E_star", _np * _Es * _A / (_W * _D), _LATEX)
#: The finite panel's weight smeared over its volume.
PANEL_DENSITY = Formula("rho_p", _m / (_W * _D * _H), _LATEX)
#: Masses added at mid-span of the lattice struts, smeared per cell of the infinite lattice.
ADDED_DENSITY = Formula("rho_la", sp.Symbol("rho_l") + sp.Symbol("n_c") * sp.Symbol("M_a") / _a**3,
                        {**_LATEX, "rho_la": r"\rho_p", "rho_l": r"\rho_l", "n_c": r"n_\mathrm{c}",
                         "M_a": r"M_\mathrm{a}"})
COMBINED_MODULUS = Formula("E_c", _El + sp.Symbol("E_fs"), _LATEX)
SMEARED_DENSITY = Formula("rho_p", _rho * _rbar, _LATEX)
BASE_STRESS = Formula("sigma", _rho * _g * _H, _LATEX)
FRAME_FORCE = Formula("N_f", _sig * sp.Symbol("A_t") * sp.Symbol("E_fs") / _Ec, {**_LATEX, "A_t": r"A_t"})
LATTICE_STRESS_SHARE = Formula("sigma_l", _sig * _El / _Ec, {**_LATEX, "sigma_l": r"\sigma_l"})
LOCAL_LATTICE_STRESS = Formula("sigma_loc", _rho * _g * _a, {**_LATEX, "sigma_loc": r"\sigma_\mathrm{loc}"})
FRAME_STRESS = Formula("sigma_f", sp.Symbol("N_f") / _A, _LATEX)
STRUT_FORCE = Formula("N_s", _sig * _a**3 * _A * _t2 / _S, _LATEX)
EULER_LOAD = Formula("P_cr", sp.pi**2 * _E * _I / (_K * _L) ** 2, _LATEX)
SAFETY_FACTOR = Formula("n_b", _P / _N, _LATEX)
GREENHILL_HEIGHT = Formula("L_cr", (_c * _E * _I / _q) ** sp.Rational(1, 3), _LATEX)
PANEL_SECOND_MOMENT = Formula("I", sp.Symbol("W") * sp.Symbol("D") ** 3 / 12)
WEIGHT_PER_LENGTH = Formula("q", _rho * _g * sp.Symbol("W") * sp.Symbol("D"))

# --- a graded panel: zones stacked bottom first (Gere & Goodno, §2.3, bars in segments) -------------
_st, _h = sp.symbols("sigma_t h")
_ZONE_LATEX = {**_LATEX, "sigma_t": r"\sigma_\mathrm{top}", "sigma_b": r"\sigma_\mathrm{bot}", "delta_z": r"\delta_z"}
#: Smeared vertical stress at the bottom of a zone h high: the stress at its top (the zones above) and its own weight.
ZONE_BOTTOM_STRESS = Formula("sigma_b", _st + _rho * _g * _h, _ZONE_LATEX)
#: Shortening of one zone: ∫₀ʰ (σ_top + ρ g (h − z)) / E dz.
ZONE_SHORTENING = Formula("delta_z", (_st * _h + _rho * _g * _h**2 / 2) / _E, _ZONE_LATEX)
#: A zone's mass with its share of the panel's bottom plane of struts, spread over the panel's height H as the
#: uniform panel's smeared density spreads it (exact for the weight hung on the joint levels; module docstring).
ZONE_MASS_WITH_BASE = Formula("m_z", sp.Symbol("m_o") + sp.Symbol("m_0") * _h / _H,
                              {**_LATEX, "m_z": r"m_z", "m_o": r"m_\mathrm{own}", "m_0": r"m_0"})


@cache
def zone_sum(target: str, term: str, n: int) -> Formula:
    """``target = term_1 + ... + term_n``: a total over the n zones of a graded panel, as a formula.

    The terms' values are passed as ``<term>_1`` … ``<term>_n``; ``delta_z`` shows as δ_{z,1}, δ_{z,2}, ….
    """
    terms = sp.symbols(" ".join(f"{term}_{k}" for k in range(1, n + 1)), seq=True)
    base, _, sub = _ZONE_LATEX.get(term, term).partition("_")
    names = {t.name: f"{base}_{{{sub + ',' if sub else ''}{k}}}" for k, t in enumerate(terms, start=1)}
    return Formula(target, sp.Add(*terms), {**_ZONE_LATEX, **names})


# --- published constants, computed ---------------------------------------------------------------
@cache
def bessel_zero_minus_third() -> float:
    """First positive zero j of the Bessel function J₋₁/₃ (≈ 1.866350859): scipy.special.jv, Brent's method."""
    return float(find_root(lambda x: jv(-1.0 / 3.0, x), 1.0, 3.0, xtol=1e-15, rtol=4 * np.finfo(float).eps))


@cache
def greenhill_coefficient() -> float:
    """Greenhill's coefficient c = (9/4) j² ≈ 7.8373 in L_cr = (c E I / q)^{1/3} (Greenhill 1881)."""
    return 9.0 / 4.0 * bessel_zero_minus_third() ** 2


@cache
def exact_fixed_pinned_factor() -> float:
    """Exact K of a fixed–pinned Euler column, π / x₁ with x₁ the first positive root of tan x = x."""
    root = find_root(lambda x: math.tan(x) - x, math.pi + 1e-6, 1.5 * math.pi - 1e-6, xtol=1e-15)
    return math.pi / root


def effective_length_factor(end_condition: str, *, k_value: str = "design") -> float:
    """Effective-length factor K from AISC 360 Commentary Table C-A-7.1.

    Parameters
    ----------
    end_condition:
        One of :data:`EFFECTIVE_LENGTH_FACTORS`: ``fixed-fixed``, ``fixed-pinned``, ``fixed-guided``
        (rotation fixed at both ends, one end free to translate), ``pinned-pinned``, ``fixed-free``,
        ``pinned-guided``.
    k_value:
        ``"design"`` (recommended design value when ideal conditions are approximated) or
        ``"theoretical"``.
    """
    if end_condition not in EFFECTIVE_LENGTH_FACTORS:
        raise InputError("unknown end condition", input_name="end_condition",
                         expected="one of " + ", ".join(EFFECTIVE_LENGTH_FACTORS), got=repr(end_condition))
    if k_value not in K_VALUES:
        raise InputError("unknown K value set", input_name="k_value", expected="'design' or 'theoretical'",
                         got=repr(k_value))
    _, theoretical, design = EFFECTIVE_LENGTH_FACTORS[end_condition]
    return design if k_value == "design" else theoretical


def _k_step(end_condition: str, k_value: str, *, id: str, what: str):
    case = EFFECTIVE_LENGTH_FACTORS.get(end_condition, ("?",))[0]
    k = effective_length_factor(end_condition, k_value=k_value)
    return quantity_step(id=id, description=f"Effective-length factor, {what} ({end_condition})",
                         value=Q_(k, ""), method=f"{k_value} value, case ({case})", source=AISC_360_C_A_7_1)


# --- small building blocks -------------------------------------------------------------------------
def _q(value: Any, *, name: str, dim: str) -> pint.Quantity:
    return check_positive(check_dimension(value, name=name, expected=dim), name=name)


def self_weight_shortening(*, density, height, youngs_modulus, id: str = "selfweight.shortening",
                           description: str = "Shortening of a prismatic column under its own weight"):
    """δ = ρ g H² / (2 E): shortening of a uniform column of height H standing under its own weight.

    Parameters
    ----------
    density:
        Mass density ρ (smeared over the panel for a lattice) [mass / length³].
    height:
        Column height H [length].
    youngs_modulus:
        Axial modulus E (effective modulus for a lattice) [pressure].
    id, description:
        Step id and description on the sheet.
    """
    rho = _q(density, name="density", dim="density")
    h = _q(height, name="height", dim="length")
    e = _q(youngs_modulus, name="youngs_modulus", dim="pressure")
    step = evaluate(SHORTENING, id=id, description=description, values={"rho": rho, "g": GRAVITY, "H": h, "E": e},
                    unit="mm", source=DERIVED)
    return CalcResult(value=step.result, steps=(step,), title="Self-weight shortening")


def euler_buckling_load(*, youngs_modulus, diameter, length, end_condition: str = "pinned-pinned",
                        k_value: str = "design", wall_thickness=None, id_prefix: str = "buckling") -> CalcResult:
    """Euler critical load P_cr = π² E I / (K L)² of a circular strut, solid or a tube.

    Parameters
    ----------
    youngs_modulus:
        E [pressure].
    diameter:
        Strut diameter [length] (outer diameter of a tube).
    wall_thickness:
        Wall thickness of a tube [length]; None or zero for a solid rod.
    length:
        Unbraced length L [length].
    end_condition, k_value:
        See :func:`effective_length_factor`.
    id_prefix:
        Prefix of the step ids.
    """
    e = _q(youngs_modulus, name="youngs_modulus", dim="pressure")
    d = _q(diameter, name="diameter", dim="length")
    length = _q(length, name="length", dim="length")
    k = _k_step(end_condition, k_value, id=f"{id_prefix}.k", what="strut")
    di = _inner_diameter_step(d, check_wall_thickness(wall_thickness, outer_diameter=d),
                              id=f"{id_prefix}.inner-diameter", what="strut")
    i = _second_moment_step(d, None if di is None else di.result, id=f"{id_prefix}.second-moment",
                            description="Second moment of area")
    p = evaluate(EULER_LOAD, id=f"{id_prefix}.p-cr", description="Euler critical load",
                 values={"E": e, "I": i.result, "K": k.result, "L": length}, unit="N", source=EULER_SOURCE)
    return CalcResult(value=p.result, steps=tuple(x for x in (k, di, i, p) if x is not None),
                      title="Euler buckling load")


def greenhill_height(*, youngs_modulus, second_moment, weight_per_length,
                     id: str = "selfweight.greenhill", note: str = "") -> CalcResult:
    """Greenhill's critical height of a heavy column, fixed base and free top: L_cr = (c E I / q)^{1/3}.

    Parameters
    ----------
    youngs_modulus:
        E [pressure].
    second_moment:
        Second moment of area I [length⁴].
    weight_per_length:
        Weight per unit height q = ρ g A [force / length].
    id:
        Step id of the height (the coefficient gets ``<id>-coefficient``).
    note:
        A remark printed under the height.
    """
    e = _q(youngs_modulus, name="youngs_modulus", dim="pressure")
    i = _q(second_moment, name="second_moment", dim="[length] ** 4")
    q = _q(weight_per_length, name="weight_per_length", dim="[mass] / [time] ** 2")
    c = quantity_step(id=f"{id}-coefficient", description="Greenhill's coefficient (9/4) j², j the first "
                      "zero of J₋₁/₃", value=Q_(greenhill_coefficient(), ""),
                      method=f"j = {bessel_zero_minus_third():.10f} found with scipy.special.jv and Brent's method",
                      source=GREENHILL_1881, sig=6)
    step = evaluate(GREENHILL_HEIGHT, id=id, description="Greenhill's critical self-weight height",
                    values={"c": c.result, "E": e, "I": i, "q": q}, unit="m", source=GREENHILL_1881,
                    note=note)
    return CalcResult(value=step.result, steps=(c, step), title="Greenhill's critical height")


# --- sections: solid rods or tubes ------------------------------------------------------------------
def _inner_diameter_step(diameter, wall_thickness, *, id: str, what: str):
    """The inner diameter d_i = D − 2t of a tube, as a step (None for a solid rod, t None)."""
    if wall_thickness is None:
        return None
    return evaluate(INNER_DIAMETER, id=id, description=f"Inner diameter of the {what} tube",
                    values={"D": diameter, "t": wall_thickness}, unit="mm", source=TUBE_SECTION_SOURCE)


def _area_step(diameter, inner, *, id: str, description: str):
    """π d²/4 of a rod, or π(D² − d_i²)/4 of a tube when ``inner`` (the d_i step's result) is given."""
    if inner is None:
        return evaluate(AREA_CIRCLE, id=id, description=description, values={"d": diameter}, unit="mm^2",
                        source=SECTION_SOURCE)
    return evaluate(AREA_TUBE, id=id, description=description + " (tube)", values={"D": diameter, "d_i": inner},
                    unit="mm^2", source=TUBE_SECTION_SOURCE)


def _second_moment_step(diameter, inner, *, id: str, description: str):
    """π d⁴/64 of a rod, or π(D⁴ − d_i⁴)/64 of a tube when ``inner`` is given."""
    if inner is None:
        return evaluate(SECOND_MOMENT_CIRCLE, id=id, description=description, values={"d": diameter},
                        unit="mm^4", source=SECTION_SOURCE)
    return evaluate(SECOND_MOMENT_TUBE, id=id, description=description + " (tube)",
                    values={"D": diameter, "d_i": inner}, unit="mm^4", source=TUBE_SECTION_SOURCE)


def _vertical_members(cell: Cell, group: str, counts: np.ndarray, height_cells: int) -> tuple[float, bool]:
    """Vertical members of ``group`` per level of the panel, and whether all lie on the cube's edge lines."""
    vec = cell.strut_vectors.magnitude
    lengths = np.linalg.norm(vec, axis=1)
    a = cell.cell_width.to("m").magnitude
    vertical = cell.group_mask(group) & (np.abs(vec[:, 2]) > (1 - 1e-9) * lengths)
    per_level = float((counts[vertical] * lengths[vertical]).sum() / (height_cells * a))
    x = cell.nodes.to("m").magnitude[cell.struts[vertical, 0]] / a
    on_edges = bool(np.all(np.isclose(x[:, :2], 0.0, atol=1e-9) | np.isclose(x[:, :2], 1.0, atol=1e-9)))
    return per_level, on_edges


def _posts_step(cell: Cell, group: str, *, nx: int, ny: int, nz: int, id: str):
    """The vertical posts of ``group`` per level of the finite panel, as a step (None if it has none)."""
    counts = panel_strut_counts(cell, cells_wide=nx, cells_high=nz, cells_deep=ny)
    n, on_edges = _vertical_members(cell, group, counts, nz)
    if n == 0:
        return None
    what = f"Vertical {group} members (load paths) per level of the {nx} × {ny}-cell panel (wide × deep)"
    if on_edges and np.isclose(n, (nx + 1) * (ny + 1)):
        return evaluate(POSTS, id=id, description=what + ": one on every cube-edge line, shared posts counted once",
                        values={"n_x": Q_(nx, ""), "n_y": Q_(ny, "")}, unit="", source=DERIVED_POSTS)
    return quantity_step(id=id, description=what, value=Q_(n, ""), unit="", source=PANEL_STRUTS,
                         method="vertical struts of the panel, each as often as it occurs, by length over the height")


def _tributary_area(a, nx: int, ny: int, *, id: str):
    """Plan area carried by the most heavily loaded post of a panel n_x × n_y cells in plan."""
    bx, by = (1.0 if nx >= 2 else 0.5), (1.0 if ny >= 2 else 0.5)
    where = {(1.0, 1.0): "an interior post (a × a)", (0.5, 0.5): "a corner post of a one-cell panel (a/2 × a/2)"}
    method = where.get((bx, by), "a post on the long side of a panel one cell wide or deep (a × a/2)")
    return quantity_step(id=id, description="Plan area carried by the most heavily loaded vertical frame member "
                         "(tributary area)", value=(bx * a) * (by * a), unit="mm^2", method=method,
                         source=DERIVED_POSTS,
                         note="Weight is spread evenly over the plan (smeared density): conservative for this "
                              "post, as the heavier perimeter members load the edge posts.")


# --- the panel -------------------------------------------------------------------------------------
@dataclass(frozen=True, kw_only=True)
class SelfWeight(CalcResult):
    """Result of :func:`panel_self_weight`; ``value`` is the governing shortening [mm].

    ``shortening``, ``effective_modulus``, ``strut_safety_factor`` and ``greenhill_height`` map each
    load case (``lattice-alone``, ``with-frame``) to its value; the frame fields are ``None``
    without a frame.
    """

    shortening: Mapping[str, pint.Quantity]
    effective_modulus: Mapping[str, pint.Quantity]
    strut_safety_factor: Mapping[str, pint.Quantity]
    greenhill_height: Mapping[str, pint.Quantity]
    frame_stress: pint.Quantity | None = None
    frame_safety_factor: pint.Quantity | None = None
    all_ok: bool = True


def _lattice_modulus(cell: Cell, rbar, e_s, *, id: str):
    if cell.kind == "octet":
        return evaluate(OCTET_MODULUS, id=id, description="Vertical modulus of the lattice, octet ⟨100⟩, "
                        "stretch-dominated (pin-jointed, affine)", values={"rho_rel": rbar, "E_s": e_s},
                        unit="MPa", source=DFA_2001)
    if cell.kind == "simple-cubic":
        return evaluate(AXIAL_MODULUS, id=id, description="Vertical modulus of the lattice, simple cubic "
                        "along a strut axis (a third of the struts carry the load)",
                        values={"rho_rel": rbar, "E_s": e_s}, unit="MPa", source=DERIVED_AFFINE)
    return evaluate(BENDING_MODULUS, id=id, description=f"Vertical modulus of the lattice, {cell.kind} "
                    f"cell ({cell.regime}), bending-dominated scaling", values={"rho_rel": rbar, "E_s": e_s},
                    unit="MPa", source=GIBSON_ASHBY_1997,
                    note="Scaling estimate with a constant of about 1; confirm with the frame FE model.")


def _affine_sums(cell: Cell) -> tuple[float, float, float, int]:
    """Σ w A l t_z⁴ [m³] over the lattice, and A, t_z² and index of the most loaded lattice strut."""
    mask = cell.group_mask("lattice")
    area = float(strut_areas(cell)[mask][0])  # one section per group (a tube's annulus)
    vec = cell.strut_vectors.magnitude
    lengths = np.linalg.norm(vec, axis=1)
    tz2 = (vec[:, 2] / lengths) ** 2
    s = float((cell.weights[mask] * area * lengths[mask] * tz2[mask] ** 2).sum())
    idx = np.flatnonzero(mask)[int(np.argmax(np.where(mask, tz2, -1)[mask]))]
    return s, area, float(tz2[idx]), int(idx)


def _checked_panel(cell: Any, materials: Any, cells_wide: Any, cells_high: Any, cells_deep: Any,
                   deflection_limit: Any, buckling_safety_factor: Any, strut_end_condition: str,
                   frame_end_condition: str, k_value: str) -> tuple[dict, int, int, int, pint.Quantity]:
    """The arguments every self-weight check takes, checked: (materials by group, n_x, n_z, n_y, the limit).

    An :class:`InputError` names the first bad one.
    """
    if not isinstance(cell, Cell):
        raise InputError("not a lattice cell", input_name="cell", expected="a Cell from build_cell",
                         got=type(cell).__name__)
    mats = _materials_for(cell, materials)
    nx = _positive_int(cells_wide, name="cells_wide")
    nz = _positive_int(cells_high, name="cells_high")
    ny = _positive_int(cells_deep, name="cells_deep")
    limit = _q(deflection_limit, name="deflection_limit", dim="length")
    _check_options(buckling_safety_factor, strut_end_condition, frame_end_condition, k_value)
    return mats, nx, nz, ny, limit


def _check_options(buckling_safety_factor: Any, strut_end_condition: str, frame_end_condition: str,
                   k_value: str) -> None:
    """An :class:`InputError` for a safety factor below 1, an unknown end condition or an unknown K set."""
    if isinstance(buckling_safety_factor, bool) or not isinstance(buckling_safety_factor, (int, float)) \
            or not buckling_safety_factor >= 1.0:
        raise InputError("a buckling safety factor is a number of at least 1", input_name="buckling_safety_factor",
                         expected=">= 1", got=repr(buckling_safety_factor))
    for name, cond in (("strut_end_condition", strut_end_condition), ("frame_end_condition", frame_end_condition)):
        if cond not in EFFECTIVE_LENGTH_FACTORS:
            raise InputError("unknown end condition", input_name=name,
                             expected="one of " + ", ".join(EFFECTIVE_LENGTH_FACTORS), got=repr(cond))
    effective_length_factor("pinned-pinned", k_value=k_value)


@dataclass(frozen=True, kw_only=True)
class _PanelParts:
    """What the load cases read of a panel, or of one zone of a graded panel: its steps, weights, moduli, sections.

    ``rho_lattice`` is the lattice's smeared density (with its added masses), ``rho_all`` that of all strut
    groups (the lattice's without a frame); the frame fields are None without a frame.
    """

    steps: tuple
    cell_width: pint.Quantity
    height: pint.Quantity
    width: pint.Quantity
    depth: pint.Quantity
    rho_lattice: pint.Quantity
    rho_all: pint.Quantity
    e_lattice: pint.Quantity
    creep_note: str
    strut_sum: float
    strut_area: float
    strut_tz2: float
    strut_p_cr: pint.Quantity
    panel_second_moment: pint.Quantity
    frame_diameter: pint.Quantity | None = None
    frame_inner: pint.Quantity | None = None
    e_frame: pint.Quantity | None = None
    frame_area: pint.Quantity | None = None
    e_frame_smeared: pint.Quantity | None = None
    e_combined: pint.Quantity | None = None
    tributary_area: pint.Quantity | None = None

    def density(self, case: str) -> pint.Quantity:
        """Smeared density carried by the load path ``case``."""
        return self.rho_lattice if case == "lattice-alone" else self.rho_all

    def modulus(self, case: str) -> pint.Quantity:
        """Vertical modulus of the load path ``case``."""
        return self.e_lattice if case == "lattice-alone" else self.e_combined


def _counts_panel_struts(cell: Cell) -> bool:
    """True when the panel's weight is counted strut by strut in the finite panel (a frame, or simple-cubic posts)."""
    return "frame" in cell.group_names or cell.kind == "simple-cubic"


def _panel_parts(cell: Cell, mats: Mapping[str, Any], *, nx: int, ny: int, nz: int, rd: RelativeDensity,
                 long_term: bool, strut_end_condition: str, k_value: str, p: str,
                 base_plane: Mapping[str, pint.Quantity] | None = None, panel_height: pint.Quantity | None = None,
                 height_description: str = "Panel height") -> _PanelParts:
    """Weights, vertical moduli, the lattice strut's Euler load and the frame's load paths of an n_x × n_z × n_y panel.

    ``base_plane``: a zone of a graded panel, counted without its bottom plane of struts and given instead its
    share h / H of the panel's bottom plane (``base_plane`` the masses of that plane by group and added mass,
    ``panel_height`` H), spread over the height as the uniform panel's smeared density spreads it.
    """
    a = cell.cell_width
    height = (nz * a).to("m")
    steps: list[Any] = []
    has_frame = "frame" in cell.group_names

    def modulus(group: str):
        mat = mats[group]
        if long_term and mat.long_term_factor != 1.0:
            return mat.long_term_modulus(), "long-term (creep) modulus"
        return mat.youngs_modulus.to("MPa"), "short-term modulus"

    steps.append(quantity_step(id=f"{p}.height", description=height_description, value=height, unit="m",
                               method=f"{nz} cells × {format_quantity(a.to('mm'))}"))
    width, depth = (nx * a).to("m"), (ny * a).to("m")
    inner = {g: _inner_diameter_step(cell.diameters[g], cell.wall_thickness(g), id=f"{p}.{g}-inner-diameter",
                                     what=f"{g} member") for g in ("lattice", "frame") if g in cell.group_names}
    inner_d = {g: None if st is None else st.result for g, st in inner.items()}
    steps += [st for st in inner.values() if st is not None]
    # the load paths of the finite panel: vertical posts on the cube-edge lines
    lattice_posts = _posts_step(cell, "lattice", nx=nx, ny=ny, nz=nz, id=f"{p}.lattice-posts") \
        if cell.kind == "simple-cubic" else None

    # the finite panel's weight: every strut as often as it occurs (outer faces in full), added masses
    panel_m: dict[str, Any] = {}
    if _counts_panel_struts(cell):
        volumes = panel_volumes(cell, cells_wide=nx, cells_high=nz, cells_deep=ny, density=rd,
                                bottom_plane=base_plane is None)
        for g in cell.group_names:
            what = "tube section areas" if cell.is_hollow(g) else "strut sections"
            panel_m[g] = quantity_step(
                id=f"{p}.panel-mass.{g}", description=f"Mass of the {g} struts in the panel ({nx} × {nz} × {ny} "
                "cells, wide × high × deep)", value=volumes[g].volume * mats[g].density, unit="kg",
                method=f"{what} × lengths × occurrences in the panel × node-overlap factor "
                       f"{volumes[g].overlap:.4f} × density"
                       + ("" if base_plane is None else ", without the struts of its bottom plane"),
                source=PANEL_STRUTS)
        for g, (m_added, _j) in cell.point_masses.items():
            panel_m[f"added-{g}"] = evaluate(
                ADDED_MASS, id=f"{p}.panel-mass.added-{g}", description=f"Masses added at mid-span of the {g} "
                "struts in the panel", values={"N": Q_(int(round(volumes[g].struts)), ""), "M_a": m_added},
                unit="kg", source=PANEL_STRUTS)
        steps += list(panel_m.values())
        for key, m_0 in (base_plane or {}).items():
            own = panel_m[key].result if key in panel_m else Q_(0.0, "kg")
            what = f"masses added at mid-span of the {key[6:]} struts" if key.startswith("added-") \
                else f"mass of the {key} struts"
            panel_m[key] = evaluate(ZONE_MASS_WITH_BASE, id=f"{p}.panel-mass.{key}-with-base", description=f"The "
                                    f"zone's {what} with its share of the panel's bottom plane (spread over the "
                                    "panel's height, as for a uniform panel)",
                                    values={"m_o": own, "m_0": m_0, "h": height, "H": panel_height}, unit="kg",
                                    source=DERIVED)
            steps.append(panel_m[key])
    # smeared densities
    rho_p = {}
    if lattice_posts is not None:
        m_lat = sum((st.result for k, st in panel_m.items() if k in ("lattice", "added-lattice")), Q_(0.0, "kg"))
        st = evaluate(PANEL_DENSITY, id=f"{p}.smeared-density.lattice", description="Weight of the lattice "
                      "struts (and added masses) of the panel smeared over its volume",
                      values={"m": m_lat, "W": width, "D": depth, "H": height}, unit="kg/m^3", source=DERIVED)
        steps.append(st)
        rho_p["lattice"] = st.result
    else:
        st = evaluate(SMEARED_DENSITY, id=f"{p}.smeared-density.lattice", description="Mass of the lattice "
                      "struts smeared over the panel volume (per cell of the infinite lattice)",
                      values={"rho": mats["lattice"].density, "rho_rel": rd.by_group["lattice"]},
                      unit="kg/m^3", source=mats["lattice"].source("density"))
        steps.append(st)
        rho_p["lattice"] = st.result
        if "lattice" in cell.point_masses:
            st = evaluate(ADDED_DENSITY, id=f"{p}.smeared-density.lattice-added", description="With the "
                          "masses added at mid-span of the lattice struts (lattice struts per cell)",
                          values={"rho_l": rho_p["lattice"], "n_c": Q_(cell.weights[cell.group_mask("lattice")]
                                                                         .sum(), ""),
                                  "M_a": cell.point_masses["lattice"][0], "a": a}, unit="kg/m^3", source=DERIVED)
            steps.append(st)
            rho_p["lattice"] = st.result
    rho_all = rho_p["lattice"]
    if has_frame:
        m_all = sum((st.result for st in panel_m.values()), Q_(0.0, "kg"))
        steps.append(quantity_step(id=f"{p}.panel-mass", description="Panel mass, all strut groups"
                                   + (" and added masses" if cell.point_masses else ""), value=m_all, unit="kg",
                                   method="sum of the above"))
        st = evaluate(PANEL_DENSITY, id=f"{p}.smeared-density", description="Weight of the panel smeared over its "
                      "volume W × D × H", values={"m": m_all, "W": width, "D": depth, "H": height},
                      unit="kg/m^3", source=DERIVED)
        steps.append(st)
        rho_all = st.result
    # lattice modulus
    e_s, which = modulus("lattice")
    creep_note = ""
    if mats["lattice"].is_elastomer:
        creep_note = (f"Elastomer under permanent load: {which} used. Creep continues for years; confirm the "
                      "long-term factor with the supplier's creep data.")
    steps.append(quantity_step(id=f"{p}.lattice-modulus-solid", description=f"Lattice material modulus "
                               f"({which})", value=e_s, unit="MPa", method=which,
                               source=mats["lattice"].source("long_term_factor" if "long" in which
                                                             else "youngs_modulus"), note=creep_note))
    d_l = cell.diameters["lattice"]
    if lattice_posts is not None:
        a_l = _area_step(d_l, inner_d["lattice"], id=f"{p}.lattice-area", description="Section area of a "
                         "lattice strut")
        e_l = evaluate(POST_LATTICE_MODULUS, id=f"{p}.lattice-modulus", description="Vertical modulus of the "
                       "lattice: its vertical struts are posts, counted in the finite panel, smeared over the plan",
                       values={"n_p": lattice_posts.result, "E_s": e_s, "A": a_l.result, "W": width, "D": depth},
                       unit="MPa", source=DERIVED_POSTS)
        steps += [lattice_posts, a_l, e_l]
    else:
        e_l = _lattice_modulus(cell, rd.by_group["lattice"], e_s, id=f"{p}.lattice-modulus")
        steps.append(e_l)
    s_sum, strut_area, tz2, strut_idx = _affine_sums(cell)
    strut_len = cell.strut_lengths[strut_idx]
    i_l = _second_moment_step(d_l, inner_d["lattice"], id=f"{p}.strut-second-moment",
                              description="Second moment of area of a lattice strut")
    k_s = _k_step(strut_end_condition, k_value, id=f"{p}.strut-k", what="lattice strut between nodes")
    p_s = evaluate(EULER_LOAD, id=f"{p}.strut-p-cr", description="Euler critical load of the most heavily loaded "
                   "lattice strut", values={"E": e_s, "I": i_l.result, "K": k_s.result, "L": strut_len},
                   unit="N", source=EULER_SOURCE)
    steps += [i_l, k_s, p_s]

    big, small = (width, depth) if width >= depth else (depth, width)
    i_panel = evaluate(PANEL_SECOND_MOMENT, id=f"{p}.panel-second-moment", description="Second moment of area "
                       "of the panel section about its weaker axis", values={"W": big, "D": small}, unit="m^4",
                       source=SECTION_SOURCE)
    steps.append(i_panel)

    frame: dict[str, Any] = {}
    if has_frame:
        e_f, which_f = modulus("frame")
        posts = _posts_step(cell, "frame", nx=nx, ny=ny, nz=nz, id=f"{p}.frame-posts")
        if posts is None:
            raise ModelError("the frame has no vertical members to carry the panel's weight", input_name="cell",
                             expected="a frame group with members along z (the cube's vertical edges)",
                             got="no vertical frame strut")
        a_f = _area_step(cell.diameters["frame"], inner_d["frame"], id=f"{p}.frame-area",
                         description="Section area of a frame member")
        e_fs = evaluate(FRAME_MODULUS, id=f"{p}.frame-modulus", description="Vertical modulus of the frame "
                        f"posts smeared over the panel's plan ({which_f})",
                        values={"n_p": posts.result, "E_f": e_f, "A_f": a_f.result, "W": width, "D": depth},
                        unit="MPa", source=DERIVED_POSTS)
        e_c = evaluate(COMBINED_MODULUS, id=f"{p}.combined-modulus", description="Vertical modulus of frame and "
                       "lattice together (parallel load paths)", values={"E_l": e_l.result, "E_fs": e_fs.result},
                       unit="MPa", source=DERIVED)
        a_t = _tributary_area(a, nx, ny, id=f"{p}.frame-tributary-area")
        steps += [posts, a_f, e_fs, e_c, a_t]
        frame = dict(frame_diameter=cell.diameters["frame"], frame_inner=inner_d["frame"], e_frame=e_f,
                     frame_area=a_f.result, e_frame_smeared=e_fs.result, e_combined=e_c.result,
                     tributary_area=a_t.result)
    return _PanelParts(steps=tuple(steps), cell_width=a, height=height, width=width, depth=depth,
                       rho_lattice=rho_p["lattice"], rho_all=rho_all, e_lattice=e_l.result, creep_note=creep_note,
                       strut_sum=s_sum, strut_area=strut_area, strut_tz2=tz2, strut_p_cr=p_s.result,
                       panel_second_moment=i_panel.result, **frame)


def _bottom_plane(cell: Cell, mats: Mapping[str, Any], *, nx: int, ny: int, rd: RelativeDensity,
                  p: str) -> tuple[list, dict[str, pint.Quantity]]:
    """Mass of the panel's bottom plane of struts (the struts lying in it), by group and added mass, as steps."""
    with_plane = panel_volumes(cell, cells_wide=nx, cells_high=1, cells_deep=ny, density=rd)
    without = panel_volumes(cell, cells_wide=nx, cells_high=1, cells_deep=ny, density=rd, bottom_plane=False)
    steps, masses = [], {}
    for g in cell.group_names:
        masses[g] = (with_plane[g].volume - without[g].volume) * mats[g].density
        steps.append(quantity_step(id=f"{p}.bottom-plane.{g}", description=f"Mass of the {g} struts lying in the "
                                   "panel's bottom plane", value=masses[g], unit="kg",
                                   method="strut sections × lengths × occurrences in the plane × node-overlap factor "
                                          "× density", source=PANEL_STRUTS))
    for g, (m_added, _j) in cell.point_masses.items():
        count = int(round(with_plane[g].struts - without[g].struts))
        st = evaluate(ADDED_MASS, id=f"{p}.bottom-plane.added-{g}", description=f"Masses added at mid-span of the "
                      f"{g} struts lying in the panel's bottom plane", values={"N": Q_(count, ""), "M_a": m_added},
                      unit="kg", source=PANEL_STRUTS)
        steps.append(st)
        masses[f"added-{g}"] = st.result
    return steps, masses


def _lattice_stress(parts: _PanelParts, sigma, *, ip: str, case: str, what: str) -> tuple[list, pint.Quantity]:
    """The vertical stress the lattice struts carry, and its steps.

    ``sigma`` alone, or with a frame the larger of the lattice's stiffness share of ``sigma`` and one cell's own
    lattice weight.
    """
    if case == "lattice-alone":
        return [], sigma
    share = evaluate(LATTICE_STRESS_SHARE, id=f"{ip}.lattice-stress", description=f"Share of {what} carried by "
                     "the lattice (by stiffness)", values={"sigma": sigma, "E_l": parts.e_lattice,
                                                            "E_c": parts.e_combined},
                     unit="kPa", source=DERIVED)
    local = evaluate(LOCAL_LATTICE_STRESS, id=f"{ip}.lattice-local-stress", description="Vertical "
                     "stress from one cell's own lattice weight, hung on the frame at the cell's "
                     "nodes", values={"rho": parts.rho_lattice, "g": GRAVITY, "a": parts.cell_width}, unit="kPa",
                     source=DERIVED)
    sigma_l = max(share.result, local.result)
    governing = quantity_step(id=f"{ip}.lattice-stress-used", description="Lattice stress used for "
                              "the strut force (larger of the stiffness share and the local weight)",
                              value=sigma_l, unit="kPa", method="maximum of the two")
    return [share, local, governing], sigma_l


def _frame_force(parts: _PanelParts, sigma, *, id: str, where: str):
    """Axial force in the most heavily loaded vertical frame member where the smeared stress is ``sigma``."""
    return evaluate(FRAME_FORCE, id=id, description="Axial force in the most heavily "
                    f"loaded vertical frame member {where} (the frame's stiffness share of the weight "
                    "over its tributary area)",
                    values={"sigma": sigma, "A_t": parts.tributary_area, "E_fs": parts.e_frame_smeared,
                            "E_c": parts.e_combined}, unit="N", source=DERIVED_POSTS)


def _frame_buckling(parts: _PanelParts, n_f, *, ip: str, where: str, frame_end_condition: str,
                    k_value: str) -> tuple[list, Any, Any]:
    """Stress and Euler safety factor of the vertical frame member carrying ``n_f`` (steps, stress, factor)."""
    s_f = evaluate(FRAME_STRESS, id=f"{ip}.frame-stress", description="Axial stress in the most "
                   f"heavily loaded vertical frame member {where}",
                   values={"N_f": n_f, "A": parts.frame_area}, unit="kPa", source=DERIVED)
    i_f = _second_moment_step(parts.frame_diameter, parts.frame_inner, id=f"{ip}.frame-second-moment",
                              description="Second moment of area of a frame member")
    k_f = _k_step(frame_end_condition, k_value, id=f"{ip}.frame-k", what="vertical frame member, one cell high")
    p_f = evaluate(EULER_LOAD, id=f"{ip}.frame-p-cr", description="Euler critical load of a vertical "
                   "frame member", values={"E": parts.e_frame, "I": i_f.result, "K": k_f.result,
                                           "L": parts.cell_width}, unit="N", source=EULER_SOURCE)
    sf_f = evaluate(SAFETY_FACTOR, id=f"{ip}.frame-safety", description="Buckling safety factor of "
                    "the vertical frame member", values={"P_cr": p_f.result, "N": n_f}, unit="",
                    source=DERIVED)
    return [s_f, i_f, k_f, p_f, sf_f], s_f.result, sf_f.result


def _strut_safety(parts: _PanelParts, sigma_l, *, ip: str, label: str, zone: str = "") -> tuple[Any, Any]:
    """Force in the most heavily loaded lattice strut under the lattice stress ``sigma_l``, and its safety factor.

    Two steps: at the panel's base, or at the bottom of ``zone`` (e.g. ``"zone 2"``) of a graded panel.
    """
    where = f"at the bottom of {zone}" if zone else "at the base"
    n_s = evaluate(STRUT_FORCE, id=f"{ip}.strut-force", description=f"Axial force in the most heavily "
                   f"loaded lattice strut {where}, {label}",
                   values={"sigma": sigma_l, "a": parts.cell_width, "A": Q_(parts.strut_area, "m^2"),
                           "t_z2": Q_(parts.strut_tz2, ""), "S": Q_(parts.strut_sum, "m^3")}, unit="N",
                   source=DERIVED_AFFINE)
    sf_s = evaluate(SAFETY_FACTOR, id=f"{ip}.strut-safety", description="Buckling safety factor of the "
                    "lattice strut" + (f" of {zone}" if zone else ""),
                    values={"P_cr": parts.strut_p_cr, "N": n_s.result}, unit="", source=DERIVED)
    return n_s, sf_s


def _case_checks(cp: str, label: str, *, shortening, limit, strut_sf, buckling_safety_factor: float, ratio,
                 strut_which: str = "", greenhill_note: str = "") -> list:
    """The shortening, strut buckling and Greenhill checks of the load path checked."""
    return [
        check(id=f"{cp}.shortening-check", description=f"Self-weight shortening, {label}",
              demand=shortening, limit=limit.to("mm"), sense="max"),
        check(id=f"{cp}.strut-buckling-check", description=f"Lattice strut buckling under self-weight, "
              f"{label}{strut_which}: safety factor", demand=strut_sf, limit=buckling_safety_factor, sense="min"),
        check(id=f"{cp}.greenhill-check", description=f"Greenhill height over panel height, {label}",
              demand=ratio.to(""), limit=buckling_safety_factor, sense="min",
              note="Panel taken as free-standing, fixed at its base and free at its top (conservative "
                   "where it is tied to the column along its height)." + greenhill_note),
    ]


def _frame_check(cp: str, sf_f, buckling_safety_factor: float, *, which: str = ""):
    return check(id=f"{cp}.frame-buckling-check", description="Frame member buckling under "
                 f"self-weight{which}: safety factor", demand=sf_f, limit=buckling_safety_factor, sense="min")


_LABELS = {"lattice-alone": "lattice alone (no frame)", "with-frame": "frame and lattice"}


def panel_self_weight(cell: Cell, *, materials: Any, cells_wide: int, cells_high: int, cells_deep: int,
                      deflection_limit, buckling_safety_factor: float = 3.0, long_term: bool = True,
                      strut_end_condition: str = "pinned-pinned", frame_end_condition: str = "pinned-pinned",
                      k_value: str = "design", density: RelativeDensity | None = None,
                      id_prefix: str = "selfweight") -> SelfWeight:
    """Self-weight checks of a panel of ``cells_wide × cells_high × cells_deep`` cells.

    Parameters
    ----------
    cell:
        The cell; a ``frame`` group adds the with-frame load path.
    materials:
        Material of each strut group (``{"lattice": ..., "frame": ...}``).
    cells_wide, cells_high, cells_deep:
        Cells across the column face, up the column (the panel height H = cells_high · a), and away
        from it.
    deflection_limit:
        Largest acceptable self-weight shortening [length].
    buckling_safety_factor:
        Smallest acceptable ratio of critical load (or Greenhill height) to demand.
    long_term:
        Use each material's long-term (creep) modulus, as fits a permanent load (default).
    strut_end_condition, frame_end_condition, k_value:
        End conditions of the lattice struts (between nodes) and of the vertical frame members
        (one cell high), and which K of AISC 360 Table C-A-7.1 to use.
    density:
        A precomputed relative density of ``cell`` (closed form is computed otherwise).
    id_prefix:
        Prefix of the step ids.
    """
    mats, nx, nz, ny, limit = _checked_panel(cell, materials, cells_wide, cells_high, cells_deep, deflection_limit,
                                             buckling_safety_factor, strut_end_condition, frame_end_condition,
                                             k_value)
    rd = density if density is not None else relative_density(cell, "closed-form", id_prefix=f"{id_prefix}.density")
    p = id_prefix
    parts = _panel_parts(cell, mats, nx=nx, ny=ny, nz=nz, rd=rd, long_term=long_term,
                         strut_end_condition=strut_end_condition, k_value=k_value, p=p)
    height = parts.height
    steps: list[Any] = list(parts.steps)
    has_frame = parts.e_combined is not None

    shortening, moduli, strut_sf, greenhill = {}, {}, {}, {}
    frame_stress = frame_sf = None
    checks = []
    cases = ["lattice-alone"] + (["with-frame"] if has_frame else [])
    for case in cases:
        cp = f"{p}.{case}"
        label = _LABELS[case]
        rho_case, e_case = parts.density(case), parts.modulus(case)
        moduli[case] = e_case
        dl = evaluate(SHORTENING, id=f"{cp}.shortening", description=f"Self-weight shortening, {label}",
                      values={"rho": rho_case, "g": GRAVITY, "H": height, "E": e_case}, unit="mm", source=DERIVED,
                      note=parts.creep_note)
        sig = evaluate(BASE_STRESS, id=f"{cp}.base-stress", description=f"Smeared vertical stress at the panel "
                       f"base, {label}", values={"rho": rho_case, "g": GRAVITY, "H": height}, unit="kPa",
                       source=DERIVED)
        steps += [dl, sig]
        shortening[case] = dl.result
        more, sigma_l = _lattice_stress(parts, sig.result, ip=cp, case=case, what="the base stress")
        steps += more
        if case == "with-frame":
            n_f = _frame_force(parts, sig.result, id=f"{cp}.frame-force", where="at the base")
            more, frame_stress, frame_sf = _frame_buckling(parts, n_f.result, ip=cp, where="at the base",
                                                           frame_end_condition=frame_end_condition,
                                                           k_value=k_value)
            steps += [n_f, *more]
            checks.append(_frame_check(cp, frame_sf, buckling_safety_factor))
        n_s, sf_s = _strut_safety(parts, sigma_l, ip=cp, label=label)
        steps += [n_s, sf_s]
        strut_sf[case] = sf_s.result
        q = evaluate(WEIGHT_PER_LENGTH, id=f"{cp}.weight-per-length", description=f"Panel weight per metre "
                     f"of height, {label}", values={"rho": rho_case, "g": GRAVITY, "W": parts.width,
                                                    "D": parts.depth},
                     unit="N/m", source=DERIVED)
        gh = greenhill_height(youngs_modulus=e_case, second_moment=parts.panel_second_moment,
                              weight_per_length=q.result, id=f"{cp}.greenhill")
        steps += [q, *gh.steps]
        greenhill[case] = gh.value
        if case != cases[-1]:
            continue  # with a frame, the lattice-alone path is shown for comparison, not checked
        checks += _case_checks(cp, label, shortening=dl.result, limit=limit, strut_sf=sf_s.result,
                               buckling_safety_factor=buckling_safety_factor, ratio=gh.value / height)
    steps += checks
    governing = shortening["with-frame" if has_frame else "lattice-alone"]
    return SelfWeight(value=governing, steps=tuple(steps), shortening=shortening, effective_modulus=moduli,
                      strut_safety_factor=strut_sf, greenhill_height=greenhill, frame_stress=frame_stress,
                      frame_safety_factor=frame_sf, all_ok=all(c.ok for c in checks),
                      title="Self-weight: shortening, stresses and buckling")


# --- a graded panel ----------------------------------------------------------------------------------
@dataclass(frozen=True, kw_only=True)
class GradedSelfWeight(SelfWeight):
    """Result of :func:`graded_panel_self_weight`: a :class:`SelfWeight` of the zones stacked bottom first.

    ``effective_modulus`` is each load path's softest zone modulus (the one Greenhill's bound takes),
    ``strut_safety_factor`` the smallest over the zones and ``greenhill_height`` the bounding column's.
    ``strut_force`` and ``zone_strut_safety_factor`` map each load path to the zones' values (bottom
    first); ``governing_zone`` to the zone (1-based) of the smallest strut safety factor.
    """

    strut_force: Mapping[str, tuple[pint.Quantity, ...]]
    zone_strut_safety_factor: Mapping[str, tuple[pint.Quantity, ...]]
    governing_zone: Mapping[str, int]


_STEPPED_GREENHILL_NOTE = (
    "A stepped heavy column has no closed form: this is a uniform column over the full height with the softest "
    "zone's modulus and the heaviest zone's weight per metre. Less bending stiffness and more weight everywhere "
    "give no higher critical load, so this height is a lower bound (conservative).")


def graded_panel_self_weight(cell: Cell, *, zoning: Any, materials: Any, cells_wide: int, cells_high: int,
                             cells_deep: int, deflection_limit, buckling_safety_factor: float = 3.0,
                             long_term: bool = True, strut_end_condition: str = "pinned-pinned",
                             frame_end_condition: str = "pinned-pinned", k_value: str = "design",
                             density_method: str = "closed-form", id_prefix: str = "selfweight") -> GradedSelfWeight:
    """Self-weight checks of a graded panel: its zones stacked bottom first, each with its own cell.

    Zone k (``zoning.zone_cell(cell, k)``, ``zoning.zone_materials(materials, k)``) over its own h_k rows
    gives its smeared density ρ_k, its vertical moduli (lattice alone, with the frame) and its lattice
    strut's Euler load, as :func:`panel_self_weight` builds them (the struts in a plane between two zones
    belong to the zone below).  Then, for each load path, as a bar in prismatic segments (Gere & Goodno,
    §2.3): the stress at the top of zone k is the weight of the zones above, σ_top,k = g Σ_{j>k} ρ_j h_j,
    at its bottom σ_bot,k = σ_top,k + ρ_k g h_k (at the base g Σ ρ_j h_j); the shortening is
    Σ_k (σ_top,k h_k + ρ_k g h_k² / 2) / E_k.  At the bottom of every zone: the lattice strut force from
    that zone's share of the stress (with a frame the larger of its stiffness share and one cell's lattice
    weight) and strut geometry, against that zone's Euler load, and with a frame the force in the most
    heavily loaded post from the zone's stiffness share; the smallest strut safety factor and the largest
    post force are checked.  Greenhill's height is that of a bounding uniform column (the softest zone's
    modulus and the heaviest zone's weight per length over the full height; a lower bound, as a stepped
    heavy column has no closed form).  Where the weight is counted strut by strut in the finite panel (a
    frame, simple-cubic posts), each zone is counted without the struts of its bottom plane and the panel's
    bottom plane (zone 1's) is spread over the height, h_k / H to zone k, as the uniform panel's smeared
    density spreads it: identical zones give :func:`panel_self_weight`'s results.

    Parameters
    ----------
    zoning:
        The :class:`~latticecalc.physics.zoning.Zoning`, bottom zone first; its heights add up to
        ``cells_high``.
    density_method:
        Relative density method of each zone's cell (:func:`~latticecalc.physics.density.relative_density`).
    cell, materials, cells_wide, cells_high, cells_deep, deflection_limit, buckling_safety_factor, long_term, \
strut_end_condition, frame_end_condition, k_value, id_prefix:
        As for :func:`panel_self_weight`; each zone's own steps are under ``<id_prefix>.zone<k>``.
    """
    from latticecalc.physics.zoning import check_zoning

    mats, nx, nz, ny, limit = _checked_panel(cell, materials, cells_wide, cells_high, cells_deep, deflection_limit,
                                             buckling_safety_factor, strut_end_condition, frame_end_condition,
                                             k_value)
    zoning = check_zoning(zoning, cells_high=nz)
    if zoning is None:
        raise InputError("a graded panel needs its zoning", input_name="zoning", expected="a Zoning", got="None")
    p = id_prefix
    a = cell.cell_width
    height = (nz * a).to("m")
    steps: list[Any] = [quantity_step(id=f"{p}.height", description="Panel height", value=height, unit="m",
                                      method=f"{nz} cells × {format_quantity(a.to('mm'))}")]
    zones: list[_PanelParts] = []
    base_plane = None
    for k, z in enumerate(zoning.zones):
        zone_cell = zoning.zone_cell(cell, k)
        zone_mats = zoning.zone_materials(mats, k)
        zp = f"{p}.zone{k + 1}"
        rd = relative_density(zone_cell, density_method, id_prefix=f"{zp}.density")
        if k == 0 and _counts_panel_struts(zone_cell):
            # the struts lying in the panel's bottom plane are zone 1's; their weight is spread over the height
            more, base_plane = _bottom_plane(zone_cell, zone_mats, nx=nx, ny=ny, rd=rd, p=p)
            steps += more
        parts = _panel_parts(zone_cell, zone_mats, nx=nx, ny=ny, nz=z.cells_high, rd=rd, long_term=long_term,
                             strut_end_condition=strut_end_condition, k_value=k_value, p=zp, base_plane=base_plane,
                             panel_height=height, height_description=f"Height of zone {k + 1} (its own rows)")
        zones.append(parts)
        steps += parts.steps
    n = len(zones)
    creep_note = next((zp.creep_note for zp in zones if zp.creep_note), "")
    has_frame = zones[0].e_combined is not None

    shortening, moduli, strut_sf, greenhill = {}, {}, {}, {}
    strut_forces, zone_sf, governing_zone = {}, {}, {}
    frame_stress = frame_sf = None
    checks = []
    cases = ["lattice-alone"] + (["with-frame"] if has_frame else [])
    for case in cases:
        cp = f"{p}.{case}"
        label = _LABELS[case]
        # stresses, top zone first: each zone's bottom carries the zones above and itself
        tops: list[Any] = [None] * n
        bottoms: list[Any] = [None] * n
        above = Q_(0.0, "kPa")
        for k in reversed(range(n)):
            zp = zones[k]
            st = evaluate(ZONE_BOTTOM_STRESS, id=f"{cp}.zone{k + 1}.bottom-stress", description="Smeared vertical "
                          f"stress at the bottom of zone {k + 1}" + (" (the panel base)" if k == 0 else "")
                          + f", {label}: the weight of the zones above and of zone {k + 1}",
                          values={"sigma_t": above, "rho": zp.density(case), "g": GRAVITY, "h": zp.height},
                          unit="kPa", source=GERE_GOODNO_2013)
            steps.append(st)
            tops[k], bottoms[k] = above, st.result
            above = st.result
        segments = []
        for k, zp in enumerate(zones):
            segments.append(evaluate(ZONE_SHORTENING, id=f"{cp}.zone{k + 1}.shortening", description="Shortening "
                                     f"of zone {k + 1} under the zones above and its own weight, {label}",
                                     values={"sigma_t": tops[k], "rho": zp.density(case), "g": GRAVITY,
                                             "h": zp.height, "E": zp.modulus(case)},
                                     unit="mm", source=GERE_GOODNO_2013))
        dl = evaluate(zone_sum("delta", "delta_z", n), id=f"{cp}.shortening", description="Self-weight shortening, "
                      f"{label}: the zones' shortenings added", values={f"delta_z_{k + 1}": s.result
                                                                         for k, s in enumerate(segments)},
                      unit="mm", source=GERE_GOODNO_2013, note=creep_note)
        steps += [*segments, dl]
        shortening[case] = dl.result
        # the most heavily loaded strut (and post) at the bottom of every zone
        forces, factors, posts = [], [], []
        for k, zp in enumerate(zones):
            zid, zone = f"{cp}.zone{k + 1}", f"zone {k + 1}"
            more, sigma_l = _lattice_stress(zp, bottoms[k], ip=zid, case=case,
                                            what=f"the stress at the bottom of {zone}")
            steps += more
            if case == "with-frame":
                posts.append(_frame_force(zp, bottoms[k], id=f"{zid}.frame-force", where=f"at the bottom of {zone}"))
                steps.append(posts[-1])
            n_s, sf_s = _strut_safety(zp, sigma_l, ip=zid, label=label, zone=zone)
            steps += [n_s, sf_s]
            forces.append(n_s.result)
            factors.append(sf_s.result)
        kg = min(range(n), key=lambda k: factors[k].to("").m)
        sf_gov = quantity_step(id=f"{cp}.strut-safety", description="Buckling safety factor of the most critical "
                               f"lattice strut, {label}: zone {kg + 1}", value=factors[kg], unit="",
                               method="smallest of the zones' safety factors")
        steps.append(sf_gov)
        strut_forces[case], zone_sf[case], governing_zone[case] = tuple(forces), tuple(factors), kg + 1
        strut_sf[case] = sf_gov.result
        if case == "with-frame":
            kf = max(range(n), key=lambda k: posts[k].result.to("N").m)
            n_f = quantity_step(id=f"{cp}.frame-force", description="Axial force in the most heavily loaded "
                                f"vertical frame member: at the bottom of zone {kf + 1}"
                                + (" (the panel base)" if kf == 0 else ""), value=posts[kf].result, unit="N",
                                method="largest of the zones' post forces")
            more, frame_stress, frame_sf = _frame_buckling(zones[kf], n_f.result, ip=cp,
                                                           where=f"at the bottom of zone {kf + 1}",
                                                           frame_end_condition=frame_end_condition, k_value=k_value)
            steps += [n_f, *more]
            checks.append(_frame_check(cp, frame_sf, buckling_safety_factor,
                                       which=f" (at the bottom of zone {kf + 1})"))
        # Greenhill: a bounding uniform column over the full height, the softest zone's modulus, the heaviest weight
        kq = max(range(n), key=lambda k: zones[k].density(case).to("kg/m^3").m)
        ke = min(range(n), key=lambda k: zones[k].modulus(case).to("MPa").m)
        rho_b = quantity_step(id=f"{cp}.bounding-density", description="Smeared density of the bounding uniform "
                              f"column, {label}: the heaviest zone's (zone {kq + 1})", value=zones[kq].density(case),
                              unit="kg/m^3", method="largest of the zones' smeared densities",
                              source=DERIVED_STEPPED_BOUND)
        e_b = quantity_step(id=f"{cp}.bounding-modulus", description="Vertical modulus of the bounding uniform "
                            f"column, {label}: the softest zone's (zone {ke + 1})", value=zones[ke].modulus(case),
                            unit="MPa", method="smallest of the zones' moduli", source=DERIVED_STEPPED_BOUND)
        q = evaluate(WEIGHT_PER_LENGTH, id=f"{cp}.weight-per-length", description="Weight per metre of height of "
                     f"the bounding uniform column, {label}", values={"rho": rho_b.result, "g": GRAVITY,
                                                                      "W": zones[0].width, "D": zones[0].depth},
                     unit="N/m", source=DERIVED)
        gh = greenhill_height(youngs_modulus=e_b.result, second_moment=zones[0].panel_second_moment,
                              weight_per_length=q.result, id=f"{cp}.greenhill", note=_STEPPED_GREENHILL_NOTE)
        steps += [rho_b, e_b, q, *gh.steps]
        moduli[case], greenhill[case] = e_b.result, gh.value
        if case != cases[-1]:
            continue  # with a frame, the lattice-alone path is shown for comparison, not checked
        checks += _case_checks(cp, label, shortening=dl.result, limit=limit, strut_sf=sf_gov.result,
                               buckling_safety_factor=buckling_safety_factor, ratio=gh.value / height,
                               strut_which=f" (zone {kg + 1}, the most critical)",
                               greenhill_note=" " + _STEPPED_GREENHILL_NOTE)
    steps += checks
    governing = shortening["with-frame" if has_frame else "lattice-alone"]
    return GradedSelfWeight(value=governing, steps=tuple(steps), shortening=shortening, effective_modulus=moduli,
                            strut_safety_factor=strut_sf, greenhill_height=greenhill, frame_stress=frame_stress,
                            frame_safety_factor=frame_sf, all_ok=all(c.ok for c in checks), strut_force=strut_forces,
                            zone_strut_safety_factor=zone_sf, governing_zone=governing_zone,
                            title="Self-weight of the graded panel: zones stacked, shortening, stresses and buckling")
