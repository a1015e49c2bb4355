"""The building column that carries the panels: section, material, head, closed-form frequencies.

The column stands on its base (z = 0), which moves with the measured ground motion, and carries at
its head (z = H) the floor it supports: a tributary mass plus restraints that tie the head to the
rest of the building.  The rest of the building is taken to move with the ground, so a head
restraint is a spring between the head and the ground motion (its stiffness stated on the sheet).

Axes: z up the column; y normal to the front face (the face a single panel is fixed to); x along
that face.  A rectangular section is ``b`` along x and ``h`` along y.

Closed forms used as hand checks of the FE column (each shown as a step):

* axial, base fixed, head mass M: the lowest root of β L tan(β L) = m / M, m = ρ A L the column
  mass, f = β √(E/ρ) / 2π (Rao, *Mechanical Vibrations*, 6th ed. 2017, §8.3, longitudinal vibration
  of a bar with a mass at its end);
* bending, base fixed, head free with a mass M: Rayleigh's estimate with the static tip-load
  deflection shape, f = (1/2π) √(3 E I / ((M + 33/140 m) L³)) (Rao 2017, §8.7 Rayleigh's method;
  the 33/140 factor follows from that shape [derived]);
* bending, base fixed, head guided (rotation held) with a mass M: the same estimate with the guided
  shape, f = (1/2π) √(12 E I / ((M + 13/35 m) L³)) [derived the same way].
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np
import pint
import sympy as sp

from latticecalc.errors import InputError
from latticecalc.materials import Material
from latticecalc.physics.beams import (
    AREA_CIRCLE,
    AREA_RECTANGLE,
    COWPER_1966,
    COWPER_CIRCLE,
    COWPER_RECTANGLE,
    SECOND_MOMENT_CIRCLE,
    SECTION_SOURCE,
    SHEAR_MODULUS,
)
from latticecalc.physics.frame_fe import POLAR_MOMENT_CIRCLE
from latticecalc.physics.frame_fe import Section as FeSection
from latticecalc.physics.roots import find_root
from latticecalc.sheet import CalcResult, Formula, Source, evaluate, quantity_step
from latticecalc.units import Q_, check_dimension, check_positive, format_quantity

SHAPES = ("rectangular", "circular")
HEAD_KINDS = ("free", "guided", "pinned", "springs")

_b, _h, _rho, _A, _L, _E, _I, _M, _m = sp.symbols("b h rho A L E I M m")
#: Second moment of a rectangle b (along x) × h (along y) for bending with displacement along y.
SECOND_MOMENT_NORMAL = Formula("I_y", _b * _h**3 / 12, latex_names={"I_y": r"I_\mathrm{n}"})
#: The same rectangle bending with displacement along x.
SECOND_MOMENT_ALONG = Formula("I_x", _h * _b**3 / 12, latex_names={"I_x": r"I_\mathrm{a}"})
#: Torsion constant of a solid rectangle, long side a = max(b, h), short side c = min(b, h):
#: J = a c³ (1/3 − 0.21 (c/a)(1 − c⁴/(12 a⁴))) (Roark, 7th ed. 2002, Table 10.7 case 4) [from memory].
_a, _c = sp.symbols("a c")
TORSION_RECTANGLE = Formula("J", _a * _c**3 * (sp.Rational(1, 3) - sp.Rational(21, 100) * (_c / _a)
                                                * (1 - _c**4 / (12 * _a**4))))
MASS_PER_LENGTH = Formula("m_L", _rho * _A, latex_names={"m_L": r"m'"})
COLUMN_MASS = Formula("m", _rho * _A * _L)
CANTILEVER_TIP_MASS = Formula("f_b", sp.sqrt(3 * _E * _I / ((_M + sp.Rational(33, 140) * _m) * _L**3)) / (2 * sp.pi),
                              latex_names={"f_b": r"f_\mathrm{bend}"})
GUIDED_TIP_MASS = Formula("f_b", sp.sqrt(12 * _E * _I / ((_M + sp.Rational(13, 35) * _m) * _L**3)) / (2 * sp.pi),
                          latex_names={"f_b": r"f_\mathrm{bend}"})
_beta = sp.Symbol("beta")
AXIAL_FREQUENCY = Formula("f_ax", _beta / (2 * sp.pi) * sp.sqrt(_E / _rho), latex_names={"f_ax": r"f_\mathrm{ax}"})

RAO_BAR_END_MASS = Source(author="Rao, S. S.", title="Mechanical Vibrations, 6th ed.", year=2017,
                          locator="§8.3, bar fixed at one end with a mass at the other: βL tan βL = m/M")
RAYLEIGH_SOURCE = Source(author="Rao, S. S.", title="Mechanical Vibrations, 6th ed.", year=2017,
                         locator="§8.7 Rayleigh's method, with the static end-load deflection shape (factor derived)")
ROARK_TORSION = Source(author="Young, W. C. & Budynas, R. G.", title="Roark's Formulas for Stress and Strain, 7th ed.",
                       year=2002, locator="Table 10.7 case 4, solid rectangle", tag="from memory")
HEAD_SOURCE = Source(author="common practice", title="floor carried by the column as a tributary mass; its restraint "
                     "ties the head to the rest of the building, taken to move with the ground", tag="common practice")
#: Stiffness of a "held" head restraint, as a multiple of the column's own stiffness of that kind.
HELD = 1.0e4


@dataclass(frozen=True, kw_only=True)
class Column:
    """A prismatic concrete (or any) column with the floor it carries.

    Parameters
    ----------
    shape:
        ``"rectangular"`` (``width`` along x, ``depth`` along y) or ``"circular"`` (``width`` is the
        diameter).
    width, depth:
        Section dimensions [length]; ``depth`` is ignored for a circle.
    height:
        Storey height H, base to head [length].
    material:
        The column's :class:`~latticecalc.materials.Material` (dynamic modulus used).
    head_mass:
        Tributary floor mass carried at the head [mass].
    head:
        ``"free"`` (mass only), ``"guided"`` (rotations held, translations free), ``"pinned"``
        (horizontal translations held, rotations free) or ``"springs"`` (``head_translation`` [N/m]
        horizontal and ``head_rotation`` [N·m/rad]); the vertical always rides on the column.
    """

    shape: str
    width: pint.Quantity
    height: pint.Quantity
    material: Material
    head_mass: pint.Quantity
    depth: pint.Quantity | None = None
    head: str = "guided"
    head_translation: pint.Quantity | None = None
    head_rotation: pint.Quantity | None = None

    def __post_init__(self) -> None:
        if self.shape not in SHAPES:
            raise InputError("unknown column section shape", input_name="column.shape", expected=" or ".join(SHAPES),
                             got=repr(self.shape))
        check_positive(check_dimension(self.width, name="column.width", expected="length"), name="column.width")
        if self.shape == "rectangular":
            if self.depth is None:
                raise InputError("a rectangular column needs its depth", input_name="column.depth",
                                 expected="a length (the side normal to the panel face)")
            check_positive(check_dimension(self.depth, name="column.depth", expected="length"), name="column.depth")
        check_positive(check_dimension(self.height, name="column.height", expected="length"), name="column.height")
        m = check_dimension(self.head_mass, name="column.head_mass", expected="mass")
        if not m.magnitude >= 0 or not math.isfinite(float(m.magnitude)):
            raise InputError("the head mass must be finite and not negative", input_name="column.head_mass",
                             expected=">= 0 kg", got=format_quantity(m))
        if self.head not in HEAD_KINDS:
            raise InputError("unknown head restraint", input_name="column.head", expected=", ".join(HEAD_KINDS),
                             got=repr(self.head))
        if self.head == "springs":
            for name, dim in (("head_translation", "stiffness"), ("head_rotation", "rotational_stiffness")):
                q = getattr(self, name)
                if q is None:
                    raise InputError("head springs need both stiffnesses", input_name=f"column.{name}",
                                     expected=f"a stiffness [{dim}]")
                check_positive(check_dimension(q, name=f"column.{name}", expected=dim), name=f"column.{name}")

    @property
    def face_half_depth(self) -> dict[str, float]:
        """Distance from the axis to each face (m): ``front``/``back`` (±y) and ``left``/``right`` (±x)."""
        b = float(self.width.to("m").m)
        h = b if self.shape == "circular" else float(self.depth.to("m").m)
        return {"front": h / 2, "back": h / 2, "left": b / 2, "right": b / 2}

    @property
    def face_width(self) -> dict[str, float]:
        """Width of each face (m) across which a panel may lie."""
        b = float(self.width.to("m").m)
        h = b if self.shape == "circular" else float(self.depth.to("m").m)
        return {"front": b, "back": b, "left": h, "right": h}


@dataclass(frozen=True, kw_only=True)
class ColumnProperties(CalcResult):
    """Result of :func:`column_properties`: ``value`` = mass per length; the FE section in ``section``."""

    section: FeSection
    mass: pint.Quantity
    area: pint.Quantity
    second_moment_normal: pint.Quantity
    second_moment_along: pint.Quantity


def column_properties(column: Column, *, id_prefix: str = "column") -> ColumnProperties:
    """Section properties, mass and the beam section the FE column uses (dynamic modulus)."""
    mat = column.material
    E = mat.dynamic_modulus().to("Pa")
    nu = Q_(mat.poissons_ratio, "")
    steps = []
    if column.shape == "rectangular":
        vals = {"b": column.width, "h": column.depth}
        area = evaluate(AREA_RECTANGLE, id=f"{id_prefix}.area", description="Column cross-section area",
                        values=vals, unit="m^2", source=SECTION_SOURCE)
        i_n = evaluate(SECOND_MOMENT_NORMAL, id=f"{id_prefix}.i-normal", description="Second moment, bending "
                       "normal to the front face", values=vals, unit="m^4", source=SECTION_SOURCE)
        i_a = evaluate(SECOND_MOMENT_ALONG, id=f"{id_prefix}.i-along", description="Second moment, bending "
                       "along the front face", values=vals, unit="m^4", source=SECTION_SOURCE)
        long_, short = max(column.width, column.depth), min(column.width, column.depth)
        tor = evaluate(TORSION_RECTANGLE, id=f"{id_prefix}.torsion", description="Torsion constant",
                       values={"a": long_, "c": short}, unit="m^4", source=ROARK_TORSION)
        kap = evaluate(COWPER_RECTANGLE, id=f"{id_prefix}.kappa", description="Shear coefficient (Cowper, "
                       "rectangle)", values={"nu": nu}, unit="", source=COWPER_1966, sig=4)
        steps += [area, i_n, i_a, tor, kap]
    else:
        vals = {"d": column.width}
        area = evaluate(AREA_CIRCLE, id=f"{id_prefix}.area", description="Column cross-section area",
                        values=vals, unit="m^2", source=SECTION_SOURCE)
        i_n = evaluate(SECOND_MOMENT_CIRCLE, id=f"{id_prefix}.i-normal", description="Second moment of area",
                       values=vals, unit="m^4", source=SECTION_SOURCE)
        i_a = i_n
        tor = evaluate(POLAR_MOMENT_CIRCLE, id=f"{id_prefix}.torsion", description="Torsion constant",
                       values=vals, unit="m^4", source=SECTION_SOURCE)
        kap = evaluate(COWPER_CIRCLE, id=f"{id_prefix}.kappa", description="Shear coefficient (Cowper, circle)",
                       values={"nu": nu}, unit="", source=COWPER_1966, sig=4)
        steps += [area, i_n, tor, kap]
    g = evaluate(SHEAR_MODULUS, id=f"{id_prefix}.shear-modulus", description="Shear modulus (dynamic)",
                 values={"E": E.to("GPa"), "nu": nu}, unit="GPa", source=SECTION_SOURCE)
    mpl = evaluate(MASS_PER_LENGTH, id=f"{id_prefix}.mass-per-length", description="Column mass per metre",
                   values={"rho": mat.density, "A": area.result}, unit="kg/m", source=SECTION_SOURCE)
    mass = evaluate(COLUMN_MASS, id=f"{id_prefix}.mass", description="Column mass over the storey height",
                    values={"rho": mat.density, "A": area.result, "L": column.height.to("m")}, unit="kg",
                    source=SECTION_SOURCE)
    steps += [g, mpl, mass]
    # the FE section: local y = global x for a vertical element, so I (x–y plane) bends along x
    sec = FeSection(E=float(E.m), G=float(g.result.to("Pa").m), rho=float(mat.density.to("kg/m^3").m),
                    d=float(column.width.to("m").m), nu=float(nu.m), A=float(area.result.to("m^2").m),
                    I=float(i_a.result.to("m^4").m), J=float(tor.result.to("m^4").m), kappa=float(kap.result.m),
                    eta=float(mat.loss_factor), I2=float(i_n.result.to("m^4").m))
    return ColumnProperties(value=mpl.result, steps=tuple(steps), section=sec, mass=mass.result, area=area.result,
                            second_moment_normal=i_n.result, second_moment_along=i_a.result,
                            title="Column section, mass and stiffness")


def _axial_root(ratio: float) -> float:
    """Lowest root βL of βL tan βL = ratio (column mass over head mass), in (0, π/2)."""
    return find_root(lambda x: x * math.tan(x) - ratio, 1e-12, math.pi / 2 - 1e-12, xtol=1e-14)


def column_frequencies(column: Column, *, id_prefix: str = "column") -> CalcResult:
    """Closed-form axial and bending frequencies of the bare column with its head mass.

    ``value`` maps ``axial`` and ``bending_normal``/``bending_along`` (Hz).  The bending estimate
    follows the head restraint: free (cantilever with tip mass) or guided (rotation held); for a
    pinned or spring head no closed form is given (``None``) and the FE model is the reference.
    """
    props = column_properties(column, id_prefix=id_prefix)
    mat = column.material
    E = mat.dynamic_modulus().to("Pa")
    L = column.height.to("m")
    m = props.mass.to("kg")
    M = column.head_mass.to("kg")
    steps = []
    if M.m > 0:
        ratio = float((m / M).to("").m)
        beta_l = _axial_root(ratio)
        beta = Q_(beta_l / float(L.m), "1/m")
        steps.append(quantity_step(id=f"{id_prefix}.axial-root", description="Root βL of βL tan βL = m/M",
                                   value=Q_(beta_l, ""), method=f"m/M = {ratio:.4g}; Brent's method",
                                   source=RAO_BAR_END_MASS, sig=5))
    else:
        beta = Q_(math.pi / 2 / float(L.m), "1/m")
        steps.append(quantity_step(id=f"{id_prefix}.axial-root", description="βL of a fixed–free bar (no head mass)",
                                   value=Q_(math.pi / 2, ""), method="π/2", source=RAO_BAR_END_MASS, sig=5))
    ax = evaluate(AXIAL_FREQUENCY, id=f"{id_prefix}.f-axial", description="First axial frequency, head mass on "
                  "the column", values={"beta": beta, "E": E, "rho": mat.density}, unit="Hz", source=RAO_BAR_END_MASS)
    steps.append(ax)
    out: dict[str, Any] = {"axial": ax.result, "bending_normal": None, "bending_along": None}
    formula = {"free": CANTILEVER_TIP_MASS, "guided": GUIDED_TIP_MASS}.get(column.head)
    if formula is not None:
        for key, i_val, label in (("bending_normal", props.second_moment_normal, "normal to the front face"),
                                  ("bending_along", props.second_moment_along, "along the front face")):
            st = evaluate(formula, id=f"{id_prefix}.f-{key.replace('_', '-')}", description=f"First bending "
                          f"frequency {label} (head {column.head}, Rayleigh)", values={"E": E, "I": i_val,
                          "M": M, "m": m, "L": L}, unit="Hz", source=RAYLEIGH_SOURCE)
            steps.append(st)
            out[key] = st.result
    return CalcResult(value=out, steps=tuple(props.steps) + tuple(steps), title="Bare column: closed-form frequencies")


def head_springs(column: Column, props: ColumnProperties) -> tuple[float, float]:
    """Horizontal translational (N/m) and rotational (N·m/rad) stiffness tying the head to the ground motion.

    ``"held"`` restraints are stiff springs, :data:`HELD` times the column's own lateral (12 E I / H³)
    or rotational (4 E I / H) stiffness, so that the response is that of a held head to four digits.
    """
    sec = props.section
    H = float(column.height.to("m").m)
    EI = sec.E * max(sec.I, sec.I2 or sec.I)
    k_lat, k_rot = 12 * EI / H**3, 4 * EI / H
    if column.head == "free":
        return 0.0, 0.0
    if column.head == "guided":
        return 0.0, HELD * k_rot
    if column.head == "pinned":
        return HELD * k_lat, 0.0
    return (float(column.head_translation.to("N/m").m), float(column.head_rotation.to("N*m").m))


def column_levels(column: Column, *, levels: np.ndarray, max_spacing: float) -> np.ndarray:
    """Node heights (m) of the FE column: base, head, every level in ``levels``, and no gap above ``max_spacing``."""
    H = float(column.height.to("m").m)
    pts = np.unique(np.concatenate([[0.0, H], np.asarray(levels, float)]).round(9))
    out = [pts[0]]
    for z in pts[1:]:
        gap = z - out[-1]
        k = int(np.ceil(gap / max_spacing - 1e-9))
        out.extend(out[-1] + gap * np.arange(1, k + 1) / k)
    return np.array(out)
