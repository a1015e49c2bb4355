"""A project folder: metadata, the template's schema, validated inputs."""

from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path

from latticecalc.errors import ProjectError
from latticecalc.project.inputs import INPUTS_FILE, Inputs, load_inputs
from latticecalc.project.meta import COVER_FILE, OLD_COVER_FILE, ProjectMeta, cover_path, load_meta
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
    """The folder holding ``template.toml`` and ``cover.toml`` (or an older kit's ``project.toml``).

    ``start`` (default: the current folder) or a parent.
    """
    here = Path(start or os.getcwd()).resolve()
    for folder in (here, *here.parents):
        if (folder / TEMPLATE_FILE).is_file() and ((folder / COVER_FILE).is_file()
                                                   or (folder / OLD_COVER_FILE).is_file()):
            return folder
    raise ProjectError("not inside a project folder", input_name="folder", got=str(here),
                       expected=f"a folder with {TEMPLATE_FILE}, {COVER_FILE} and {INPUTS_FILE}",
                       hint="Make one with 'latticecalc new DIR --template NAME'")


def open_project(folder: str | Path | None = None) -> Project:
    """Open a project folder (default: the one holding the current notebook) and validate its inputs.

    Files an older kit named or laid out (``project.toml``, a ``[template]``/``[[input]]`` template)
    are read as before, with one notice on stderr (:mod:`latticecalc.project.refile`).
    """
    from latticecalc.project.refile import old_names, tell_old_names

    root = find_project_folder(Path(folder) if folder is not None else None)
    cover, _ = cover_path(root)           # both cover files present: an error naming both
    tell_old_names(root, old_names(root))
    template = load_template_spec(root / TEMPLATE_FILE)
    meta = load_meta(cover)
    inputs = load_inputs(root / INPUTS_FILE, template)
    return Project(folder=root, meta=meta, template=template, inputs=inputs)
