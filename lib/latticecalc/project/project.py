"""A project folder: metadata, the template's schema, validated inputs."""

from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path

from latticecalc.errors import ProjectError
from latticecalc.project.inputs import INPUTS_FILE, Inputs, load_inputs
from latticecalc.project.meta import PROJECT_FILE, ProjectMeta, load_meta
from latticecalc.project.schema import TemplateSpec, load_template_spec

TEMPLATE_FILE = "template.toml"
OUT_DIR = "out"


@dataclass(frozen=True, kw_only=True)
class Project:
    """An opened project folder; ``inputs`` are already validated."""

    folder: Path
    meta: ProjectMeta
    template: TemplateSpec
    inputs: Inputs

    @property
    def out(self) -> Path:
        """The folder exports and run records go to."""
        return self.folder / OUT_DIR

    @property
    def notebooks(self) -> list[Path]:
        """The template's notebooks, in run order."""
        return [self.folder / n for n in self.template.notebooks]

    @property
    def cache_dir(self) -> Path:
        """Where expensive results are cached (by fingerprint of their inputs)."""
        return self.folder / ".latticecalc-cache"


def find_project_folder(start: Path | None = None) -> Path:
    """The folder holding ``template.toml``: ``start`` (default: the current folder) or a parent."""
    here = Path(start or os.getcwd()).resolve()
    for folder in (here, *here.parents):
        if (folder / TEMPLATE_FILE).is_file() and (folder / PROJECT_FILE).is_file():
            return folder
    raise ProjectError("not inside a project folder", input_name="folder", got=str(here),
                       expected=f"a folder with {TEMPLATE_FILE}, {PROJECT_FILE} and {INPUTS_FILE}",
                       hint="Make one with 'latticecalc new DIR --template NAME'")


def open_project(folder: str | Path | None = None) -> Project:
    """Open a project folder (default: the one holding the current notebook) and validate its inputs."""
    root = find_project_folder(Path(folder) if folder is not None else None)
    template = load_template_spec(root / TEMPLATE_FILE)
    meta = load_meta(root / PROJECT_FILE)
    inputs = load_inputs(root / INPUTS_FILE, template)
    return Project(folder=root, meta=meta, template=template, inputs=inputs)
