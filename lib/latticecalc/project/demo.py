"""``latticecalc demo``: build the worked demo projects (an invented scenario) and export them.

Each demo project in ``calcs/`` holds only what is its own (inputs, identity, data files); the
notebooks come from its template, so the demo always runs the kit's current templates.
"""

from __future__ import annotations

import shutil
import tomllib
from dataclasses import dataclass
from datetime import datetime
from pathlib import Path
from typing import Any

import tomlkit

from latticecalc.errors import ProjectError
from latticecalc.project.atomic import write_text_atomic
from latticecalc.project.export import export_project
from latticecalc.project.inputs import INPUTS_FILE
from latticecalc.project.meta import COVER_FILE, OLD_COVER_FILE
from latticecalc.project.runner import run_project
from latticecalc.project.templates import demo_root, new_project

DEMO_INDEX = "demo.toml"


@dataclass(frozen=True, kw_only=True)
class DemoReport:
    """The demo folder and the packages it produced, main one first."""

    folder: Path
    packages: tuple[Path, ...]

    @property
    def main_package(self) -> Path:
        """The HTML of the main demo calculation."""
        return self.packages[0]


@dataclass(frozen=True, kw_only=True)
class DemoProject:
    """One demo project: its folder in ``calcs/`` (inputs, identity, data) and its template."""

    folder: str
    template: str
    main: bool = False


def demo_projects() -> list[DemoProject]:
    """The demo projects in build order (``calcs/demo.toml``)."""
    index = tomllib.loads((demo_root() / DEMO_INDEX).read_text(encoding="utf-8"))
    return [DemoProject(folder=p["folder"], template=p["template"], main=bool(p.get("main", False)))
            for p in index["project"]]


def _merge_tables(base: Any, changes: Any) -> None:
    for key, value in changes.items():
        if isinstance(value, dict) and not ({"value", "source"} >= set(value) and "value" in value) \
                and isinstance(base.get(key), dict):
            _merge_tables(base[key], value)
        else:
            base[key] = value


def _overlay(source: Path, dest: Path) -> None:
    """Put the demo's own files over the fresh template copy.

    ``inputs.toml`` is merged: the demo gives only the values that differ from the template's
    defaults (the template's comments and any input added later stay). Other files are copied; a
    cover file under its older name (``project.toml``) is copied as ``cover.toml``, so the built
    project has the current name.
    """
    for item in source.rglob("*"):
        rel = item.relative_to(source)
        if not item.is_file() or "__pycache__" in item.parts or "out" in rel.parts:
            continue
        target = dest / (COVER_FILE if rel.as_posix() == OLD_COVER_FILE else rel)
        target.parent.mkdir(parents=True, exist_ok=True)
        if rel.as_posix() == INPUTS_FILE and target.is_file():
            doc = tomlkit.parse(target.read_text(encoding="utf-8"))
            _merge_tables(doc, tomlkit.parse(item.read_text(encoding="utf-8")))
            write_text_atomic(target, tomlkit.dumps(doc))
        else:
            shutil.copy2(item, target)


def build_demo(dest: Path | None = None, *, progress=None) -> DemoReport:
    """Copy every demo project into ``dest`` (default: a new dated folder here), run and export each."""
    if dest is None:
        dest = Path.cwd() / f"latticecalc-demo-{datetime.now():%Y%m%d-%H%M%S}"
    dest = Path(dest)
    if dest.exists() and any(dest.iterdir()):
        raise ProjectError("demo folder exists and is not empty; nothing was written", input_name="DIR",
                           got=str(dest), expected="a new or empty folder")
    dest.mkdir(parents=True, exist_ok=True)
    projects = demo_projects()
    packages = {}
    kwargs = {} if progress is None else {"progress": progress}
    for demo in projects:
        folder = new_project(dest / demo.folder, template=demo.template)
        _overlay(demo_root() / demo.folder, folder)
        run_project(folder, **kwargs)
        packages[demo.folder] = export_project(folder).html
    main = next((d.folder for d in projects if d.main), projects[-1].folder)
    ordered = [packages[main]] + [p for n, p in packages.items() if n != main]
    return DemoReport(folder=dest, packages=tuple(ordered))
