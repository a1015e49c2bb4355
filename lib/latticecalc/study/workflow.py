"""The two things a user does with a study project: run it, and take one of its designs into a project."""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import Any

from latticecalc.errors import InputError
from latticecalc.study.engine import DaskExecutor, SerialExecutor, StudyResult, run_study, write_results
from latticecalc.study.project import apply_design, design_changes, load_study, read_results


@dataclass(frozen=True, kw_only=True)
class StudyReport:
    """A finished study run: its result, the results file written and the space searched."""

    result: StudyResult
    results: Path
    space: Any = None


def run_study_project(folder: str | Path, *, scheduler: str | None = None, serial: bool = False, workers: int = 2,
                      progress: Any = None) -> StudyReport:
    """Run (or resume) the study of a design-study project; serial, on a local Dask cluster, or on ``scheduler``.

    The project is read and checked, and the scheduler reached, before anything is written.
    """
    study = load_study(folder)
    executor = SerialExecutor() if serial else DaskExecutor(address=scheduler, workers=workers)
    try:
        result = run_study(study.space, study.context, settings=study.settings, store=study.store,
                           executor=executor, progress=progress)
    finally:
        executor.close()
    path = write_results(result, study.folder, study_id=study.study_id)
    return StudyReport(result=result, results=path, space=study.space)


def apply_from_study(folder: str | Path, design_id: str, project: str | Path) -> list[str]:
    """Write design ``design_id`` of the study in ``folder`` into the column-panel ``project``; the names set."""
    study = load_study(folder)
    data = read_results(study.folder)
    found = next((d for d in data["designs"] if d["id"] == design_id), None)
    if found is None:
        raise InputError("no such design in the study", input_name="design", got=repr(design_id),
                         expected="an id from the study's table (out/study-results.json)")
    hand = found["outputs"].get("hand", {})
    if hand.get("fits", -1.0) < 0:
        raise InputError("this design does not fit the column", input_name="design", got=repr(design_id),
                         expected="a design whose cells fit the column face and height")
    from latticecalc.study.evaluate import full_design

    changes = design_changes(found["design"], cells_wide=int(hand["cells_wide"]), cells_high=int(hand["cells_high"]),
                             full=full_design(found["design"], study.context))
    apply_design(project, changes, source=f"design study {data['study']}, design {design_id}")
    return list(changes)
