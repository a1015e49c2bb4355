"""The result object every library calculation returns."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

from latticecalc.errors import InputError
from latticecalc.sheet.step import Check, Step


@dataclass(frozen=True, kw_only=True)
class CalcResult:
    """A calculation's value(s) and the steps that produced them.

    Attributes
    ----------
    value:
        A Quantity, or a mapping of names to Quantities (or to further results).
    steps:
        The :class:`Step` and :class:`Check` records, in the order they were made.
    title:
        A heading for the sheet (optional).

    Displaying a result in Jupyter renders its steps (formula, substitution, result, source).
    Physics modules subclass this to add typed fields; keep subclasses frozen and keyword-only.
    """

    value: Any
    steps: tuple[Step | Check, ...] = ()
    title: str = ""

    def step(self, step_id: str) -> Step | Check:
        """The step with id ``step_id``."""
        for s in self.steps:
            if s.id == step_id:
                return s
        raise InputError("no such step", input_name="step_id",
                         expected=", ".join(s.id for s in self.steps), got=repr(step_id))

    @property
    def checks(self) -> tuple[Check, ...]:
        """The checks among the steps."""
        return tuple(s for s in self.steps if isinstance(s, Check))

    def __getitem__(self, key: str) -> Any:
        if isinstance(self.value, Mapping):
            return self.value[key]
        raise TypeError(f"{type(self).__name__}.value is a single quantity, not a mapping")

    def _repr_mimebundle_(self, include=None, exclude=None) -> dict:
        from latticecalc.sheet.display import result_bundle

        return result_bundle(self)


def combine(*results: CalcResult, value: Any = None, title: str = "") -> CalcResult:
    """One result holding the steps of several, in order (duplicate step ids are dropped)."""
    seen: set[str] = set()
    steps = []
    for r in results:
        for s in r.steps:
            if s.id not in seen:
                seen.add(s.id)
                steps.append(s)
    return CalcResult(value=value, steps=tuple(steps), title=title)
