"""What a run saw: hashes of the inputs and notebook code, to tell when a project is stale."""

from __future__ import annotations

import hashlib
import json
from pathlib import Path

import nbformat

from latticecalc import __version__
from latticecalc.errors import ProjectError
from latticecalc.project.inputs import INPUTS_FILE
from latticecalc.project.meta import PROJECT_FILE
from latticecalc.project.project import TEMPLATE_FILE, Project

RUN_RECORD = "run-record.json"
EXECUTED_DIR = "executed"


def notebook_code(path: Path) -> str:
    """The code of a notebook: its code cells' sources joined (outputs and metadata ignored)."""
    nb = nbformat.read(str(path), as_version=4)
    return "\n# ---- cell ----\n".join(c.source for c in nb.cells if c.cell_type == "code")


def _sha(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def current_state(project: Project) -> dict[str, str]:
    """Hash of each file whose change makes a run stale: inputs, project, template, notebook code."""
    state = {name: _sha((project.folder / name).read_bytes())
             for name in (INPUTS_FILE, PROJECT_FILE, TEMPLATE_FILE)}
    for nb in project.notebooks:
        if not nb.is_file():
            raise ProjectError("notebook listed in template.toml is missing", input_name=nb.name,
                               file=TEMPLATE_FILE)
        state[nb.name] = _sha(notebook_code(nb).encode("utf-8"))
    state["latticecalc"] = __version__
    return state


def read_run_record(project: Project) -> dict | None:
    """The record the last successful run wrote, or None."""
    path = project.out / RUN_RECORD
    if not path.is_file():
        return None
    try:
        return json.loads(path.read_text(encoding="utf-8"))
    except json.JSONDecodeError:
        return None


def stale_files(project: Project) -> list[str]:
    """Files changed since the last successful run (``["(never run)"]`` if there was none)."""
    record = read_run_record(project)
    if record is None:
        return ["(never run)"]
    now = current_state(project)
    then = record.get("state", {})
    return sorted(k for k in set(now) | set(then) if now.get(k) != then.get(k))
