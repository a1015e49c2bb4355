"""A project's ``inputs.toml``: read, validated against the template's schema, written back.

Values are written as text with units (``width = "40 mm"``) or as an inline table carrying the
value's source (``E = { value = "12 MPa", source = "supplier data sheet DS-12" }``). Comments
and order survive a round trip (tomlkit). Every error names the input, the file and the line.
"""

from __future__ import annotations

import copy
import dataclasses
import difflib
import math
import os
import re
from collections.abc import Iterator, Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import pint
import tomlkit
import tomlkit.exceptions

from latticecalc.errors import FileFormatError, InputError, LatticeCalcError, MissingFileError
from latticecalc.files import parse_toml, read_text
from latticecalc.project.atomic import write_text_atomic
from latticecalc.project.schema import InputSpec, TemplateSpec
from latticecalc.units import format_number, format_quantity, format_value, parse, unit_text

INPUTS_FILE = "inputs.toml"
#: Most items a quantity-list input may hold (each item is parsed on its own).
MAX_LIST_ITEMS = 1000


@dataclass(frozen=True, kw_only=True)
class InputValue:
    """One validated input: its parsed value and where it came from."""

    spec: InputSpec
    value: Any
    text: Any
    source: str
    line: int | None

    def display(self) -> tuple[str, str]:
        """``(value, unit)`` as a practitioner writes them, for the inputs table (from :meth:`display_value`)."""
        value, unit = self.display_value()
        if isinstance(self.value, pint.Quantity):
            return format_number(value, 6), unit
        if isinstance(self.value, list) and self.value and isinstance(self.value[0], pint.Quantity):
            return ", ".join(format_number(x, 6) for x in value), unit
        if isinstance(self.value, (dict, list, bool)):
            return format_value(_plain(self.value)), ""
        return str(self.value), ""

    def display_value(self) -> tuple[Any, str]:
        """``(number or list or text, unit)`` in the display unit, JSON-ready."""
        v = self.value
        if isinstance(v, pint.Quantity):
            q = v.to(self.spec.unit) if self.spec.unit else v
            return float(q.magnitude), unit_text(q.units)
        if isinstance(v, list) and v and isinstance(v[0], pint.Quantity):
            u = self.spec.unit or str(v[0].units)
            return [float(x.to(u).magnitude) for x in v], unit_text(u)
        return _plain(v), ""

    def canonical(self) -> Any:
        """Value with units normalised to SI base units, JSON-ready (for fingerprints and export)."""
        v = self.value
        if isinstance(v, pint.Quantity):
            b = v.to_base_units()
            return {"value": float(b.magnitude), "unit": f"{b.units:~}"}
        if isinstance(v, list) and v and isinstance(v[0], pint.Quantity):
            bs = [x.to_base_units() for x in v]
            return {"value": [float(b.magnitude) for b in bs], "unit": f"{bs[0].units:~}"}
        return {"value": _plain(v), "unit": ""}


def _plain(v: Any) -> Any:
    if isinstance(v, Mapping):
        return {str(k): _plain(x) for k, x in v.items()}
    if isinstance(v, (list, tuple)):
        return [_plain(x) for x in v]
    if hasattr(v, "unwrap"):
        return v.unwrap()
    return v


class Inputs(Mapping):
    """Validated inputs of a project: ``inputs["cell.width"]`` is a Quantity."""

    def __init__(self, entries: dict[str, InputValue], file: str) -> None:
        self._entries = entries
        self.file = file

    def __getitem__(self, name: str) -> Any:
        try:
            return self._entries[name].value
        except KeyError:
            close = difflib.get_close_matches(name, self._entries, n=3)
            raise InputError("no such input", input_name=name, file=self.file,
                             expected=("did you mean " + " or ".join(close)) if close else
                             "one of " + ", ".join(self._entries)) from None

    def __contains__(self, name: object) -> bool:
        return name in self._entries

    def get(self, name: str, default: Any = None) -> Any:
        """The value of ``name``, or ``default`` for an optional input that was not given."""
        return self._entries[name].value if name in self._entries else default

    def __iter__(self) -> Iterator[str]:
        return iter(self._entries)

    def __len__(self) -> int:
        return len(self._entries)

    def entry(self, name: str) -> InputValue:
        """The :class:`InputValue` (value, source, line) of ``name``."""
        self[name]
        return self._entries[name]

    def entries(self) -> list[InputValue]:
        """All entries in declaration order."""
        return list(self._entries.values())

    def canonical(self) -> dict[str, Any]:
        """Name -> canonical JSON value (SI base units), for fingerprints and the export."""
        return {k: e.canonical() for k, e in self._entries.items()}


# --- reading -----------------------------------------------------------------------------------
_HEADER = re.compile(r"^\s*\[\[?\s*([^\]]+?)\s*\]\]?\s*(#.*)?$")
_KEY = re.compile(r'^\s*("?[A-Za-z0-9_\-.]+"?)\s*=')


def key_lines(text: str) -> dict[str, int]:
    """Map each dotted key of a TOML text to its 1-based line number (first occurrence)."""
    lines: dict[str, int] = {}
    table = ""
    for i, line in enumerate(text.splitlines(), start=1):
        m = _HEADER.match(line)
        if m:
            table = m.group(1).replace('"', "").replace(" ", "")
            lines.setdefault(table, i)
            continue
        m = _KEY.match(line)
        if m:
            key = m.group(1).replace('"', "")
            lines.setdefault(f"{table}.{key}" if table else key, i)
    return lines


def _flatten(doc: Mapping, prefix: str = "", tables: tuple[str, ...] = ()) -> dict[str, Any]:
    out: dict[str, Any] = {}
    for key, val in doc.items():
        name = f"{prefix}{key}"
        if name in tables:
            out[name] = val
        elif isinstance(val, Mapping) and not _is_value_table(val):
            out.update(_flatten(val, name + ".", tables))
        else:
            out[name] = val
    return out


def _is_value_table(val: Mapping) -> bool:
    return "value" in val and set(val) <= {"value", "source"}


def _parse(text: str, *, file: str) -> tomlkit.TOMLDocument:
    """Parse ``text`` keeping comments, after the standard parser has checked it.

    The standard parser (:func:`latticecalc.files.parse_toml`) names a duplicate key or a
    syntax error with its line.
    """
    parse_toml(text, file=file, what="the inputs file")
    try:
        return tomlkit.parse(text)
    except (tomlkit.exceptions.TOMLKitError, RecursionError) as exc:
        reason = re.sub(r"\s*at line \d+ col \d+$", "", str(exc))[:80] or type(exc).__name__
        raise FileFormatError(f"the inputs file is not valid TOML ({reason})", file=file,
                              line=getattr(exc, "line", None)) from None


def _read_text(path: Path) -> str:
    path = Path(path)
    if not os.path.lexists(path):
        raise MissingFileError("inputs file not found", input_name=INPUTS_FILE, file=str(path),
                               hint="Every project folder has an inputs.toml; copy one with 'latticecalc new'")
    return read_text(path, kind="toml", what="the inputs file", file=path.name)


def _read(path: Path) -> tuple[str, tomlkit.TOMLDocument]:
    text = _read_text(path)
    return text, _parse(text, file=Path(path).name)


def read_document(path: Path) -> tomlkit.TOMLDocument:
    """Parse ``inputs.toml`` keeping comments; every failure names the file (and the line where known).

    The file is read through :mod:`latticecalc.files`: a regular UTF-8 file of at most the
    TOML cap (a byte-order mark is stripped); a duplicate key is a
    :class:`~latticecalc.errors.DuplicateKeyError`, bad syntax a :class:`~latticecalc.errors.FileFormatError`.
    """
    return _read(path)[1]


def _check_range(spec: InputSpec, q: Any, *, file: str, line: int | None) -> None:
    if spec.positive:
        for v in q if isinstance(q, list) else [q]:
            if not v.magnitude > 0:
                raise InputError("must be greater than zero", input_name=spec.name,
                                 expected=f"{spec.description or spec.name}: a {spec.dimension} greater than zero",
                                 got=format_quantity(v), file=file, line=line)
    for bound, op, word in ((spec.min, lambda a, b: a < b, "below"), (spec.max, lambda a, b: a > b, "above")):
        if bound is None:
            continue
        limit = parse(bound, name=f"{spec.name} limit", expected=spec.dimension) if spec.kind in (
            "quantity", "quantity-list") else bound
        values = q if isinstance(q, list) else [q]
        for v in values:
            if op(v, limit):
                raise InputError(f"value is {word} the allowed range", input_name=spec.name,
                                 expected=f"{spec.description or spec.name} in [{spec.min}, {spec.max}]"
                                 .replace("[None", "[−∞").replace("None]", "∞]"),
                                 got=format_quantity(v) if isinstance(v, pint.Quantity) else repr(v),
                                 file=file, line=line)


def validate_value(spec: InputSpec, raw: Any, *, file: str, line: int | None) -> Any:
    """Parse and check one raw TOML value against its spec; returns the parsed value."""
    if hasattr(raw, "unwrap"):
        raw = raw.unwrap()
    kind = spec.kind
    if kind == "quantity":
        q = parse(raw, name=spec.name, expected=spec.dimension, file=file, line=line)
    elif kind == "quantity-list":
        if isinstance(raw, str) and len(raw) > MAX_LIST_ITEMS * 50:
            raise InputError(f"text too long for a list ({len(raw)} characters)", input_name=spec.name,
                             expected=spec.expected, got=repr(raw[:40] + "…"), file=file, line=line)
        items = raw if isinstance(raw, list) else [x for x in str(raw).split(",") if x.strip()]
        if not items and not spec.optional:
            raise InputError("empty list", input_name=spec.name, expected=spec.expected, file=file, line=line)
        if len(items) > MAX_LIST_ITEMS:
            raise InputError(f"too many values ({len(items)}, at most {MAX_LIST_ITEMS})", input_name=spec.name,
                             expected=spec.expected, file=file, line=line)
        q = [parse(x, name=f"{spec.name}[{i}]", expected=spec.dimension, file=file, line=line)
             for i, x in enumerate(items)]
    elif kind in ("number", "integer"):
        wrong_integer = kind == "integer" and not isinstance(raw, int)
        if isinstance(raw, bool) or not isinstance(raw, (int, float)) or wrong_integer:
            raise InputError("wrong type", input_name=spec.name, expected=spec.expected, got=repr(raw),
                             file=file, line=line)
        if isinstance(raw, float) and not math.isfinite(raw):
            raise InputError("not a finite number", input_name=spec.name, expected=spec.expected, got=repr(raw),
                             file=file, line=line)
        q = raw
    elif kind == "bool":
        if not isinstance(raw, bool):
            raise InputError("wrong type", input_name=spec.name, expected="true or false", got=repr(raw),
                             file=file, line=line)
        return raw
    elif kind == "choice":
        if raw not in spec.choices:
            close = difflib.get_close_matches(str(raw), spec.choices, n=1)
            raise InputError("not one of the allowed choices", input_name=spec.name, expected=spec.expected,
                             got=repr(raw), file=file, line=line,
                             hint=f"Did you mean {close[0]!r}?" if close else None)
        return raw
    elif kind in ("text", "path"):
        if not isinstance(raw, str):
            raise InputError("wrong type", input_name=spec.name, expected="text in quotes", got=repr(raw),
                             file=file, line=line)
        return raw
    else:  # table: passed through, validated by the calculation that uses it
        return raw
    _check_range(spec, q, file=file, line=line)
    return q


def load_inputs(path: Path, template: TemplateSpec) -> Inputs:
    """Read ``inputs.toml`` at ``path`` and validate every value against ``template``.

    Raises
    ------
    InputError
        For a missing, unknown (misspelt), wrongly dimensioned or out-of-range input, naming the
        input, the file and the line.
    """
    path = Path(path)
    text = _read_text(path)
    key = (str(path.resolve()), text, _template_key(template))
    kept = _VALIDATED.get(key)
    if kept is None:
        kept = _validate(text, _parse(text, file=path.name), template, file=path.name)
        if len(_VALIDATED) >= _VALIDATED_SIZE:
            _VALIDATED.pop(next(iter(_VALIDATED)))
        _VALIDATED[key] = kept
    return _fresh_copy(kept)


#: Inputs already validated in this process, by file, text and template: every section of a run opens the
#: project again (a tenth of a second each, mostly TOML and unit parsing) and meets the same text.
_VALIDATED: dict[tuple, Inputs] = {}
_VALIDATED_SIZE = 8


def _template_key(template: TemplateSpec) -> str:
    return repr(template)


def _fresh_copy(inputs: Inputs) -> Inputs:
    """A copy whose values a caller may change in place without changing what the next caller is given."""
    return Inputs({name: dataclasses.replace(e, value=copy.deepcopy(e.value)) for name, e in inputs._entries.items()},
                  inputs.file)


def _validate(text: str, doc: tomlkit.TOMLDocument, template: TemplateSpec, *, file: str) -> Inputs:
    lines = key_lines(text)
    fname = file
    tables = tuple(s.name for s in template.inputs if s.kind == "table")
    flat = _flatten(doc, tables=tables)
    declared = {s.name: s for s in template.inputs}
    for name in flat:
        if name not in declared:
            close = difflib.get_close_matches(name, declared, n=1)
            raise InputError("unknown input (not declared by the template)", input_name=name, file=fname,
                             line=lines.get(name),
                             expected=f"did you mean {close[0]!r}?" if close else "a declared input name",
                             hint="Check the spelling against template.toml")
    entries: dict[str, InputValue] = {}
    for spec in template.inputs:
        line = lines.get(spec.name)
        if spec.name not in flat:
            if spec.optional:
                continue
            table, _, key = spec.name.rpartition(".")
            raise InputError("missing input", input_name=spec.name, file=fname,
                             line=lines.get(table),
                             expected=f"{spec.description}: {spec.expected}",
                             hint=f"Add `{key} = {spec.default!r}`" + (f" under [{table}]" if table else "")
                             if spec.default is not None else None)
        raw = flat[spec.name]
        source = spec.source
        # a rows input given as a list of rows may carry a source as well ({ value = [...], source = "…" });
        # a mapping of rows (materials) is never unwrapped, its keys are its rows
        if isinstance(raw, Mapping) and _is_value_table(raw) and (spec.kind != "table"
                                                                   or isinstance(raw["value"], list)):
            source = str(raw.get("source", source))
            raw = raw["value"]
        try:
            value = validate_value(spec, raw, file=fname, line=line)
        except LatticeCalcError:
            raise
        entries[spec.name] = InputValue(spec=spec, value=value, text=_plain(raw), source=source, line=line)
    return Inputs(entries, fname)


# --- writing -------------------------------------------------------------------------------------
def set_values(path: Path, template: TemplateSpec, changes: Mapping[str, Any], *,
               source: str | None = None) -> Inputs:
    """Change some inputs in ``inputs.toml``, keeping comments and order; validated before writing.

    ``changes`` maps dotted names to new raw values (text such as ``"42 mm"``, numbers, booleans).
    With ``source``, each changed input becomes ``{ value = …, source = "<source>" }`` (its earlier
    source replaced); without it, an input written with a source keeps it. The file is replaced
    atomically only if the whole result validates.
    """
    path = Path(path)
    _, doc = _read(path)
    for name, new in changes.items():
        spec = template.spec(name)
        validate_value(spec, new, file=path.name, line=None)
        parts = name.split(".")
        node = doc
        for p in parts[:-1]:
            if p not in node:
                node[p] = tomlkit.table()
            node = node[p]
        old = node.get(parts[-1])
        if source is not None:
            item = tomlkit.inline_table()
            item.update({"value": new, "source": source})
            node[parts[-1]] = item
        elif isinstance(old, Mapping) and _is_value_table(old):
            old["value"] = new
        else:
            node[parts[-1]] = new
    text = tomlkit.dumps(doc)
    _validate(text, _parse(text, file=path.name), template, file=path.name)   # checked before anything is written
    write_text_atomic(path, text, input_name=INPUTS_FILE)
    return load_inputs(path, template)
