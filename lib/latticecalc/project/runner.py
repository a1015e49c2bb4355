"""Run a project's notebooks headless, in order, in one kernel, and save their outputs.

The executed copies go to ``out/executed/`` (the user's notebooks are not rewritten); a run
record with the hashes of the inputs and notebook code goes to ``out/run-record.json`` so that
the export can refuse a stale project.
"""

from __future__ import annotations

import json
import sys
import time
from collections.abc import Callable
from dataclasses import dataclass
from datetime import UTC, datetime
from pathlib import Path

import nbformat
from jupyter_client import KernelManager
from jupyter_client.kernelspec import KernelSpec
from nbclient import NotebookClient
from nbclient.exceptions import CellExecutionError, CellTimeoutError, DeadKernelError

from latticecalc import __version__
from latticecalc.errors import NotebookError
from latticecalc.project.atomic import write_text_atomic
from latticecalc.project.project import Project, open_project
from latticecalc.project.state import EXECUTED_DIR, RUN_RECORD, current_state

Progress = Callable[[str], None]


def _stderr(msg: str) -> None:
    print(msg, file=sys.stderr, flush=True)


@dataclass(frozen=True, kw_only=True)
class RunReport:
    """What a run did: notebooks executed with their times, and where the outputs went."""

    project: Path
    notebooks: tuple[tuple[str, float], ...]
    executed_dir: Path
    seconds: float


def _kernel_manager(cwd: Path) -> KernelManager:
    km = KernelManager()
    # The kernel runs the same Python as the kit, whatever kernelspecs the machine has.
    km._kernel_spec = KernelSpec(argv=[sys.executable, "-m", "ipykernel_launcher", "-f", "{connection_file}",
                                       "--IPKernelApp.log_level=40"],
                                 display_name="latticecalc", language="python", name="python3")
    km.kernel_name = "python3"
    km.start_kernel(cwd=str(cwd), env=_kernel_env())
    return km


def _kernel_env() -> dict[str, str]:
    import os

    env = dict(os.environ)
    env.setdefault("MPLBACKEND", "module://matplotlib_inline.backend_inline")
    env["PYDEVD_DISABLE_FILE_VALIDATION"] = "1"
    return env


def _failure(nb_name: str, nb: nbformat.NotebookNode, exc: Exception) -> NotebookError:
    for index, cell in enumerate(nb.cells):
        if cell.cell_type != "code":
            continue
        errors = [o for o in cell.get("outputs", []) if o.get("output_type") == "error"]
        if errors:
            err = errors[0]
            shown = "".join(o.get("text", "") for o in cell.outputs if o.get("output_type") == "stream")
            message = f"cell {index + 1} failed: {err.get('ename')}: {err.get('evalue')}"
            if shown.strip():
                message += "\n  cell output:\n    " + "\n    ".join(shown.strip().splitlines()[-15:])
            return NotebookError(message, input_name=nb_name,
                                 hint=f"Open {nb_name} in JupyterLab, or see out/{EXECUTED_DIR}/{nb_name}")
    return NotebookError(f"execution failed: {type(exc).__name__}: {exc}", input_name=nb_name)


def run_project(folder: str | Path, *, progress: Progress | None = _stderr, timeout: int = 1200) -> RunReport:
    """Execute the project's notebooks in order in one kernel; save outputs; write the run record.

    Parameters
    ----------
    folder:
        The project folder.
    progress:
        Called with one line per notebook (default: printed to stderr); ``None`` for silence.
    timeout:
        Seconds allowed for one cell.

    Raises
    ------
    InputError
        Before any kernel starts, if the inputs do not validate.
    NotebookError
        If a cell fails: names the notebook, the cell number, the error and the cell's output.
    """
    project: Project = open_project(folder)
    say = progress or (lambda _m: None)
    out = project.out / EXECUTED_DIR
    out.mkdir(parents=True, exist_ok=True)
    record_path = project.out / RUN_RECORD
    state_before = current_state(project)
    record_path.unlink(missing_ok=True)  # a run in progress or failed is not a valid run
    start = time.perf_counter()
    km = _kernel_manager(project.folder)
    timings = []
    try:
        total = len(project.notebooks)
        for i, path in enumerate(project.notebooks, start=1):
            nb = nbformat.read(str(path), as_version=4)
            say(f"[{i}/{total}] {path.name} …")
            t0 = time.perf_counter()
            client = NotebookClient(nb, km=km, timeout=timeout, allow_errors=False,
                                    resources={"metadata": {"path": str(project.folder)}})
            try:
                client.execute()
            except (CellExecutionError, CellTimeoutError, DeadKernelError) as exc:
                write_text_atomic(out / path.name, nbformat.writes(nb))
                raise _failure(path.name, nb, exc) from None
            except RuntimeError as exc:  # the kernel did not start or stopped answering
                raise NotebookError(f"the Python kernel did not respond ({exc})", input_name=path.name,
                                    hint="Check that ipykernel is installed in this environment") from None
            finally:
                if client.kc is not None:
                    client.kc.stop_channels()
            write_text_atomic(out / path.name, nbformat.writes(nb))
            dt = time.perf_counter() - t0
            timings.append((path.name, dt))
            say(f"[{i}/{total}] {path.name} done in {dt:.1f} s")
    finally:
        km.shutdown_kernel(now=True)
    if current_state(project) != state_before:
        raise NotebookError("inputs or notebooks changed while the run was going on; run again",
                            input_name=str(project.folder))
    seconds = time.perf_counter() - start
    record = {"state": state_before, "finished": datetime.now(UTC).isoformat(timespec="seconds"),
              "latticecalc": __version__, "notebooks": [{"name": n, "seconds": round(t, 2)} for n, t in timings]}
    write_text_atomic(record_path, json.dumps(record, indent=2))
    return RunReport(project=project.folder, notebooks=tuple(timings), executed_dir=out, seconds=seconds)
