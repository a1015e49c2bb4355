"""A design-study project folder: its inputs read into a space, a context and settings; a design written back.

A design-study project (template ``design-study``) names the column-panel project whose requirement it
designs for (``study.project``, relative to the study folder; empty: the column-panel template's own
defaults), the limits the panel must keep (``limits.*``), the design space (``[space]``), the search
counts (``search.*``) and optional numerics. Its evaluations are kept in ``evaluations/`` inside the
study folder (one file per stage and fingerprint), so an interrupted study resumes where it stopped.
"""

from __future__ import annotations

import json
from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from latticecalc.errors import InputError
from latticecalc.study.engine import StudySettings
from latticecalc.study.requirement import StudyContext, context_from_project, plain
from latticecalc.study.space import UNITS, DesignSpace, space_from_table

#: Folder of the persisted evaluations inside a study project.
EVALUATIONS = "evaluations"


@dataclass(frozen=True, kw_only=True)
class StudyProject:
    """Everything a study run needs, read and checked before anything is evaluated or written."""

    folder: Path
    study_id: str
    requirement_project: Path
    space: DesignSpace
    context: StudyContext
    settings: StudySettings

    @property
    def store(self) -> Path:
        """The folder of the persisted evaluations."""
        return self.folder / EVALUATIONS


def requirement_folder(folder: Path, named: str | None) -> Path:
    """The column-panel project named by ``study.project`` (or the bundled column-panel template)."""
    if named:
        return (Path(folder) / named).resolve()
    from latticecalc.project.templates import templates_root

    return templates_root() / "column-panel"


def load_study(folder: str | Path) -> StudyProject:
    """Open a design-study project and check its requirement, space and settings (writes nothing)."""
    from latticecalc.project.project import open_project

    proj = open_project(folder)
    if proj.template.name != "design-study":
        raise InputError("not a design-study project", input_name="template", expected="design-study",
                         got=repr(proj.template.name), file=str(proj.folder))
    inp = proj.inputs
    req_folder = requirement_folder(proj.folder, inp.get("study.project"))
    limits = {}
    if inp.get("limits.max_panel_mass") is not None:
        limits["max_panel_mass_kg"] = float(inp["limits.max_panel_mass"].to("kg").m)
    if inp.get("limits.max_thickness") is not None:
        limits["max_thickness_mm"] = float(inp["limits.max_thickness"].to("mm").m)
    context = context_from_project(req_folder, limits=limits, numerics=plain(inp.get("numerics") or {}))
    space = space_from_table(plain(inp.get("space") or {}), file=inp.file)
    settings = StudySettings(screen=inp["search.screen"], population=inp["search.population"],
                             generations=inp["search.generations"], bloch=inp["search.bloch"],
                             coupled=inp["search.coupled"], seed=inp["search.seed"])
    return StudyProject(folder=proj.folder, study_id=f"{proj.meta.calc_id}-rev{proj.meta.revision}",
                        requirement_project=req_folder, space=space, context=context, settings=settings)


def read_results(folder: str | Path) -> dict[str, Any]:
    """The study's ``out/study-results.json`` (after a run)."""
    from latticecalc.files import read_text

    path = Path(folder) / "out" / "study-results.json"
    return json.loads(read_text(path, kind="json", what="the study results", input_name="study results"))


def _input_text(name: str, value: Any) -> Any:
    """A design value as the column-panel input writes it (quantities as text with their unit)."""
    from latticecalc.study.space import KNOWN_VARIABLES

    dim = KNOWN_VARIABLES.get(name, ("", None, ""))[1]
    if dim is not None and name in KNOWN_VARIABLES:
        return f"{round(float(value), 6):.12g} {UNITS[dim]}"
    return value


def design_changes(values: Mapping[str, Any], *, cells_wide: int, cells_high: int,
                   full: Mapping[str, Any] | None = None) -> dict[str, Any]:
    """The column-panel inputs a design sets: its variables plus the panel size the study derived.

    A design with zone variables sets ``panel.zones`` instead of them (:mod:`latticecalc.study.zones`; the
    rows built from ``full``, the full design, as the study evaluated them), an empty list for a uniform
    design, so a graded panel written earlier is cleared.
    """
    from latticecalc.study.zones import ZONE_VARIABLES, zone_rows_input, zone_values

    changes = {k: _input_text(k, v) for k, v in values.items() if k != "lattice.added_mass_material"
               and k != "frame.wall_thickness" and k not in ZONE_VARIABLES}
    changes["panel.cells_wide"] = int(cells_wide)
    changes["panel.cells_high"] = int(cells_high)
    if any(k in ZONE_VARIABLES for k in values):
        changes["panel.zones"] = zone_rows_input(zone_values(full if full is not None else values, cells_high))
    return changes


def apply_design(project: str | Path, changes: Mapping[str, Any], *, source: str) -> Any:
    """Write ``changes`` into a column-panel project's ``inputs.toml``, each with ``source``; comments kept.

    Each value becomes ``{ value = …, source = "<source>" }`` in place. The whole file is validated
    against the template before it is written (atomically); on any error nothing is written.
    """
    from latticecalc.project.inputs import set_values
    from latticecalc.project.project import open_project

    proj = open_project(project)
    if proj.template.name != "column-panel":
        raise InputError("a design is written into a column-panel project", input_name="project",
                         expected="a folder made from the column-panel template", got=repr(proj.template.name))
    changes = dict(changes)
    if "panel.zones" not in changes and proj.inputs.get("panel.zones"):
        changes["panel.zones"] = []      # a uniform design clears the zones of a graded panel written earlier
    return set_values(proj.folder / "inputs.toml", proj.template, changes, source=source)
