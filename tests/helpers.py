"""Shared test helpers."""

from __future__ import annotations

import numbers

import numpy as np
import pint

from latticecalc import ureg


def assert_quantity_close(actual, expected, *, rtol: float = 1e-7, atol: float = 0.0, unit: str | None = None):
    """Assert two quantities agree after unit conversion.

    Fails (rather than passing) when either side is not a number: pint's own helper only warns.
    ``expected`` may be a Quantity, or a number together with ``unit``.
    """
    if not isinstance(actual, pint.Quantity):
        raise AssertionError(f"actual is not a Quantity: {actual!r}")
    if not isinstance(expected, pint.Quantity):
        if unit is None:
            raise AssertionError("expected is a plain number: give unit=")
        expected = ureg.Quantity(expected, unit)
    a = np.asarray(actual.to(expected.units).magnitude)
    e = np.asarray(expected.magnitude)
    for name, arr in (("actual", a), ("expected", e)):
        if not (np.issubdtype(arr.dtype, np.number) and np.all(np.isfinite(arr))):
            raise AssertionError(f"{name} is not a finite number: {arr!r}")
    if atol and not isinstance(atol, numbers.Number):
        raise AssertionError("atol must be a plain number in expected's unit")
    np.testing.assert_allclose(a, e, rtol=rtol, atol=atol)
