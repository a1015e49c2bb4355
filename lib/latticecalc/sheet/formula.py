"""A formula is one sympy expression that is both shown on the sheet and evaluated.

There is never a second, hand-written copy of a formula: :meth:`Formula.evaluate` lambdifies the
same expression that :meth:`Formula.latex` renders, and evaluates it on pint Quantities so the
units are carried (and checked) by the arithmetic itself.
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from dataclasses import dataclass, field
from functools import cached_property
from typing import Any

import numpy as np
import pint
import sympy as sp

from latticecalc.errors import DimensionError, InputError
from latticecalc.units import MAX_LISTED, Q_, format_number, readable_unit, ureg


@dataclass(frozen=True)
class Formula:
    r"""``target = expr``, with optional LaTeX names for the symbols.

    Parameters
    ----------
    target:
        Name of the result symbol (``"f_1"``); rendered through ``latex_names`` if given.
    expr:
        The sympy expression.  Its free symbols' names are the keys of the values passed to
        :meth:`evaluate`.
    latex_names:
        Display names, ``{"rho": r"\rho_s", "lambda_n": r"\lambda_1"}``; sympy's own
        naming (Greek letters, ``_`` subscripts) is used for the rest.

    Examples
    --------
    >>> import sympy as sp
    >>> m, a = sp.symbols("m a")
    >>> F = Formula("F", m * a)
    >>> F.evaluate({"m": Q_(2, "kg"), "a": Q_(3, "m/s^2")}).to("N")
    <Quantity(6.0, 'newton')>
    """

    target: str
    expr: sp.Expr
    latex_names: Mapping[str, str] = field(default_factory=dict)

    @cached_property
    def symbols(self) -> tuple[sp.Symbol, ...]:
        """The expression's free symbols, sorted by name."""
        return tuple(sorted(self.expr.free_symbols, key=lambda s: s.name))

    @property
    def keys(self) -> tuple[str, ...]:
        """Names of the values :meth:`evaluate` needs."""
        return tuple(s.name for s in self.symbols)

    @cached_property
    def _function(self):
        return sp.lambdify(self.symbols, self.expr, modules=["numpy"])

    def evaluate(self, values: Mapping[str, Any]) -> pint.Quantity:
        """Evaluate on Quantities (plain numbers count as dimensionless); returns a Quantity."""
        missing = [k for k in self.keys if k not in values]
        if missing:
            raise InputError(f"formula for {self.target} needs a value for {', '.join(missing)}",
                             input_name=self.target, expected=", ".join(self.keys))
        args = []
        for key in self.keys:
            v = values[key]
            if not isinstance(v, pint.Quantity):
                v = Q_(np.asarray(v, dtype=float) if np.ndim(v) else float(v), "")
            args.append(v)
        try:
            out = self._function(*args)
        except pint.errors.DimensionalityError as exc:
            raise DimensionError(f"units do not combine in the formula for {self.target} ({exc})",
                                 input_name=self.target) from None
        if not isinstance(out, pint.Quantity):
            out = Q_(out, "")
        return out.to_reduced_units() if out.dimensionless else out

    def _names(self) -> dict[sp.Symbol, str]:
        return {s: self.latex_names[s.name] for s in self.symbols if s.name in self.latex_names}

    def target_latex(self) -> str:
        """LaTeX of the result symbol."""
        return self.latex_names.get(self.target, sp.latex(sp.Symbol(self.target)))

    def latex(self) -> str:
        """``target = expression`` in LaTeX."""
        return self._latex

    @cached_property
    def _latex(self) -> str:  # a formula is immutable, and the package prints each one many times
        return f"{self.target_latex()} = {sp.latex(self.expr, symbol_names=self._names())}"

    def substituted_latex(self, values: Mapping[str, Any], sig: int = 4) -> str:
        """The expression with every symbol replaced by its value and unit, in LaTeX."""
        names = {s: value_latex(values[s.name], sig=sig, wrap=True) for s in self.symbols}
        return explicit_products(sp.latex(self.expr, symbol_names=names))


# A space sympy leaves between two factors where the reader could not tell a product from one number:
# after a closing bracket, a power or a digit, before a digit or an opening bracket.
_JUXTAPOSED = re.compile(r"(\\right\)|\\right\]|[0-9}]) (?=[0-9]|\\left[(\[])")


def explicit_products(latex: str) -> str:
    r"""Put a multiplication dot where a substituted product would read as one number.

    ``\left(20\,\text{MPa}\right) 1.3`` becomes ``\left(20\,\text{MPa}\right) \cdot 1.3``; a product
    of a number and a symbol (``2 \pi``) is left as it is.  The SI Brochure (BIPM 2019, §5.4)
    asks for a multiplication sign or a half-high dot between numbers.
    """
    return _JUXTAPOSED.sub(r"\1 \\cdot ", latex)


def _unit_latex(unit: pint.Unit) -> str:
    text = f"{unit:~P}".replace(" ", "")
    if not text:
        return ""
    if text == "%":
        return r"\,\%"
    # the unit is text (upright, as written): µ and · are characters, not LaTeX commands
    text = text.replace("%", "pct").replace("{", "").replace("}", "").replace("\\", "")
    return r"\,\text{" + text + "}"


def number_latex(x: float, sig: int = 4) -> str:
    r"""One number in LaTeX: plain, or with a power of ten (``1.5 \times 10^{-4}``), never ``1.5e-04``."""
    text = format_number(float(x), sig)
    if " × 10" in text:
        mantissa, _, power = text.partition(" × 10")
        exponent = power.translate(str.maketrans("⁻⁰¹²³⁴⁵⁶⁷⁸⁹", "-0123456789"))
        return rf"{mantissa} \times 10^{{{exponent}}}"
    return text.replace("∞", r"\infty").replace("−", "-").replace("—", r"\text{—}")


def _vector_latex(flat: np.ndarray, sig: int) -> str:
    if flat.size == 0:
        return r"\left[\text{no values}\right]"
    if flat.size <= MAX_LISTED - 2:
        return r"\left[" + ", ".join(number_latex(v, sig) for v in flat) + r"\right]"
    finite = flat[np.isfinite(flat)]
    if finite.size == 0:
        return r"\left[\text{" + str(flat.size) + r" values, none a number}\right]"
    lo, hi = finite.min(), finite.max()
    if lo == hi:
        return r"\left[\text{" + str(flat.size) + r" values, all }" + number_latex(lo, sig) + r"\right]"
    return (r"\left[\text{" + str(flat.size) + r" values: }" + number_latex(lo, sig) + r" \ldots "
            + number_latex(hi, sig) + r"\right]")


def value_latex(value: Any, *, sig: int = 4, wrap: bool = False) -> str:
    r"""LaTeX for one value with its unit, e.g. ``(20\,\text{MPa})``.

    A value whose number would need a power of ten in its own unit is shown with an engineer's
    prefix (:func:`latticecalc.units.readable_unit`); an array of more than four values is shown
    by its first value, its count and its range, so no number is ever cut.
    """
    if isinstance(value, pint.Quantity):
        value = readable_unit(value, sig)
        mag, unit = value.magnitude, value.units
    else:
        mag, unit = value, ureg.dimensionless
    if np.ndim(mag) != 0:
        num = _vector_latex(np.ravel(np.asarray(mag, dtype=float)), sig)
    else:
        num = number_latex(float(mag), sig)
    unit_tex = _unit_latex(unit) if not unit == ureg.dimensionless else ""
    text = num + unit_tex
    if wrap and (unit_tex or num.startswith("-") or r"\times" in num):
        text = r"\left(" + text + r"\right)"
    return text
