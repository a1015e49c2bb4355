"""The kit's one pint registry and the checks every public function makes at its boundary.

Create no other ``UnitRegistry`` anywhere in the kit or in a template: quantities from two
registries cannot be combined.  Import ``ureg`` and ``Q_`` from :mod:`latticecalc`.
"""

from __future__ import annotations

import functools
import math
import os
import re
from typing import Any

import numpy as np
import pint

from latticecalc.errors import DimensionError, InputError

_CACHE = os.environ.get("LATTICECALC_UNIT_CACHE", ":auto:")

class _Registry(pint.UnitRegistry):
    """pint's registry, with each unit text parsed once.

    The kit converts to the same few unit texts (``"Hz"``, ``"mm"``, ``"kg/m^3"``) thousands of times in a
    design study; pint parses the text again on every call, which was most of a hand evaluation's unit
    handling.  The parsed container is immutable, so one copy serves every caller; defining a unit clears
    the memo.
    """

    _MEMO_SIZE = 4096

    def parse_units_as_container(self, input_string, as_delta=None, case_sensitive=None):
        """As pint's, remembered by its arguments."""
        memo = self.__dict__.setdefault("_lc_parsed", {})
        key = (input_string, as_delta, case_sensitive)
        try:
            return memo[key]
        except KeyError:
            pass
        except TypeError:          # an argument that cannot be a key: parse without remembering
            return super().parse_units_as_container(input_string, as_delta, case_sensitive)
        out = super().parse_units_as_container(input_string, as_delta, case_sensitive)
        if len(memo) < self._MEMO_SIZE:
            memo[key] = out
        return out

    def define(self, definition):
        """As pint's; forgets the parsed unit texts, which a new definition may change."""
        self.__dict__.get("_lc_parsed", {}).clear()
        return super().define(definition)


#: The shared registry.  The unit-definition cache keeps start-up fast after the first import.
ureg = _Registry(cache_folder=_CACHE or None)
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


@functools.lru_cache(maxsize=512)
def _dimensionality(expected: str) -> pint.util.UnitsContainer:
    """The dimensionality a dimension name or unit text stands for.

    Cached: the same few texts are asked for thousands of times in a study, and parsing them was most
    of a hand evaluation's unit handling.
    """
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


#: Longest text :func:`parse` reads as a quantity; longer text is refused before any parsing.
MAX_QUANTITY_CHARS = 200
#: Longest number part of a quantity (sign, digits, point, exponent).
MAX_NUMBER_CHARS = 40
#: Largest magnitude of an exponent in a unit expression (``m^3``, ``s^-2``).
MAX_UNIT_EXPONENT = 12
#: Deepest nesting of parentheses in a unit expression.
MAX_UNIT_NESTING = 3

_NUMBER = re.compile(r"[+-]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]+)?")
_NON_FINITE = re.compile(r"[+-]?(?:nan|inf(?:inity)?)(?![^\W\d])", re.IGNORECASE)
_UNIT_NAME = re.compile(r"°?[^\W\d]\w*|%")
_POWER = re.compile(r"[ \t]*(?:\^|\*\*)[ \t]*(?:\([ \t]*([+-]?[0-9]+(?:\.[0-9]+)?)[ \t]*\)|([+-]?[0-9]+(?:\.[0-9]+)?))")
_SUPERSCRIPT = re.compile("⁻?[⁰¹²³⁴⁵⁶⁷⁸⁹]+")
_SUPERSCRIPT_DIGITS = str.maketrans("⁻⁰¹²³⁴⁵⁶⁷⁸⁹", "-0123456789")
_OPERATORS = "*/·⋅"
_EXPECTED_TEXT = "a number and a unit such as '5 mm', '10 MPa' or '1150 kg/m^3'"


def _shown(text: str, limit: int = 40) -> str:
    return repr(text if len(text) <= limit else text[:limit] + "…")


def _unit_problem(text: str, pos: int) -> str | None:
    """What is wrong with the unit expression ``text[pos:]``, or None if it keeps to the grammar.

    The grammar: unit names joined by ``*``, ``/``, ``·`` or a space, each name or parenthesised
    group optionally raised to a small number with ``^``, ``**`` or superscript digits; the
    expression may open with ``/`` (``"1/s"``). One pass, no backtracking: its time is linear in
    the (already capped) length.
    """
    n = len(text)
    depth = 0
    while pos < n and text[pos].isspace():
        pos += 1
    if pos == n:
        return None
    if text[pos] == "/":
        pos += 1
    expect_term = True
    while True:
        if expect_term:
            while pos < n and text[pos].isspace():
                pos += 1
            if pos < n and text[pos] == "(":
                depth += 1
                if depth > MAX_UNIT_NESTING:
                    return f"parentheses nested deeper than {MAX_UNIT_NESTING}"
                pos += 1
                continue
            name = _UNIT_NAME.match(text, pos)
            if name is None:
                return f"expected a unit name at {_shown(text[pos:])}"
            pos, expect_term = name.end(), False
        # after a unit name or a closing parenthesis: an optional power, then what joins the next term
        power = _POWER.match(text, pos)
        superscript = None if power else _SUPERSCRIPT.match(text, pos)
        if power or superscript:
            digits = (power.group(1) or power.group(2)) if power else superscript.group().translate(
                _SUPERSCRIPT_DIGITS)
            if abs(float(digits)) > MAX_UNIT_EXPONENT:
                return f"unit exponent {digits} is larger than {MAX_UNIT_EXPONENT}"
            pos = (power or superscript).end()
        spaced = pos < n and text[pos].isspace()
        while pos < n and text[pos].isspace():
            pos += 1
        if pos == n:
            return None if depth == 0 else "a parenthesis is not closed"
        char = text[pos]
        if char == ")":
            if depth == 0:
                return "a closing parenthesis has no opening one"
            depth -= 1
            pos += 1
        elif char in _OPERATORS:
            pos += 1
            expect_term = True
        elif spaced and (char == "(" or _UNIT_NAME.match(text, pos)):
            expect_term = True
        else:
            return f"unexpected {_shown(text[pos:])}"


def _read_text(stripped: str, *, name: str, file: str | None, line: int | None) -> pint.Quantity:
    """Check ``stripped`` against the number-and-unit grammar, bounded, before pint parses it."""
    def refuse(message: str, expected: str = _EXPECTED_TEXT) -> InputError:
        return InputError(message, input_name=name, expected=expected, got=_shown(stripped), file=file, line=line)

    if len(stripped) > MAX_QUANTITY_CHARS:
        raise refuse(f"text too long to be a quantity ({len(stripped)} characters, at most {MAX_QUANTITY_CHARS})")
    if _NON_FINITE.match(stripped):
        raise refuse("not a finite number", "a finite number and a unit such as '5 mm'")
    number = _NUMBER.match(stripped)
    if number is None:
        raise refuse("does not start with a number")
    if number.end() > MAX_NUMBER_CHARS:
        raise refuse(f"number too long ({number.end()} characters, at most {MAX_NUMBER_CHARS})")
    if not math.isfinite(float(number.group())):
        raise refuse("not a finite number (too large)", "a finite number and a unit such as '5 mm'")
    problem = _unit_problem(stripped, number.end())
    if problem is not None:
        raise refuse(f"cannot read {_shown(stripped)} as a quantity ({problem})")
    try:
        q = ureg.Quantity(stripped)
    except (pint.errors.PintError, SyntaxError, ValueError, TypeError, AttributeError, ArithmeticError,
            RecursionError) as exc:
        raise refuse(f"cannot read {_shown(stripped)} as a quantity ({exc})") from None
    if not isinstance(q, pint.Quantity):
        q = Q_(float(q), "")
    if not np.all(np.isfinite(q.magnitude)):
        raise refuse("not a finite number", "a finite number and a unit such as '5 mm'")
    return q


def parse(text: Any, *, name: str, expected: str | None = None, file: str | None = None,
          line: int | None = None) -> pint.Quantity:
    """Parse ``"5 mm"``-style text (or a number, or a Quantity) into a Quantity of the registry.

    Text must be a number (optionally with a decimal exponent) followed by a unit expression:
    unit names joined by ``*``, ``/``, ``·`` or spaces, with small exponents (``^``, ``**``,
    superscripts) and parentheses. It is checked against that grammar, with caps on its length
    (:data:`MAX_QUANTITY_CHARS`), the number's length and the exponents, before pint's parser
    sees it, so no text can make parsing slow (``"9**9**9 mm"`` is refused, not evaluated).
    Text and plain numbers must be finite: ``"nan mm"``, ``"inf Hz"`` and NaN are refused.

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
        try:
            value = float(text)
        except OverflowError:
            value = math.inf
        if not math.isfinite(value):
            raise InputError("not a finite number", input_name=name, expected="a finite number",
                             got=_shown(repr(text)), file=file, line=line)
        q = Q_(value, "")
    elif isinstance(text, str):
        stripped = text.strip()
        if not stripped:
            raise InputError("empty value", input_name=name,
                             expected=describe_dimension(expected) if expected else "a quantity",
                             got="''", file=file, line=line)
        q = _read_text(stripped, name=name, file=file, line=line)
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


#: Unicode superscripts for the exponent of a power of ten (``×10⁻⁵``).
_TO_SUPERSCRIPT = str.maketrans("-0123456789", "⁻⁰¹²³⁴⁵⁶⁷⁸⁹")
#: Narrow no-break space: the SI Brochure's thin space between groups of three digits.
THIN_SPACE = "\u202f"
#: Most values of an array written out in full; longer arrays are summarised (count, smallest, largest).
MAX_LISTED = 6

#: Units an engineer reaches for, per dimension, most preferred first.  A value keeps its own unit
#: when its number reads plainly there; otherwise the first of these in which it does is used.
PREFERRED_UNITS = {
    "[length]": ("mm", "m", "µm", "km", "nm"),
    "[length] / [time]": ("mm/s", "µm/s", "m/s", "nm/s"),
    "[length] / [time] ** 2": ("m/s^2", "mm/s^2", "µm/s^2"),
    "1 / [time]": ("Hz", "kHz", "mHz", "MHz"),
    "[time]": ("s", "ms", "µs", "min", "h"),
    "[mass]": ("kg", "g", "t", "mg"),
    "[mass] / [length] / [time] ** 2": ("MPa", "kPa", "Pa", "GPa"),
    "[mass] * [length] / [time] ** 2": ("N", "kN", "MN", "mN"),
    "[mass] / [time] ** 2": ("N/m", "kN/m", "MN/m", "N/mm"),
    "[length] ** 2": ("mm^2", "m^2", "cm^2"),
    "[length] ** 3": ("mm^3", "m^3", "cm^3"),
    "[length] ** 4": ("mm^4", "m^4", "cm^4"),
}


def _plain_range(exponent: int, sig: int) -> bool:
    """True when a number of this decimal exponent is written without a power of ten."""
    return -3 <= exponent < sig + 3


def power_of_ten(mantissa: str, exponent: int) -> str:
    """``'1.23 × 10⁻⁵'``: a number with a power of ten, multiplication sign and superscript exponent."""
    return f"{mantissa} × 10{str(exponent).translate(_TO_SUPERSCRIPT)}"


def group_digits(text: str, sep: str = THIN_SPACE) -> str:
    """Digits of a plain number grouped in threes either side of the decimal point (more than 4 digits).

    >>> group_digits("306800", sep=" ")
    '306 800'
    >>> group_digits("1234.5", sep=" ")
    '1234.5'
    """
    sign = text[0] if text[:1] in "-−+" else ""
    body = text[len(sign):]
    whole, dot, frac = body.partition(".")
    if not whole.isdigit() or (frac and not frac.isdigit()):
        return text
    if len(whole) > 4:
        whole = f"{int(whole):,}".replace(",", sep)
    if len(frac) > 4:
        frac = sep.join(frac[i:i + 3] for i in range(0, len(frac), 3))
    return sign + whole + dot + frac


def format_number(x: float, sig: int = 4, *, group: bool = False) -> str:
    """Format a number to ``sig`` significant figures without needless exponents.

    A number too small or too large to read plainly is written with a power of ten
    (``1.23 × 10⁻⁵``), never ``1.23e-05``.  ``None`` and NaN are ``—``, booleans ``yes``/``no``;
    ``group=True`` puts a thin space between groups of three digits.

    >>> format_number(259.4236, 4)
    '259.4'
    >>> format_number(306796.0, 4)
    '306800'
    >>> format_number(50.0, 4)
    '50'
    >>> format_number(0.000123456, 3)
    '1.23 × 10⁻⁴'
    """
    if x is None or (isinstance(x, float) and math.isnan(x)):
        return "—"
    if isinstance(x, (bool, np.bool_)):
        return "yes" if x else "no"
    x = float(x)
    if math.isnan(x):
        return "—"
    if x == 0:
        return "0"
    if math.isinf(x):
        return "∞" if x > 0 else "−∞"
    exponent = math.floor(math.log10(abs(x)))
    if not _plain_range(exponent, sig):
        mantissa, _, exp = f"{x:.{sig - 1}e}".partition("e")
        if "." in mantissa:
            mantissa = mantissa.rstrip("0").rstrip(".")
        return power_of_ten(mantissa, int(exp))
    rounded = round(x, sig - 1 - exponent)
    decimals = max(sig - 1 - exponent, 0)
    text = f"{rounded:.{decimals}f}"
    if "." in text:
        text = text.rstrip("0").rstrip(".")
    if text == "-0":
        text = "0"
    return group_digits(text) if group else text


def _exponent(values: np.ndarray) -> int | None:
    finite = np.abs(values[np.isfinite(values) & (values != 0)])
    if finite.size == 0:
        return None
    return int(math.floor(math.log10(float(finite.max()))))


def readable_unit(q: pint.Quantity, sig: int = 4) -> pint.Quantity:
    """``q`` in a unit where its number reads plainly: its own unit if it does, else an engineer's prefix.

    ``1.5e-4 m`` becomes ``0.15 mm``; ``1e-9 m/s`` becomes ``1 nm/s``; ``20 MPa`` stays.  For an array
    the unit is chosen so that its largest value is at least 1 and its smallest non-zero value still
    reads plainly (``[2.7e-6, 1.3e-4] m/s`` becomes ``2.7 … 130 µm/s``).  A quantity with no preferred
    unit that reads plainly is returned as it is.
    """
    mags = np.atleast_1d(np.asarray(q.magnitude, dtype=float))
    exponent = _exponent(mags)
    if exponent is None or not getattr(q, "_is_multiplicative", True):
        return q
    array = mags.size > 1

    def spread(values: np.ndarray) -> tuple[int, int] | None:
        nonzero = np.abs(values[np.isfinite(values) & (values != 0)])
        if nonzero.size == 0:
            return None
        return (int(math.floor(math.log10(float(nonzero.min())))),
                int(math.floor(math.log10(float(nonzero.max())))))

    def fits(values: np.ndarray, strict: bool) -> bool:
        lo_hi = spread(values)
        if lo_hi is None:
            return True
        lo, hi = lo_hi
        if not (_plain_range(lo, sig) and _plain_range(hi, sig)):
            return False
        return not strict or (hi >= 0 if array else lo >= -1)

    if fits(mags, strict=False) and not (array and not fits(mags, strict=True) and spread(mags)[0] < -2):
        return q
    candidates = []
    for unit in PREFERRED_UNITS.get(str(q.dimensionality), ()):
        try:
            candidates.append(q.to(unit))
        except pint.errors.PintError:
            continue
    for strict in (True, False):
        for candidate in candidates:
            if fits(np.atleast_1d(np.asarray(candidate.magnitude, dtype=float)), strict):
                return candidate
    return q


def _number_list(values, sig: int) -> str:
    flat = np.ravel(np.asarray(values, dtype=float))
    if flat.size == 0:
        return "no values"
    if flat.size <= MAX_LISTED:
        return ", ".join(format_number(v, sig) for v in flat)
    finite = flat[np.isfinite(flat)]
    if finite.size == 0:
        return f"{flat.size} values, none a number"
    if finite.min() == finite.max():
        return f"{flat.size} values, all {format_number(finite.min(), sig)}"
    return f"{flat.size} values from {format_number(finite.min(), sig)} to {format_number(finite.max(), sig)}"


_E_NUMBER = re.compile(r"(?<![\w.])([+-]?)(\d+(?:\.\d+)?)[eE]([+-]?\d+)(?![\w.])")


def plain_numbers(text: str) -> str:
    """Numbers written by a program in e-notation (``2.1e-06``, ``1.1e+03``) rewritten as an engineer writes them.

    ``'sampling error about ±2.1e-06'`` becomes ``'sampling error about ±2.1 × 10⁻⁶'``; ``'1.1e+03'``
    becomes ``'1100'``.  The mantissa's digits set the significant figures; other text is left alone.
    """
    def one(m: re.Match) -> str:
        digits = len(m.group(2).replace(".", "").lstrip("0")) or 1
        return format_number(float(m.group(1) + m.group(2) + "e" + m.group(3)), max(digits, 1))

    return _E_NUMBER.sub(one, text)


def format_quantity(q: Any, unit: str | None = None, sig: int = 4) -> str:
    """A value as an engineer writes it: number, space, unit (``'259.4 Hz'``, ``'0.15 mm'``).

    The value keeps its unit unless its number would need a power of ten, when a prefixed unit is
    chosen (:func:`readable_unit`).  Up to :data:`MAX_LISTED` values of an array are listed
    (``'39.25, 24.5 Hz'``); a longer array is summarised (``'25 values from 0.155 to 130 µm/s'``).
    """
    if not isinstance(q, pint.Quantity):
        return format_number(q, sig) if np.ndim(q) == 0 else _number_list(q, sig)
    if unit is not None:
        q = q.to(unit)
    else:
        q = readable_unit(q, sig)
    u = unit_text(q.units)
    mag = q.magnitude
    if np.ndim(mag) and np.size(mag) == 0:
        return "no values"
    num = format_number(mag, sig) if np.ndim(mag) == 0 else _number_list(mag, sig)
    return f"{num} {u}".strip()


def format_value(value: Any, sig: int = 4) -> str:
    """Any input or result value as text for a reader: never a Python repr.

    Booleans are ``yes``/``no``, ``None`` is ``—``, a list is a comma list (``none`` when empty),
    a mapping is its keys (``'tpu-90a-printed (1 entry)'``: its content belongs in a table),
    Quantities and numbers go through :func:`format_quantity`.
    """
    if hasattr(value, "unwrap"):
        value = value.unwrap()
    if value is None:
        return "—"
    if isinstance(value, (bool, np.bool_)):
        return "yes" if value else "no"
    if isinstance(value, pint.Quantity):
        return format_quantity(value, sig=sig)
    if isinstance(value, str):
        return value
    if isinstance(value, (int, np.integer)):
        return str(int(value))
    if isinstance(value, (float, np.floating)):
        return format_number(float(value), sig)
    if isinstance(value, dict) or hasattr(value, "items"):
        keys = [str(k) for k in value]
        if not keys:
            return "none"
        return ", ".join(keys) + f" ({len(keys)} {'entry' if len(keys) == 1 else 'entries'})"
    if isinstance(value, np.ndarray):
        return _number_list(value, sig)
    if isinstance(value, (list, tuple)):
        if not value:
            return "none"
        if all(isinstance(v, pint.Quantity) for v in value):
            units = {str(v.units) for v in value}
            if len(units) == 1:
                return format_quantity(Q_(np.array([v.magnitude for v in value], dtype=float), units.pop()), sig=sig)
        return ", ".join(format_value(v, sig) for v in value)
    return str(value)
