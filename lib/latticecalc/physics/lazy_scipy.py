"""scipy functions the physics modules call, imported on their first call.

``scipy.optimize`` costs a kernel about 0.3 s to import, and a section that only reads the inputs (or a
run stopped by a bad input in its first section) never calls a root finder; the modules that do import
these names from here instead of from scipy at the top.
"""

from __future__ import annotations

from typing import Any


def brentq(*args: Any, **kwargs: Any) -> Any:
    """:func:`scipy.optimize.brentq`."""
    from scipy.optimize import brentq as solve

    return solve(*args, **kwargs)


def jv(order: Any, x: Any) -> Any:
    """:func:`scipy.special.jv` (Bessel function of the first kind)."""
    from scipy.special import jv as bessel

    return bessel(order, x)
