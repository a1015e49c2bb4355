"""The templates shipped with the kit, and copying one into a new project folder."""

from __future__ import annotations

import shutil
from dataclasses import dataclass
from importlib import resources
from pathlib import Path

from latticecalc.errors import ProjectError
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
    """Copy a template or demo folder to ``dest``, which must not exist or be empty."""
    dest = Path(dest)
    if dest.exists() and (not dest.is_dir() or any(dest.iterdir())):
        raise ProjectError("destination exists and is not empty; nothing was copied",
                           input_name="DIR", got=str(dest), expected="a new or empty folder")
    if dest.exists():
        dest.rmdir()
    shutil.copytree(source, dest, ignore=_ignore)
    return dest


def new_project(dest: Path, *, template: str) -> Path:
    """Copy template ``template`` into the new project folder ``dest``."""
    names = {t.name: t for t in list_templates()}
    if template not in names:
        raise ProjectError("unknown template", input_name="--template", got=repr(template),
                           expected="one of " + ", ".join(sorted(names)))
    return copy_project(names[template].folder, dest)
