"""The register of values to confirm, and which checks rely on them.

A source tagged ``from memory`` (:attr:`latticecalc.sheet.Source.from_memory`) gives values that
were recalled, not checked against the published document.  Every such value is listed in the
register, ``data/to_confirm.toml`` (criteria, signal-processing and physics citations), plus one
entry per material value that ``data/materials.toml`` tags ``from memory``:

- :func:`register_entries` returns the entries (value, where it is used, why it is unconfirmed,
  what to confirm it against), all of them or those of one source;
- :func:`blocks_approval` returns the from-memory sources that a set of results relies on for its
  checks: the package display lists them, and the approval rule refuses while any remains.

The full citations are in ``docs/references.md``.
"""

from __future__ import annotations

import tomllib
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from functools import cache
from importlib import resources
from typing import Any

from latticecalc.errors import InputError
from latticecalc.sheet.source import FROM_MEMORY, Source

REGISTER_FILE = "data/to_confirm.toml"
MATERIALS_FILE = "data/materials.toml"
#: Author the material catalogue's values carry as sources (see ``latticecalc.materials``).
MATERIAL_DATA_AUTHOR = "Material data"


@dataclass(frozen=True, kw_only=True)
class RegisterEntry:
    """One value to confirm.

    Attributes
    ----------
    id:
        Stable identifier, e.g. ``"criteria.fta-2018"`` or ``"material.tpu-95a.loss_factor"``.
    source:
        The source as the code cites it (author and title match the code's :class:`Source`).
    value:
        The value or statement taken from the source, in words.
    used_in:
        Where the kit uses it (modules, criteria ids, tests, catalogue entries).
    why:
        Why it is not confirmed.
    confirm_against:
        The published table or clause to confirm it against.
    """

    id: str
    source: Source
    value: str
    used_in: tuple[str, ...]
    why: str
    confirm_against: str = ""

    def matches(self, source: Source) -> bool:
        """True when ``source`` is this entry's source (same author and title)."""
        return source.author == self.source.author and source.title == self.source.title

    def to_dict(self) -> dict:
        """Plain dict for a JSON record or a table row."""
        return {"id": self.id, "source": self.source.cite(), "value": self.value, "used_in": list(self.used_in),
                "why": self.why, "confirm_against": self.confirm_against}


def _text(name: str) -> str:
    return resources.files("latticecalc").joinpath(name).read_text(encoding="utf-8")


@cache
def _listed() -> tuple[RegisterEntry, ...]:
    data = tomllib.loads(_text(REGISTER_FILE))
    out = []
    for raw in data.get("entry", []):
        try:
            out.append(RegisterEntry(
                id=str(raw["id"]), source=Source(author=str(raw["author"]), title=str(raw["title"]), tag=FROM_MEMORY),
                value=str(raw["value"]), used_in=tuple(str(u) for u in raw["used_in"]), why=str(raw["why"]),
                confirm_against=str(raw.get("confirm_against", ""))))
        except KeyError as exc:
            raise InputError("a register entry misses a field", input_name=f"latticecalc {REGISTER_FILE}",
                             expected="id, author, title, value, used_in, why", got=f"no {exc}") from None
    return tuple(out)


@cache
def _materials() -> tuple[RegisterEntry, ...]:
    data = tomllib.loads(_text(MATERIALS_FILE))
    out = []
    for key, table in data.items():
        if not isinstance(table, Mapping):
            continue
        for field, raw in table.items():
            if not (isinstance(raw, Mapping) and FROM_MEMORY in str(raw.get("tag", ""))):
                continue
            text = str(raw.get("source", ""))
            out.append(RegisterEntry(
                id=f"material.{key}.{field}", source=Source(author=MATERIAL_DATA_AUTHOR, title=text,
                                                            tag=str(raw["tag"])),
                value=f"{table.get('name', key)}: {field} = {raw.get('value')}",
                used_in=(f"lib/latticecalc/{MATERIALS_FILE} [{key}] {field}",),
                why=f"typical value recalled ({text}), not taken from a data sheet",
                confirm_against="the supplier's data sheet for the grade, or a named handbook table"))
    return tuple(out)


def register_entries(source: Source | None = None, *, materials: bool = True) -> tuple[RegisterEntry, ...]:
    """The register of values to confirm; with ``source``, only that source's entries.

    ``materials=False`` leaves out the catalogue's material values (one entry per value tagged
    ``from memory`` in ``data/materials.toml``).
    """
    entries = _listed() + (_materials() if materials else ())
    if source is None:
        return entries
    return tuple(e for e in entries if e.matches(source))


def _walk(item: Any, *, kind: str = "") -> Iterable[tuple[str, str, Source]]:
    """(record kind, id, source) for every source held by ``item``."""
    if item is None:
        return
    if isinstance(item, Source):
        yield kind or "source", "", item
    elif isinstance(item, Mapping):
        if "kind" in item:
            src = item.get("source")
            if isinstance(src, Mapping):
                yield str(item["kind"]), str(item.get("id", "")), Source.from_dict(src)
            elif isinstance(src, Source):
                yield str(item["kind"]), str(item.get("id", "")), src
        elif "author" in item and "title" in item:
            yield kind or "source", "", Source.from_dict(item)
        else:
            for v in item.values():
                yield from _walk(v)
    elif hasattr(item, "kind") and hasattr(item, "source") and hasattr(item, "id"):     # Step, Check
        if isinstance(item.source, Source):
            yield str(item.kind), str(item.id), item.source
    elif hasattr(item, "steps"):                                                        # CalcResult
        yield from _walk(tuple(item.steps))
    elif callable(getattr(item, "records", None)):                                      # a collected package
        yield from _walk(tuple(item.records()))
    elif isinstance(item, Iterable) and not isinstance(item, (str, bytes)):
        for v in item:
            yield from _walk(v)


def blocks_approval(results_or_sources: Any, *, check_ids: Iterable[str] | None = None,
                    include_steps: bool = False) -> list[Source]:
    """The from-memory sources that ``results_or_sources`` relies on for its checks, in first-use order.

    Parameters
    ----------
    results_or_sources:
        Any mix of :class:`CalcResult`, :class:`Step`, :class:`Check`, :class:`Source`, step and check
        records (the dicts of the package JSON and of the executed notebooks), an object with a
        ``records()`` method (a collected package), or lists of these.
    check_ids:
        Only these checks count (e.g. the governing one); default every check.
    include_steps:
        Also count the sources of steps (and of notes and tables), not only of checks.

    A bare :class:`Source` always counts (the caller says it is relied on).  An empty list means no
    check rests on a recalled value; otherwise the approval should wait until each listed source's
    register entries (:func:`register_entries`) are confirmed.
    """
    wanted = None if check_ids is None else set(check_ids)
    out: dict[str, Source] = {}
    for kind, step_id, src in _walk(results_or_sources):
        if kind == "check":
            if wanted is not None and step_id not in wanted:
                continue
        elif kind != "source" and not include_steps:
            continue
        if src.from_memory:
            out.setdefault(src.cite(), src)
    return list(out.values())
