"""scipy functions the physics modules call, imported on their first call.

A section that only reads the inputs (or a run stopped by a bad input in its first section) never
calls these; the modules that do import them from here instead of from scipy at the top. The root
finder is :func:`latticecalc.physics.roots.find_root`, which needs no scipy import at all
(``scipy.optimize`` cost every kernel about 0.3 s).
"""

from __future__ import annotations

from typing import Any


def jv(order: Any, x: Any) -> Any:
    """:func:`scipy.special.jv` (Bessel function of the first kind)."""
    from scipy.special import jv as bessel

    return bessel(order, x)
