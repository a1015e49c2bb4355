"""The kit's one pint registry and the checks every public function makes at its boundary.

Create no other ``UnitRegistry`` anywhere in the kit or in a template: quantities from two
registries cannot be combined.  Import ``ureg`` and ``Q_`` from :mod:`latticecalc`.
"""

from __future__ import annotations

import math
import os
from typing import Any

import numpy as np
import pint

from latticecalc.errors import DimensionError, InputError

_CACHE = os.environ.get("LATTICECALC_UNIT_CACHE", ":auto:")

#: The shared registry.  The unit-definition cache keeps start-up fast after the first import.
ureg = pint.UnitRegistry(cache_folder=_CACHE or None)
ureg.formatter.default_format = "~P"
ureg.define("microinch = 1e-6 * inch = µin")
Q_ = ureg.Quantity

#: Named dimensions the kit uses, written as pint dimensionality strings.
DIMENSIONS = {
    "length": "[length]",
    "area": "[length] ** 2",
    "mass": "[mass]",
    "time": "[time]",
    "frequency": "1 / [time]",
    "stress": "[mass] / [length] / [time] ** 2",
    "pressure": "[mass] / [length] / [time] ** 2",
    "density": "[mass] / [length] ** 3",
    "force": "[mass] * [length] / [time] ** 2",
    "velocity": "[length] / [time]",
    "acceleration": "[length] / [time] ** 2",
    "mass_per_length": "[mass] / [length]",
    "mass_per_area": "[mass] / [length] ** 2",
    "stiffness": "[mass] / [time] ** 2",
    "rotational_stiffness": "[mass] * [length] ** 2 / [time] ** 2",
    "temperature": "[temperature]",
    "dimensionless": "",
}


def _dimensionality(expected: str) -> pint.util.UnitsContainer:
    text = DIMENSIONS.get(expected, expected)
    if text == "":
        return ureg.dimensionless.dimensionality
    if "[" in text:
        return ureg.get_dimensionality(text)
    return ureg.Quantity(1, text).dimensionality


def describe_dimension(expected: str) -> str:
    """Return a readable description of a dimension name or unit, e.g. ``'a length ([length])'``."""
    if expected in DIMENSIONS:
        dim = DIMENSIONS[expected] or "dimensionless"
        return f"a {expected.replace('_', ' ')} ({dim})"
    return f"a quantity in units compatible with {expected}"


def parse(text: Any, *, name: str, expected: str | None = None, file: str | None = None,
          line: int | None = None) -> pint.Quantity:
    """Parse ``"5 mm"``-style text (or a number, or a Quantity) into a Quantity of the registry.

    Parameters
    ----------
    text:
        ``"5 mm"``, ``"10 MPa"``, ``"1150 kg/m^3"``; a plain number is dimensionless.
    name:
        The input's name, used in error messages.
    expected:
        A dimension name from :data:`DIMENSIONS`, a pint dimensionality string, or a unit.
    file, line:
        Where the text came from, for error messages.
    """
    if isinstance(text, pint.Quantity):
        q = text if text._REGISTRY is ureg else Q_(text.magnitude, str(text.units))
    elif isinstance(text, bool):
        raise InputError("a boolean is not a quantity", input_name=name,
                         expected=describe_dimension(expected) if expected else "a quantity",
                         got=repr(text), file=file, line=line)
    elif isinstance(text, (int, float)):
        q = Q_(float(text), "")
    elif isinstance(text, str):
        stripped = text.strip()
        if not stripped:
            raise InputError("empty value", input_name=name,
                             expected=describe_dimension(expected) if expected else "a quantity",
                             got="''", file=file, line=line)
        try:
            q = ureg.Quantity(stripped)
        except (pint.errors.UndefinedUnitError, pint.errors.DefinitionSyntaxError,
                SyntaxError, ValueError, TypeError, AttributeError) as exc:
            raise InputError(f"cannot read {stripped!r} as a quantity ({exc})", input_name=name,
                             expected="a number and a unit such as '5 mm' or '10 MPa'",
                             got=repr(stripped), file=file, line=line) from None
        if not isinstance(q, pint.Quantity):
            q = Q_(float(q), "")
    else:
        raise InputError("not a quantity", input_name=name,
                         expected="text such as '5 mm', a number, or a Quantity",
                         got=type(text).__name__, file=file, line=line)
    if expected is not None:
        check_dimension(q, name=name, expected=expected, file=file, line=line)
    return q


def check_dimension(value: Any, *, name: str, expected: str, file: str | None = None,
                    line: int | None = None) -> pint.Quantity:
    """Return ``value`` if it is a Quantity of the expected dimension, else raise DimensionError.

    A plain number is accepted only where a dimensionless value is expected.
    """
    want = _dimensionality(expected)
    if not isinstance(value, pint.Quantity):
        if want == ureg.dimensionless.dimensionality and isinstance(
                value, (int, float, np.ndarray, np.number)) and not isinstance(value, bool):
            return Q_(value, "")
        raise DimensionError("not a quantity with units", input_name=name,
                             expected=describe_dimension(expected),
                             got=f"{value!r} ({type(value).__name__})", file=file, line=line,
                             hint="Give it with a unit, e.g. Q_(5, 'mm') or '5 mm'")
    if value._REGISTRY is not ureg:
        value = Q_(value.magnitude, str(value.units))
    if value.dimensionality != want:
        raise DimensionError("wrong dimension", input_name=name,
                             expected=describe_dimension(expected),
                             got=f"{format_quantity(value)} ({value.dimensionality or 'dimensionless'})",
                             file=file, line=line)
    return value


def check_positive(value: pint.Quantity, *, name: str, allow_zero: bool = False) -> pint.Quantity:
    """Raise InputError unless every element of ``value`` is finite and > 0 (or >= 0)."""
    mag = np.asarray(value.magnitude, dtype=float)
    bad = ~np.isfinite(mag) | ((mag < 0) if allow_zero else (mag <= 0))
    if np.any(bad):
        raise InputError("must be " + ("zero or positive" if allow_zero else "positive") + " and finite",
                         input_name=name, expected="> 0" if not allow_zero else ">= 0",
                         got=format_quantity(value))
    return value


def unit_text(unit: Any) -> str:
    """Write a unit the way a practitioner does: ``MPa``, ``kg/m³``, ``Hz``, ``mm/s``."""
    if isinstance(unit, str):
        unit = ureg.Unit(unit)
    text = f"{unit:~P}"
    return text.replace(" ", "")


def format_number(x: float, sig: int = 4) -> str:
    """Format a float to ``sig`` significant figures without needless exponents.

    >>> format_number(259.4236, 4)
    '259.4'
    >>> format_number(306796.0, 4)
    '306800'
    >>> format_number(50.0, 4)
    '50'
    >>> format_number(0.000123456, 3)
    '1.23e-04'
    """
    if x is None or (isinstance(x, float) and math.isnan(x)):
        return "—"
    if isinstance(x, (bool, np.bool_)):
        return str(bool(x))
    x = float(x)
    if x == 0:
        return "0"
    if math.isinf(x):
        return "∞" if x > 0 else "−∞"
    exponent = math.floor(math.log10(abs(x)))
    if exponent < -3 or exponent >= sig + 3:
        return f"{x:.{sig - 1}e}"
    rounded = round(x, sig - 1 - exponent)
    decimals = max(sig - 1 - exponent, 0)
    text = f"{rounded:.{decimals}f}"
    if "." in text:
        text = text.rstrip("0").rstrip(".")
    return text


def format_quantity(q: Any, unit: str | None = None, sig: int = 4) -> str:
    """``'259.4 Hz'``; arrays are shown as a short list."""
    if not isinstance(q, pint.Quantity):
        return format_number(q, sig) if np.ndim(q) == 0 else str(q)
    if unit is not None:
        q = q.to(unit)
    u = unit_text(q.units)
    mag = q.magnitude
    if np.ndim(mag) == 0:
        num = format_number(mag, sig)
    else:
        flat = np.ravel(mag)
        shown = ", ".join(format_number(v, sig) for v in flat[:6])
        num = "[" + shown + (", …" if flat.size > 6 else "") + "]"
    return f"{num} {u}".strip()
