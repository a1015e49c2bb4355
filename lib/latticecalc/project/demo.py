"""``latticecalc demo``: build the worked demo projects (an invented scenario) and export them."""

from __future__ import annotations

import tomllib
from dataclasses import dataclass
from datetime import datetime
from pathlib import Path

from latticecalc.errors import ProjectError
from latticecalc.project.export import export_project
from latticecalc.project.runner import run_project
from latticecalc.project.templates import copy_project, demo_root

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


def demo_projects() -> tuple[list[str], str]:
    """Names of the demo projects in build order, and the name of the main one."""
    index = tomllib.loads((demo_root() / DEMO_INDEX).read_text(encoding="utf-8"))
    return list(index["demo"]["build_order"]), index["demo"]["main"]


def build_demo(dest: Path | None = None, *, progress=None) -> DemoReport:
    """Copy every demo project into ``dest`` (default: a new dated folder here), run and export each."""
    if dest is None:
        dest = Path.cwd() / f"latticecalc-demo-{datetime.now():%Y%m%d-%H%M%S}"
    dest = Path(dest)
    if dest.exists() and any(dest.iterdir()):
        raise ProjectError("demo folder exists and is not empty; nothing was written", input_name="DIR",
                           got=str(dest), expected="a new or empty folder")
    dest.mkdir(parents=True, exist_ok=True)
    order, main = demo_projects()
    packages = {}
    for name in order:
        folder = copy_project(demo_root() / name, dest / name)
        kwargs = {} if progress is None else {"progress": progress}
        run_project(folder, **kwargs)
        packages[name] = export_project(folder).html
    ordered = [packages[main]] + [p for n, p in packages.items() if n != main]
    return DemoReport(folder=dest, packages=tuple(ordered))
