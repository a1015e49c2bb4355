"""Run a project's notebooks headless, in order, in one kernel, and save their outputs.

The executed copies go to ``out/executed/`` (the user's notebooks are not rewritten); a run
record with the hashes of the inputs and notebook code goes to ``out/run-record.json`` so that
the export can refuse a stale project.

A run cannot hang. nbclient drives an *asynchronous* kernel manager, so its per-cell timeout and
its check that the kernel is still alive keep working while a cell runs (with a blocking client
one wait for kernel output held the whole loop, and a dead kernel or an endless cell blocked the
run for ever). The notebooks execute in a worker thread; the calling thread supervises: it keeps
a deadline for the whole run and, when it is the main thread, catches SIGINT and SIGTERM. A
failed cell, a cell over its time, a kernel that died, the run deadline and a signal each kill
the kernel's whole process group and raise a :class:`~latticecalc.errors.NotebookError` subclass
naming the notebook and the cell.

A design loop may run only some sections (``only=["20", "30"]``, ``latticecalc run --only 20 30``).
Each section notebook opens the project itself, so a section needs no other to run; a notebook that
does use a name only an earlier notebook defines gets that notebook run before it (found from the
code, :func:`select_notebooks`). Such a partial run records the skipped notebooks under a key of its
own in the run record's state; :func:`~latticecalc.project.state.stale_files` names it, so export
and sign-off refuse until a run without ``only``.
"""

from __future__ import annotations

import ast
import asyncio
import atexit
import builtins
import contextlib
import json
import os
import queue
import shutil
import signal
import subprocess
import sys
import tempfile
import threading
import time
from collections.abc import Callable, Iterator, Sequence
from dataclasses import dataclass, field
from datetime import UTC, datetime
from pathlib import Path
from typing import Any

import nbformat
from jupyter_client import AsyncKernelManager
from jupyter_client.kernelspec import KernelSpec
from nbclient import NotebookClient
from nbclient.exceptions import CellExecutionError, CellTimeoutError, DeadKernelError

from latticecalc import __version__
from latticecalc.errors import (
    InputError,
    KernelDiedError,
    NotebookError,
    RunInterruptedError,
    RunTimeoutError,
)
from latticecalc.project.atomic import write_text_atomic
from latticecalc.project.project import Project, open_project
from latticecalc.project.state import EXECUTED_DIR, RUN_RECORD, current_state, executed_outputs, settled_state

Progress = Callable[[str], None]

#: Seconds the worker gets to wind down once the kernel has been killed.
GRACE_SECONDS = 10.0
#: How often the supervising thread looks at the worker, the deadline and the signal flag.
_POLL_SECONDS = 0.2
#: Seconds allowed for starting the kernel and for each notebook's client to connect, added to
#: the default run deadline.
_STARTUP_SECONDS = 60


def _stderr(msg: str) -> None:
    print(msg, file=sys.stderr, flush=True)


@dataclass(frozen=True, kw_only=True)
class RunReport:
    """What a run did: notebooks executed with their times, and where the outputs went."""

    project: Path
    notebooks: tuple[tuple[str, float], ...]
    executed_dir: Path
    seconds: float
    #: Notebooks a partial run (``only=``) left out, in run order; empty after a full run.
    skipped: tuple[str, ...] = ()


def _kernel_manager() -> AsyncKernelManager:
    km = AsyncKernelManager()
    # The kernel runs the same Python as the kit, whatever kernelspecs the machine has.
    km._kernel_spec = KernelSpec(argv=[sys.executable, "-m", "ipykernel_launcher", "-f", "{connection_file}",
                                       "--IPKernelApp.log_level=40"],
                                 display_name="latticecalc", language="python", name="python3")
    km.kernel_name = "python3"
    return km


def _private_sockets(km: AsyncKernelManager) -> str | None:
    """Put the kernel's channels on Unix sockets in a private folder (POSIX); returns the folder.

    Over TCP the kernel manager picks free ports and the kernel binds them a moment later; another
    process (a second run, a test worker) could take one in between and the kernel died at start
    ("Address already in use"). A socket file in a folder of this run's own cannot be taken.
    """
    if os.name != "posix":
        return None
    folder = tempfile.mkdtemp(prefix="lc-kernel-")
    km.transport = "ipc"
    km.ip = os.path.join(folder, "k")
    return folder


def _kernel_env() -> dict[str, str]:
    env = dict(os.environ)
    env.setdefault("MPLBACKEND", "module://matplotlib_inline.backend_inline")
    env["PYDEVD_DISABLE_FILE_VALIDATION"] = "1"
    return env


@dataclass
class _Live:
    """What the worker is doing, read by the supervising thread (plain attribute writes)."""

    notebook: str | None = None
    cell: int | None = None  # 1-based over all the notebook's cells, as JupyterLab counts them
    source: str = ""
    process: subprocess.Popen | None = None
    pgid: int | None = None
    loop: asyncio.AbstractEventLoop | None = None
    task: asyncio.Task | None = None
    client: NotebookClient | None = None
    stop: str | None = None  # why the supervisor stopped the run: a signal name or "deadline"
    outcome: Any = None  # the timings, or the exception the worker ended with
    messages: queue.SimpleQueue = field(default_factory=queue.SimpleQueue)

    def where(self) -> str:
        if self.notebook is None:
            return "the kernel was starting"
        if self.cell is None:
            return f"{self.notebook} was starting"
        return f"{_cell_name(self.cell, self.source)} of {self.notebook} was running"


def _cell_name(number: int, source: str) -> str:
    first = next((line.strip() for line in source.splitlines() if line.strip()), "")
    if len(first) > 60:
        first = first[:59] + "…"
    return f"cell {number}" + (f" (`{first}`)" if first else "")


def _stream_text(cell: Any) -> str:
    return "".join(o.get("text", "") for o in cell.get("outputs", []) if o.get("output_type") == "stream")


def _with_output(message: str, cell: Any) -> str:
    shown = _stream_text(cell) if cell is not None else ""
    if shown.strip():
        message += "\n  cell output:\n    " + "\n    ".join(shown.strip().splitlines()[-15:])
    return message


def _failure(nb_name: str, nb: nbformat.NotebookNode, exc: Exception) -> NotebookError:
    for index, cell in enumerate(nb.cells):
        if cell.cell_type != "code":
            continue
        errors = [o for o in cell.get("outputs", []) if o.get("output_type") == "error"]
        if errors:
            err = errors[0]
            message = _with_output(f"cell {index + 1} failed: {err.get('ename')}: {err.get('evalue')}", cell)
            return NotebookError(message, input_name=nb_name,
                                 hint=f"Open {nb_name} in JupyterLab, or see out/{EXECUTED_DIR}/{nb_name}")
    return NotebookError(f"execution failed: {type(exc).__name__}: {exc}", input_name=nb_name)


def _exit_text(process: subprocess.Popen | None) -> str:
    code = process.poll() if process is not None else None
    if code is None:
        return ""
    if code < 0:
        try:
            name = signal.Signals(-code).name
        except ValueError:
            name = f"signal {-code}"
        return f" (killed by {name})"
    return f" (exit code {code})"


def _died(live: _Live, nb: nbformat.NotebookNode | None) -> KernelDiedError:
    if live.notebook is None:
        return KernelDiedError(f"the Python kernel stopped{_exit_text(live.process)} while it was starting",
                               input_name="kernel", hint="Its own message is printed above; run again, and if it "
                               "stops again check that ipykernel runs in this Python environment")
    cell = nb.cells[live.cell - 1] if nb is not None and live.cell is not None else None
    message = _with_output(f"the Python kernel stopped{_exit_text(live.process)} while {live.where()}", cell)
    return KernelDiedError(message, input_name=live.notebook,
                           hint="Something in that cell ended the Python process (os._exit, a crash in "
                                "compiled code) or the machine ran out of memory; "
                                f"see out/{EXECUTED_DIR}/{live.notebook}")


def _timed_out(live: _Live, nb: nbformat.NotebookNode, timeout: int) -> RunTimeoutError:
    cell = nb.cells[live.cell - 1] if live.cell is not None else None
    message = _with_output(f"{_cell_name(live.cell or 0, live.source)} did not finish within {timeout} s; "
                           "the kernel was stopped", cell)
    return RunTimeoutError(message, input_name=live.notebook,
                           hint="Look for an endless loop in that cell, or allow more time with --timeout")


async def _not_answering(km: AsyncKernelManager, live: _Live, nb: nbformat.NotebookNode | None, exc: Exception,
                         input_name: str) -> NotebookError:
    """The error for a kernel that did not answer: it stopped (:func:`_died`), or it runs and is silent."""
    if not await km.is_alive():
        return _died(live, nb)
    return NotebookError(f"the Python kernel did not respond ({exc})", input_name=input_name,
                         hint="Check that ipykernel is installed in this environment")


async def _shutdown(km: AsyncKernelManager) -> None:
    with contextlib.suppress(Exception):
        if km.has_kernel:
            await asyncio.wait_for(km.shutdown_kernel(now=True), timeout=15)


async def _execute(project: Project, notebooks: Sequence[Path], out: Path, timeout: int,
                   live: _Live) -> list[tuple[str, float]]:
    """The worker: start one kernel, execute every notebook in it, save the executed copies."""
    live.loop = asyncio.get_running_loop()
    live.task = asyncio.current_task()

    def on_cell(cell: Any, cell_index: int, **_: Any) -> None:
        live.cell = cell_index + 1
        live.source = cell.source

    km = _kernel_manager()
    sockets = _private_sockets(km)
    kc = None
    timings: list[tuple[str, float]] = []
    try:
        try:
            await km.start_kernel(cwd=str(project.folder), env=_kernel_env())
        except Exception as exc:
            raise NotebookError(f"the Python kernel did not start ({exc})", input_name=notebooks[0].name,
                                hint="Check that ipykernel is installed in this environment") from None
        live.process = getattr(km.provisioner, "process", None)
        live.pgid = getattr(km.provisioner, "pgid", None)
        # One client for the whole run: a client connecting waits for 0.2 s of silence from the
        # kernel, which a client per notebook paid again for each notebook.
        kc = km.client()
        kc.allow_stdin = False
        try:
            kc.start_channels()
            await kc.wait_for_ready(timeout=_STARTUP_SECONDS)
        except RuntimeError as exc:
            raise await _not_answering(km, live, None, exc, notebooks[0].name) from None
        total = len(notebooks)
        for i, path in enumerate(notebooks, start=1):
            nb = nbformat.read(str(path), as_version=4)
            live.notebook, live.cell, live.source = path.name, None, ""
            live.messages.put(f"[{i}/{total}] {path.name} …")
            t0 = time.perf_counter()
            client = NotebookClient(nb, km=km, timeout=timeout, allow_errors=False, on_cell_execute=on_cell,
                                    resources={"metadata": {"path": str(project.folder)}})
            client.kc = kc  # the run's client; the notebook client neither starts nor stops it
            live.client = client
            try:
                await client.async_execute()
            except CellExecutionError as exc:
                write_text_atomic(out / path.name, nbformat.writes(nb))
                raise _failure(path.name, nb, exc) from None
            except CellTimeoutError:
                write_text_atomic(out / path.name, nbformat.writes(nb))
                raise _timed_out(live, nb, timeout) from None
            except DeadKernelError:
                write_text_atomic(out / path.name, nbformat.writes(nb))
                raise _died(live, nb) from None
            except RuntimeError as exc:  # the kernel did not start or stopped answering
                raise await _not_answering(km, live, nb, exc, path.name) from None
            write_text_atomic(out / path.name, nbformat.writes(nb))
            dt = time.perf_counter() - t0
            timings.append((path.name, dt))
            live.messages.put(f"[{i}/{total}] {path.name} done in {dt:.1f} s")
    finally:
        if kc is not None:
            kc.stop_channels()
        await _shutdown(km)
        if sockets is not None:
            shutil.rmtree(sockets, ignore_errors=True)
    return timings


def _work(project: Project, notebooks: Sequence[Path], out: Path, timeout: int, live: _Live) -> None:
    try:
        live.outcome = asyncio.run(_execute(project, notebooks, out, timeout, live))
    except BaseException as exc:  # handed to the supervising thread, which raises it
        live.outcome = exc


def _kill_kernel(live: _Live) -> None:
    """Kill the kernel's process group (it runs in a session of its own) and reap the kernel."""
    process = live.process
    if process is None or process.poll() is not None:
        return
    try:
        if live.pgid is not None:
            os.killpg(live.pgid, signal.SIGKILL)
        else:
            process.kill()
    except (ProcessLookupError, PermissionError):
        pass
    with contextlib.suppress(subprocess.TimeoutExpired):
        process.wait(timeout=5)


def _cancel(live: _Live) -> None:
    loop, task = live.loop, live.task
    if loop is not None and task is not None:
        with contextlib.suppress(RuntimeError):  # the loop has already closed
            loop.call_soon_threadsafe(task.cancel)


@contextlib.contextmanager
def _signals_to(live: _Live) -> Iterator[None]:
    """While running, SIGINT and SIGTERM set ``live.stop`` (only the main thread can catch signals)."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return

    def caught(signum: int, _frame: Any) -> None:
        if live.stop is None:
            live.stop = signal.Signals(signum).name

    previous = {sig: signal.signal(sig, caught) for sig in (signal.SIGINT, signal.SIGTERM)}
    try:
        yield
    finally:
        for sig, handler in previous.items():
            signal.signal(sig, handler if handler is not None else signal.SIG_DFL)


def _code_cells(notebooks: Sequence[Path]) -> int:
    return sum(sum(1 for c in nbformat.read(str(p), as_version=4).cells if c.cell_type == "code")
               for p in notebooks)


#: Names a notebook may use without defining them: the kernel's own (IPython) besides Python's builtins.
_KERNEL_NAMES = frozenset(dir(builtins)) | {"display", "get_ipython", "In", "Out", "exit", "quit"}


def _names(path: Path) -> tuple[set[str], set[str]] | None:
    """Names a notebook's code defines and names it uses without defining them; None if it does not parse.

    A name counts as defined wherever the notebook binds it (assignment, import, def, class, loop,
    ``with``, argument, ``global``); lines of IPython magics and shell escapes are left out.
    """
    nb = nbformat.read(str(path), as_version=4)
    lines = [line for c in nb.cells if c.cell_type == "code" for line in c.source.splitlines()
             if not line.lstrip().startswith(("%", "!"))]
    try:
        tree = ast.parse("\n".join(lines))
    except SyntaxError:
        return None
    defined: set[str] = set()
    used: set[str] = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Name):
            (used if isinstance(node.ctx, ast.Load) else defined).add(node.id)
        elif isinstance(node, (ast.Import, ast.ImportFrom)):
            if any(a.name == "*" for a in node.names):
                return None  # what a star import binds is not known from the code
            defined.update((a.asname or a.name).split(".")[0] for a in node.names)
        elif isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef, ast.ClassDef)):
            defined.add(node.name)
        elif isinstance(node, ast.arg):
            defined.add(node.arg)
        elif isinstance(node, (ast.Global, ast.Nonlocal)):
            defined.update(node.names)
        elif isinstance(node, ast.ExceptHandler) and node.name:
            defined.add(node.name)
        elif isinstance(node, (ast.MatchAs, ast.MatchStar)) and node.name:
            defined.add(node.name)
        elif isinstance(node, ast.MatchMapping) and node.rest:
            defined.add(node.rest)
    return defined, used - defined - _KERNEL_NAMES


def _section_keys(path: Path) -> set[str]:
    """What ``only`` may call a notebook: its file name, its stem, and its number (``20`` of ``20_x``)."""
    keys = {path.name, path.stem}
    number = path.stem.split("_", 1)[0]
    if number.isdigit():
        keys |= {number, str(int(number))}
    return keys


def select_notebooks(project: Project, only: Sequence[str]) -> list[Path]:
    """The notebooks a run with ``only`` executes, in the template's order.

    Each entry of ``only`` names notebooks by file name (``20_cell_density_mass.ipynb``), stem
    (``20_cell_density_mass``) or section number (``20``). A selected notebook that uses a name it does
    not define itself (all notebooks of a project share one kernel) gets the earlier notebooks that
    define it run first, and so on for theirs; a notebook whose code cannot be read that way (a syntax
    error, a star import) needs every notebook before it.

    Raises
    ------
    InputError
        If ``only`` is empty or a bare string, or an entry names no notebook of the project (the
        message lists the sections there are).
    """
    notebooks = project.notebooks
    if isinstance(only, str) or not only:
        raise InputError("name the sections to run as a list of one or more", input_name="--only",
                         got=repr(only), hint="For example only=['20', '30'] (latticecalc run DIR --only 20 30)")
    wanted: set[int] = set()
    for entry in only:
        hits = {i for i, nb in enumerate(notebooks) if entry.strip() in _section_keys(nb)}
        if not hits:
            listed = ", ".join(nb.stem for nb in notebooks)
            raise InputError(f"no section {entry!r} in this project; its sections are: {listed}",
                             input_name="--only", got=entry,
                             hint="Name a section by its number (20), its stem or its file name")
        wanted |= hits
    names = [_names(nb) for nb in notebooks]
    todo = sorted(wanted, reverse=True)
    while todo:
        i = todo.pop()
        if names[i] is None:
            needed = set(range(i))
        else:
            free = set(names[i][1])
            needed = set()
            for j in range(i - 1, -1, -1):  # the latest earlier definition is the one the kernel holds
                if not free:
                    break
                if names[j] is None:
                    needed.add(j)
                    continue
                if free & names[j][0]:
                    needed.add(j)
                    free -= names[j][0]
        for j in needed - wanted:
            wanted.add(j)
            todo.append(j)
    return [nb for i, nb in enumerate(notebooks) if i in wanted]


def partial_run_key(skipped: Sequence[str]) -> str:
    """The run-record state key that marks a partial run, naming what it skipped and what to do."""
    return f"partial run: {', '.join(skipped)} not run (run again without --only)"


def run_project(folder: str | Path, *, progress: Progress | None = _stderr, timeout: int = 1200,
                run_timeout: float | None = None, only: Sequence[str] | None = None) -> RunReport:
    """Execute the project's notebooks in order in one kernel; save outputs; write the run record.

    Parameters
    ----------
    folder:
        The project folder.
    progress:
        Called with one line per notebook (default: printed to stderr); ``None`` for silence.
    timeout:
        Seconds allowed for one cell (at least 1).
    run_timeout:
        Seconds allowed for the whole run. The default, ``timeout`` for every code cell plus a
        minute for each kernel start, is never reached by a run whose cells keep to ``timeout``;
        it guarantees that a run ends whatever happens in the kernel.
    only:
        Run only these sections (numbers, stems or file names; see :func:`select_notebooks`) and the
        notebooks they need. A run that leaves any notebook out is recorded as partial: export and
        sign-off refuse it, naming the skipped notebooks, until a run without ``only``.

    Raises
    ------
    InputError
        Before any kernel starts, if the inputs do not validate, ``timeout`` is below 1 s or an
        ``only`` entry names no section.
    NotebookError
        If a cell fails: names the notebook, the cell number, the error and the cell's output.
    RunTimeoutError
        If a cell runs longer than ``timeout`` or the run longer than ``run_timeout``.
    KernelDiedError
        If the kernel process ends while a notebook runs.
    RunInterruptedError
        On SIGINT or SIGTERM (when called from the main thread).

    In every error case the kernel has been stopped and no run record is written.
    """
    if isinstance(timeout, bool) or not isinstance(timeout, int) or timeout < 1:
        raise InputError("the cell timeout must be a whole number of seconds, at least 1", input_name="timeout",
                         got=repr(timeout))
    project: Project = open_project(folder)
    notebooks = project.notebooks if only is None else select_notebooks(project, only)
    skipped = tuple(nb.name for nb in project.notebooks if nb not in notebooks)
    say = progress or (lambda _m: None)
    out = project.out / EXECUTED_DIR
    out.mkdir(parents=True, exist_ok=True)
    record_path = project.out / RUN_RECORD
    state_before = current_state(project)
    record_path.unlink(missing_ok=True)  # a run in progress or failed is not a valid run
    if run_timeout is None:
        run_timeout = timeout * max(_code_cells(notebooks), 1) + _STARTUP_SECONDS * (len(notebooks) + 1)
    start = time.perf_counter()
    live = _Live()
    worker = threading.Thread(target=_work, args=(project, notebooks, out, timeout, live), name="latticecalc-run",
                              daemon=True)
    deadline = time.monotonic() + run_timeout

    def drain() -> None:
        while True:
            try:
                say(live.messages.get_nowait())
            except queue.Empty:
                return

    with _signals_to(live):
        try:
            worker.start()
            while worker.is_alive() and live.stop is None:
                drain()
                worker.join(_POLL_SECONDS)
                if time.monotonic() > deadline and live.stop is None:
                    live.stop = "deadline"
        finally:  # also when this thread is interrupted: the kernel never outlives the run
            if worker.is_alive():
                _kill_kernel(live)
                _cancel(live)
                worker.join(GRACE_SECONDS)
                if worker.is_alive() and live.client is not None:
                    atexit.unregister(live.client._cleanup_kernel)
            _kill_kernel(live)
            drain()
    if live.stop == "deadline":
        raise RunTimeoutError(f"the run did not finish within {run_timeout:g} s; stopped while {live.where()}",
                              input_name=live.notebook or str(project.folder),
                              hint="Look for a cell that never finishes; the kernel was stopped")
    if live.stop is not None:
        stopped = RunInterruptedError(f"stopped by {live.stop} while {live.where()}; the kernel was stopped",
                                      input_name=live.notebook or str(project.folder))
        stopped.signal_name = live.stop
        raise stopped
    if isinstance(live.outcome, BaseException):
        raise live.outcome
    timings = live.outcome
    state = settled_state(state_before, current_state(project))
    if state is None:
        raise NotebookError("inputs, notebooks or data files changed while the run was going on; run again",
                            input_name=str(project.folder))
    seconds = time.perf_counter() - start
    if skipped:  # a key the current state never has: stale_files() names it until a full run
        state[partial_run_key(skipped)] = "skipped"
    record = {"state": state, "outputs": executed_outputs(project),
              "finished": datetime.now(UTC).isoformat(timespec="seconds"), "latticecalc": __version__,
              "notebooks": [{"name": n, "seconds": round(t, 2)} for n, t in timings]}
    write_text_atomic(record_path, json.dumps(record, indent=2))
    return RunReport(project=project.folder, notebooks=tuple(timings), executed_dir=out, seconds=seconds,
                     skipped=skipped)
