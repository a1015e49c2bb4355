"""Steps and checks: the traceable atoms of a calculation.

A :class:`Step` records one evaluated formula (or one numerical result) with the values put into
it, the result in a display unit, and its source.  A :class:`Check` compares a demand with a limit
and says whether it HOLDS or FAILS, with a utilisation.  Physics functions build them with :func:`evaluate`,
:func:`quantity_step` and :func:`check`; the sheet renders them; the export reads their
:meth:`to_dict` records.
"""

from __future__ import annotations

import builtins
import warnings
from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pint

from latticecalc.errors import DimensionError, InputError, LatticeCalcError
from latticecalc.sheet.formula import Formula, value_latex
from latticecalc.sheet.source import Source
from latticecalc.units import Q_, check_dimension, format_quantity, unit_text

STEP_ID_CHARS = set("abcdefghijklmnopqrstuvwxyz0123456789-_.")
#: Relative tolerance between a step's recorded result and its formula evaluated on its values
#: (both come from the same lambdified expression; only the display-unit conversion rounds).
RESULT_RTOL = 1e-9



#: The verdict a check shows: its demand holds against its limit, or it fails it.
VERDICTS = {True: "HOLDS", False: "FAILS"}
#: The verdict words of packages made before :data:`VERDICTS` (``verify`` still reads them).
EARLIER_VERDICTS = {True: "OK", False: "NOT OK"}


def verdict_words(checks: Any) -> dict[bool, str]:
    """The verdict words a list of check records uses.

    :data:`VERDICTS`, or :data:`EARLIER_VERDICTS` when every verdict in it is one of those (a package
    made before today's words).
    """
    said = {c.get("verdict") for c in checks if isinstance(c, dict)} if isinstance(checks, list) else set()
    return EARLIER_VERDICTS if said and said <= set(EARLIER_VERDICTS.values()) else VERDICTS


def checks_tally(checks: Any) -> str:
    """How many checks hold and how many fail: ``'6 hold, 3 fail'`` (``'6 OK, 3 NOT OK'`` in the earlier words)."""
    rows = [c for c in checks if isinstance(c, dict)] if isinstance(checks, list) else []
    failing = sum(c.get("ok") is not True for c in rows)
    if verdict_words(rows) is EARLIER_VERDICTS:
        return f"{len(rows) - failing} OK, {failing} NOT OK"
    return f"{len(rows) - failing} hold, {failing} fail"

class FormulaResultError(LatticeCalcError, ValueError):
    """A step's result is not its formula evaluated on the values it shows."""


class FormulaResultWarning(UserWarning):
    """A step listed in :data:`PENDING_FORMULA_FIX` records a result its formula does not give."""


#: Step ids whose module still records a result other than the value of the formula it shows.
#: These warn (:class:`FormulaResultWarning`) instead of raising until their module is fixed;
#: the list only shrinks.  ``criterion.required-loss`` (signals/criteria.py) shows
#: IL_req = ΔL + m but records max(ΔL + m, 0); its formula should show the max.
PENDING_FORMULA_FIX: frozenset[str] = frozenset()


def _check_id(step_id: str) -> str:
    if not step_id or not set(step_id) <= STEP_ID_CHARS:
        raise InputError("a step id uses lower-case letters, digits, '-', '_' and '.' only",
                         input_name="id", expected="e.g. 'strut.f1-cc'", got=repr(step_id))
    return step_id


def _plain(value: Any, unit: str | None = None) -> dict:
    if isinstance(value, pint.Quantity):
        q = value.to(unit) if unit else value
        mag = q.magnitude
        mag = np.asarray(mag).tolist() if np.ndim(mag) else float(mag)
        return {"value": mag, "unit": unit_text(q.units)}
    if np.ndim(value):
        return {"value": np.asarray(value).tolist(), "unit": ""}
    return {"value": value if isinstance(value, (str, bool)) else float(value), "unit": ""}


@dataclass(frozen=True, kw_only=True)
class Step:
    """One evaluated formula or one reported value.

    A step with a formula checks on creation that its ``result`` is the formula evaluated on its
    ``values`` (:class:`FormulaResultError` otherwise), so the substitution it shows ends with the
    value of the expression shown, however the step was built.

    Attributes
    ----------
    id:
        Stable identifier (``"strut.f1-cc"``), used by the JSON record, sign-off and review.
    description:
        What the step computes, in words.
    result:
        The result as a Quantity in its display unit.
    formula:
        The :class:`Formula` evaluated, or ``None`` for a numerical or looked-up value.
    values:
        The values substituted into the formula, by symbol name.
    method:
        For a step without a formula: how the value was obtained (e.g. "FE modal analysis,
        8 elements per strut").
    source:
        Where the formula or value comes from.
    sig:
        Significant figures shown.
    note:
        A remark printed under the step (e.g. a flag raised by the calculation).
    """

    id: str
    description: str
    result: pint.Quantity
    formula: Formula | None = None
    values: Mapping[str, Any] = field(default_factory=dict)
    method: str = ""
    source: Source | None = None
    sig: int = 4
    note: str = ""
    #: Set only by :func:`evaluate`, whose result is the formula's value by construction, to the identities
    #: of that result and those values: the check that re-evaluates the formula (:func:`_check_formula_result`)
    #: would compute the same value again.  A copy with another result or other values
    #: (``dataclasses.replace``) no longer matches them and is checked.
    _evaluated: tuple = field(default=(), repr=False, compare=False)

    kind = "step"

    def __post_init__(self) -> None:
        _check_id(self.id)
        if not isinstance(self.result, pint.Quantity):
            raise InputError("a step's result must be a Quantity", input_name=self.id,
                             expected="a pint Quantity", got=type(self.result).__name__)
        if np.iscomplexobj(self.result.magnitude):
            raise InputError("a step's result must be real", input_name=self.id, expected="a real Quantity",
                             got=repr(self.result))
        if self.formula is not None and self._evaluated != (id(self.result), id(self.values)):
            _check_formula_result(self)

    @property
    def symbol_latex(self) -> str:
        """LaTeX of the result symbol (empty for a step without a formula)."""
        return self.formula.target_latex() if self.formula is not None else ""

    def formula_latex(self) -> str:
        """``f = expression`` in LaTeX, or ``""``."""
        return self.formula.latex() if self.formula is not None else ""

    def substitution_latex(self) -> str:
        """The expression with the values put in, ending ``= result``, or ``""``."""
        return self._ending_with_result(self.substituted_latex())

    def _ending_with_result(self, substituted: str) -> str:
        return substituted + " = " + value_latex(self.result, sig=self.sig) if self.formula is not None else ""

    def substituted_latex(self) -> str:
        """The expression with the values put in, without ``= result``, or ``""``.

        The package shows the result in its output column, beside this line.
        """
        if self.formula is None:
            return ""
        return self.formula.substituted_latex(self.values, sig=self.sig)

    def result_text(self) -> str:
        """The result as text, e.g. ``'259.4 Hz'``."""
        return format_quantity(self.result, sig=self.sig)

    def to_dict(self) -> dict:
        """JSON-ready record of the step."""
        substituted = self.substituted_latex()    # printed once: sympy's printer is most of a record's cost
        return {
            "kind": self.kind,
            "id": self.id,
            "description": self.description,
            "formula_latex": self.formula_latex(),
            "substitution_latex": self._ending_with_result(substituted),
            "substituted_latex": substituted,
            "symbol_latex": self.symbol_latex,
            "result": _plain(self.result),
            "result_text": self.result_text(),
            "values": {k: {**_plain(v), "text": format_quantity(v, sig=self.sig)}
                       for k, v in self.values.items()},
            "method": self.method,
            "source": self.source.to_dict() if self.source else None,
            "note": self.note,
        }


def _is_level(q: pint.Quantity) -> bool:
    """True for a logarithmic unit (dB): its magnitude is the level number itself."""
    return not getattr(q, "_is_multiplicative", True)


def _check_formula_result(step: Step) -> None:
    """Raise unless ``step.result`` is ``step.formula`` evaluated on ``step.values``.

    This is what makes the sheet's promise hold for every step, however it was built: the
    substitution shown ends with ``= result``, and that result is the expression's value.
    """
    formula = step.formula
    missing = [k for k in formula.keys if k not in step.values]
    if missing:
        raise FormulaResultError(f"the step shows {formula.target} without a value for {', '.join(missing)}",
                                 input_name=step.id, expected=", ".join(formula.keys),
                                 got=", ".join(step.values) or "no values")
    value = formula.evaluate(step.values)
    # a level labelled dB: the formula gives the level's number (20 log10 of a ratio), dimensionless
    target_unit = "" if _is_level(step.result) else step.result.units
    try:
        value = value.to(target_unit)
    except pint.errors.DimensionalityError:
        raise DimensionError(f"the step's result unit does not fit its formula for {formula.target}",
                             input_name=step.id, expected=f"{value.dimensionality}",
                             got=f"{step.result.units} ({step.result.dimensionality})") from None
    got = np.asarray(step.result.magnitude)
    want = np.asarray(value.magnitude)
    complex_value = np.iscomplexobj(want) and bool(np.any(np.imag(want) != 0))
    same = (not complex_value and got.shape == want.shape
            and bool(np.allclose(got, np.real(want), rtol=RESULT_RTOL, atol=0.0, equal_nan=True)))
    if not same:
        error = FormulaResultError(f"the step's result is not its formula for {formula.target} evaluated on "
                                   "the values it shows", input_name=step.id,
                                   expected=repr(value) if complex_value else format_quantity(value, sig=10),
                                   got=format_quantity(step.result, sig=10),
                                   hint="Build the step with evaluate(), which computes the result from the "
                                        "formula")
        if step.id in PENDING_FORMULA_FIX:
            warnings.warn(str(error), FormulaResultWarning, stacklevel=4)
            return
        raise error


@dataclass(frozen=True, kw_only=True)
class Check:
    """A demand compared with a limit.

    ``sense="max"``: the demand must not exceed the limit (utilisation = demand / limit).
    ``sense="min"``: the demand must reach the limit (utilisation = limit / demand), as for a
    safety factor or a margin.
    """

    id: str
    description: str
    demand: pint.Quantity
    limit: pint.Quantity
    sense: str = "max"
    source: Source | None = None
    note: str = ""
    sig: int = 3

    kind = "check"

    def __post_init__(self) -> None:
        _check_id(self.id)
        if self.sense not in ("max", "min"):
            raise InputError("unknown check sense", input_name="sense", expected="'max' or 'min'",
                             got=repr(self.sense))
        check_dimension(self.demand, name=f"{self.id} demand",
                        expected=str(self.limit.units) if isinstance(self.limit, pint.Quantity)
                        else "dimensionless")

    @property
    def utilisation(self) -> float:
        """Demand over limit (``max``) or limit over demand (``min``); the check holds when <= 1."""
        d = float(self.demand.to(self.limit.units).magnitude)
        lim = float(self.limit.magnitude)
        if self.sense == "max":
            return d / lim if lim != 0 else float("inf")
        if d > 0:
            return lim / d
        # a demand of zero or below never reaches a positive limit (e.g. an insertion loss that is negative)
        return 0.0 if lim <= d else float("inf")

    @property
    def ok(self) -> bool:
        """True when the utilisation does not exceed 1."""
        return bool(self.utilisation <= 1.0)

    @property
    def result(self) -> pint.Quantity:
        """The demand, so a check can be listed among results."""
        return self.demand

    def verdict(self) -> str:
        """``'HOLDS'`` or ``'FAILS'`` (:data:`VERDICTS`)."""
        return VERDICTS[self.ok]

    def to_dict(self) -> dict:
        """JSON-ready record of the check."""
        unit = str(self.limit.units)
        return {
            "kind": self.kind,
            "id": self.id,
            "description": self.description,
            "demand": _plain(self.demand, unit),
            "limit": _plain(self.limit),
            "demand_text": format_quantity(self.demand.to(unit), sig=self.sig),
            "limit_text": format_quantity(self.limit, sig=self.sig),
            "sense": self.sense,
            "utilisation": self.utilisation,
            "ok": self.ok,
            "verdict": self.verdict(),
            "result": _plain(self.demand, unit),
            "result_text": format_quantity(self.demand.to(unit), sig=self.sig),
            "source": self.source.to_dict() if self.source else None,
            "note": self.note,
        }


def evaluate(formula: Formula, *, id: str, description: str, values: Mapping[str, Any],
             unit: str, source: Source | None = None, sig: int = 4, note: str = "") -> Step:
    """Evaluate ``formula`` on ``values`` and return the :class:`Step` that records it.

    The result is converted to ``unit`` (a practitioner's display unit such as ``"Hz"``).  It is
    always the formula's value: there is no way to pass a result in, and a formula that gives a
    complex value (a phasor) is refused, since a step records a real quantity.
    """
    result = formula.evaluate(values)
    if np.iscomplexobj(result.magnitude):
        raise FormulaResultError(f"the formula for {formula.target} gives a complex value; a step records a "
                                 "real quantity", input_name=id, expected="a real-valued formula "
                                 "(e.g. the modulus of a phasor)", got=repr(result))
    result = check_dimension(result, name=id, expected=unit).to(unit)
    used = {k: values[k] for k in formula.keys}
    return Step(id=id, description=description, result=result, formula=formula, values=used,
                source=source, sig=sig, note=note, _evaluated=(builtins.id(result), builtins.id(used)))


def quantity_step(*, id: str, description: str, value: Any, unit: str = "", method: str = "",
                  source: Source | None = None, sig: int = 4, note: str = "") -> Step:
    """Record a value that no closed-form formula produced (a table look-up, a numerical result)."""
    if not isinstance(value, pint.Quantity):
        value = Q_(value, "")
    if unit:
        value = check_dimension(value, name=id, expected=unit).to(unit)
    return Step(id=id, description=description, result=value, method=method, source=source,
                sig=sig, note=note)


def check(*, id: str, description: str, demand: Any, limit: Any, sense: str = "max",
          source: Source | None = None, note: str = "", sig: int = 3) -> Check:
    """Build a :class:`Check`; plain numbers count as dimensionless."""
    if not isinstance(demand, pint.Quantity):
        demand = Q_(float(demand), "")
    if not isinstance(limit, pint.Quantity):
        limit = Q_(float(limit), "")
    return Check(id=id, description=description, demand=demand, limit=limit, sense=sense,
                 source=source, note=note, sig=sig)
