"""Bending of a single strut: natural frequencies of a uniform beam of circular section.

Euler–Bernoulli: f_n = λ_n² / (2π L²) · √(E I / (ρ A)).  The eigenvalues λ_n are the roots of
each support case's characteristic equation, found here numerically (never typed in), see
Rao, *Mechanical Vibrations*, 6th ed. (2017), §8.5, Table 8.1.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import cache

import numpy as np
import sympy as sp
from scipy.optimize import brentq

from latticecalc.errors import InputError
from latticecalc.sheet import CalcResult, Formula, Source, evaluate
from latticecalc.units import Q_, check_dimension, check_positive

RAO_2017 = Source(author="Rao, S. S.", title="Mechanical Vibrations, 6th ed.", year=2017,
                  locator="§8.5, eq. (8.82) and Table 8.1")

SUPPORTS = ("clamped-clamped", "pinned-pinned", "clamped-pinned", "clamped-free")

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
    half = 0.49 * math.pi if supports != "clamped-pinned" else 0.24 * math.pi
    lo, hi = guess - half, guess + half
    if supports == "clamped-pinned":
        # tan has poles at (k + 1/2)π; the root lies just below (n + 1/4)π, between n π and (n + 1/2)π.
        lo, hi = n * math.pi + 1e-9, (n + 0.5) * math.pi - 1e-9
    return brentq(g, lo, hi, xtol=1e-15, rtol=4 * np.finfo(float).eps, maxiter=200)


# --- formulas (the expression shown is the expression evaluated) -----------------------------
_L, _E, _I, _rho, _A, _lam, _d = sp.symbols("L E I rho A lambda_n d")

SECOND_MOMENT_CIRCLE = Formula("I", sp.pi * _d**4 / 64)
AREA_CIRCLE = Formula("A", sp.pi * _d**2 / 4)
EULER_BERNOULLI_FREQUENCY = Formula("f_n", _lam**2 / (2 * sp.pi * _L**2) * sp.sqrt(_E * _I / (_rho * _A)))

SECTION_SOURCE = Source(author="Young, W. C. & Budynas, R. G.",
                        title="Roark's Formulas for Stress and Strain, 7th ed.", year=2002,
                        locator="Table A.1, solid circle", tag="from memory")


@dataclass(frozen=True, kw_only=True)
class BendingFrequency(CalcResult):
    """Result of :func:`bending_frequency`; ``value`` is the frequency in Hz."""

    supports: str
    mode: int
    theory: str
    eigenvalue: float


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
        ``"euler-bernoulli"``.
    poissons_ratio:
        Unused by Euler–Bernoulli.
    id_prefix:
        Prefix of the step ids on the sheet.

    Returns
    -------
    BendingFrequency
        ``.value`` in Hz; ``.steps``: section area, second moment, frequency.
    """
    L = check_positive(check_dimension(length, name="length", expected="length"), name="length")
    d = check_positive(check_dimension(diameter, name="diameter", expected="length"), name="diameter")
    E = check_positive(check_dimension(youngs_modulus, name="youngs_modulus", expected="pressure"),
                       name="youngs_modulus")
    rho = check_positive(check_dimension(density, name="density", expected="density"), name="density")
    _check_supports(supports)
    n = _check_mode(mode)
    if theory != "euler-bernoulli":
        raise InputError("unknown beam theory", input_name="theory", expected="'euler-bernoulli'",
                         got=repr(theory))
    tag = supports.replace("clamped", "c").replace("pinned", "p").replace("free", "f").replace("-", "")
    a = evaluate(AREA_CIRCLE, id=f"{id_prefix}.area", description="Strut cross-section area",
                 values={"d": d}, unit="mm^2", source=SECTION_SOURCE)
    i = evaluate(SECOND_MOMENT_CIRCLE, id=f"{id_prefix}.second-moment",
                 description="Second moment of area of the strut section", values={"d": d},
                 unit="mm^4", source=SECTION_SOURCE)
    lam = eigenvalue(supports=supports, mode=n)
    f = evaluate(EULER_BERNOULLI_FREQUENCY, id=f"{id_prefix}.f{n}-{tag}",
                 description=f"Bending frequency, mode {n}, {supports} (Euler–Bernoulli)",
                 values={"lambda_n": Q_(lam, ""), "L": L, "E": E, "I": i.result, "rho": rho, "A": a.result},
                 unit="Hz", source=RAO_2017)
    return BendingFrequency(value=f.result, steps=(a, i, f), supports=supports, mode=n,
                            theory=theory, eigenvalue=lam,
                            title=f"Strut bending frequency ({supports}, mode {n})")
