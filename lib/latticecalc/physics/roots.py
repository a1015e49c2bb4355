"""A bracketed root of a scalar function by Brent's method, without importing ``scipy.optimize``.

Brent's method (R. P. Brent, *Algorithms for Minimization without Derivatives*, Prentice-Hall, 1973,
ch. 4) keeps a bracket [b, c] with f(b) f(c) < 0 and b the best estimate so far; each step tries
inverse quadratic (or secant) interpolation and falls back to bisection whenever the interpolated
step would not shrink the bracket fast enough, so it never takes more steps than about twice a
bisection's and usually converges superlinearly.

Why not ``scipy.optimize.brentq``: importing ``scipy.optimize`` costs every kernel about 0.3 s, and the
kit needs only this one function from it. The tolerance has the same meaning as there: the root is
returned once the bracket is shorter than ``xtol + rtol |x|``; ``tests/physics/test_roots.py``
checks the roots against ``scipy.optimize.brentq`` and against closed forms.
"""

from __future__ import annotations

import math
from collections.abc import Callable

#: Smallest relative tolerance accepted: four units in the last place, as scipy's brentq requires.
MIN_RTOL = 4 * 2.220446049250313e-16


def _value(f: Callable[[float], float], x: float) -> float:
    y = float(f(x))
    if math.isnan(y):
        raise ValueError(f"the function is not a number at x = {x!r}")
    return y


def find_root(f: Callable[[float], float], lo: float, hi: float, *, xtol: float = 2e-12,
              rtol: float = MIN_RTOL, maxiter: int = 100) -> float:
    """The root of ``f`` in [``lo``, ``hi``], where f(lo) and f(hi) have opposite signs.

    Returned when f is exactly zero or the bracket is shorter than ``xtol + rtol |x|``.

    Raises
    ------
    ValueError
        If f(lo) and f(hi) have the same sign, f returns NaN, ``xtol`` is not positive or ``rtol``
        is below :data:`MIN_RTOL`.
    RuntimeError
        If the bracket is not short enough after ``maxiter`` steps.
    """
    if not xtol > 0:
        raise ValueError(f"xtol must be positive, got {xtol!r}")
    if not rtol >= MIN_RTOL:
        raise ValueError(f"rtol must be at least {MIN_RTOL!r}, got {rtol!r}")
    a, b = float(lo), float(hi)
    fa, fb = _value(f, a), _value(f, b)
    if fa == 0.0:
        return a
    if fb == 0.0:
        return b
    if (fa > 0) == (fb > 0):
        raise ValueError(f"f({a!r}) = {fa!r} and f({b!r}) = {fb!r} have the same sign: no bracketed root")
    c, fc = a, fa                      # the other end of the bracket
    step = last = b - a                # this step and the one before it
    for _ in range(maxiter):
        if (fb > 0) == (fc > 0):       # the root left [b, c]: the bracket is [a, b] again
            c, fc = a, fa
            step = last = b - a
        if abs(fc) < abs(fb):          # b is the best estimate
            a, b, c = b, c, b
            fa, fb, fc = fb, fc, fb
        tol = (xtol + rtol * abs(b)) / 2
        half = (c - b) / 2
        if fb == 0.0 or abs(half) < tol:
            return b
        if abs(last) >= tol and abs(fa) > abs(fb):
            s = fb / fa
            if a == c:                 # two points: secant
                p, q = 2 * half * s, 1 - s
            else:                      # three points: inverse quadratic interpolation
                qa, r = fa / fc, fb / fc
                p = s * (2 * half * qa * (qa - r) - (b - a) * (r - 1))
                q = (qa - 1) * (r - 1) * (s - 1)
            if p > 0:
                q = -q
            else:
                p = -p
            if 2 * p < min(3 * half * q - abs(tol * q), abs(last * q)):
                last, step = step, p / q   # the interpolation is accepted
            else:
                step = last = half         # bisection
        else:
            step = last = half             # bisection
        a, fa = b, fb
        b += step if abs(step) > tol else math.copysign(tol, half)
        fb = _value(f, b)
    raise RuntimeError(f"no root within the tolerance after {maxiter} steps; last estimate {b!r}")
