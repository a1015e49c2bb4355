"""The design space a study searches: typed variables, each a continuous range or a list of choices.

A variable is named after the column-panel input it sets (``cell.width``, ``lattice.strut_diameter``),
so a chosen design can be written back into a column-panel project's ``inputs.toml`` unchanged.
Only the names in :data:`KNOWN_VARIABLES` are understood by the study's model; any other name is a
:class:`UnknownVariableError` before anything is evaluated or written.

The search works on the unit cube: :meth:`DesignSpace.decode` maps a point of ``[0, 1]^n`` to a design
(continuous variables linearly, discrete ones by equal slices of the unit interval), so the same
space-filling screen and the same optimiser serve every mix of variables.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from latticecalc.errors import InputError
from latticecalc.units import parse


class DesignSpaceError(InputError):
    """The design space cannot be searched (empty, reversed bounds, a bad choice list)."""


class UnknownVariableError(DesignSpaceError):
    """A design variable the study's model does not know."""


#: Variables the study's model knows: name -> (kind, dimension of a continuous value or None, description).
KNOWN_VARIABLES: dict[str, tuple[str, str | None, str]] = {
    "cell.kind": ("choice", None, "lattice cell type (bcc, octet, fcc, diamond, simple-cubic)"),
    "cell.width": ("quantity", "length", "cell edge length"),
    "lattice.strut_diameter": ("quantity", "length", "diameter of the soft lattice struts"),
    "lattice.material": ("choice", None, "material of the lattice struts (catalogue or project)"),
    "lattice.added_mass": ("quantity", "mass", "mass added at mid-span of every lattice strut"),
    "frame.enabled": ("choice", None, "cube-edge frame on (true) or off (false)"),
    "frame.strut_diameter": ("quantity", "length", "diameter of the frame members"),
    "frame.material": ("choice", None, "material of the frame members"),
    "panel.cells_deep": ("choice", None, "cells through the panel thickness"),
    # graded panels (study/zones.py): not column-panel inputs; they set panel.zones when written back
    "zones.count": ("choice", None, "zones of cell rows up the panel (1: uniform)"),
    "zones.diameter_spread": ("number", None, "relative step of lattice strut diameter from one zone to the next"),
    "zones.mass_spread": ("number", None, "relative step of added mass from one zone to the next"),
}

#: The unit each continuous variable is stored in (designs are plain numbers in these units).
UNITS = {"length": "mm", "mass": "g"}

#: Resolution of continuous values (common practice: a print is not made finer than 0.01 mm, a mass than 0.1 g);
#: a design is written back into a project exactly as it was evaluated.
RESOLUTION = {"mm": 0.01, "g": 0.1, "": 0.001}   # a relative step to 0.1 %

_CELL_KINDS = ("octet", "simple-cubic", "bcc", "fcc", "diamond")


@dataclass(frozen=True, kw_only=True)
class Continuous:
    """A continuous variable from ``low`` to ``high`` (plain numbers in ``unit``)."""

    name: str
    low: float
    high: float
    unit: str

    def decode(self, u: float) -> float:
        """The value at ``u`` in [0, 1], rounded to the resolution a design is made and written to."""
        x = self.low + (self.high - self.low) * min(max(u, 0.0), 1.0)
        step = RESOLUTION.get(self.unit, 0.0)
        return float(min(max(round(round(x / step) * step, 9), self.low), self.high)) if step else float(x)

    def encode(self, value: Any) -> float:
        """The point in [0, 1] of ``value``."""
        span = self.high - self.low
        return 0.0 if span == 0 else float((float(value) - self.low) / span)

    @property
    def text(self) -> str:
        """``low … high unit`` for tables."""
        return f"{self.low:g} – {self.high:g} {self.unit}".strip()


@dataclass(frozen=True, kw_only=True)
class Discrete:
    """A discrete variable: one of ``choices`` (text, numbers or booleans; quantities as numbers in ``unit``)."""

    name: str
    choices: tuple[Any, ...]
    unit: str = ""

    def decode(self, u: float) -> Any:
        """The choice whose slice of [0, 1] holds ``u``."""
        k = min(int(min(max(u, 0.0), 1.0) * len(self.choices)), len(self.choices) - 1)
        return self.choices[k]

    def encode(self, value: Any) -> float:
        """The centre of the slice of ``value``."""
        return (self.choices.index(value) + 0.5) / len(self.choices)

    @property
    def text(self) -> str:
        """The choices for tables."""
        from latticecalc.units import format_value

        return ", ".join(format_value(c) for c in self.choices) + (f" {self.unit}" if self.unit else "")


Variable = Continuous | Discrete


@dataclass(frozen=True, kw_only=True)
class DesignSpace:
    """The variables a study may change, in a fixed order (the order they were given)."""

    variables: tuple[Variable, ...]

    @property
    def names(self) -> tuple[str, ...]:
        """Variable names in order."""
        return tuple(v.name for v in self.variables)

    @property
    def dimension(self) -> int:
        """Number of variables (the unit cube's dimension)."""
        return len(self.variables)

    def decode(self, u: Sequence[float]) -> dict[str, Any]:
        """A design (name -> plain value) from a point of the unit cube (a one-zone design's spreads are 0)."""
        design = {v.name: v.decode(float(x)) for v, x in zip(self.variables, u)}
        if design.get("zones.count", 0) == 1:
            for name in ("zones.diameter_spread", "zones.mass_spread"):
                if name in design:
                    design[name] = 0.0
        return design

    def encode(self, design: Mapping[str, Any]) -> np.ndarray:
        """The unit-cube point of a design."""
        return np.array([v.encode(design[v.name]) for v in self.variables])

    @property
    def display_names(self) -> tuple[str, ...]:
        """Column heads of a design table: the variable names, the zone variables as one ``zones`` column."""
        from latticecalc.study.zones import ZONE_VARIABLES

        out: list[str] = []
        for n in self.names:
            name = "zones" if n in ZONE_VARIABLES else n
            if name not in out:
                out.append(name)
        return tuple(out)

    def display_values(self, design: Mapping[str, Any], hand: Mapping[str, Any]) -> list[str]:
        """A design's values as an engineer writes them, in :attr:`display_names` order (``hand``: its outputs)."""
        from latticecalc.study.zones import zones_text
        from latticecalc.units import format_value

        units = {v.name: v.unit for v in self.variables}
        return [zones_text(design, hand) if n == "zones" else
                (format_value(design[n]) + (f" {units[n]}" if units.get(n) and isinstance(design[n], float) else ""))
                for n in self.display_names]

    def rows(self) -> list[list[str]]:
        """(variable, kind, range or choices) rows for a sheet table."""
        return [[v.name, "continuous" if isinstance(v, Continuous) else "discrete", v.text] for v in self.variables]


def _check_name(name: str, *, file: str | None) -> tuple[str, str | None, str]:
    if name not in KNOWN_VARIABLES:
        raise UnknownVariableError("the study's model does not know this design variable", input_name=f"space.{name}",
                                   expected="one of " + ", ".join(KNOWN_VARIABLES), got=repr(name), file=file)
    return KNOWN_VARIABLES[name]


def _number(name: str, raw: Any, *, what: str, file: str | None) -> float:
    """A plain number of a dimensionless variable (a number, or its text)."""
    try:
        if isinstance(raw, bool):
            raise ValueError
        x = float(raw)
    except (TypeError, ValueError):
        x = float("nan")
    if not np.isfinite(x):
        raise DesignSpaceError("a relative step is a plain number", input_name=f"space.{name}",
                               expected=f"a number as the {what}, e.g. 0.2", got=repr(raw), file=file)
    return x


def _choice_value(name: str, raw: Any, dim: str | None, *, file: str | None, kind: str = "choice") -> Any:
    if name == "frame.enabled":
        if not isinstance(raw, bool):
            raise DesignSpaceError("frame.enabled choices are true and false", input_name=f"space.{name}",
                                   expected="[true, false]", got=repr(raw), file=file)
        return raw
    if name == "zones.count":
        if isinstance(raw, bool) or not isinstance(raw, int) or raw < 1:
            raise DesignSpaceError("a zone count is a whole number from 1 (1: a uniform panel)",
                                   input_name=f"space.{name}", expected="[1, 2, …]", got=repr(raw), file=file)
        return int(raw)
    if kind == "number":
        return _number(name, raw, what="choice", file=file)
    if name == "panel.cells_deep":
        if isinstance(raw, bool) or not isinstance(raw, int) or raw < 1:
            raise DesignSpaceError("cells through the thickness are whole numbers from 1", input_name=f"space.{name}",
                                   expected="[1, 2, …]", got=repr(raw), file=file)
        return int(raw)
    if name == "cell.kind" and raw not in _CELL_KINDS:
        raise DesignSpaceError("unknown cell kind", input_name=f"space.{name}", expected=", ".join(_CELL_KINDS),
                               got=repr(raw), file=file)
    if dim is not None:   # a quantity given as a list of printable values
        return float(parse(raw, name=f"space.{name}", expected=dim, file=file).to(UNITS[dim]).m)
    if not isinstance(raw, str) or not raw.strip():
        raise DesignSpaceError("a choice must be a name", input_name=f"space.{name}", expected="text",
                               got=repr(raw), file=file)
    return raw


def variable_from_entry(name: str, entry: Any, *, file: str | None = None) -> Variable:
    """One variable from its ``[space]`` entry: ``{ low = "…", high = "…" }`` or ``{ choices = [...] }``."""
    kind, dim, _ = _check_name(name, file=file)
    if not isinstance(entry, Mapping):
        raise DesignSpaceError("a design variable is a table", input_name=f"space.{name}",
                               expected='{ low = "10 mm", high = "30 mm" } or { choices = [...] }', got=repr(entry),
                               file=file)
    if "choices" in entry:
        raw = list(entry["choices"])
        if not raw:
            raise DesignSpaceError("a discrete variable has no choices", input_name=f"space.{name}",
                                   expected="at least one choice", got="[]", file=file)
        choices = tuple(_choice_value(name, c, dim, file=file, kind=kind) for c in raw)
        if len(set(choices)) != len(choices):
            raise DesignSpaceError("a choice is listed twice", input_name=f"space.{name}",
                                   expected="distinct choices", got=repr(raw), file=file)
        return Discrete(name=name, choices=choices, unit=UNITS.get(dim, "") if dim else "")
    if kind not in ("quantity", "number"):
        raise DesignSpaceError("this variable takes a list of choices", input_name=f"space.{name}",
                               expected="{ choices = [...] }", got=repr(dict(entry)), file=file)
    if "low" not in entry or "high" not in entry:
        raise DesignSpaceError("a continuous variable needs both bounds", input_name=f"space.{name}",
                               expected='{ low = "…", high = "…" }', got=repr(dict(entry)), file=file)
    if kind == "number":
        low, high = (_number(name, entry[b], what=f"{b} bound", file=file) for b in ("low", "high"))
        if not high >= low:
            raise DesignSpaceError("the bounds are reversed", input_name=f"space.{name}",
                                   expected="low <= high", got=f"low {low:g}, high {high:g}", file=file)
        return Continuous(name=name, low=float(low), high=float(high), unit="")
    unit = UNITS[dim]
    low = parse(entry["low"], name=f"space.{name}.low", expected=dim, file=file).to(unit).m
    high = parse(entry["high"], name=f"space.{name}.high", expected=dim, file=file).to(unit).m
    if not high >= low:
        raise DesignSpaceError("the bounds are reversed", input_name=f"space.{name}",
                               expected="low <= high", got=f"low {low:g} {unit}, high {high:g} {unit}", file=file)
    if low < 0 or (low == 0 and dim == "length"):
        raise DesignSpaceError("the lower bound must be positive", input_name=f"space.{name}",
                               expected=f"low > 0 {unit}" if dim == "length" else f"low >= 0 {unit}",
                               got=f"{low:g} {unit}", file=file)
    return Continuous(name=name, low=float(low), high=float(high), unit=unit)


def space_from_table(table: Mapping[str, Any] | None, *, file: str | None = None) -> DesignSpace:
    """The design space from the ``[space]`` table of a design-study project (variable name -> entry).

    Raises :class:`DesignSpaceError` for an empty space and :class:`UnknownVariableError` for a name the
    model does not know.
    """
    if not table:
        raise DesignSpaceError("the design space is empty: nothing to search", input_name="space",
                               expected='at least one variable, e.g. "lattice.strut_diameter" = '
                               '{ low = "10 mm", high = "30 mm" }', got="no variables", file=file)
    space = DesignSpace(variables=tuple(variable_from_entry(str(k), v, file=file) for k, v in table.items()))
    check_zone_variables(space, file=file)
    return space


def check_zone_variables(space: DesignSpace, *, file: str | None = None) -> None:
    """A :class:`DesignSpaceError` when a spread is given without ``zones.count`` or can leave a zone with no strut.

    Zone k of n has d (1 + s (k − (n + 1)/2)) (:mod:`latticecalc.study.zones`): the outermost zones stand
    (n − 1)/2 steps from the centre, so every diameter stays positive while |s| < 2/(n − 1), and every added
    mass stays at or above zero while |s| <= 2/(n − 1).
    """
    by_name = {v.name: v for v in space.variables}
    count = by_name.get("zones.count")
    most = max(count.choices) if count is not None else 1
    for name in ("zones.diameter_spread", "zones.mass_spread"):
        v = by_name.get(name)
        if v is None:
            continue
        if count is None:
            raise DesignSpaceError("a zone spread needs the zone count in the space", input_name=f"space.{name}",
                                   expected='"zones.count" = { choices = [1, 2, …] } beside it', got="no zones.count",
                                   file=file)
        if most < 2:
            continue
        limit = 2.0 / (most - 1)
        worst = max(abs(v.low), abs(v.high)) if isinstance(v, Continuous) else max(abs(c) for c in v.choices)
        bad = worst >= limit if name == "zones.diameter_spread" else worst > limit
        if bad:
            what = "a strut diameter of zero or less" if name == "zones.diameter_spread" else "a negative added mass"
            bounds = (f"low {v.low:g}, high {v.high:g}" if isinstance(v, Continuous)
                      else "choices " + ", ".join(f"{c:g}" for c in v.choices))
            raise DesignSpaceError(f"the spread gives the outermost zone {what} with {most} zones",
                                   input_name=f"space.{name}",
                                   expected=f"{'|spread| < ' if name == 'zones.diameter_spread' else '|spread| <= '}"
                                   f"{limit:g} (2 / (zones − 1) for up to {most} zones)", got=bounds, file=file)
