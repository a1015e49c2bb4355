"""What a run saw: hashes of the inputs, notebook code and executed outputs, to tell when a project is stale.

``current_state`` hashes what a run reads (inputs, project, template, each notebook's code, the
kit version); the runner records it before it starts and refuses to finish if it changed.
``executed_outputs`` hashes what a run wrote: each executed notebook in ``out/executed/`` (its
cells' sources and outputs, and the notebook's ``latticecalc`` metadata, which is everything the
export reads). The run record (``out/run-record.json``) keeps both; ``stale_files`` names every
file whose hash differs since, so an executed notebook edited by hand after the run makes the
project stale like an edited input: export and sign refuse until it is run again.
"""

from __future__ import annotations

import hashlib
import json
from pathlib import Path

from latticecalc import __version__
from latticecalc.errors import ProjectError
from latticecalc.project.inputs import INPUTS_FILE
from latticecalc.project.meta import cover_path
from latticecalc.project.project import TEMPLATE_FILE, Project

RUN_RECORD = "run-record.json"
EXECUTED_DIR = "executed"
#: The run record's key for the hashes of the executed notebooks.
OUTPUTS_KEY = "outputs"


def notebook_code(path: Path) -> str:
    """The code of a notebook: its code cells' sources joined (outputs and metadata ignored)."""
    import nbformat  # here, not at the top: nbformat's schema validator costs a kernel ~1.5 s to import

    nb = nbformat.read(str(path), as_version=4)
    return "\n# ---- cell ----\n".join(c.source for c in nb.cells if c.cell_type == "code")


def _sha(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def current_state(project: Project) -> dict[str, str]:
    """Hash of each file whose change makes a run stale: inputs, cover, template, notebook code, data files.

    Files are hashed by their bytes under their name: the cover file under ``cover.toml``, or
    ``project.toml`` in a project an older kit made. ``latticecalc refile`` therefore makes a run
    stale (the files the run read are gone) and the project is run again before export or sign-off;
    the fingerprint, which holds the cover's fields rather than the file, is unchanged by it.

    Data files are the files the ``path`` inputs name (records, imported calc package exports), keyed
    ``"<path> (<input>)"`` (:func:`latticecalc.project.lineage.state_of`).
    """
    cover = cover_path(project.folder)[0]
    state = {path.name: _sha(path.read_bytes())
             for path in (project.folder / INPUTS_FILE, cover, project.folder / TEMPLATE_FILE)}
    for nb in project.notebooks:
        if not nb.is_file():
            raise ProjectError("notebook listed in template.toml is missing", input_name=nb.name,
                               file=TEMPLATE_FILE)
        state[nb.name] = _sha(notebook_code(nb).encode("utf-8"))
    from latticecalc.project.lineage import state_of

    state.update(state_of(project))  # the files the inputs name: records and imported exports
    state["latticecalc"] = __version__
    return state


def settled_state(before: dict[str, str], after: dict[str, str]) -> dict[str, str] | None:
    """The state a run records: ``after`` when it differs from ``before`` only by files the run created.

    A data file missing before the run and present after it was written by the run (a demo record
    generated from its seed): its hash is the one the results rest on. Any other difference (an input,
    a notebook or a record edited while the run was going on) gives None: the run cannot vouch for it.
    """
    if set(before) != set(after):
        return None
    for key, value in after.items():
        if before[key] != value and before[key] != "missing":
            return None
    return dict(after)


def executed_path(project: Project, name: str) -> Path:
    """Where the run put the executed copy of notebook ``name``."""
    return project.out / EXECUTED_DIR / name


def _executed_label(project: Project, name: str) -> str:
    path = executed_path(project, name)
    try:
        return path.relative_to(project.folder).as_posix()
    except ValueError:
        return f"{EXECUTED_DIR}/{name}"


def output_hash(path: Path) -> str:
    """SHA-256 of an executed notebook's cells (type, source, outputs) and ``latticecalc`` metadata.

    Execution timestamps and other cell metadata are left out: they change nothing the export shows.
    """
    import nbformat

    try:
        nb = nbformat.read(str(path), as_version=4)
    except FileNotFoundError:
        return "missing"
    except Exception as exc:  # unreadable JSON or notebook format: not the notebook the run wrote
        return f"unreadable ({type(exc).__name__})"
    body = {"metadata": nb.metadata.get("latticecalc"),
            "cells": [{"type": c.cell_type, "source": c.source, "outputs": c.get("outputs", [])} for c in nb.cells]}
    text = json.dumps(body, sort_keys=True, separators=(",", ":"), ensure_ascii=False, default=str)
    return _sha(text.encode("utf-8"))


def executed_outputs(project: Project) -> dict[str, str]:
    """Hash of each executed notebook (:func:`output_hash`), by notebook name; the run records it last."""
    return {nb.name: output_hash(executed_path(project, nb.name)) for nb in project.notebooks}


def read_run_record(project: Project) -> dict | None:
    """The record the last successful run wrote, or None."""
    path = project.out / RUN_RECORD
    if not path.is_file():
        return None
    try:
        record = json.loads(path.read_text(encoding="utf-8"))
    except json.JSONDecodeError:
        return None
    return record if isinstance(record, dict) else None


def stale_files(project: Project) -> list[str]:
    """Files changed since the last successful run (``["(never run)"]`` if there was none).

    Inputs, project, template and notebook code by name (``inputs.toml``, ``70_coverage.ipynb``);
    executed notebooks edited since the run by their path (``out/executed/70_coverage.ipynb``),
    when the run record holds their hashes.
    """
    record = read_run_record(project)
    if record is None:
        return ["(never run)"]
    now = current_state(project)
    then = record.get("state", {})
    changed = sorted(k for k in set(now) | set(then) if now.get(k) != then.get(k))
    outputs = record.get(OUTPUTS_KEY)
    if isinstance(outputs, dict):
        current = executed_outputs(project)
        changed += sorted(_executed_label(project, k) for k in set(current) | set(outputs)
                          if current.get(k) != outputs.get(k))
    return changed
