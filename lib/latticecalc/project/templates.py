"""The templates shipped with the kit, and copying one into a new project folder."""

from __future__ import annotations

import errno
import os
import re
import secrets
import shutil
from dataclasses import dataclass
from importlib import resources
from pathlib import Path

from latticecalc.errors import ProjectError, SymlinkError
from latticecalc.project.atomic import write_error
from latticecalc.project.project import TEMPLATE_FILE
from latticecalc.project.schema import load_template_spec

_SKIP = {"__pycache__", ".ipynb_checkpoints", "out", ".latticecalc-cache"}


def templates_root() -> Path:
    """Folder of the bundled templates (works from a wheel and from an editable install)."""
    return Path(str(resources.files("latticecalc") / "bundled" / "project_templates"))


def demo_root() -> Path:
    """Folder of the bundled demo projects (``calcs/``)."""
    return Path(str(resources.files("latticecalc") / "bundled" / "calcs"))


@dataclass(frozen=True, kw_only=True)
class TemplateInfo:
    """Name, one-line description and location of a template."""

    name: str
    title: str
    description: str
    folder: Path


def list_templates() -> list[TemplateInfo]:
    """All bundled templates, sorted by name."""
    out = []
    root = templates_root()
    for folder in sorted(p for p in root.iterdir() if (p / TEMPLATE_FILE).is_file()):
        spec = load_template_spec(folder / TEMPLATE_FILE)
        out.append(TemplateInfo(name=spec.name, title=spec.title, description=spec.description,
                                folder=folder))
    return out


def _ignore(_dir: str, names: list[str]) -> set[str]:
    return {n for n in names if n in _SKIP}


def copy_project(source: Path, dest: Path) -> Path:
    """Copy a template or demo folder to ``dest``, which must not exist or be an empty folder.

    The copy is made in a hidden folder beside ``dest`` and renamed into place, so a failed copy
    (disk full, permission denied) leaves nothing behind.

    Raises
    ------
    SymlinkError
        If ``dest`` is a symbolic link (even to an empty folder): the project is never made through one.
    ProjectError
        If ``dest`` exists and is not an empty folder.
    FileWriteError
        If the copy fails; nothing is left at ``dest``.
    """
    dest = Path(dest)
    if dest.is_symlink():
        raise SymlinkError("the new project folder is a symbolic link; nothing was copied", input_name="DIR",
                           file=str(dest), expected="a new folder, or an empty real folder",
                           got="a symbolic link" + ("" if dest.exists() else " to nothing"),
                           hint="Name the folder the link points to, or another path")
    if dest.exists() and (not dest.is_dir() or any(dest.iterdir())):
        raise ProjectError("destination exists and is not empty; nothing was copied",
                           input_name="DIR", got=str(dest), expected="a new or empty folder")
    tmp = dest.parent / f".{dest.name}.{secrets.token_hex(4)}.part"
    try:
        dest.parent.mkdir(parents=True, exist_ok=True)
        shutil.copytree(source, tmp, ignore=_ignore)
        os.rename(tmp, dest)        # replaces an empty folder; fails on a folder that filled meanwhile
    except OSError as exc:               # shutil.Error is an OSError
        shutil.rmtree(tmp, ignore_errors=True)
        if exc.errno in (errno.ENOTEMPTY, errno.EEXIST) and dest.exists():
            raise ProjectError("destination exists and is not empty; nothing was copied",
                               input_name="DIR", got=str(dest), expected="a new or empty folder") from None
        if isinstance(exc, shutil.Error):   # copytree's list of (source, target, reason): report the first
            first = exc.args[0][0] if exc.args and isinstance(exc.args[0], list) and exc.args[0] else None
            reason = str(first[2]) if first else str(exc)
            code = re.search(r"\[Errno (\d+)\]", reason)
            exc = OSError(int(code.group(1)) if code else errno.EIO, re.sub(r"^\[Errno \d+\]\s*", "", reason))
        raise write_error(exc, dest, input_name="DIR",
                          unchanged="the project folder was not made (nothing was left behind)") from None
    return dest


def new_project(dest: Path, *, template: str) -> Path:
    """Copy template ``template`` into the new project folder ``dest``."""
    names = {t.name: t for t in list_templates()}
    if template not in names:
        raise ProjectError("unknown template", input_name="--template", got=repr(template),
                           expected="one of " + ", ".join(sorted(names)))
    return copy_project(names[template].folder, dest)
