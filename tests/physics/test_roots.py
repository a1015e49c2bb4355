"""Brent's method (latticecalc.physics.roots) against scipy.optimize.brentq and closed forms.

Sources: R. P. Brent, *Algorithms for Minimization without Derivatives*, Prentice-Hall, 1973, ch. 4
(the method); scipy.optimize.brentq as the reference
implementation (general-purpose reference library); the closed-form roots are named at each case.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.optimize import brentq
from scipy.special import jv

from latticecalc.physics.roots import MIN_RTOL, find_root

CASES = [
    # (name, f, lo, hi, exact root or None)
    ("sqrt 2", lambda x: x * x - 2.0, 0.0, 2.0, math.sqrt(2.0)),
    ("cube root of 10", lambda x: x ** 3 - 10.0, 1.0, 5.0, 10.0 ** (1 / 3)),
    ("cos x = x (Dottie number, from memory)", lambda x: math.cos(x) - x, 0.0, 1.0, 0.7390851332151607),
    ("tan x = x, first positive root (fixed-pinned Euler column; Timoshenko & Gere 1961, 2.6, from memory)",
     lambda x: math.tan(x) - x, math.pi + 1e-6, 1.5 * math.pi - 1e-6, 4.493409457909064),
    ("cos x cosh x = 1, clamped-clamped beam (Blevins 1979, table 8-1, from memory)",
     lambda x: math.cos(x) * math.cosh(x) - 1.0, 4.0, 5.0, 4.730040744862704),
    ("J_-1/3 first zero (Greenhill's column; scipy.special.jv)", lambda x: float(jv(-1.0 / 3.0, x)), 1.0, 3.0,
     None),
    ("x tan x = 4 (axial mode of a column with a head mass)", lambda x: x * math.tan(x) - 4.0, 1e-12,
     math.pi / 2 - 1e-12, None),
    ("flat: x^9", lambda x: x ** 9, -1.0, 1.5, 0.0),
    ("step: sign only", lambda x: -1.0 if x < 0.3 else 1.0, 0.0, 1.0, None),
    ("steep: exp(50 x) - 2", lambda x: math.exp(50 * x) - 2.0, -1.0, 1.0, math.log(2.0) / 50),
]


@pytest.mark.parametrize("xtol, rtol", [(2e-12, MIN_RTOL), (1e-15, MIN_RTOL), (1e-7, MIN_RTOL), (1e-12, 1e-14)])
@pytest.mark.parametrize("name, f, lo, hi, exact", CASES, ids=[c[0] for c in CASES])
def test_root_agrees_with_scipy_brentq_within_the_tolerance(name, f, lo, hi, exact, xtol, rtol):
    ours = find_root(f, lo, hi, xtol=xtol, rtol=rtol, maxiter=200)
    ref = brentq(f, lo, hi, xtol=xtol, rtol=rtol, maxiter=200)
    # each is within the bracket half-width xtol + rtol|x| of the root, so they differ by at most twice that
    assert abs(ours - ref) <= 2 * (xtol + rtol * abs(ref)) + 4 * np.spacing(abs(ref))
    assert lo <= ours <= hi
    if exact is not None:
        assert abs(ours - exact) <= 2 * (xtol + rtol * abs(exact)) + 4 * np.spacing(max(abs(exact), 1e-300))


def test_step_function_is_bracketed_to_the_tolerance():
    """A function with no smooth root: the bracket around the sign change shrinks below xtol (bisection)."""
    x = find_root(lambda x: -1.0 if x < 0.3 else 1.0, 0.0, 1.0, xtol=1e-10)
    assert abs(x - 0.3) <= 1e-10


def test_steps_stay_within_twice_a_bisection():
    """The fall-back to bisection keeps the step count near a bisection's on a function that defeats
    interpolation; the bound, twice a bisection's count, is common practice."""
    calls = []

    def f(x):
        calls.append(x)
        return math.copysign(1.0, x - 0.1234567) * (abs(x - 0.1234567) ** 0.1)

    find_root(f, -1.0, 2.0, xtol=1e-12, maxiter=500)
    bisections = math.ceil(math.log2(3.0 / 1e-12))
    assert len(calls) <= 2 * bisections + 4


def test_exact_zero_at_an_end_is_returned():
    assert find_root(lambda x: x - 1.0, 1.0, 3.0) == 1.0
    assert find_root(lambda x: x - 3.0, 1.0, 3.0) == 3.0


@pytest.mark.parametrize("kwargs, match", [
    (dict(f=lambda x: x * x + 1.0, lo=-1.0, hi=1.0), "same sign"),
    (dict(f=lambda x: math.nan if x > 0.5 else x - 0.7, lo=0.0, hi=1.0), "not a number"),
    (dict(f=lambda x: x, lo=-1.0, hi=2.0, xtol=0.0), "xtol"),
    (dict(f=lambda x: x, lo=-1.0, hi=2.0, rtol=1e-17), "rtol"),
])
def test_bad_calls_are_refused(kwargs, match):
    f, lo, hi = kwargs.pop("f"), kwargs.pop("lo"), kwargs.pop("hi")
    with pytest.raises(ValueError, match=match):
        find_root(f, lo, hi, **kwargs)


def test_too_few_steps_is_an_error():
    with pytest.raises(RuntimeError, match="after 3 steps"):
        find_root(lambda x: math.cos(x) - x, 0.0, 1.0, xtol=1e-15, maxiter=3)
