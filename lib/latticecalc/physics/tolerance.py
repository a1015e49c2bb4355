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
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass

import numpy as np
import pint
from scipy.stats import truncnorm

from latticecalc.errors import DimensionError, InputError
from latticecalc.physics.beams import (
    AREA_CIRCLE,
    EULER_BERNOULLI_FREQUENCY,
    RAO_2017,
    SECOND_MOMENT_CIRCLE,
    bending_frequency,
    eigenvalue,
)
from latticecalc.sheet import COMMON_PRACTICE, CalcResult, quantity_step
from latticecalc.units import Q_, check_dimension, check_positive, format_quantity

DISTRIBUTIONS = ("uniform", "normal")

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
