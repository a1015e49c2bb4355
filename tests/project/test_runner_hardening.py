"""The runner cannot hang: a kernel that exits, a cell that never ends, the run deadline, SIGTERM and SIGINT.

Basis: common practice for supervising a child process (a per-step timeout, a deadline for the
whole job, a liveness check, and on a stop signal the child killed and the cause reported),
and DEVELOPERS.md for the behaviour kept: one kernel for all notebooks of a project, a progress
line per notebook, executed copies in ``out/executed/``, a failing cell named by notebook, cell,
error and output. These are behaviour tests with no published source.

Each test builds a throwaway project (no inputs, tiny notebooks). Timeouts below are hang guards
only (generous; a test fails instead of hanging the suite), never assertions on speed.
"""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import threading
import time
from pathlib import Path

import nbformat
import pytest

from latticecalc.cli import main as cli
from latticecalc.errors import (
    InputError,
    KernelDiedError,
    NotebookError,
    ProjectError,
    RunInterruptedError,
    RunTimeoutError,
)
from latticecalc.project import open_project
from latticecalc.project.export import export_project
from latticecalc.project.runner import run_project, select_notebooks
from latticecalc.project.signoff import sign_project
from latticecalc.project.templates import list_templates, new_project

#: Seconds a run (or a CLI process) may take before a test calls it hung.
HANG_GUARD_SECONDS = 120
#: Seconds a stopped CLI process may take to exit, and a killed kernel to disappear (hang guards).
EXIT_GUARD_SECONDS = 30

_PROJECT = """\
[project]
name = "Runner test"
number = "0000"

[calc]
id = "LC-RT-001"
title = "Runner hardening"
revision = "A"
prepared_by = "Test"
"""

WRITE_PID = "import os, time\nopen('kernel.pid', 'w').write(str(os.getpid()))"


def make_project(folder: Path, notebooks: dict[str, list[str]]) -> Path:
    """A project with no inputs whose notebooks hold a heading (cell 1) then the given code cells."""
    folder.mkdir(parents=True)
    names = ", ".join(f'"{n}"' for n in notebooks)
    (folder / "template.toml").write_text(
        f'[about]\nname = "hardening"\ntitle = "Runner"\npurpose = "throwaway"\nnotebooks = [{names}]\n')
    (folder / "inputs.toml").write_text("# no inputs\n")
    (folder / "cover.toml").write_text(_PROJECT)
    for name, cells in notebooks.items():
        nb = nbformat.v4.new_notebook()
        nb.cells = [nbformat.v4.new_markdown_cell(f"# {name}")] + [nbformat.v4.new_code_cell(c) for c in cells]
        nbformat.write(nb, str(folder / name))
    return folder


def _guarded(folder: Path, **kwargs) -> dict:
    """run_project in a thread, joined with a hang guard; returns {"report": …} or {"error": …}."""
    box: dict = {}

    def target() -> None:
        try:
            box["report"] = run_project(folder, **kwargs)
        except BaseException as exc:  # handed back to the test
            box["error"] = exc

    thread = threading.Thread(target=target, daemon=True)
    thread.start()
    thread.join(HANG_GUARD_SECONDS)
    if thread.is_alive():
        _kill_kernel_of(folder)
        pytest.fail(f"run_project did not return within {HANG_GUARD_SECONDS} s (hang guard)")
    return box


def _kernel_pid(folder: Path) -> int | None:
    path = folder / "kernel.pid"
    text = path.read_text() if path.is_file() else ""
    return int(text) if text.strip() else None


def _running(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    stat = Path(f"/proc/{pid}/stat")
    if stat.is_file():  # an exited process its parent has not reaped yet is not running
        return stat.read_text().rsplit(")", 1)[-1].split()[0] not in ("Z", "X")
    return True


def _gone(pid: int) -> bool:
    deadline = time.monotonic() + EXIT_GUARD_SECONDS
    while _running(pid):
        if time.monotonic() > deadline:
            return False
        time.sleep(0.1)
    return True


def _kill_kernel_of(folder: Path) -> None:
    pid = _kernel_pid(folder)
    if pid is not None and _running(pid):
        os.kill(pid, signal.SIGKILL)


def _cli(folder: Path, *args: str) -> subprocess.CompletedProcess:
    try:
        return subprocess.run([sys.executable, "-m", "latticecalc.cli", "run", *args, str(folder)],
                              capture_output=True, text=True, timeout=HANG_GUARD_SECONDS)
    except subprocess.TimeoutExpired:
        _kill_kernel_of(folder)
        pytest.fail(f"latticecalc run did not exit within {HANG_GUARD_SECONDS} s (hang guard)")


# --- behaviour kept ----------------------------------------------------------------------------------
def test_notebooks_share_one_kernel_with_progress_and_executed_copies(tmp_path):
    # DEVELOPERS.md: all notebooks in one kernel; executed copies in out/executed/
    folder = make_project(tmp_path / "ok", {"a.ipynb": ["x = 41"], "b.ipynb": ["print(x + 1)"]})
    lines: list[str] = []
    report = run_project(folder, progress=lines.append, timeout=60)
    assert [n for n, _ in report.notebooks] == ["a.ipynb", "b.ipynb"]
    assert lines[0] == "[1/2] a.ipynb …" and lines[1].startswith("[1/2] a.ipynb done in")
    assert lines[2] == "[2/2] b.ipynb …" and lines[3].startswith("[2/2] b.ipynb done in")
    executed = nbformat.read(str(folder / "out" / "executed" / "b.ipynb"), as_version=4)
    assert executed.cells[1].outputs[0]["text"].strip() == "42"
    assert (folder / "out" / "run-record.json").is_file()


def test_signal_handlers_are_restored_after_a_run(tmp_path):
    # common practice: a library call leaves the process's signal handling as it found it
    folder = make_project(tmp_path / "ok", {"a.ipynb": ["x = 1"]})
    before = (signal.getsignal(signal.SIGINT), signal.getsignal(signal.SIGTERM))
    run_project(folder, progress=None, timeout=60)
    assert (signal.getsignal(signal.SIGINT), signal.getsignal(signal.SIGTERM)) == before


def test_failing_cell_is_named_by_notebook_cell_error_and_output(tmp_path):
    # DEVELOPERS.md / README: the failing cell is reported with its error and printed output
    folder = make_project(tmp_path / "fails", {"a.ipynb": ["x = 1", "print('about to fail')\n1 / 0"]})
    box = _guarded(folder, progress=None, timeout=60)
    err = box.get("error")
    assert isinstance(err, NotebookError), box
    msg = str(err)
    assert "a.ipynb" in msg and "cell 3" in msg and "ZeroDivisionError" in msg and "about to fail" in msg
    assert (folder / "out" / "executed" / "a.ipynb").is_file()
    assert not (folder / "out" / "run-record.json").exists()


def test_cell_timeout_below_one_second_is_refused_before_any_kernel(tmp_path):
    # nbclient reads a timeout of 0 as "no timeout"; a run must always have one (common practice)
    folder = make_project(tmp_path / "ok", {"a.ipynb": ["x = 1"]})
    with pytest.raises(InputError, match="timeout"):
        run_project(folder, progress=None, timeout=0)


# --- a kernel that exits --------------------------------------------------------------------------
EXITS = {"a.ipynb": ["x = 1"], "b.ipynb": ["print('before exit', flush=True)", "import os\nos._exit(3)"]}


def test_kernel_exiting_mid_run_raises_kernel_died_naming_notebook_and_cell(tmp_path):
    # common practice: a dead child is detected and reported, not waited for
    folder = make_project(tmp_path / "exits", EXITS)
    box = _guarded(folder, progress=None, timeout=600)
    err = box.get("error")
    assert isinstance(err, KernelDiedError), box
    assert isinstance(err, NotebookError)
    msg = str(err)
    assert err.input_name == "b.ipynb"
    assert "cell 3" in msg and "os._exit(3)" not in msg.split("cell 3")[0]
    assert "exit code 3" in msg
    assert (folder / "out" / "executed" / "b.ipynb").is_file()
    assert not (folder / "out" / "run-record.json").exists()


def test_kernel_exiting_mid_run_gives_a_non_zero_cli_exit(tmp_path):
    # common practice: a failed command exits non-zero and says why on stderr
    folder = make_project(tmp_path / "exits", EXITS)
    done = _cli(folder)
    assert done.returncode != 0
    assert "b.ipynb" in done.stderr and "cell 3" in done.stderr and "kernel stopped" in done.stderr


def test_kernel_stopping_at_start_is_reported_as_such_with_no_notebook_named(tmp_path, monkeypatch):
    # common practice: a child that dies before it answers is reported at once, as a start failure
    from jupyter_client.kernelspec import KernelSpec

    from latticecalc.project import runner

    made = runner._kernel_manager

    def dies_at_start():
        km = made()
        km._kernel_spec = KernelSpec(argv=[sys.executable, "-c", "import sys; sys.exit(3)"],
                                     display_name="dies", language="python", name="python3")
        return km

    monkeypatch.setattr(runner, "_kernel_manager", dies_at_start)
    folder = make_project(tmp_path / "never", {"a.ipynb": ["x = 1"]})
    with pytest.raises(KernelDiedError) as caught:
        run_project(folder, progress=None, timeout=60)
    msg = str(caught.value)
    assert "exit code 3" in msg and "while it was starting" in msg
    assert caught.value.input_name == "kernel" and "None" not in msg
    assert not (folder / "out" / "run-record.json").exists()


def test_kernel_channels_use_a_private_socket_folder_removed_after_the_run(tmp_path, monkeypatch):
    # common practice: no TCP port a concurrent process could take between choosing and binding it
    from latticecalc.project import runner

    seen = []
    made = runner._private_sockets

    def spy(km):
        folder = made(km)
        seen.append((folder, km.transport))
        return folder

    monkeypatch.setattr(runner, "_private_sockets", spy)
    folder = make_project(tmp_path / "ok", {"a.ipynb": ["x = 1"]})
    run_project(folder, progress=None, timeout=60)
    if os.name == "posix":
        (sockets, transport), = seen
        assert transport == "ipc" and not Path(sockets).exists()


# --- a cell that never ends ----------------------------------------------------------------------------
def test_looping_cell_is_stopped_by_the_cell_timeout(tmp_path):
    # common practice: a per-step timeout stops the step and the process running it
    folder = make_project(tmp_path / "loops", {"a.ipynb": [WRITE_PID, "while True:\n    pass"]})
    done = _cli(folder, "--timeout", "2")
    assert done.returncode != 0, done.stderr
    assert "a.ipynb" in done.stderr and "cell 3" in done.stderr and "within 2 s" in done.stderr
    pid = _kernel_pid(folder)
    assert pid is not None and _gone(pid), "the kernel outlived the run"


def test_run_deadline_stops_a_run_whose_cell_timeout_is_long(tmp_path):
    # common practice: a deadline for the whole job, independent of the per-step timeout
    folder = make_project(tmp_path / "loops", {"a.ipynb": [WRITE_PID, "while True:\n    time.sleep(0.05)"]})
    box = _guarded(folder, progress=None, timeout=600, run_timeout=3)
    err = box.get("error")
    assert isinstance(err, RunTimeoutError), box
    assert "a.ipynb" in str(err) and "cell 3" in str(err) and "3 s" in str(err)
    pid = _kernel_pid(folder)
    assert pid is not None and _gone(pid), "the kernel outlived the run"


# --- stop signals -------------------------------------------------------------------------------------
@pytest.mark.parametrize("signum", [signal.SIGTERM, signal.SIGINT], ids=["SIGTERM", "SIGINT"])
def test_stop_signal_kills_the_kernel_and_exits_non_zero(tmp_path, signum):
    # common practice: on SIGTERM/SIGINT a supervisor stops its child and exits non-zero
    folder = make_project(tmp_path / "stop", {"a.ipynb": [WRITE_PID, "while True:\n    time.sleep(0.05)"]})
    proc = subprocess.Popen([sys.executable, "-m", "latticecalc.cli", "run", str(folder)],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    try:
        deadline = time.monotonic() + HANG_GUARD_SECONDS
        while _kernel_pid(folder) is None:
            assert proc.poll() is None, proc.communicate()
            assert time.monotonic() < deadline, "the looping cell never started (hang guard)"
            time.sleep(0.1)
        kernel = _kernel_pid(folder)
        time.sleep(0.5)  # the kernel is now in the endless cell
        proc.send_signal(signum)
        try:
            _out, err = proc.communicate(timeout=EXIT_GUARD_SECONDS)
        except subprocess.TimeoutExpired:
            pytest.fail(f"latticecalc run ignored {signum.name} for {EXIT_GUARD_SECONDS} s (hang guard)")
        assert proc.returncode == 128 + int(signum)      # the shell's convention for a signalled stop
        assert signum.name in err and "a.ipynb" in err and "cell 3" in err, err
        assert _gone(kernel), "the kernel outlived the run"
        assert not (folder / "out" / "run-record.json").exists()
    finally:
        if proc.poll() is None:
            proc.kill()
            proc.wait()
        _kill_kernel_of(folder)


_CHILD = """
import sys
from latticecalc.project.runner import run_project
try:
    run_project(sys.argv[1], progress=None, timeout=600)
except Exception as exc:
    print(type(exc).__name__, exc.input_name)
    sys.exit(1)
"""


@pytest.mark.parametrize("signum", [signal.SIGTERM, signal.SIGINT], ids=["SIGTERM", "SIGINT"])
def test_stop_signal_raises_run_interrupted_from_the_library(tmp_path, signum):
    # common practice: the library reports the stop as a named error; the caller decides the exit code
    folder = make_project(tmp_path / "stop", {"a.ipynb": [WRITE_PID, "while True:\n    time.sleep(0.05)"]})
    proc = subprocess.Popen([sys.executable, "-c", _CHILD, str(folder)], stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, text=True)
    try:
        deadline = time.monotonic() + HANG_GUARD_SECONDS
        while _kernel_pid(folder) is None:
            assert proc.poll() is None, proc.communicate()
            assert time.monotonic() < deadline, "the looping cell never started (hang guard)"
            time.sleep(0.1)
        time.sleep(0.5)
        proc.send_signal(signum)
        try:
            out, err = proc.communicate(timeout=EXIT_GUARD_SECONDS)
        except subprocess.TimeoutExpired:
            pytest.fail(f"run_project ignored {signum.name} for {EXIT_GUARD_SECONDS} s (hang guard)")
        assert out.split() == [RunInterruptedError.__name__, "a.ipynb"], (out, err)
        assert _gone(_kernel_pid(folder)), "the kernel outlived the run"
    finally:
        if proc.poll() is None:
            proc.kill()
            proc.wait()
        _kill_kernel_of(folder)


# --- partial runs (--only) ----------------------------------------------------------------------------
SECTIONS = {"10_a.ipynb": ["x = 41"], "20_b.ipynb": ["y = 2"], "30_c.ipynb": ["print(x + 1)"]}


def test_only_runs_the_named_section_and_the_earlier_notebook_it_needs(tmp_path):
    # DEVELOPERS.md: all notebooks share one kernel, so 30_c needs x from 10_a; 20_b is not needed
    folder = make_project(tmp_path / "only", SECTIONS)
    lines: list[str] = []
    report = run_project(folder, progress=lines.append, timeout=60, only=["30"])
    assert [n for n, _ in report.notebooks] == ["10_a.ipynb", "30_c.ipynb"]
    assert report.skipped == ("20_b.ipynb",)
    assert lines[0] == "[1/2] 10_a.ipynb …"
    executed = nbformat.read(str(folder / "out" / "executed" / "30_c.ipynb"), as_version=4)
    assert executed.cells[1].outputs[0]["text"].strip() == "42"
    assert not (folder / "out" / "executed" / "20_b.ipynb").exists()


def test_only_names_a_section_by_number_stem_or_file_name(tmp_path):
    # behaviour of the option (common practice: accept the names the user sees)
    project = open_project(make_project(tmp_path / "names", SECTIONS))
    for only in (["20"], ["20_b"], ["20_b.ipynb"]):
        assert [p.name for p in select_notebooks(project, only)] == ["20_b.ipynb"], only
    assert [p.name for p in select_notebooks(project, ["30", "20"])] == ["10_a.ipynb", "20_b.ipynb", "30_c.ipynb"]
    with pytest.raises(InputError, match="no section '40'") as info:
        select_notebooks(project, ["40"])
    assert "10_a, 20_b, 30_c" in str(info.value)
    for nothing in ([], "20"):               # an empty list would run nothing; a string is not a list
        with pytest.raises(InputError, match="one or more"):
            select_notebooks(project, nothing)


def test_every_bundled_section_runs_on_its_own(tmp_path):
    # DEVELOPERS.md: the first code cell of each notebook opens the project; so --only runs just the
    # sections named. Checked from the code of every bundled template's notebooks.
    for t in list_templates():
        project = open_project(new_project(tmp_path / t.name, template=t.name))
        for nb in project.notebooks:
            assert select_notebooks(project, [nb.stem]) == [nb], (t.name, nb.name)


def test_export_and_sign_refuse_a_partial_run_naming_the_skipped_sections_until_a_full_run(tmp_path, capsys):
    # README: export refuses a project whose run does not match it; a partial run is such a run
    folder = make_project(tmp_path / "partial", SECTIONS)
    assert cli(["run", str(folder), "--only", "30", "--timeout", "60"]) == 0
    assert "Partial run: skipped 20_b.ipynb" in capsys.readouterr().out
    with pytest.raises(ProjectError, match=r"20_b\.ipynb not run \(run again without --only\)"):
        export_project(folder)
    with pytest.raises(ProjectError, match=r"20_b\.ipynb not run"):
        sign_project(folder, role="prepared", name="Pat Preparer")
    assert cli(["export", str(folder)]) == 2
    assert "20_b.ipynb not run" in capsys.readouterr().err
    assert not list((folder / "out").glob("*.html"))
    report = run_project(folder, progress=None, timeout=60)
    assert report.skipped == ()
    assert export_project(folder).html.is_file()
