"""Shared fixtures: projects that are run and exported once per test session.

Running a project's notebooks is most of the suite's time, so each project the tests need is built,
run and exported once (on first use) and shared. A test that only reads a project takes the shared
folder and must not change it; a test that changes one (signs it, edits its inputs, tampers with a
file) takes a private copy: ``shutil.copytree`` of the executed folder, with ``out/`` and the result
cache, so the copy is as run as the original (the run record hashes contents, not paths) and a rerun
after an edit finds the unchanged expensive results in the cache.

Also built once: the demo (``quick_demo``, coarsened) and one column-panel project with hostile text in
every user-typed field, reviewed and signed (``hostile_panel``), each read by tests in several folders.

Once per session, not once per worker: under pytest-xdist the workers share these builds through a folder
beside their own temporary folders (:func:`_shared`), each built by the first worker to ask, under a file
lock, while the other waits for it. So that neither worker waits long, each worker starts building one of the
heavy projects the session's tests need as its first act (:func:`_early_builds`), the demo on one and the
column-panel projects on the other.
"""

import contextlib
import fcntl
import json
import os
import shutil
import sys
from collections.abc import Callable
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]

# Under pytest-xdist every core already runs a worker and its kernels: BLAS and OpenMP pools of their own in each
# process only fight over the same cores (common practice: one thread per process when processes fill the cores).
if os.environ.get("PYTEST_XDIST_WORKER"):
    for _var in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):
        os.environ.setdefault(_var, "1")
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))


def pytest_configure(config):
    """Byte-compile the kit once, in the controlling process, before any worker or kernel imports it.

    Python caches a module's bytecode on its first import, except where PYTHONDONTWRITEBYTECODE is set (as on
    some build machines): then every kernel, command-line run and worker of the session compiled the kit's
    sources again, about 0.2 s each and over a hundred of them. Writing the cache explicitly is what a first
    import does elsewhere; the files go to ``lib/latticecalc/**/__pycache__`` (ignored by git).
    """
    if hasattr(config, "workerinput"):
        return
    import compileall

    compileall.compile_dir(str(ROOT / "lib" / "latticecalc"), quiet=1)


def _shared_root(factory: pytest.TempPathFactory) -> Path:
    """The folder the session's workers share (beside their own temporary folders; the session's own without xdist)."""
    base = factory.getbasetemp()
    root = (base.parent if os.environ.get("PYTEST_XDIST_WORKER") else base) / "shared-builds"
    root.mkdir(parents=True, exist_ok=True)
    return root


@contextlib.contextmanager
def _locked(path: Path):
    with open(path, "a+") as fh:
        fcntl.flock(fh, fcntl.LOCK_EX)
        try:
            yield
        finally:
            fcntl.flock(fh, fcntl.LOCK_UN)


def _shared(factory: pytest.TempPathFactory, name: str, build: Callable[[Path], None]) -> Path:
    """``<shared root>/<name>``, built by ``build(folder)`` once in the session, whichever worker asks first.

    A build that fails leaves no done mark, so the next worker to ask builds afresh (and fails the same way,
    naming its own test); the folder is cleared before each try.
    """
    root = _shared_root(factory)
    folder, done = root / name, root / f"{name}.done"
    with _locked(root / f"{name}.lock"):
        if not done.exists():
            shutil.rmtree(folder, ignore_errors=True)
            folder.mkdir(parents=True)
            build(folder)
            done.touch()
    return folder


class ExecutedProjects:
    """Projects made from a bundled template, run and exported once each in the session, on first use.

    Each has the template's defaults with the numerical check coarsened by ``tests.helpers.make_quick``
    (which changes nothing in a template without those inputs): no test here reads a full-resolution
    result, and the full resolution runs in ``latticecalc demo`` and ``benchmarks/``.
    """

    def __init__(self, factory: pytest.TempPathFactory):
        self._factory = factory

    def get(self, template: str) -> Path:
        """The shared executed project of ``template``. Do not modify it: take a :meth:`copy`."""
        def build(parent: Path) -> None:
            from latticecalc.cli import main as cli
            from tests.helpers import make_quick

            # through the command line, as a user would: new -> (inputs edited) -> run -> export
            folder = parent / template
            assert cli(["new", str(folder), "--template", template]) == 0
            make_quick(folder)
            assert cli(["run", str(folder)]) == 0
            assert cli(["export", str(folder)]) == 0

        return _shared(self._factory, f"template-{template}", build) / template

    def copy(self, template: str, dest: Path) -> Path:
        """A private copy of the shared executed project at ``dest`` (still current: nothing to rerun)."""
        shutil.copytree(self.get(template), dest)
        return dest


@pytest.fixture(scope="session")
def executed_projects(tmp_path_factory) -> ExecutedProjects:
    """Executed and exported projects shared by the whole session (see :class:`ExecutedProjects`)."""
    return ExecutedProjects(tmp_path_factory)


@pytest.fixture(scope="session")
def quick_panel(executed_projects) -> Path:
    """A column-panel project coarsened by ``make_quick``, run and exported once. Read only: copy it to change it."""
    return executed_projects.get("column-panel")


@pytest.fixture
def quick_panel_copy(executed_projects, tmp_path) -> Path:
    """A private copy of :func:`quick_panel` for a test that changes the project."""
    return executed_projects.copy("column-panel", tmp_path / "panel")


@pytest.fixture(scope="session")
def quick_demo(tmp_path_factory):
    """``latticecalc demo`` (``build_demo``) built once per session; read only: copy a project to change it.

    The same projects, overlays, order and packages as the demo, with the column-panel's numerical check
    coarsened (``make_quick``) and the design study's search cut down (``make_quick_study``: same space,
    requirement, limits and seed, fewer designs) before each project runs. No test reads the demo's
    full-resolution numbers or its full search: ``latticecalc demo`` itself and ``benchmarks/`` run those.
    Returns the ``DemoReport`` (``folder``, ``packages``, ``main_package``).
    """
    from latticecalc.project import demo
    from tests.helpers import make_quick, make_quick_study

    real_run = demo.run_project

    def quick_run(folder, **kwargs):
        make_quick_study(make_quick(folder))
        return real_run(folder, **kwargs)

    def build(folder: Path) -> None:
        with pytest.MonkeyPatch.context() as mp:
            mp.setattr(demo, "run_project", quick_run)
            report = demo.build_demo(folder / "demo", progress=None)
        (folder / "report.json").write_text(json.dumps({"folder": str(report.folder),
                                                       "packages": [str(p) for p in report.packages]}))

    kept = json.loads((_shared(tmp_path_factory, "quick-demo", build) / "report.json").read_text())
    return demo.DemoReport(folder=Path(kept["folder"]), packages=tuple(Path(p) for p in kept["packages"]))


@pytest.fixture(scope="session")
def hostile_panel(executed_projects, tmp_path_factory) -> Path:
    """A quick column-panel project whose every user-typed field holds ``tests.helpers.HOSTILE``, reviewed and
    signed; returns its package HTML (with the PDF beside it where chromium is installed). Read only.

    Built once for the escaping tests of the package (HTML text, JSON, Chromium, PDF): a copy of
    :func:`quick_panel` with the project's name, number and client, the calc's title, preparer and
    description, and an input's source set to hostile text, run and exported through ``export --run``
    (its rerun finds every result in the copied cache: no input value changed), then a checker's comment,
    a reply and a sign-off with hostile text, exported again.
    """
    import tomlkit

    from latticecalc.project import open_project
    from latticecalc.project.export import export_project
    from latticecalc.project.signoff import add_comment, reply_comment, sign_project
    from tests.helpers import HOSTILE

    def build(parent: Path) -> None:
        folder = executed_projects.copy("column-panel", parent / "panel")
        edit(folder / "cover.toml", cover)
        edit(folder / "inputs.toml", inputs)
        first = export_project(folder, run=True, progress=None)
        step = json.loads(first.json.read_text(encoding="utf-8"))["results"][0]["id"]
        add_comment(folder, step=step, author=f"author {HOSTILE}", text=f"comment {HOSTILE}")
        reply_comment(folder, "CQ-1", author=f"replier {HOSTILE}", text=f"reply {HOSTILE}")
        sign_project(folder, role="prepared", name=f"signer {HOSTILE}", comment=f"remark {HOSTILE}")
        report = export_project(folder, pdf=shutil.which("chromium") is not None)
        assert report.html.name == f"{open_project(folder).meta.package_stem}.html"
        (parent / "package.txt").write_text(str(report.html), encoding="utf-8")

    def edit(path: Path, change) -> None:
        doc = tomlkit.parse(path.read_text(encoding="utf-8"))
        change(doc)
        path.write_text(tomlkit.dumps(doc), encoding="utf-8")

    def cover(doc):
        for key in ("name", "number", "client"):
            doc["project"][key] = f"{key} {HOSTILE}"
        for key in ("title", "prepared_by", "description"):
            doc["calc"][key] = f"{key} {HOSTILE}"

    def inputs(doc):
        doc["lattice"]["strut_diameter"] = {"value": "3 mm", "source": f"source {HOSTILE}"}

    shared = _shared(tmp_path_factory, "hostile-panel", build)
    return Path((shared / "package.txt").read_text(encoding="utf-8"))


#: The heavy shared builds and the fixtures whose tests need them; under xdist, worker k starts build k (mod workers).
_HEAVY = (("quick_demo", ("quick_demo",)),
          ("hostile_panel", ("hostile_panel", "quick_panel", "quick_panel_copy", "executed_projects")))


@pytest.fixture(scope="session", autouse=True)
def _early_builds(request):
    """Under xdist, each worker builds one heavy shared project the session needs before its first test.

    Lazily, the workers would both reach the first browser test at once and one would wait for the other's
    build; started early on different workers the builds run side by side. Without xdist nothing is built early.
    """
    worker = os.environ.get("PYTEST_XDIST_WORKER", "")
    count = int(os.environ.get("PYTEST_XDIST_WORKER_COUNT", "1") or 1)
    if not worker.startswith("gw") or count < 2:
        return
    needed = [fixture for fixture, users in _HEAVY
              if any(set(users) & set(getattr(item, "fixturenames", ())) for item in request.session.items)]
    index = int(worker[2:])
    for k, fixture in enumerate(needed):
        if k % count == index:
            request.getfixturevalue(fixture)
