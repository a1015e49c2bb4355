"""A project's ``cover.toml``: who, what, which revision (what goes on the package's cover).

Projects made by an older kit call the file ``project.toml``; :func:`cover_path` reads it as before,
and ``latticecalc refile`` renames it.
"""

from __future__ import annotations

import os
import re
import unicodedata
from dataclasses import dataclass
from pathlib import Path

from latticecalc.errors import InputError, MissingFileError, ProjectError
from latticecalc.files import read_toml

COVER_FILE = "cover.toml"
#: The name an older kit gave the cover file; read as before until ``latticecalc refile`` renames it.
OLD_COVER_FILE = "project.toml"
_SAFE_ID = re.compile(r"^[A-Za-z0-9][A-Za-z0-9._-]{0,63}$")
# Characters that change how text is laid out or read rather than what it says: the bidirectional
# embeddings, overrides, isolates and marks (they can make a title read differently from its bytes).
_BIDI_CONTROLS = frozenset("\u061c\u200e\u200f\u202a\u202b\u202c\u202d\u202e\u2066\u2067\u2068\u2069")


class ControlCharacterError(InputError):
    """A text field of ``cover.toml`` holds a control character (newline, tab, C0/C1, bidi control).

    These fields are one line of plain text on the title block, the page header and in file
    names; a line break or a direction override there is never intended, and a line break could
    end the page header's CSS string.
    """


def _control_character(text: str) -> str | None:
    """The first control character in ``text`` as ``U+XXXX (name)``, or None."""
    for ch in text:
        cat = unicodedata.category(ch)
        if cat in ("Cc", "Zl", "Zp") or ch in _BIDI_CONTROLS:
            name = unicodedata.name(ch, {"\n": "LINE FEED", "\r": "CARRIAGE RETURN",
                                         "\t": "CHARACTER TABULATION"}.get(ch, "control character"))
            return f"U+{ord(ch):04X} ({name})"
    return None


@dataclass(frozen=True, kw_only=True)
class ProjectMeta:
    """Identity of a calculation: project name and number, calc id, title, revision, preparer."""

    name: str
    number: str
    calc_id: str
    title: str
    revision: str
    prepared_by: str
    client: str = ""
    description: str = ""
    #: What this revision changes and why (``calc.revision_note``), shown in the revision history.
    revision_note: str = ""
    #: Paper of the printed package (``calc.paper``: ``a4`` or ``letter``; A4 when unset).
    paper: str = "a4"

    @property
    def package_stem(self) -> str:
        """File stem of the exported package: ``<calc-id>-rev<rev>``."""
        return f"{self.calc_id}-rev{self.revision}"

    def to_dict(self) -> dict:
        """JSON-ready metadata."""
        return {"name": self.name, "number": self.number, "calc_id": self.calc_id, "title": self.title,
                "revision": self.revision, "prepared_by": self.prepared_by, "client": self.client,
                "description": self.description, "revision_note": self.revision_note}


def cover_path(folder: Path) -> tuple[Path, bool]:
    """The folder's cover file and whether it has the older name (``project.toml``).

    ``cover.toml`` when it exists (also a broken link, which the reader then names); else
    ``project.toml`` when that exists; else ``cover.toml`` (the reader reports it missing).

    Raises
    ------
    ProjectError
        If both files exist: which one holds the identity would be a guess.
    """
    folder = Path(folder)
    new, old = folder / COVER_FILE, folder / OLD_COVER_FILE
    if os.path.lexists(new) and os.path.lexists(old):
        raise ProjectError(f"holds both {COVER_FILE} and {OLD_COVER_FILE}", input_name=COVER_FILE,
                           file=str(folder), expected=f"one cover file, {COVER_FILE}",
                           got=f"{COVER_FILE} and {OLD_COVER_FILE} (the older name of the same file)",
                           hint=f"Keep the one that is right, delete the other ({OLD_COVER_FILE} is "
                                f"from an older kit)")
    if not os.path.lexists(new) and os.path.lexists(old):
        return old, True
    return new, False


def load_meta(path: Path) -> ProjectMeta:
    """Read and check ``cover.toml`` (or an older kit's ``project.toml``: the same content).

    Calc id and revision must be safe in a file name; no text field may hold a control character.

    The file is read through :mod:`latticecalc.files` (a regular UTF-8 file within the TOML
    cap, a byte-order mark stripped).

    Raises
    ------
    InputError
        If a required field is missing or empty.
    FileError
        If the file is missing, a folder or special file, too large, not UTF-8, binary, or not valid
        TOML (a :class:`~latticecalc.errors.DuplicateKeyError` for a key or table given twice).
    ControlCharacterError
        If a text field holds a newline, tab, other C0/C1 control or a bidirectional control.
    """
    path = Path(path)
    if not os.path.lexists(path):
        raise MissingFileError("cover file not found", input_name=COVER_FILE, file=str(path))
    _, data = read_toml(path, what="the cover file", file=path.name)
    proj = data.get("project", {})
    calc = data.get("calc", {})
    for key, table in (("project", proj), ("calc", calc)):
        if not isinstance(table, dict):
            raise InputError("not a table", input_name=key, file=path.name, expected=f"a [{key}] table",
                             got=type(table).__name__)
    fields = {"project.name": proj.get("name"), "project.number": proj.get("number"),
              "calc.id": calc.get("id"), "calc.title": calc.get("title"),
              "calc.revision": calc.get("revision"), "calc.prepared_by": calc.get("prepared_by")}
    for key, val in fields.items():
        if not isinstance(val, (str, int)) or (isinstance(val, str) and not val.strip()):
            raise InputError("missing or empty", input_name=key, file=path.name,
                             expected="a non-empty text value in quotes", got=repr(val))
    fields |= {"project.client": proj.get("client", ""), "calc.description": calc.get("description", ""),
               "calc.revision_note": calc.get("revision_note", "")}
    for key, val in fields.items():
        bad = _control_character(val) if isinstance(val, str) else None
        if bad is not None:
            raise ControlCharacterError("a line break, tab or other control character is not allowed here",
                                        input_name=key, file=str(path), expected="one line of plain text",
                                        got=f"{val!r}, which holds {bad}",
                                        hint=f"Edit {key} in {path.name} to a single line")
    paper = str(calc.get("paper", "a4")).strip().lower()
    if paper not in ("a4", "letter"):
        raise InputError("unknown paper size", input_name="calc.paper", file=path.name, expected="'a4' or 'letter'",
                         got=repr(calc.get("paper")))
    for key in ("calc.id", "calc.revision"):
        if not _SAFE_ID.match(str(fields[key])):
            raise InputError("used in file names, so letters, digits, '.', '_' and '-' only",
                             input_name=key, file=path.name, expected="e.g. 'LC-014' or 'B'",
                             got=repr(fields[key]))
    return ProjectMeta(name=str(proj["name"]), number=str(proj["number"]), calc_id=str(calc["id"]),
                       title=str(calc["title"]), revision=str(calc["revision"]),
                       prepared_by=str(calc["prepared_by"]), client=str(proj.get("client", "")),
                       description=str(calc.get("description", "")),
                       revision_note=str(calc.get("revision_note", "")), paper=paper)
