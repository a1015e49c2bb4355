"""Files named or laid out by an older kit: the one-line notice, and ``latticecalc refile``.

An older kit called the cover file ``project.toml`` and wrote ``template.toml`` as ``[template]``
and ``[[input]]`` tables. Both are still read as before; every command that opens such a project
prints one notice on stderr (:func:`tell_old_names`), and :func:`refile` renames the cover file
and converts the template to the current layout (:func:`latticecalc.project.schema.convert_old_layout`).
"""

from __future__ import annotations

import os
import sys
import tomllib
from dataclasses import dataclass
from pathlib import Path

from latticecalc.errors import ProjectError
from latticecalc.project.atomic import write_bytes_atomic, write_text_atomic
from latticecalc.project.meta import COVER_FILE, OLD_COVER_FILE, cover_path
from latticecalc.project.schema import convert_old_layout, load_template_spec, spec_from_text, template_layout

TEMPLATE_FILE = "template.toml"
_told: set[str] = set()


def old_names(folder: Path) -> list[str]:
    """What in ``folder`` has an older kit's name or layout, one phrase each (empty: nothing)."""
    folder = Path(folder)
    found = []
    if cover_path(folder)[1]:
        found.append(f"{OLD_COVER_FILE} (now named {COVER_FILE})")
    template = folder / TEMPLATE_FILE
    if template.is_file() and not template.is_symlink():
        try:
            data = tomllib.loads(template.read_text(encoding="utf-8"))
        except (OSError, UnicodeDecodeError, tomllib.TOMLDecodeError):
            return found                # the reader reports it
        if template_layout(data, file=TEMPLATE_FILE) == "old":
            found.append(f"{TEMPLATE_FILE} in the older layout ([template], [[input]])")
    return found


def old_names_notice(folder: Path, found: list[str]) -> str:
    """The one line that tells the user about ``found`` (from :func:`old_names`)."""
    return (f"note: {folder}: read as before, but named or laid out by an older kit: {'; '.join(found)}. "
            f"'latticecalc refile {folder}' brings them up to date")


def tell_old_names(folder: Path, found: list[str]) -> None:
    """Print the notice for ``found`` on stderr, once per folder in this process."""
    key = str(Path(folder).resolve())
    if not found or key in _told:
        return
    _told.add(key)
    print(old_names_notice(folder, found), file=sys.stderr, flush=True)


@dataclass(frozen=True, kw_only=True)
class RefileReport:
    """What :func:`refile` did, one line per file (empty: nothing needed doing)."""

    folder: Path
    done: tuple[str, ...]


def refile(folder: str | Path) -> RefileReport:
    """Rename ``project.toml`` to ``cover.toml`` and convert an older-layout ``template.toml``.

    Everything is checked before anything is written: the folder is a project, ``cover.toml`` does
    not exist beside ``project.toml``, and the converted template reads as exactly the same inputs,
    notebooks and summary as the old one. Each file is written atomically; the cover file keeps its
    bytes. A folder already up to date is left unchanged.

    Raises
    ------
    ProjectError
        If the folder is not a project, ``cover.toml`` exists beside ``project.toml``, or a file is a
        symbolic link.
    InputError
        If the template cannot be read or converted (the reader's message, naming the file and input).
    """
    folder = Path(folder)
    template = folder / TEMPLATE_FILE
    old_cover, new_cover = folder / OLD_COVER_FILE, folder / COVER_FILE
    if not template.is_file() or not (os.path.lexists(old_cover) or os.path.lexists(new_cover)):
        raise ProjectError("is not a project folder; nothing was changed", input_name=str(folder),
                           expected=f"a folder with {TEMPLATE_FILE} and {COVER_FILE} (or {OLD_COVER_FILE})")
    if os.path.lexists(old_cover) and os.path.lexists(new_cover):
        raise ProjectError(f"{COVER_FILE} exists already beside {OLD_COVER_FILE}; nothing was changed",
                           input_name=COVER_FILE, file=str(folder),
                           hint=f"Keep the one that is right and delete the other ({OLD_COVER_FILE} is the older name)")
    for path in (template, old_cover):
        if path.is_symlink():
            raise ProjectError("is a symbolic link; refile renames and rewrites real files only, nothing was changed",
                               input_name=path.name, file=str(path))
    text = template.read_text(encoding="utf-8")
    converted = None
    if template_layout(tomllib.loads(text), file=TEMPLATE_FILE) == "old":
        before = load_template_spec(template)
        converted = convert_old_layout(text, file=TEMPLATE_FILE)
        if spec_from_text(converted, path=template) != before:
            raise ProjectError("the converted template would not read as the same inputs; nothing was changed",
                               input_name=TEMPLATE_FILE, file=str(template))
    done = []
    if converted is not None:
        write_text_atomic(template, converted, input_name=TEMPLATE_FILE)
        done.append(f"converted {TEMPLATE_FILE} to the current layout ([about], [given.\"<name>\"])")
    if os.path.lexists(old_cover):
        write_bytes_atomic(new_cover, old_cover.read_bytes(), input_name=COVER_FILE)
        old_cover.unlink()
        done.append(f"renamed {OLD_COVER_FILE} to {COVER_FILE} (content unchanged)")
    _told.discard(str(folder.resolve()))
    return RefileReport(folder=folder, done=tuple(done))
