"""A formula is one sympy expression that is both shown on the sheet and evaluated.

There is never a second, hand-written copy of a formula: :meth:`Formula.evaluate` lambdifies the
same expression that :meth:`Formula.latex` renders, and evaluates it on pint Quantities so the
units are carried (and checked) by the arithmetic itself.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from functools import cached_property
from typing import Any

import numpy as np
import pint
import sympy as sp

from latticecalc.errors import DimensionError, InputError
from latticecalc.units import Q_, format_number, ureg


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
        return f"{self.target_latex()} = {sp.latex(self.expr, symbol_names=self._names())}"

    def substituted_latex(self, values: Mapping[str, Any], sig: int = 4) -> str:
        """The expression with every symbol replaced by its value and unit, in LaTeX."""
        names = {s: value_latex(values[s.name], sig=sig, wrap=True) for s in self.symbols}
        return sp.latex(self.expr, symbol_names=names)


def _unit_latex(unit: pint.Unit) -> str:
    text = f"{unit:~P}".replace(" ", "")
    if not text:
        return ""
    if text == "%":
        return r"\,\%"
    text = text.replace("µ", r"\mu{}").replace("·", r"\cdot{}").replace("%", "pct")
    return r"\,\text{" + text + "}"


def value_latex(value: Any, *, sig: int = 4, wrap: bool = False) -> str:
    r"""LaTeX for one value with its unit, e.g. ``(20\,\text{MPa})``."""
    if isinstance(value, pint.Quantity):
        mag, unit = value.magnitude, value.units
    else:
        mag, unit = value, ureg.dimensionless
    if np.ndim(mag) != 0:
        flat = np.ravel(mag)
        num = r"\left[" + ", ".join(format_number(v, sig) for v in flat[:4]) + (
            r", \ldots" if flat.size > 4 else "") + r"\right]"
    else:
        num = format_number(float(mag), sig)
        if "e" in num:
            base, exp = num.split("e")
            num = rf"{base} \times 10^{{{int(exp)}}}"
    unit_tex = _unit_latex(unit) if not unit == ureg.dimensionless else ""
    text = num + unit_tex
    if wrap and (unit_tex or num.startswith("-") or r"\times" in num):
        text = r"\left(" + text + r"\right)"
    return text
