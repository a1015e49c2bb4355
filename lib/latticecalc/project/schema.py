"""A template's declared inputs (``template.toml``): names, forms, dimensions, presets, ranges.

The file has an ``[about]`` table (name, title, purpose, notebooks in run order), one
``[given."<dotted.name>"]`` table per input in sheet order (meaning, form, dimension, unit, preset,
at_least, at_most, options, may_omit, source) and optional ``[[summary]]`` rows.

An older kit wrote ``[template]`` and an array of ``[[input]]`` tables instead.
:func:`convert_old_layout` turns such a file into the current layout (comments kept); the reader
uses it to read an old file as before, and ``latticecalc refile`` to rewrite one.
"""

from __future__ import annotations

import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import tomlkit
from tomlkit.exceptions import ParseError
from tomlkit.items import AoT, Table

from latticecalc.errors import InputError
from latticecalc.units import DIMENSIONS

#: The form an input is written in (``form = ...`` in ``template.toml``) -> the kind the kit checks it as.
FORMS = {"quantity": "quantity", "quantities": "quantity-list", "number": "number", "count": "integer",
         "words": "text", "pick": "choice", "yes-no": "bool", "file": "path", "rows": "table"}
#: The kinds :class:`InputSpec` carries (the values of :data:`FORMS`).
KINDS = tuple(FORMS.values())
#: Key of a ``[given.*]`` table -> the :class:`InputSpec` field it fills.
GIVEN_KEYS = {"meaning": "description", "form": "kind", "dimension": "dimension", "unit": "unit",
              "preset": "default", "at_least": "min", "at_most": "max", "options": "choices",
              "may_omit": "optional", "source": "source"}
ABOUT_KEYS = ("name", "title", "purpose", "notebooks")
_TOP_KEYS = ("about", "given", "summary")
#: The older layout's keys: ``[template]`` and ``[[input]]`` (read, and converted by ``refile``).
_OLD_ABOUT = {"description": "purpose"}
_OLD_INPUT = {"description": "meaning", "kind": "form", "default": "preset", "min": "at_least",
              "max": "at_most", "choices": "options", "optional": "may_omit", "dimension": "dimension",
              "unit": "unit", "source": "source"}
_OLD_KINDS = {kind: form for form, kind in FORMS.items()}
#: Dimensions whose values must be greater than zero by their physics: a frequency (a sample
#: rate, a band edge, a measured peak, a target) is a rate of cycles, and a negative or zero one
#: means a typing error. A quantity or quantities input of one of these dimensions that
#: declares no ``at_least`` must be > 0; a declared ``at_least`` replaces the rule.
POSITIVE_DIMENSIONS = frozenset({"frequency"})


@dataclass(frozen=True, kw_only=True)
class InputSpec:
    """One declared input of a template.

    Attributes
    ----------
    name:
        Dotted name matching the table path in ``inputs.toml`` (``cell.width``).
    kind:
        One of :data:`KINDS` (written as its form, a key of :data:`FORMS`).
    dimension:
        For ``quantity`` and ``quantity-list``: a name from :data:`latticecalc.units.DIMENSIONS`.
    unit:
        Display unit for the inputs table (defaults to the unit the user wrote).
    min, max:
        Allowed range, inclusive (text such as ``"5 mm"`` for quantities): ``at_least``, ``at_most``.
    description, default, choices, optional:
        Written ``meaning``, ``preset``, ``options``, ``may_omit``.
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
    #: Whether the file has the older layout (``[template]``, ``[[input]]``); ``latticecalc refile`` converts it.
    old_layout: bool = field(default=False, compare=False)

    def spec(self, name: str) -> InputSpec:
        """The declared input ``name``."""
        for s in self.inputs:
            if s.name == name:
                return s
        raise InputError("not a declared input of this template", input_name=name,
                         expected=", ".join(s.name for s in self.inputs), file=self.file)


def template_layout(data: dict, *, file: str) -> str:
    """``"current"`` (``[about]``, ``[given.*]``) or ``"old"`` (``[template]``, ``[[input]]``) for parsed ``data``.

    Raises
    ------
    InputError
        If the file mixes the two layouts.
    """
    new = [f"[{k}]" for k in ("about", "given") if k in data]
    old = [f"[{k}]" if k == "template" else f"[[{k}]]" for k in ("template", "input") if k in data]
    if new and old:
        raise InputError("mixes the current layout with the older one", input_name="template.toml", file=file,
                         expected="[about] and [given.\"<name>\"] tables only",
                         got=f"{', '.join(new)} beside {', '.join(old)}",
                         hint="Convert the older tables ('latticecalc refile' does it for a file that has only them)")
    return "old" if old else "current"


def convert_old_layout(text: str, *, file: str = "template.toml") -> str:
    """The text of an older-layout ``template.toml`` in the current layout; comments and order kept.

    ``[template]`` becomes ``[about]`` (``description`` -> ``purpose``); each ``[[input]]`` becomes
    ``[given."<name>"]`` in the same order with its keys renamed (:data:`_OLD_INPUT`) and its kind
    written as a form (:data:`FORMS`). ``[[summary]]`` and every comment stay where they were.

    Raises
    ------
    InputError
        If an input has no name or an unknown key, the file is not TOML, or it mixes layouts.
    """
    try:
        old = tomlkit.parse(text)
    except ParseError as exc:
        raise InputError(f"not valid TOML ({exc})", input_name="template.toml", file=file) from None
    template_layout(old.unwrap(), file=file)
    new = tomlkit.document()
    for key, item in old.body:
        if key is None:
            new.add(item)                   # comments and blank lines between the tables
        elif key.key == "template" and isinstance(item, Table):
            new.add("about", _renamed(item, _OLD_ABOUT, where="[template]", file=file))
        elif key.key == "input" and isinstance(item, AoT):
            given = tomlkit.table(is_super_table=True)
            for i, table in enumerate(item):
                name = table.get("name")
                if not isinstance(name, str) or not name:
                    raise InputError(f"[[input]] number {i + 1} has no name", input_name=f"input {i + 1}",
                                     file=file, expected='name = "<dotted.name>"')
                if name in given:
                    raise InputError("declared twice", input_name=str(name), file=file)
                given.add(str(name), _renamed(table, _OLD_INPUT, where=str(name), file=file, skip="name"))
            new.add("given", given)
        else:
            new.add(key, item)
    return tomlkit.dumps(new)


def _renamed(table: Table, names: dict[str, str], *, where: str, file: str, skip: str | None = None) -> Table:
    """A copy of ``table`` with its keys renamed by ``names`` (others kept as they are); comments kept."""
    out = tomlkit.table()
    for key, item in table.value.body:
        if key is None:
            out.add(item)
            continue
        name = key.key
        if name == skip:
            continue
        if names is _OLD_INPUT and name not in _OLD_INPUT:
            raise InputError(f"unknown key {name!r}", input_name=where, file=file,
                             expected=", ".join(["name", *_OLD_INPUT]))
        if name == "kind" and names is _OLD_INPUT:
            if item.unwrap() not in _OLD_KINDS:
                raise InputError("unknown input kind", input_name=where, file=file,
                                 expected=", ".join(_OLD_KINDS), got=repr(item.unwrap()))
            form = tomlkit.item(_OLD_KINDS[item.unwrap()])
            form.trivia.comment_ws, form.trivia.comment = item.trivia.comment_ws, item.trivia.comment
            item = form
        out.add(names.get(name, name), item)
    return out


def load_template_spec(path: Path) -> TemplateSpec:
    """Read and check a ``template.toml`` (the current layout, or the older one read as before)."""
    path = Path(path)
    where = path.name
    try:
        text = path.read_text(encoding="utf-8")
        data = tomllib.loads(text)
    except FileNotFoundError:
        raise InputError("template file not found", input_name="template.toml", file=str(path),
                         hint="Is this a project folder made by 'latticecalc new'?") from None
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"not valid TOML ({exc})", input_name="template.toml", file=where) from None
    old = template_layout(data, file=where) == "old"
    if old:
        data = tomllib.loads(convert_old_layout(text, file=where))
    return _spec_from(data, path=path, old=old)


def spec_from_text(text: str, *, path: Path) -> TemplateSpec:
    """The spec a current-layout ``template.toml`` holding ``text`` at ``path`` declares."""
    return _spec_from(tomllib.loads(text), path=Path(path), old=False)


def _spec_from(data: dict, *, path: Path, old: bool) -> TemplateSpec:
    where = path.name
    for key in data:
        if key not in _TOP_KEYS:
            raise InputError(f"unknown table {key!r}", input_name=key, file=where,
                             expected="[about], [given.\"<name>\"] tables and [[summary]] rows")
    head = data.get("about")
    if not isinstance(head, dict) or not head.get("notebooks"):
        raise InputError("needs an [about] table with name, title, purpose and notebooks",
                         input_name="about", file=where)
    for key in head:
        if key not in ABOUT_KEYS:
            raise InputError(f"unknown key {key!r}", input_name="about", file=where, expected=", ".join(ABOUT_KEYS))
    given = data.get("given", {})
    if not isinstance(given, dict):
        raise InputError("must be tables, one per input", input_name="given", file=where,
                         expected='[given."<dotted.name>"] tables', got=type(given).__name__)
    specs = []
    for name, raw in given.items():
        if not isinstance(raw, dict):
            raise InputError("must be a table", input_name=name, file=where,
                             expected=f'a [given."{name}"] table', got=repr(raw))
        unknown = [k for k in raw if k not in GIVEN_KEYS]
        if unknown:
            nested = all(isinstance(raw[k], dict) for k in unknown)
            more = f" (and {len(unknown) - 1} more)" if len(unknown) > 1 else ""
            raise InputError(f"unknown key {unknown[0]!r}{more}",
                             input_name=name, file=where, expected=", ".join(GIVEN_KEYS),
                             hint=(f'A dotted input name is one quoted key: [given."{name}.{unknown[0]}"]'
                                   if nested else None))
        form = raw.get("form", "quantity")
        if form not in FORMS:
            raise InputError("unknown form", input_name=name, expected=", ".join(FORMS), got=repr(form), file=where)
        kind = FORMS[form]
        dim = raw.get("dimension")
        if kind in ("quantity", "quantity-list") and dim not in DIMENSIONS:
            raise InputError(f"a {form} input needs a known dimension", input_name=name,
                             expected=", ".join(DIMENSIONS), got=repr(dim), file=where)
        specs.append(InputSpec(name=name, description=raw.get("meaning", ""), kind=kind,
                               dimension=dim, default=raw.get("preset"), min=raw.get("at_least"),
                               max=raw.get("at_most"), choices=tuple(raw.get("options", ())),
                               optional=bool(raw.get("may_omit", False)), source=raw.get("source", ""),
                               unit=raw.get("unit", "")))
    summary = []
    for i, row in enumerate(data.get("summary", [])):
        if not isinstance(row.get("label"), str) or not row.get("steps"):
            raise InputError(f"[[summary]] number {i + 1} needs a label and a list of step ids", input_name="summary",
                             file=where, expected='label = "…", steps = ["step.id", …] (the first present is shown)')
        summary.append((row["label"], tuple(row["steps"])))
    return TemplateSpec(name=head.get("name", path.parent.name), title=head.get("title", ""),
                        description=head.get("purpose", ""),
                        notebooks=tuple(head["notebooks"]), inputs=tuple(specs), summary=tuple(summary), file=where,
                        old_layout=old)
