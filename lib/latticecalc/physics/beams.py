"""Bending of a single strut: natural frequencies, mode tables, inverse sizing, modal mass.

Euler–Bernoulli: f_n = λ_n² / (2π L²) · √(E I / (ρ A)).  The eigenvalues λ_n are the roots of
each support case's characteristic equation, found here numerically (never typed in), see
Rao, *Mechanical Vibrations*, 6th ed. (2017), §8.5, Table 8.1.

Sections: solid circle, rectangle and hollow circle (a tube of outer diameter D and wall thickness t,
inner diameter d_i = D − 2t): A = π(D² − d_i²)/4, I = π(D⁴ − d_i⁴)/64, J = 2I (Roark's Formulas,
7th ed., Table A.1, from memory), with Cowper's shear coefficient of the hollow circle.

Timoshenko (shear deformation and rotary inertia, Cowper's shear coefficient): the pinned–pinned
case has an exact closed form (Han, Benaroya & Wei 1999); the other support cases are solved
numerically as the roots of the 4 × 4 boundary-condition determinant of the Timoshenko equations
(the frequency equation of Han, Benaroya & Wei 1999, §5, set up here in dimensional form).

Rigid node zones (:func:`zoned_bending_frequency`): a stocky strut is buried in its neighbours over
a length l_r at each node, taken rigid, and bends over the flexible length L_f = L − l₁ − l₂; the
zone length at a node is where the strut's surface parts from the neighbour holding it longest,
(d_j + d_i cos θ)/(2 sin θ) [derived], see :func:`latticecalc.physics.frame_fe.cell_node_zones`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from functools import cache

import numpy as np
import sympy as sp

from latticecalc.errors import InputError, ModelError
from latticecalc.physics.roots import find_root
from latticecalc.sheet import CalcResult, Formula, Source, Step, evaluate, quantity_step
from latticecalc.units import Q_, check_dimension, check_positive, format_number

RAO_2017 = Source(author="Rao, S. S.", title="Mechanical Vibrations, 6th ed.", year=2017,
                  locator="§8.5, eq. (8.82) and Table 8.1")
COWPER_1966 = Source(author="Cowper, G. R.", title="The shear coefficient in Timoshenko's beam theory, "
                     "J. Appl. Mech. 33, 335–340", year=1966, locator="Table 1, solid circle and rectangle")
COWPER_1966_TUBE = Source(author="Cowper, G. R.", title="The shear coefficient in Timoshenko's beam theory, "
                          "J. Appl. Mech. 33, 335–340", year=1966,
                          locator="Table 1, hollow circle, m = inner over outer radius (thin-walled round tube "
                                  "at m → 1: 2(1 + ν)/(4 + 3ν))", tag="from memory")
HAN_1999 = Source(author="Han, S. M., Benaroya, H. & Wei, T.",
                  title="Dynamics of transversely vibrating beams using four engineering theories, "
                  "J. Sound Vib. 225(5), 935–988", year=1999,
                  locator="Timoshenko model: hinged–hinged closed form and frequency equations")
ELASTICITY = Source(author="Timoshenko, S. P. & Goodier, J. N.", title="Theory of Elasticity, 3rd ed.",
                    year=1970, locator="isotropic relation G = E / (2(1 + ν))", tag="from memory")
MODAL_MASS_SOURCE = Source(author="Chopra, A. K.", title="Dynamics of Structures, 4th ed.", year=2012,
                           locator="effective modal mass of a distributed system, Γ_n L_n",
                           tag="from memory")

SUPPORTS = ("clamped-clamped", "pinned-pinned", "clamped-pinned", "clamped-free")
THEORIES = ("euler-bernoulli", "timoshenko")
SHAPES = ("circle", "rectangle", "tube")

#: Timoshenko results more than this fraction below Euler–Bernoulli are flagged on the sheet.
TIMOSHENKO_FLAG = 0.02

#: Characteristic equation g(λ) = 0 of each support case (Rao 2017, Table 8.1).
_CHARACTERISTIC = {
    "clamped-clamped": lambda x: math.cos(x) * math.cosh(x) - 1.0,
    "pinned-pinned": lambda x: math.sin(x),
    "clamped-pinned": lambda x: math.tan(x) - math.tanh(x),
    "clamped-free": lambda x: math.cos(x) * math.cosh(x) + 1.0,
}

#: Brackets holding exactly one root each (mode 1, 2, 3, ...); the n-th root lies near these.
_ASYMPTOTE = {
    "clamped-clamped": lambda n: (n + 0.5) * math.pi,
    "pinned-pinned": lambda n: n * math.pi,
    "clamped-pinned": lambda n: (n + 0.25) * math.pi,
    "clamped-free": lambda n: (n - 0.5) * math.pi,
}


def _check_supports(supports: str) -> str:
    if supports not in SUPPORTS:
        raise InputError("unknown support case", input_name="supports",
                         expected="one of " + ", ".join(SUPPORTS), got=repr(supports))
    return supports


def _check_mode(mode: int) -> int:
    if isinstance(mode, bool) or not isinstance(mode, (int, np.integer)) or mode < 1:
        raise InputError("mode number must be a whole number >= 1", input_name="mode",
                         expected="1, 2, 3, ...", got=repr(mode))
    return int(mode)


def _check_theory(theory: str) -> str:
    if theory not in THEORIES:
        raise InputError("unknown beam theory", input_name="theory",
                         expected="one of " + ", ".join(THEORIES), got=repr(theory))
    return theory


def check_poissons_ratio(value, *, name: str = "poissons_ratio"):
    """Return ν as a dimensionless Quantity if it lies in the open range (−1, 0.5), else raise."""
    if value is None:
        raise InputError("Poisson's ratio is needed for this calculation", input_name=name,
                         expected="a number in (−1, 0.5)", got="None")
    nu = check_dimension(value, name=name, expected="dimensionless")
    mag = float(nu.to("").magnitude)
    if not (-1.0 < mag < 0.5) or not math.isfinite(mag):
        raise InputError("Poisson's ratio of an isotropic solid lies between −1 and 0.5",
                         input_name=name, expected="a number in (−1, 0.5)", got=format_number(mag, 4))
    return Q_(mag, "")


def _length(value, name):
    return check_positive(check_dimension(value, name=name, expected="length"), name=name)


def _modulus(value, name="youngs_modulus"):
    return check_positive(check_dimension(value, name=name, expected="pressure"), name=name)


def _density(value, name="density"):
    return check_positive(check_dimension(value, name=name, expected="density"), name=name)


def _tag(supports: str) -> str:
    return supports.replace("clamped", "c").replace("pinned", "p").replace("free", "f").replace("-", "")


@cache
def eigenvalue(*, supports: str, mode: int) -> float:
    """λ_n for ``supports`` and ``mode``: the n-th positive root of the characteristic equation.

    Parameters
    ----------
    supports:
        One of :data:`SUPPORTS`.
    mode:
        Mode number n >= 1.

    Returns
    -------
    float
        λ_n (dimensionless), to machine precision.
    """
    _check_supports(supports)
    n = _check_mode(mode)
    g = _CHARACTERISTIC[supports]
    if supports == "pinned-pinned":
        return n * math.pi
    guess = _ASYMPTOTE[supports](n)
    half = 0.49 * math.pi
    lo, hi = guess - half, guess + half
    if supports == "clamped-pinned":
        # tan has poles at (k + 1/2)π; the root lies just below (n + 1/4)π, between n π and (n + 1/2)π.
        lo, hi = n * math.pi + 1e-9, (n + 0.5) * math.pi - 1e-9
    return find_root(g, lo, hi, xtol=1e-15, rtol=4 * np.finfo(float).eps, maxiter=200)


# --- formulas (the expression shown is the expression evaluated) -----------------------------
_L, _E, _I, _rho, _A, _lam, _d = sp.symbols("L E I rho A lambda_n d")
_b, _h, _nu, _G, _kappa, _n, _f = sp.symbols("b h nu G kappa n f")
_fe, _ft = sp.symbols("f_EB f_T")

SECOND_MOMENT_CIRCLE = Formula("I", sp.pi * _d**4 / 64)
AREA_CIRCLE = Formula("A", sp.pi * _d**2 / 4)
SECOND_MOMENT_RECTANGLE = Formula("I", _b * _h**3 / 12)
AREA_RECTANGLE = Formula("A", _b * _h)
EULER_BERNOULLI_FREQUENCY = Formula("f_n", _lam**2 / (2 * sp.pi * _L**2) * sp.sqrt(_E * _I / (_rho * _A)))

SHEAR_MODULUS = Formula("G", _E / (2 * (1 + _nu)))
COWPER_CIRCLE = Formula("kappa", 6 * (1 + _nu) / (7 + 6 * _nu))
COWPER_RECTANGLE = Formula("kappa", 10 * (1 + _nu) / (12 + 11 * _nu))

# Hollow circle (tube): outer diameter D, wall thickness t, inner diameter d_i = D − 2t, m = d_i / D.
_D, _di, _t, _m = sp.symbols("D d_i t m")
_TUBE_NAMES = {"d_i": r"d_\mathrm{i}"}
INNER_DIAMETER = Formula("d_i", _D - 2 * _t, _TUBE_NAMES)
DIAMETER_RATIO = Formula("m", _di / _D, _TUBE_NAMES)
AREA_TUBE = Formula("A", sp.pi * (_D**2 - _di**2) / 4, _TUBE_NAMES)
SECOND_MOMENT_TUBE = Formula("I", sp.pi * (_D**4 - _di**4) / 64, _TUBE_NAMES)
#: Torsion constant of a closed circular tube, J = 2I (the polar second moment).
POLAR_MOMENT_TUBE = Formula("J", sp.pi * (_D**4 - _di**4) / 32, _TUBE_NAMES)
#: Cowper (1966) Table 1, hollow circle; m = 0 gives the solid circle, m → 1 the thin-walled tube.
COWPER_TUBE = Formula("kappa", 6 * (1 + _nu) * (1 + _m**2) ** 2
                      / ((7 + 6 * _nu) * (1 + _m**2) ** 2 + (20 + 12 * _nu) * _m**2))

# Han, Benaroya & Wei (1999), hinged–hinged Timoshenko beam, k = nπ/L:
#   a ω⁴ − b ω² + c = 0 with a = ρ²I/(κG), b = ρA + ρI k² (1 + E/(κG)), c = E I k⁴.
# The lower (bending) root is written ω² = 2c / (b + √(b² − 4ac)), the same root as
# (b − √(b² − 4ac)) / (2a) without the cancellation of that form for slender struts.
_k = _n * sp.pi / _L
_qa = _rho**2 * _I / (_kappa * _G)
_qb = _rho * _A + _rho * _I * _k**2 * (1 + _E / (_kappa * _G))
_qc = _E * _I * _k**4
TIMOSHENKO_PINNED_FREQUENCY = Formula(
    "f_n", sp.sqrt(2 * _qc / (_qb + sp.sqrt(_qb**2 - 4 * _qa * _qc))) / (2 * sp.pi))
THEORY_DIFFERENCE = Formula("Delta_f", (_fe - _ft) / _fe, latex_names={"Delta_f": r"\Delta_f"})

# Inverse sizing of a solid circular strut (Euler–Bernoulli inverted for d, or for L).


#: EULER_BERNOULLI_FREQUENCY of a solid circular strut (I = πd⁴/64, A = πd²/4) solved for d and for L, written out so
#: that no kernel solves them at import; tests/physics check that each is sympy's one positive root of the forward
#: formula, so the inverse sizing cannot drift from it.
DIAMETER_FOR_FREQUENCY = Formula("d", 8 * sp.pi * _L**2 * _f * sp.sqrt(_rho) / (sp.sqrt(_E) * _lam**2))
LENGTH_FOR_FREQUENCY = Formula("L", _lam * sp.sqrt(_d) * _E ** sp.Rational(1, 4)
                               / (2 * sp.sqrt(2 * sp.pi * _f) * _rho ** sp.Rational(1, 4)))

# Rigid node zones (see frame_fe): the length over which a strut of diameter d_i is held by another
# of diameter d_j meeting it at the node at an angle θ between their axes, where the two cylinders'
# surfaces part [derived]; a thicker strut's rounded end (a sphere of diameter d_j at the node) holds
# it over √(d_j² − d_i²)/2 [derived]; the strut bends over the flexible length between its zones.
_di_z, _dj_z, _th, _l1, _l2, _Lf, _fz, _f0z = sp.symbols("d_i d_j theta l_1 l_2 L_f f_z f_0")
_ZONE_NAMES = {"l_r": r"l_\mathrm{r}", "L_f": r"L_\mathrm{f}", "f_z": r"f_\mathrm{z}", "k_z": r"k_\mathrm{z}"}
NODE_ZONE_CYLINDER = Formula("l_r", (_dj_z + _di_z * sp.cos(_th)) / (2 * sp.sin(_th)), _ZONE_NAMES)
NODE_ZONE_SPHERE = Formula("l_r", sp.sqrt(_dj_z**2 - _di_z**2) / 2, _ZONE_NAMES)
FLEXIBLE_LENGTH = Formula("L_f", _L - _l1 - _l2, _ZONE_NAMES)
ZONE_FREQUENCY_RATIO = Formula("k_z", _fz / _f0z, _ZONE_NAMES)
NODE_ZONE_SOURCE = Source(author="derived", title="rigid node zones: a strut buried in its neighbours at a node "
                          "is held over the length where the struts' surfaces part, (d_j + d_i cos θ)/(2 sin θ), "
                          "and bends over the flexible length between its zones", tag="derived")

# A strut with a concentrated mass M_a at mid-span (a sphere threaded on it), by Rayleigh's method with the
# static deflection shape under a central load as the mode shape (Rao 2017, §8.7): clamped–clamped
# y = 4ξ²(3 − 4ξ) (ξ ≤ ½), k = 192 EI/L³, kinetic-energy mass M_a + (13/35) m_s, participating mass
# (M_a + m_s/2)² / (M_a + 13 m_s/35); pinned–pinned y = ξ(3 − 4ξ²) (ξ ≤ ½), k = 48 EI/L³, M_a + (17/35) m_s,
# (M_a + 5 m_s/8)² / (M_a + 17 m_s/35); m_s = ρ A L the strut's own mass [the factors derived from those
# shapes; tests/physics/test_midspan_mass.py integrates them].  The sphere's rotary inertia does not enter:
# the first mode is symmetric, the mid-span does not turn.  N struts, direction weight w = 1 − (d·e)².
_Ma, _ms1, _Nm, _wm = sp.symbols("M_a m_s N w")
_MIDSPAN_NAMES = {"f_t": r"f_\mathrm{t}", "m_r": r"m_\mathrm{r}", "M_a": r"M_\mathrm{a}", "m_s": r"m_\mathrm{s}"}
MIDSPAN_MASS_FREQUENCY_CC = Formula("f_t", sp.sqrt(192 * _E * _I / (_L**3 * (_Ma + sp.Rational(13, 35) * _ms1)))
                                    / (2 * sp.pi), latex_names=_MIDSPAN_NAMES)
MIDSPAN_MASS_FREQUENCY_PP = Formula("f_t", sp.sqrt(48 * _E * _I / (_L**3 * (_Ma + sp.Rational(17, 35) * _ms1)))
                                    / (2 * sp.pi), latex_names=_MIDSPAN_NAMES)
MIDSPAN_MASS_RESONATING_CC = Formula("m_r", _Nm * _wm * (_Ma + _ms1 / 2) ** 2 / (_Ma + sp.Rational(13, 35) * _ms1),
                                     latex_names=_MIDSPAN_NAMES)
MIDSPAN_MASS_RESONATING_PP = Formula("m_r", _Nm * _wm * (_Ma + sp.Rational(5, 8) * _ms1) ** 2
                                     / (_Ma + sp.Rational(17, 35) * _ms1), latex_names=_MIDSPAN_NAMES)
RAYLEIGH_MIDSPAN_CC = Source(author="Rao, S. S.", title="Mechanical Vibrations, 6th ed.", year=2017,
                             locator="§8.7 Rayleigh's method, clamped beam with a central mass, static deflection "
                                     "shape (factors 13/35 and 1/2 derived from that shape)")
RAYLEIGH_MIDSPAN_PP = Source(author="Rao, S. S.", title="Mechanical Vibrations, 6th ed.", year=2017,
                             locator="§8.7 Rayleigh's method, simply supported beam with a central mass, static "
                                     "deflection shape (factors 17/35 and 5/8 derived from that shape)")

SECTION_SOURCE = Source(author="Young, W. C. & Budynas, R. G.",
                        title="Roark's Formulas for Stress and Strain, 7th ed.", year=2002,
                        locator="Table A.1, solid circle and rectangle", tag="from memory")
TUBE_SECTION_SOURCE = Source(author="Young, W. C. & Budynas, R. G.",
                             title="Roark's Formulas for Stress and Strain, 7th ed.", year=2002,
                             locator="Table A.1, hollow circle; Table 10.1, closed thin-walled tube J = 2I",
                             tag="from memory")


# --- sections ---------------------------------------------------------------------------------
@dataclass(frozen=True, kw_only=True)
class Section(CalcResult):
    """A cross-section; ``value`` is the area.

    ``shape`` is ``"circle"``, ``"rectangle"`` or ``"tube"`` (hollow circle) and selects Cowper's
    shear coefficient; a tube also carries its ``diameter_ratio`` m = d_i / D.
    """

    shape: str
    area: object
    second_moment: object
    diameter_ratio: object = None


def check_wall_thickness(wall_thickness, *, outer_diameter, name: str = "wall_thickness"):
    """A tube's wall thickness [length], or None for a solid section (None or zero given).

    The wall must be thinner than the outer radius: a wall of D/2 or more is a solid rod.
    """
    if wall_thickness is None:
        return None
    t = check_dimension(wall_thickness, name=name, expected="length")
    tm = float(t.to("m").magnitude) if np.ndim(t.magnitude) == 0 else float("nan")
    if not math.isfinite(tm) or tm < 0:
        raise InputError("a wall thickness is a single length, zero (solid) or positive", input_name=name,
                         expected=">= 0 mm (0 for a solid rod)", got=str(t))
    if tm == 0:
        return None
    dm = float(_length(outer_diameter, "outer_diameter").to("m").magnitude)
    if not tm < dm / 2:
        raise InputError("the wall of a tube must be thinner than its outer radius", input_name=name,
                         expected=f"less than {format_number(dm / 2 * 1e3, 4)} mm (half the outer diameter; "
                                  "leave it out, or 0, for a solid rod)",
                         got=f"{format_number(tm * 1e3, 4)} mm")
    return t.to("mm")


def tube_section(*, outer_diameter, wall_thickness, id_prefix: str = "strut") -> Section:
    """Area, second moment and diameter ratio of a hollow circle (a tube).

    Parameters
    ----------
    outer_diameter:
        Outer diameter D [length].
    wall_thickness:
        Wall thickness t [length], 0 < t < D/2.
    id_prefix:
        Prefix of the step ids.
    """
    D = _length(outer_diameter, "outer_diameter")
    t = check_wall_thickness(wall_thickness, outer_diameter=D)
    if t is None:
        raise InputError("a tube needs a wall thickness", input_name="wall_thickness",
                         expected="a positive length below half the outer diameter", got="0 or none")
    di = evaluate(INNER_DIAMETER, id=f"{id_prefix}.inner-diameter", description="Inner diameter of the tube",
                  values={"D": D, "t": t}, unit="mm", source=TUBE_SECTION_SOURCE)
    vals = {"D": D, "d_i": di.result}
    a = evaluate(AREA_TUBE, id=f"{id_prefix}.area", description="Tube cross-section area", values=vals,
                 unit="mm^2", source=TUBE_SECTION_SOURCE)
    i = evaluate(SECOND_MOMENT_TUBE, id=f"{id_prefix}.second-moment",
                 description="Second moment of area of the tube section", values=vals, unit="mm^4",
                 source=TUBE_SECTION_SOURCE)
    m = evaluate(DIAMETER_RATIO, id=f"{id_prefix}.diameter-ratio", description="Inner over outer diameter",
                 values=vals, unit="", source=TUBE_SECTION_SOURCE, sig=6)
    return Section(value=a.result, steps=(di, a, i, m), shape="tube", area=a.result, second_moment=i.result,
                   diameter_ratio=m.result, title="Hollow circular section (tube)")


def circular_section(*, diameter, wall_thickness=None, id_prefix: str = "strut") -> Section:
    """Area and second moment of area of a solid circle, or of a tube when a wall thickness is given.

    Parameters
    ----------
    diameter:
        (Outer) diameter [length].
    wall_thickness:
        Wall thickness of a tube [length]; None or zero for a solid circle.
    id_prefix:
        Prefix of the step ids.
    """
    d = _length(diameter, "diameter")
    if check_wall_thickness(wall_thickness, outer_diameter=d) is not None:
        return tube_section(outer_diameter=d, wall_thickness=wall_thickness, id_prefix=id_prefix)
    a = evaluate(AREA_CIRCLE, id=f"{id_prefix}.area", description="Strut cross-section area",
                 values={"d": d}, unit="mm^2", source=SECTION_SOURCE)
    i = evaluate(SECOND_MOMENT_CIRCLE, id=f"{id_prefix}.second-moment",
                 description="Second moment of area of the strut section", values={"d": d},
                 unit="mm^4", source=SECTION_SOURCE)
    return Section(value=a.result, steps=(a, i), shape="circle", area=a.result, second_moment=i.result,
                   title="Solid circular section")


def rectangular_section(*, width, depth, id_prefix: str = "beam") -> Section:
    """Area and second moment of a solid rectangle bending about the axis parallel to ``width``.

    Parameters
    ----------
    width:
        Breadth b [length].
    depth:
        Depth h in the plane of bending [length].
    id_prefix:
        Prefix of the step ids.
    """
    b = _length(width, "width")
    h = _length(depth, "depth")
    a = evaluate(AREA_RECTANGLE, id=f"{id_prefix}.area", description="Cross-section area",
                 values={"b": b, "h": h}, unit="mm^2", source=SECTION_SOURCE)
    i = evaluate(SECOND_MOMENT_RECTANGLE, id=f"{id_prefix}.second-moment",
                 description="Second moment of area (bending in the depth direction)",
                 values={"b": b, "h": h}, unit="mm^4", source=SECTION_SOURCE)
    return Section(value=a.result, steps=(a, i), shape="rectangle", area=a.result,
                   second_moment=i.result, title="Solid rectangular section")


# --- Timoshenko frequency equation (numerical) --------------------------------------------------
def _basis(omega, x, *, E, G, kappa, rho, A, Iz):
    """w, w', ψ, ψ' of the four real solutions cos αx, sin αx, cosh βx, sinh βx (below cut-off).

    From κGA(w'' − ψ') + ρAω² w = 0 and EI ψ'' + κGA(w' − ψ) + ρIω² ψ = 0: with w ∝ e^{sx},
    s⁴ + B s² + C = 0, B = ρω²(1/E + 1/(κG)), C = (ρAω²/(EI))(ρIω²/(κGA) − 1).
    Returns an array (..., 4 quantities, 4 functions) for an array of ω.
    """
    omega = np.asarray(omega, dtype=float)
    B = rho * omega**2 * (1.0 / E + 1.0 / (kappa * G))
    C = (rho * A * omega**2 / (E * Iz)) * (rho * Iz * omega**2 / (kappa * G * A) - 1.0)
    root = np.sqrt(B**2 - 4.0 * C)
    alpha = np.sqrt((B + root) / 2.0)
    beta = np.sqrt((root - B) / 2.0)
    g = rho * omega**2 / (kappa * G)
    Aa = (alpha**2 - g) / alpha
    Bb = (beta**2 + g) / beta
    ca, sa = np.cos(alpha * x), np.sin(alpha * x)
    ch, sh = np.cosh(beta * x), np.sinh(beta * x)
    w = np.stack([ca, sa, ch, sh], axis=-1)
    dw = np.stack([-alpha * sa, alpha * ca, beta * sh, beta * ch], axis=-1)
    psi = np.stack([-Aa * sa, Aa * ca, Bb * sh, Bb * ch], axis=-1)
    dpsi = np.stack([-Aa * alpha * ca, -Aa * alpha * sa, Bb * beta * ch, Bb * beta * sh], axis=-1)
    return w, dw, psi, dpsi


def _end_rows(condition: str, w, dw, psi, dpsi, L):
    # Rows are scaled by powers of L so that all entries are dimensionless.
    if condition == "clamped":
        return [w, psi * L]
    if condition == "pinned":
        return [w, dpsi * L**2]
    return [dpsi * L**2, (dw - psi) * L]  # free: bending moment and shear force vanish


def timoshenko_determinant(omega, *, supports: str, L, E, G, kappa, rho, A, Iz):
    """Determinant of the 4 × 4 boundary system of a uniform Timoshenko beam at circular frequency ω.

    All arguments are plain floats in SI units (ω in rad/s may be an array).  The roots in ω
    below the cut-off frequency √(κGA/(ρI)) are the natural frequencies of the first spectrum.
    """
    left, right = supports.split("-")
    kw = {"E": E, "G": G, "kappa": kappa, "rho": rho, "A": A, "Iz": Iz}
    rows = _end_rows(left, *_basis(omega, 0.0, **kw), L) + _end_rows(right, *_basis(omega, L, **kw), L)
    matrix = np.stack(rows, axis=-2)
    return np.linalg.det(matrix)


def _timoshenko_root(*, supports, mode, L, E, G, kappa, rho, A, Iz, omega_eb):
    """The ``mode``-th root of :func:`timoshenko_determinant` (first spectrum), in rad/s."""
    cutoff = math.sqrt(kappa * G * A / (rho * Iz))
    top = min(omega_eb[-1] * (1 + 1e-6), cutoff * (1 - 1e-9))
    grid = np.linspace(omega_eb[0] * 1e-3, top, 600 * len(omega_eb) + 1)
    kw = {"supports": supports, "L": L, "E": E, "G": G, "kappa": kappa, "rho": rho, "A": A, "Iz": Iz}
    det = timoshenko_determinant(grid, **kw)
    change = np.nonzero(np.sign(det[:-1]) * np.sign(det[1:]) < 0)[0]
    if len(change) < mode:
        raise ModelError("the strut is too stocky for a beam model: mode lies above the Timoshenko "
                         "cut-off frequency", input_name="mode", expected="a slender strut (L/d > ~3)",
                         got=f"{len(change)} modes below the cut-off", hint="Use a solid FE model")
    i = change[mode - 1]
    def fun(w):
        return float(timoshenko_determinant(w, **kw))
    return find_root(fun, grid[i], grid[i + 1], xtol=1e-12 * grid[i + 1], rtol=1e-14, maxiter=200)


# --- results ------------------------------------------------------------------------------------
@dataclass(frozen=True, kw_only=True)
class BendingFrequency(CalcResult):
    """Result of :func:`bending_frequency`; ``value`` is the frequency in Hz.

    For ``theory="timoshenko"``, ``euler_bernoulli`` holds the Euler–Bernoulli frequency and
    ``difference`` the fraction by which the Timoshenko value lies below it.
    """

    supports: str
    mode: int
    theory: str
    eigenvalue: float
    euler_bernoulli: object = None
    difference: object = None

    @property
    def flagged(self) -> bool:
        """True when Timoshenko lies more than :data:`TIMOSHENKO_FLAG` below Euler–Bernoulli."""
        return self.difference is not None and float(self.difference.to("").magnitude) > TIMOSHENKO_FLAG


def section_bending_frequency(*, length, section: Section, youngs_modulus, density,
                              supports: str = "clamped-clamped", mode: int = 1,
                              theory: str = "euler-bernoulli", poissons_ratio=None,
                              id_prefix: str = "strut") -> BendingFrequency:
    """Natural bending frequency of a uniform beam of a given section (solid, or a tube).

    Parameters
    ----------
    length:
        Length between the supports [length].
    section:
        A :class:`Section` from :func:`circular_section`, :func:`tube_section` or
        :func:`rectangular_section`.
    youngs_modulus:
        Young's modulus [pressure]; the dynamic modulus for an elastomer.
    density:
        Mass density [mass / length³].
    supports:
        One of :data:`SUPPORTS`; for asymmetric cases the first named end is at x = 0.
    mode:
        Mode number, 1 for the fundamental.
    theory:
        ``"euler-bernoulli"`` or ``"timoshenko"`` (shear deformation and rotary inertia).
    poissons_ratio:
        Poisson's ratio in (−1, 0.5) [dimensionless]; needed for Timoshenko (G and κ).
    id_prefix:
        Prefix of the step ids on the sheet.

    Returns
    -------
    BendingFrequency
        ``.value`` in Hz with the steps that produced it.
    """
    L = _length(length, "length")
    E = _modulus(youngs_modulus)
    rho = _density(density)
    _check_supports(supports)
    n = _check_mode(mode)
    _check_theory(theory)
    nu = None
    if theory == "timoshenko" or poissons_ratio is not None:
        nu = check_poissons_ratio(poissons_ratio)
    tag = _tag(supports)
    A, Iz = section.area, section.second_moment
    lam = eigenvalue(supports=supports, mode=n)
    eb_id = f"{id_prefix}.f{n}-{tag}" + ("-eb" if theory == "timoshenko" else "")
    f_eb = evaluate(EULER_BERNOULLI_FREQUENCY, id=eb_id,
                    description=f"Bending frequency, mode {n}, {supports} (Euler–Bernoulli)",
                    values={"lambda_n": Q_(lam, ""), "L": L, "E": E, "I": Iz, "rho": rho, "A": A},
                    unit="Hz", source=RAO_2017)
    steps: list[Step] = [*section.steps, f_eb]
    title = f"Strut bending frequency ({supports}, mode {n})"
    if theory == "euler-bernoulli":
        return BendingFrequency(value=f_eb.result, steps=tuple(steps), supports=supports, mode=n,
                                theory=theory, eigenvalue=lam, title=title)

    g = evaluate(SHEAR_MODULUS, id=f"{id_prefix}.shear-modulus", description="Shear modulus (isotropic)",
                 values={"E": E, "nu": nu}, unit="MPa", source=ELASTICITY)
    if section.shape == "tube":
        k = evaluate(COWPER_TUBE, id=f"{id_prefix}.shear-coefficient",
                     description="Shear coefficient of a hollow circle (Cowper)",
                     values={"nu": nu, "m": section.diameter_ratio}, unit="", source=COWPER_1966_TUBE, sig=6)
    else:
        cowper = COWPER_CIRCLE if section.shape == "circle" else COWPER_RECTANGLE
        k = evaluate(cowper, id=f"{id_prefix}.shear-coefficient",
                     description=f"Shear coefficient of a solid {section.shape} (Cowper)",
                     values={"nu": nu}, unit="", source=COWPER_1966, sig=6)
    t_id = f"{id_prefix}.f{n}-{tag}"
    t_desc = f"Bending frequency, mode {n}, {supports} (Timoshenko)"
    if supports == "pinned-pinned":
        f_t = evaluate(TIMOSHENKO_PINNED_FREQUENCY, id=t_id, description=t_desc,
                       values={"n": Q_(n, ""), "L": L, "E": E, "G": g.result, "kappa": k.result,
                               "rho": rho, "I": Iz, "A": A}, unit="Hz", source=HAN_1999)
    else:
        si = {"L": L.to("m").magnitude, "E": E.to("Pa").magnitude, "G": g.result.to("Pa").magnitude,
              "kappa": float(k.result.magnitude), "rho": rho.to("kg/m^3").magnitude,
              "A": A.to("m^2").magnitude, "Iz": Iz.to("m^4").magnitude}
        c = math.sqrt(si["E"] * si["Iz"] / (si["rho"] * si["A"])) / si["L"] ** 2
        omega_eb = [eigenvalue(supports=supports, mode=m) ** 2 * c for m in range(1, n + 1)]
        omega = _timoshenko_root(supports=supports, mode=n, omega_eb=omega_eb, **si)
        f_t = quantity_step(id=t_id, description=t_desc, value=Q_(omega / (2 * math.pi), "Hz"), unit="Hz",
                            method=f"root {n} of the 4×4 boundary-condition determinant of the Timoshenko "
                            "equations (bracketed on a 600-point scan per mode, refined by Brent's method)",
                            source=HAN_1999)
    diff = evaluate(THEORY_DIFFERENCE, id=f"{id_prefix}.f{n}-{tag}-shear-effect",
                    description="Timoshenko frequency below Euler–Bernoulli by",
                    values={"f_EB": f_eb.result, "f_T": f_t.result}, unit="percent", sig=3)
    frac = float(diff.result.to("").magnitude)
    if frac > TIMOSHENKO_FLAG:
        diff = replace(diff, note=(
            "FLAG: shear deformation and rotary inertia lower this mode by "
            f"{format_number(100 * frac, 3)} %, "
            f"more than {format_number(100 * TIMOSHENKO_FLAG, 2)} %: use the Timoshenko value; the strut is "
            "not slender for this mode."))
    steps += [g, k, f_t, diff]
    return BendingFrequency(value=f_t.result, steps=tuple(steps), supports=supports, mode=n, theory=theory,
                            eigenvalue=lam, euler_bernoulli=f_eb.result, difference=diff.result.to(""),
                            title=title + " — Timoshenko")


def bending_frequency(*, length, diameter, youngs_modulus, density, supports: str = "clamped-clamped",
                      mode: int = 1, theory: str = "euler-bernoulli", poissons_ratio=None,
                      id_prefix: str = "strut") -> BendingFrequency:
    """Natural bending frequency of a uniform solid circular strut.

    Parameters
    ----------
    length:
        Strut length between the supports [length].
    diameter:
        Strut diameter [length].
    youngs_modulus:
        Young's modulus of the strut material [pressure]; use the dynamic modulus for an elastomer.
    density:
        Mass density [mass / length³].
    supports:
        ``"clamped-clamped"``, ``"pinned-pinned"``, ``"clamped-pinned"`` or ``"clamped-free"``.
    mode:
        Mode number, 1 for the fundamental.
    theory:
        ``"euler-bernoulli"`` or ``"timoshenko"`` (shear and rotary inertia; Cowper's κ for a circle).
    poissons_ratio:
        Poisson's ratio in (−1, 0.5) [dimensionless]; required by Timoshenko.
    id_prefix:
        Prefix of the step ids on the sheet.

    Returns
    -------
    BendingFrequency
        ``.value`` in Hz; ``.steps``: section area, second moment, frequency (and for Timoshenko:
        shear modulus, shear coefficient, Timoshenko frequency, difference with a flag above 2 %).

    Examples
    --------
    >>> from latticecalc import Q_
    >>> r = bending_frequency(length=Q_(40, "mm"), diameter=Q_(3, "mm"),
    ...                       youngs_modulus=Q_(20, "MPa"), density=Q_(1150, "kg/m^3"))
    >>> round(float(r.value.to("Hz").magnitude), 1)
    220.1
    """
    _length(length, "length")
    _modulus(youngs_modulus)
    _density(density)
    section = circular_section(diameter=diameter, id_prefix=id_prefix)
    return section_bending_frequency(length=length, section=section, youngs_modulus=youngs_modulus,
                                     density=density, supports=supports, mode=mode, theory=theory,
                                     poissons_ratio=poissons_ratio, id_prefix=id_prefix)


def zoned_bending_frequency(*, length, zone_lengths, diameter, youngs_modulus, density,
                            supports: str = "clamped-clamped", mode: int = 1, theory: str = "euler-bernoulli",
                            poissons_ratio=None, id_prefix: str = "strut.zones") -> BendingFrequency:
    """Bending frequency of a solid circular strut with rigid zones at its nodes.

    The strut bends over its flexible length L_f = L − l₁ − l₂ between the zones, with the end
    conditions of ``supports`` at the zones' ends: f = λ_n² / (2π L_f²) √(E I / (ρ A)) for
    Euler–Bernoulli.  The zones' own mass is neglected; for clamped–clamped this is exact (the
    clamps hold the zones still).  A step gives the ratio to the node-to-node frequency
    (Euler–Bernoulli, same supports and mode).

    Parameters
    ----------
    length:
        Node-to-node strut length L [length].
    zone_lengths:
        Rigid zone length l_r at each end [length]: one value for both ends, or a pair (l₁, l₂);
        see :func:`latticecalc.physics.frame_fe.cell_node_zones`.
    diameter, youngs_modulus, density, supports, mode, theory, poissons_ratio:
        As for :func:`bending_frequency`.
    id_prefix:
        Prefix of the step ids (``strut.zones.l-flex``, ``strut.zones.f1-cc``, ``strut.zones.ratio``).
    """
    L = _length(length, "length")
    z = check_dimension(zone_lengths, name="zone_lengths", expected="length")
    zm = np.atleast_1d(np.asarray(z.to("m").magnitude, dtype=float))
    if zm.size == 1:
        zm = np.repeat(zm, 2)
    if zm.shape != (2,) or not np.all(np.isfinite(zm)) or np.any(zm < 0):
        raise InputError("zone lengths are one length or a pair, each >= 0", input_name="zone_lengths",
                         expected="l_r or (l_1, l_2), >= 0 mm", got=str(z))
    if zm.sum() >= float(L.to("m").magnitude):
        raise InputError("the rigid zones leave no flexible length", input_name="zone_lengths",
                         expected=f"l_1 + l_2 < L = {format_number(float(L.to('mm').magnitude), 4)} mm",
                         got=f"{format_number(zm[0] * 1e3, 4)} + {format_number(zm[1] * 1e3, 4)} mm")
    lf = evaluate(FLEXIBLE_LENGTH, id=f"{id_prefix}.l-flex", unit="mm", source=NODE_ZONE_SOURCE,
                  description="Flexible length of the strut between its rigid node zones",
                  values={"L": L, "l_1": Q_(zm[0] * 1e3, "mm"), "l_2": Q_(zm[1] * 1e3, "mm")})
    r = bending_frequency(length=lf.result, diameter=diameter, youngs_modulus=youngs_modulus, density=density,
                          supports=supports, mode=mode, theory=theory, poissons_ratio=poissons_ratio,
                          id_prefix=id_prefix)
    sec = circular_section(diameter=diameter, id_prefix=id_prefix)
    f0 = EULER_BERNOULLI_FREQUENCY.evaluate({"lambda_n": Q_(r.eigenvalue, ""), "L": L, "E": youngs_modulus,
                                             "I": sec.second_moment, "rho": density, "A": sec.area}).to("Hz")
    ratio = evaluate(ZONE_FREQUENCY_RATIO, id=f"{id_prefix}.ratio", unit="", sig=4, source=NODE_ZONE_SOURCE,
                     description=f"Rise of the frequency by the rigid node zones (over the node-to-node "
                     f"Euler–Bernoulli value, {supports}, mode {r.mode})", values={"f_z": r.value, "f_0": f0})
    return replace(r, steps=(lf, *r.steps, ratio),
                   title=f"Strut bending frequency with rigid node zones ({supports}, mode {r.mode})")


# --- table of modes ------------------------------------------------------------------------------
@dataclass(frozen=True, kw_only=True)
class ModeTable(CalcResult):
    """Result of :func:`strut_mode_table`; ``value`` maps each support case to a Hz array (modes 1..n)."""

    modes: tuple[int, ...]
    theory: str
    euler_bernoulli: dict | None = None

    def comparison_rows(self, sig: int = 4) -> list[list[str]]:
        """Rows ``[supports, mode, f_EB, f_T, difference %, flag]`` of a Timoshenko table."""
        if self.euler_bernoulli is None:
            raise InputError("only a Timoshenko table compares theories", input_name="theory",
                             expected="'timoshenko'", got=repr(self.theory))
        rows = []
        for s in self.value:
            for i, m in enumerate(self.modes):
                eb = float(self.euler_bernoulli[s][i].to("Hz").magnitude)
                t = float(self.value[s][i].to("Hz").magnitude)
                diff = 1.0 - t / eb
                rows.append([s, str(m), format_number(eb, sig), format_number(t, sig),
                             format_number(100 * diff, 3), "FLAG" if diff > TIMOSHENKO_FLAG else ""])
        return rows

    def rows(self, sig: int = 4) -> list[list[str]]:
        """Rows ``[supports, f1, f2, f3]`` as text, for :func:`latticecalc.sheet.table`."""
        return [[s] + [format_number(v, sig) for v in self.value[s].to("Hz").magnitude] for s in self.value]

    @property
    def columns(self) -> list[str]:
        """Column headings matching :meth:`rows`."""
        return ["supports"] + [f"f{m} (Hz)" for m in self.modes]


def strut_mode_table(*, length, diameter, youngs_modulus, density, theory: str = "euler-bernoulli",
                     poissons_ratio=None, modes=(1, 2, 3), supports=SUPPORTS,
                     id_prefix: str = "strut") -> ModeTable:
    """Bending frequencies of a solid circular strut for several modes and support cases.

    Parameters are those of :func:`bending_frequency`; ``modes`` and ``supports`` list what to
    tabulate.  Every frequency is a step on the sheet (the shared section steps appear once).
    """
    _check_theory(theory)
    modes = tuple(_check_mode(m) for m in modes)
    value, eb, steps, seen = {}, {}, [], set()
    for s in supports:
        _check_supports(s)
        freqs, eb_freqs = [], []
        for m in modes:
            r = bending_frequency(length=length, diameter=diameter, youngs_modulus=youngs_modulus,
                                  density=density, supports=s, mode=m, theory=theory,
                                  poissons_ratio=poissons_ratio, id_prefix=id_prefix)
            freqs.append(r.value.to("Hz").magnitude)
            eb_freqs.append((r.euler_bernoulli if r.euler_bernoulli is not None else r.value).to("Hz").magnitude)
            for st in r.steps:
                if st.id not in seen:
                    seen.add(st.id)
                    steps.append(st)
        value[s] = Q_(np.array(freqs), "Hz")
        eb[s] = Q_(np.array(eb_freqs), "Hz")
    return ModeTable(value=value, steps=tuple(steps), modes=modes, theory=theory,
                     euler_bernoulli=eb if theory == "timoshenko" else None,
                     title=f"Strut bending frequencies, modes {', '.join(map(str, modes))} ({theory})")


# --- inverse sizing -------------------------------------------------------------------------------
@dataclass(frozen=True, kw_only=True)
class Sizing(CalcResult):
    """Result of an inverse sizing; ``value`` is the size found, ``check_frequency`` the forward check."""

    check_frequency: object


def _forward_check(*, L, d, E, rho, lam, n, supports, id_prefix):
    sec = circular_section(diameter=d, id_prefix=f"{id_prefix}.check")
    f = evaluate(EULER_BERNOULLI_FREQUENCY, id=f"{id_prefix}.check.f{n}-{_tag(supports)}",
                 description="Check: frequency of the sized strut (Euler–Bernoulli)",
                 values={"lambda_n": Q_(lam, ""), "L": L, "E": E, "I": sec.second_moment, "rho": rho,
                         "A": sec.area}, unit="Hz", source=RAO_2017)
    return sec.steps + (f,), f.result


def diameter_for_frequency(*, target, length, youngs_modulus, density, supports: str = "clamped-clamped",
                           mode: int = 1, id_prefix: str = "sizing.diameter") -> Sizing:
    """Strut diameter that puts bending mode ``mode`` at ``target`` (Euler–Bernoulli, solid circle).

    d = 8π f L² / λ_n² · √(ρ/E), the frequency formula (Rao 2017, eq. 8.82) solved for d with
    I/A = d²/16.

    Parameters
    ----------
    target:
        Target frequency [frequency].
    length:
        Strut length [length].
    youngs_modulus:
        Young's modulus [pressure] (dynamic modulus for an elastomer).
    density:
        Mass density [mass / length³].
    supports, mode:
        As for :func:`bending_frequency`; the default is the first clamped–clamped mode.
    id_prefix:
        Prefix of the step ids.
    """
    f = check_positive(check_dimension(target, name="target", expected="frequency"), name="target")
    L = _length(length, "length")
    E = _modulus(youngs_modulus)
    rho = _density(density)
    _check_supports(supports)
    n = _check_mode(mode)
    lam = eigenvalue(supports=supports, mode=n)
    d = evaluate(DIAMETER_FOR_FREQUENCY, id=f"{id_prefix}.d", unit="mm", source=RAO_2017,
                 description=f"Strut diameter for mode {n} ({supports}) at the target frequency",
                 values={"f": f, "L": L, "lambda_n": Q_(lam, ""), "rho": rho, "E": E})
    checks, f_back = _forward_check(L=L, d=d.result, E=E, rho=rho, lam=lam, n=n, supports=supports,
                                    id_prefix=id_prefix)
    return Sizing(value=d.result, steps=(d, *checks), check_frequency=f_back,
                  title="Strut diameter for a target frequency")


def length_for_frequency(*, target, diameter, youngs_modulus, density, supports: str = "clamped-clamped",
                         mode: int = 1, id_prefix: str = "sizing.length") -> Sizing:
    """Strut length that puts bending mode ``mode`` at ``target`` (Euler–Bernoulli, solid circle).

    L = λ_n √(d √(E/ρ) / (8π f)), the frequency formula (Rao 2017, eq. 8.82) solved for L.

    Parameters
    ----------
    target:
        Target frequency [frequency].
    diameter:
        Strut diameter [length].
    youngs_modulus:
        Young's modulus [pressure].
    density:
        Mass density [mass / length³].
    supports, mode:
        As for :func:`bending_frequency`.
    id_prefix:
        Prefix of the step ids.
    """
    f = check_positive(check_dimension(target, name="target", expected="frequency"), name="target")
    d = _length(diameter, "diameter")
    E = _modulus(youngs_modulus)
    rho = _density(density)
    _check_supports(supports)
    n = _check_mode(mode)
    lam = eigenvalue(supports=supports, mode=n)
    L = evaluate(LENGTH_FOR_FREQUENCY, id=f"{id_prefix}.l", unit="mm", source=RAO_2017,
                 description=f"Strut length for mode {n} ({supports}) at the target frequency",
                 values={"f": f, "d": d, "lambda_n": Q_(lam, ""), "rho": rho, "E": E})
    checks, f_back = _forward_check(L=L.result, d=d, E=E, rho=rho, lam=lam, n=n, supports=supports,
                                    id_prefix=id_prefix)
    return Sizing(value=L.result, steps=(L, *checks), check_frequency=f_back,
                  title="Strut length for a target frequency")


# --- modal mass -------------------------------------------------------------------------------------
def mode_shape(xi, *, supports: str, mode: int = 1):
    """Euler–Bernoulli mode shape φ(ξ), ξ = x/L in [0, 1] (Rao 2017, §8.5), unnormalised.

    Clamped–clamped and clamped–pinned: φ = cosh λξ − cos λξ − σ(sinh λξ − sin λξ) with
    σ = (cosh λ − cos λ)/(sinh λ − sin λ); clamped–free: σ = (cosh λ + cos λ)/(sinh λ + sin λ);
    pinned–pinned: φ = sin nπξ.  The hyperbolic part is evaluated as
    ½(1 + σ) e^{−λξ} + ½(1 − σ) e^{λξ} with 1 − σ formed without cancellation, so high modes
    stay accurate.
    """
    _check_supports(supports)
    n = _check_mode(mode)
    lam = eigenvalue(supports=supports, mode=n)
    xi = np.asarray(xi, dtype=float)
    if supports == "pinned-pinned":
        return np.sin(lam * xi)
    if supports == "clamped-free":
        den = math.sinh(lam) + math.sin(lam)
        sigma = (math.cosh(lam) + math.cos(lam)) / den
        one_minus = (-math.exp(-lam) + math.sin(lam) - math.cos(lam)) / den
    else:
        den = math.sinh(lam) - math.sin(lam)
        sigma = (math.cosh(lam) - math.cos(lam)) / den
        one_minus = (-math.exp(-lam) - math.sin(lam) + math.cos(lam)) / den
    x = lam * xi
    hyperbolic = 0.5 * (1.0 + sigma) * np.exp(-x) + 0.5 * one_minus * np.exp(x)
    return hyperbolic - np.cos(x) + sigma * np.sin(x)


def _modal_points(lam: float) -> int:
    """Gauss–Legendre points on [0, 1] for the modal integrals of a mode with eigenvalue ``lam``.

    64 plus 4 per unit of λ, about 12 points per half-wave; the mode shapes are smooth (sums of sin, cos,
    sinh, cosh), and the rule agrees with adaptive quadrature to 1e-9 for the first 60 modes
    (tests/physics/test_beams.py).
    """
    return 64 + int(math.ceil(4.0 * lam))


@cache
def _modal_mass_fraction(supports: str, mode: int) -> float:
    t, w = np.polynomial.legendre.leggauss(_modal_points(eigenvalue(supports=supports, mode=mode)))
    xi, w = 0.5 * (t + 1.0), 0.5 * w
    phi = np.asarray(mode_shape(xi, supports=supports, mode=mode), dtype=float)
    return float((w @ phi) ** 2 / (w @ phi**2))


def modal_mass_fraction(*, supports: str = "clamped-clamped", mode: int = 1,
                        id: str = "strut.modal-mass-fraction") -> CalcResult:
    """Effective modal mass of a uniform beam's mode under support translation, as a fraction of its mass.

    μ_n = (∫₀¹ φ_n dξ)² / ∫₀¹ φ_n² dξ, computed from the Euler–Bernoulli mode shape by Gauss–Legendre
    quadrature (64 + 4 λ_n points).  It is the share of the beam's mass that acts as a resonator when both supports
    move together (base excitation); the rest moves with the supports.

    Returns
    -------
    CalcResult
        ``.value`` dimensionless.
    """
    _check_supports(supports)
    n = _check_mode(mode)
    mu = _modal_mass_fraction(supports, n)
    step = quantity_step(id=id, description=f"Effective modal mass fraction, mode {n}, {supports}",
                         value=Q_(mu, ""), unit="", sig=4, source=MODAL_MASS_SOURCE,
                         method=f"(∫φ dξ)² / ∫φ² dξ from the Euler–Bernoulli mode shape, Gauss–Legendre "
                         f"quadrature on {_modal_points(eigenvalue(supports=supports, mode=n))} points")
    return CalcResult(value=step.result, steps=(step,), title="Effective modal mass fraction")


_a0, _Lr, _L0 = sp.symbols("a_0 L_req L_0")
CELL_WIDTH_FOR_LENGTH = Formula("a", _a0 * _Lr / _L0, latex_names={"a_0": "a_0", "L_req": r"L_\mathrm{req}"})
GEOMETRY_SOURCE = Source(author="common practice", title="similar cells: strut lengths scale with the cell width",
                         tag="common practice")


def cell_width_for_frequency(*, target, cell, youngs_modulus, density, supports: str = "clamped-clamped",
                             mode: int = 1, group: str = "lattice",
                             id_prefix: str = "sizing.cell-width") -> Sizing:
    """Cell width that puts the longest strut of ``group`` at ``target`` (Euler–Bernoulli).

    The strut length for the target comes from :func:`length_for_frequency`; the cell is scaled
    so that its longest strut of the group has that length, a = a₀ L_req / L₀ (all strut lengths
    of a cell scale with its width).

    Parameters
    ----------
    target:
        Target frequency [frequency].
    cell:
        A :class:`~latticecalc.physics.cells.Cell` (its diameters are kept).
    youngs_modulus:
        Young's modulus of the strut material [pressure] (dynamic modulus for an elastomer).
    density:
        Density of the strut material [mass / length³].
    supports, mode:
        As for :func:`bending_frequency`.
    group:
        The strut group that resonates.
    id_prefix:
        Prefix of the step ids.
    """
    lengths = cell.strut_lengths[cell.group_mask(group)]
    L0 = Q_(float(lengths.to("mm").magnitude.max()), "mm")
    d = cell.diameters[group]
    need = length_for_frequency(target=target, diameter=d, youngs_modulus=youngs_modulus, density=density,
                                supports=supports, mode=mode, id_prefix=f"{id_prefix}.strut")
    a = evaluate(CELL_WIDTH_FOR_LENGTH, id=f"{id_prefix}.a", unit="mm", source=GEOMETRY_SOURCE,
                 description="Cell width whose longest strut has the required length",
                 values={"a_0": cell.cell_width.to("mm"), "L_req": need.value, "L_0": L0})
    return Sizing(value=a.result, steps=(*need.steps, a), check_frequency=need.check_frequency,
                  title="Cell width for a target frequency")
