"""The strut frequency's range under manufacturing and material tolerances.

Two answers are given side by side:

* **worst case**: the Euler–Bernoulli frequency formula (Rao 2017, eq. 8.82) evaluated at every
  combination of the tolerance limits of diameter, length, modulus and density (2⁴ corners);
  the lowest and highest values bound the frequency for any values inside the tolerances,
  because the formula is monotonic in each of them;
* **Monte Carlo**: the same formula evaluated on a seeded random sample of the four inputs,
  independent of one another, each uniform over its tolerance band (the default: a tolerance
  states only that the value lies inside it) or a normal distribution with the tolerance taken
  as three standard deviations and truncated at the tolerance; the 5 %, 50 % and 95 % points of
  the sample are reported.  The same seed gives the same numbers on every run.

For a result that is a product of powers of its inputs (a strut frequency, a modulus calibrated
from one), the first-order propagation of ± half-widths is written out as formulas derived by
sympy from the forward formula (never retyped): the exponent of each input is its logarithmic
sensitivity ∂ln F/∂ln x, the worst case adds |exponent| × relative half-width
(:func:`relative_bound`), and the standard uncertainty adds them in quadrature with each input
spread uniformly over its tolerance (JCGM 100:2008 §5.1.2 eq. (10) and §4.3.7;
:func:`relative_standard_uncertainty`).  :func:`strut_frequency_factors` and
:func:`density_frequency_factors` give the factors by which the diameter, length and density
tolerances move a strut frequency.
"""

from __future__ import annotations

import itertools
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
import pint
import sympy as sp

from latticecalc.errors import DimensionError, InputError
from latticecalc.physics.beams import (
    AREA_CIRCLE,
    EULER_BERNOULLI_FREQUENCY,
    MIDSPAN_MASS_FREQUENCY_CC,
    RAO_2017,
    RAYLEIGH_MIDSPAN_CC,
    SECOND_MOMENT_CIRCLE,
    bending_frequency,
    eigenvalue,
)
from latticecalc.sheet import COMMON_PRACTICE, CalcResult, Formula, Source, evaluate, quantity_step
from latticecalc.units import Q_, check_dimension, check_positive, format_quantity

DISTRIBUTIONS = ("uniform", "normal")

GUM_2008 = Source(author="JCGM", title="JCGM 100:2008 Evaluation of measurement data – Guide to the "
                  "expression of uncertainty in measurement", year=2008,
                  locator="§5.1.2, eq. (10) (law of propagation); §4.3.7 (rectangular distribution, u = a/√3)")
#: The worst case of a first-order propagation: each input at the end of its tolerance that moves
#: the result the same way, the relative changes added with their sensitivities.
WORST_CASE_SOURCE = Source(author="common practice", title="first-order worst-case propagation: sum of "
                           "|∂ln F/∂ln x| × Δx/x (Taylor expansion to first order)", tag="common practice")

#: The inputs that carry a tolerance: (argument name, tolerance argument name, dimension).
TOLERANCED = (("diameter", "diameter_tolerance", "length"),
              ("length", "length_tolerance", "length"),
              ("youngs_modulus", "modulus_tolerance", "pressure"),
              ("density", "density_tolerance", "density"))


def half_width(value: pint.Quantity, tolerance, *, name: str) -> pint.Quantity:
    """The ± half-width of a tolerance, in the unit of ``value``.

    ``tolerance`` is either a Quantity of the same dimension as ``value`` (an absolute ±
    tolerance, e.g. ``0.1 mm``) or a dimensionless fraction (``0.05``, ``Q_(5, "percent")``).
    ``None`` means no tolerance.  A negative tolerance, or one as large as the value itself,
    raises :class:`~latticecalc.errors.InputError`.
    """
    if tolerance is None:
        return value * 0
    if isinstance(tolerance, pint.Quantity) and tolerance.dimensionality == value.dimensionality:
        tol = tolerance.to(value.units)
    elif isinstance(tolerance, pint.Quantity) and not tolerance.dimensionless:
        raise DimensionError("wrong dimension for a tolerance", input_name=name,
                             expected=f"a quantity in {value.units:~P} or a dimensionless fraction",
                             got=format_quantity(tolerance))
    else:
        frac = check_dimension(tolerance, name=name, expected="dimensionless")
        tol = value * frac.to("").magnitude
    tol_mag = float(np.asarray(tol.magnitude))
    if not np.isfinite(tol_mag) or tol_mag < 0:
        raise InputError("a tolerance is a ± half-width and cannot be negative", input_name=name,
                         expected=">= 0", got=format_quantity(tol))
    if tol_mag >= float(value.magnitude):
        raise InputError("the tolerance is as large as the value itself", input_name=name,
                         expected=f"less than {format_quantity(value)}", got=format_quantity(tol),
                         hint="Give the tolerance as a ± half-width, e.g. '0.1 mm' or 0.05 for 5 %")
    return tol


@dataclass(frozen=True, kw_only=True)
class FrequencyRange(CalcResult):
    """Result of :func:`frequency_tolerance`; ``value`` maps names to Hz quantities.

    Keys of ``value``: ``nominal``, ``worst_low``, ``worst_high``, ``p05``, ``p50``, ``p95``.
    ``samples`` holds the Monte-Carlo frequencies (Hz), for the histogram.
    """

    samples: pint.Quantity
    distribution: str
    seed: int
    corners: pint.Quantity


def _frequencies(*, lam, L, d, E, rho):
    """The Euler–Bernoulli formula on (array) Quantities: the one formula, vectorised."""
    area = AREA_CIRCLE.evaluate({"d": d})
    second = SECOND_MOMENT_CIRCLE.evaluate({"d": d})
    return EULER_BERNOULLI_FREQUENCY.evaluate({"lambda_n": lam, "L": L, "E": E, "I": second,
                                               "rho": rho, "A": area}).to("Hz")


def frequency_tolerance(*, length, diameter, youngs_modulus, density, length_tolerance=None,
                        diameter_tolerance=None, modulus_tolerance=None, density_tolerance=None,
                        supports: str = "clamped-clamped", mode: int = 1, samples: int = 20000,
                        seed: int = 20261201, distribution: str = "uniform",
                        id_prefix: str = "strut.tolerance") -> FrequencyRange:
    """Range of a strut's Euler–Bernoulli bending frequency under tolerances.

    Parameters
    ----------
    length, diameter:
        Nominal strut length and diameter [length].
    youngs_modulus:
        Nominal Young's modulus [pressure] (dynamic modulus for an elastomer).
    density:
        Nominal density [mass / length³].
    length_tolerance, diameter_tolerance, modulus_tolerance, density_tolerance:
        ± half-widths: a Quantity of the parameter's dimension, or a dimensionless fraction;
        ``None`` for none.  A tolerance as large as the value raises InputError.
    supports, mode:
        Support case and mode, as for :func:`~latticecalc.physics.beams.bending_frequency`.
    samples:
        Monte-Carlo sample size (>= 100).
    seed:
        Seed of the random generator (``numpy.random.default_rng``); same seed, same result.
    distribution:
        ``"uniform"`` over ± tolerance, or ``"normal"`` with σ = tolerance / 3, truncated at ± 3σ.
    id_prefix:
        Prefix of the step ids.

    Returns
    -------
    FrequencyRange
        Nominal, worst-case low/high and Monte-Carlo 5/50/95 % frequencies in Hz, with steps.
    """
    nominal = bending_frequency(length=length, diameter=diameter, youngs_modulus=youngs_modulus,
                                density=density, supports=supports, mode=mode,
                                id_prefix=f"{id_prefix}.nominal")
    if distribution not in DISTRIBUTIONS:
        raise InputError("unknown distribution", input_name="distribution",
                         expected="one of " + ", ".join(DISTRIBUTIONS), got=repr(distribution))
    if isinstance(samples, bool) or not isinstance(samples, (int, np.integer)) or samples < 100:
        raise InputError("too few Monte-Carlo samples", input_name="samples", expected="an integer >= 100",
                         got=repr(samples))
    given = {"length": length, "diameter": diameter, "youngs_modulus": youngs_modulus, "density": density}
    tols = {"length_tolerance": length_tolerance, "diameter_tolerance": diameter_tolerance,
            "modulus_tolerance": modulus_tolerance, "density_tolerance": density_tolerance}
    centre, half = {}, {}
    for arg, tol_arg, dim in TOLERANCED:
        v = check_positive(check_dimension(given[arg], name=arg, expected=dim), name=arg)
        centre[arg] = v
        half[arg] = half_width(v, tols[tol_arg], name=tol_arg)
    lam = Q_(eigenvalue(supports=supports, mode=mode), "")

    # worst case: all 16 corners of the tolerance box, through the same formula
    signs = np.array(list(itertools.product((-1.0, 1.0), repeat=4)))
    corner = {arg: centre[arg] + half[arg] * signs[:, i] for i, (arg, _, _) in enumerate(TOLERANCED)}
    f_corner = _frequencies(lam=lam, L=corner["length"], d=corner["diameter"], E=corner["youngs_modulus"],
                            rho=corner["density"])

    # Monte Carlo
    rng = np.random.default_rng(seed)
    draw = {}
    for arg, _, _ in TOLERANCED:
        if distribution == "uniform":
            u = rng.uniform(-1.0, 1.0, size=samples)
        else:
            from scipy.stats import truncnorm  # here: scipy.stats costs every kernel ~0.4 s to import

            u = truncnorm.rvs(-3.0, 3.0, size=samples, random_state=rng) / 3.0
        draw[arg] = centre[arg] + half[arg] * u
    f_mc = _frequencies(lam=lam, L=draw["length"], d=draw["diameter"], E=draw["youngs_modulus"],
                        rho=draw["density"])
    p05, p50, p95 = np.percentile(f_mc.magnitude, [5.0, 50.0, 95.0])

    tol_text = "; ".join(f"{arg.replace('_', ' ')} ± {format_quantity(half[arg])}"
                         for arg, _, _ in TOLERANCED)
    corners_method = ("Euler–Bernoulli formula evaluated at all 16 combinations of the tolerance limits ("
                      + tol_text + ")")
    dist_text = ("independent, uniform over ± tolerance" if distribution == "uniform"
                 else "independent, normal with σ = tolerance/3, truncated at ± tolerance")
    mc_method = (f"Monte Carlo, {samples} samples, seed {seed}, inputs {dist_text}; "
                 "Euler–Bernoulli formula on each sample")
    f_unit = "Hz"
    steps = list(nominal.steps)
    steps.append(quantity_step(id=f"{id_prefix}.worst-low",
                               description="Lowest frequency within the tolerances",
                               value=Q_(f_corner.magnitude.min(), f_unit), unit=f_unit, method=corners_method,
                               source=RAO_2017))
    steps.append(quantity_step(id=f"{id_prefix}.worst-high",
                               description="Highest frequency within the tolerances",
                               value=Q_(f_corner.magnitude.max(), f_unit), unit=f_unit, method=corners_method,
                               source=RAO_2017))
    for key, val in (("p05", p05), ("p50", p50), ("p95", p95)):
        pct = int(key[1:])
        steps.append(quantity_step(id=f"{id_prefix}.{key}", description=f"Monte-Carlo {pct} % point",
                                   value=Q_(val, f_unit), unit=f_unit, method=mc_method,
                                   source=COMMON_PRACTICE))
    value = {"nominal": nominal.value, "worst_low": steps[-5].result, "worst_high": steps[-4].result,
             "p05": steps[-3].result, "p50": steps[-2].result, "p95": steps[-1].result}
    return FrequencyRange(value=value, steps=tuple(steps), samples=f_mc, distribution=distribution,
                          seed=seed, corners=f_corner,
                          title=f"Strut frequency under tolerances ({supports}, mode {mode})")


# --- first-order propagation of ± half-widths through a product of powers ----------------------------
def _symbol(expr: sp.Expr, name: str) -> sp.Symbol:
    for sym in expr.free_symbols:
        if sym.name == name:
            return sym
    raise InputError("the formula has no such symbol", input_name=name,
                     expected=", ".join(sorted(s.name for s in expr.free_symbols)), got=repr(name))


def log_sensitivities(formula: Formula, over: Sequence[str]) -> dict[str, sp.Expr]:
    """∂ln F/∂ln x = (x/F) ∂F/∂x of ``formula`` for each name in ``over`` (sympy, simplified).

    For a product of powers this is the exponent of x (2 for f in E ∝ f²).
    """
    expr = formula.expr
    out = {}
    for name in over:
        x = _symbol(expr, name)
        out[name] = sp.simplify(sp.diff(expr, x) * x / expr)
    return out


def _half_width_symbols(formula: Formula, over: Sequence[str]) -> tuple[dict, dict]:
    symbols, latex = {}, {}
    for name in over:
        x = _symbol(formula.expr, name)
        shown = formula.latex_names.get(name, sp.latex(x))
        symbols[name] = sp.Symbol(f"Delta_{name}")
        latex[f"Delta_{name}"] = rf"\Delta_{{{shown}}}"
        latex[name] = shown
    return symbols, latex


def relative_bound(formula: Formula, over: Sequence[str], *, target: str, target_latex: str = "") -> Formula:
    """The worst-case relative half-width of ``formula``: δ = Σ |∂ln F/∂ln x| · Δ_x / x.

    Derived by sympy from ``formula`` (first order); its symbols are the names in ``over`` and a
    half-width ``Delta_<name>`` for each.  E.g. for E = 64 π² f² L⁴ ρ / (λ⁴ d²):
    δ_E = 2 Δf/f + 4 ΔL/L + 2 Δd/d + Δρ/ρ.
    """
    sens = log_sensitivities(formula, over)
    deltas, latex = _half_width_symbols(formula, over)
    expr = sum(sp.Abs(sens[n]) * deltas[n] / _symbol(formula.expr, n) for n in over)
    if target_latex:
        latex[target] = target_latex
    return Formula(target, expr, latex)


def relative_standard_uncertainty(formula: Formula, over: Sequence[str], *, target: str,
                                  target_latex: str = "") -> Formula:
    """The relative standard uncertainty of ``formula`` with each input uniform over ± Δ_x.

    w = √(Σ (∂ln F/∂ln x · Δ_x / x)² / 3): the law of propagation of uncertainty for
    uncorrelated inputs (JCGM 100:2008 §5.1.2, eq. (10)) with u(x) = Δ_x/√3 for a rectangular
    distribution of half-width Δ_x (§4.3.7).  Same symbols as :func:`relative_bound`.
    """
    sens = log_sensitivities(formula, over)
    deltas, latex = _half_width_symbols(formula, over)
    total = sum((sens[n] * deltas[n] / _symbol(formula.expr, n)) ** 2 for n in over)
    # kept unevaluated so the sheet shows √(Σ … / 3) rather than sympy's √3 √(Σ …) / 3
    expr = sp.Pow(sp.Mul(total, sp.Pow(3, -1, evaluate=False), evaluate=False), sp.Rational(1, 2), evaluate=False)
    if target_latex:
        latex[target] = target_latex
    return Formula(target, expr, latex)


# --- the factors by which geometry and density tolerances move a strut frequency -----------------------
def _strut_frequency_expr() -> sp.Expr:
    """Euler–Bernoulli frequency of a solid circular strut, symbols positive (for simplification)."""
    eb = EULER_BERNOULLI_FREQUENCY.expr
    expr = eb.subs({_symbol(eb, "I"): SECOND_MOMENT_CIRCLE.expr, _symbol(eb, "A"): AREA_CIRCLE.expr})
    return expr.subs({s: sp.Symbol(s.name, positive=True) for s in expr.free_symbols})


_F = _strut_frequency_expr()
_d, _L, _rho = (_symbol(_F, n) for n in ("d", "L", "rho"))
_d2, _L2, _rho2 = sp.symbols("d_2 L_2 rho_2", positive=True)
#: A strut frequency with changed diameter and length over the nominal one (E, ρ, λ fixed):
#: the Euler–Bernoulli formula (Rao 2017 eq. 8.82) divided by itself. The four ratios here are written out in
#: their simplified form (sympy's simplify cost every kernel a third of a second at import); tests/physics check
#: each equals its formula divided by itself.
GEOMETRY_FREQUENCY_RATIO = Formula("s_g", _L**2 * _d2 / (_L2**2 * _d),
                                   {"s_g": r"s_{\mathrm{geo}}", "d_2": "d'", "L_2": "L'"})
#: A strut frequency with a changed density over the nominal one (E, geometry fixed).
DENSITY_FREQUENCY_RATIO = Formula("s_rho", sp.sqrt(_rho) / sp.sqrt(_rho2),
                                  {"s_rho": r"s_{\rho}", "rho_2": r"\rho'"})


def _midspan_mass_expr() -> sp.Expr:
    """Clamped strut frequency with a mid-span mass M_a, symbols positive.

    :data:`MIDSPAN_MASS_FREQUENCY_CC` (Rayleigh) with a solid circle's I and the strut's own mass
    m_s = ρ (π d²/4) L put in.
    """
    f = MIDSPAN_MASS_FREQUENCY_CC.expr
    d, rho = sp.Symbol("d", positive=True), sp.Symbol("rho", positive=True)
    L = _symbol(f, "L")
    expr = f.subs({_symbol(f, "I"): sp.pi * d**4 / 64, _symbol(f, "m_s"): rho * sp.pi * d**2 / 4 * L})
    return expr.subs({s: sp.Symbol(s.name, positive=True) for s in expr.free_symbols})


_FM = _midspan_mass_expr()
_dm, _Lm, _rhom = (_symbol(_FM, n) for n in ("d", "L", "rho"))
#: As :data:`GEOMETRY_FREQUENCY_RATIO` for a strut carrying a mass M_a at mid-span: the Rayleigh frequency
#: (Rao 2017 §8.7, static deflection shape) with changed diameter and length over the nominal one. A heavy
#: mass makes the frequency go as d²/L^1.5 rather than d/L², so the tolerances move it further.
_Ma = _symbol(_FM, "M_a")
_mass_root = sp.sqrt(13 * sp.pi * _Lm * _dm**2 * _rhom + 140 * _Ma)     # Rayleigh's 13/35 m_s + M_a, times 140
GEOMETRY_FREQUENCY_RATIO_MASS = Formula("s_g", _Lm ** sp.Rational(3, 2) * _d2**2 * _mass_root
                                        / (_L2 ** sp.Rational(3, 2) * _dm**2
                                           * sp.sqrt(13 * sp.pi * _L2 * _d2**2 * _rhom + 140 * _Ma)),
                                        {"s_g": r"s_{\mathrm{geo}}", "d_2": "d'", "L_2": "L'",
                                         "M_a": r"M_\mathrm{a}"})
#: As :data:`DENSITY_FREQUENCY_RATIO` for a strut carrying a mass at mid-span (the mass itself unchanged).
DENSITY_FREQUENCY_RATIO_MASS = Formula("s_rho", _mass_root / sp.sqrt(13 * sp.pi * _Lm * _dm**2 * _rho2 + 140 * _Ma),
                                       {"s_rho": r"s_{\rho}", "rho_2": r"\rho'", "M_a": r"M_\mathrm{a}"})


def _mass_of(added_mass, density) -> tuple[pint.Quantity | None, pint.Quantity | None]:
    """(M_a in g, ρ in kg/m³) when the strut carries a mass at mid-span, else (None, None)."""
    if added_mass is None:
        return None, None
    Ma = check_dimension(added_mass, name="added_mass", expected="mass").to("g")
    if not float(Ma.m) > 0:
        return None, None
    if density is None:
        raise InputError("a strut with a mass at mid-span needs the strut density for its frequency factors",
                         input_name="density", expected="the lattice material's density", got="none")
    rho = check_positive(check_dimension(density, name="density", expected="density"), name="density")
    return Ma, rho.to("kg/m^3")


def strut_frequency_factors(*, length, diameter, length_tolerance=None, diameter_tolerance=None,
                            added_mass=None, density=None, id_prefix: str = "strut.geometry") -> CalcResult:
    """Lowest and highest strut-frequency factors under the diameter and length tolerances.

    f ∝ d / L² (Euler–Bernoulli, solid circle, Rao 2017 eq. 8.82), so the frequency is lowest at
    (d − Δd, L + ΔL) and highest at (d + Δd, L − ΔL): the worst case over the tolerance box.

    Parameters
    ----------
    length, diameter:
        Nominal strut length and diameter [length].
    length_tolerance, diameter_tolerance:
        ± half-widths: a length, or a dimensionless fraction; ``None`` for none.
    added_mass, density:
        A mass at the strut's mid-span [mass] and the strut material's density [density]: with a mass
        above zero the factors come from the Rayleigh frequency of the strut with the mass
        (:data:`GEOMETRY_FREQUENCY_RATIO_MASS`), which the tolerances move further than d/L².
    id_prefix:
        Prefix of the step ids (``<prefix>.factor-low``, ``<prefix>.factor-high``).

    Returns
    -------
    CalcResult
        ``value`` = (low, high) as floats; two steps showing the ratio formula evaluated.
    """
    L = check_positive(check_dimension(length, name="length", expected="length"), name="length").to("mm")
    d = check_positive(check_dimension(diameter, name="diameter", expected="length"), name="diameter").to("mm")
    hl = half_width(L, length_tolerance, name="length_tolerance").to("mm")
    hd = half_width(d, diameter_tolerance, name="diameter_tolerance").to("mm")
    Ma, rho = _mass_of(added_mass, density)
    formula, source = ((GEOMETRY_FREQUENCY_RATIO, RAO_2017) if Ma is None
                       else (GEOMETRY_FREQUENCY_RATIO_MASS, RAYLEIGH_MIDSPAN_CC))
    extra = {} if Ma is None else {"M_a": Ma, "rho": rho}
    with_mass = "" if Ma is None else f", {format_quantity(Ma)} at mid-span"
    lo = evaluate(formula, id=f"{id_prefix}.factor-low", unit="", sig=4, source=source,
                  description="Strut frequency factor, thinnest and longest strut within the tolerances "
                              f"(d − {format_quantity(hd)}, L + {format_quantity(hl)}{with_mass})",
                  values={"d": d, "L": L, "d_2": d - hd, "L_2": L + hl, **extra})
    hi = evaluate(formula, id=f"{id_prefix}.factor-high", unit="", sig=4, source=source,
                  description="Strut frequency factor, thickest and shortest strut within the tolerances "
                              f"(d + {format_quantity(hd)}, L − {format_quantity(hl)}{with_mass})",
                  values={"d": d, "L": L, "d_2": d + hd, "L_2": L - hl, **extra})
    return CalcResult(value=(float(lo.result.m), float(hi.result.m)), steps=(lo, hi),
                      title="Strut frequency factors under the geometry tolerances")


def density_frequency_factors(*, density, density_tolerance=None, added_mass=None, length=None, diameter=None,
                              id_prefix: str = "strut.density") -> CalcResult:
    """Lowest and highest strut-frequency factors under a density tolerance (f ∝ 1/√ρ, Rao 2017 eq. 8.82).

    ``density`` [mass / length³]; ``density_tolerance`` a ± half-width (density or fraction) or ``None``.
    With ``added_mass`` above zero (a mass at mid-span, which the density tolerance leaves unchanged) the
    factors come from the Rayleigh frequency with the mass (:data:`DENSITY_FREQUENCY_RATIO_MASS`), which
    needs the strut ``length`` and ``diameter``.  ``value`` = (low, high) as floats.
    """
    rho = check_positive(check_dimension(density, name="density", expected="density"), name="density").to("kg/m^3")
    hr = half_width(rho, density_tolerance, name="density_tolerance").to("kg/m^3")
    Ma, _ = _mass_of(added_mass, rho)
    if Ma is None:
        formula, source, extra, with_mass = DENSITY_FREQUENCY_RATIO, RAO_2017, {}, ""
    else:
        if length is None or diameter is None:
            raise InputError("a strut with a mass at mid-span needs its length and diameter for its density factors",
                             input_name="length", expected="the strut length and diameter", got="none")
        formula, source = DENSITY_FREQUENCY_RATIO_MASS, RAYLEIGH_MIDSPAN_CC
        with_mass = f", {format_quantity(Ma)} at mid-span"
        extra = {"M_a": Ma, "L": check_dimension(length, name="length", expected="length").to("mm"),
                 "d": check_dimension(diameter, name="diameter", expected="length").to("mm")}
    lo = evaluate(formula, id=f"{id_prefix}.factor-low", unit="", sig=4, source=source,
                  description="Strut frequency factor, densest material within the tolerance "
                              f"(ρ + {format_quantity(hr)}{with_mass})",
                  values={"rho": rho, "rho_2": rho + hr, **extra})
    hi = evaluate(formula, id=f"{id_prefix}.factor-high", unit="", sig=4, source=source,
                  description="Strut frequency factor, lightest material within the tolerance "
                              f"(ρ − {format_quantity(hr)}{with_mass})",
                  values={"rho": rho, "rho_2": rho - hr, **extra})
    return CalcResult(value=(float(lo.result.m), float(hi.result.m)), steps=(lo, hi),
                      title="Strut frequency factors under the density tolerance")
