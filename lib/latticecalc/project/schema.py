"""A template's declared inputs (``template.toml``): names, kinds, dimensions, defaults, ranges."""

from __future__ import annotations

import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from latticecalc.errors import InputError
from latticecalc.units import DIMENSIONS

KINDS = ("quantity", "quantity-list", "number", "integer", "text", "choice", "bool", "path", "table")
_SPEC_KEYS = {"name", "description", "kind", "dimension", "default", "min", "max", "choices",
              "optional", "source", "unit"}
#: Dimensions whose values must be greater than zero by their physics: a frequency (a sample
#: rate, a band edge, a measured peak, a target) is a rate of cycles, and a negative or zero one
#: means a typing error. A quantity or quantity-list input of one of these dimensions that
#: declares no ``min`` must be > 0; a declared ``min`` replaces the rule.
POSITIVE_DIMENSIONS = frozenset({"frequency"})


@dataclass(frozen=True, kw_only=True)
class InputSpec:
    """One declared input of a template.

    Attributes
    ----------
    name:
        Dotted name matching the table path in ``inputs.toml`` (``cell.width``).
    kind:
        One of :data:`KINDS`.
    dimension:
        For ``quantity`` and ``quantity-list``: a name from :data:`latticecalc.units.DIMENSIONS`.
    unit:
        Display unit for the inputs table (defaults to the unit the user wrote).
    min, max:
        Allowed range, inclusive (text such as ``"5 mm"`` for quantities).
    """

    name: str
    description: str
    kind: str = "quantity"
    dimension: str | None = None
    default: Any = None
    min: Any = None
    max: Any = None
    choices: tuple[str, ...] = ()
    optional: bool = False
    source: str = ""
    unit: str = ""

    @property
    def positive(self) -> bool:
        """Whether every value must be > 0 although no ``min`` is declared (:data:`POSITIVE_DIMENSIONS`)."""
        return (self.kind in ("quantity", "quantity-list") and self.dimension in POSITIVE_DIMENSIONS
                and self.min is None)

    @property
    def expected(self) -> str:
        """What a valid value looks like, for error messages and the form."""
        if self.kind == "quantity":
            text = f"a {self.dimension or 'quantity'} with a unit"
        elif self.kind == "quantity-list":
            text = f"a list of {self.dimension or 'quantity'} values with units"
        elif self.kind == "choice":
            text = "one of " + ", ".join(repr(c) for c in self.choices)
        elif self.kind == "integer":
            text = "a whole number"
        elif self.kind == "number":
            text = "a plain number"
        elif self.kind == "bool":
            text = "true or false"
        else:
            text = self.kind
        if self.positive:
            text += " greater than zero"
        if self.min is not None or self.max is not None:
            text += f" in [{self.min if self.min is not None else '−∞'}, {self.max if self.max is not None else '∞'}]"
        if self.default is not None and self.kind in ("quantity", "number", "integer"):
            text += f", e.g. {self.default!r}"
        return text


@dataclass(frozen=True, kw_only=True)
class TemplateSpec:
    """A template's ``template.toml``: identity, notebook order and declared inputs."""

    name: str
    title: str
    description: str
    notebooks: tuple[str, ...]
    inputs: tuple[InputSpec, ...] = field(default_factory=tuple)
    summary: tuple[tuple[str, tuple[str, ...]], ...] = ()
    file: str = "template.toml"

    def spec(self, name: str) -> InputSpec:
        """The declared input ``name``."""
        for s in self.inputs:
            if s.name == name:
                return s
        raise InputError("not a declared input of this template", input_name=name,
                         expected=", ".join(s.name for s in self.inputs), file=self.file)


def load_template_spec(path: Path) -> TemplateSpec:
    """Read and check a ``template.toml``."""
    path = Path(path)
    where = path.name
    try:
        data = tomllib.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise InputError("template file not found", input_name="template.toml", file=str(path),
                         hint="Is this a project folder made by 'latticecalc new'?") from None
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"not valid TOML ({exc})", input_name="template.toml", file=where) from None
    head = data.get("template")
    if not isinstance(head, dict) or not head.get("notebooks"):
        raise InputError("needs a [template] table with name, title, description and notebooks",
                         input_name="template", file=where)
    specs = []
    seen = set()
    for i, raw in enumerate(data.get("input", [])):
        unknown = set(raw) - _SPEC_KEYS
        if unknown or "name" not in raw:
            raise InputError(f"[[input]] number {i + 1} has unknown or missing keys {sorted(unknown)}",
                             input_name=raw.get("name", f"input {i + 1}"), file=where,
                             expected=", ".join(sorted(_SPEC_KEYS)))
        kind = raw.get("kind", "quantity")
        if kind not in KINDS:
            raise InputError("unknown input kind", input_name=raw["name"], expected=", ".join(KINDS),
                             got=repr(kind), file=where)
        dim = raw.get("dimension")
        if kind in ("quantity", "quantity-list") and dim not in DIMENSIONS:
            raise InputError("quantity inputs need a known dimension", input_name=raw["name"],
                             expected=", ".join(DIMENSIONS), got=repr(dim), file=where)
        if raw["name"] in seen:
            raise InputError("declared twice", input_name=raw["name"], file=where)
        seen.add(raw["name"])
        specs.append(InputSpec(name=raw["name"], description=raw.get("description", ""), kind=kind,
                               dimension=dim, default=raw.get("default"), min=raw.get("min"),
                               max=raw.get("max"), choices=tuple(raw.get("choices", ())),
                               optional=bool(raw.get("optional", False)), source=raw.get("source", ""),
                               unit=raw.get("unit", "")))
    summary = []
    for i, row in enumerate(data.get("summary", [])):
        if not isinstance(row.get("label"), str) or not row.get("steps"):
            raise InputError(f"[[summary]] number {i + 1} needs a label and a list of step ids", input_name="summary",
                             file=where, expected='label = "…", steps = ["step.id", …] (the first present is shown)')
        summary.append((row["label"], tuple(row["steps"])))
    return TemplateSpec(name=head.get("name", path.parent.name), title=head.get("title", ""),
                        description=head.get("description", ""),
                        notebooks=tuple(head["notebooks"]), inputs=tuple(specs), summary=tuple(summary), file=where)
