"""Shared fixtures: projects that are run and exported once per test session.

Running a project's notebooks is most of the suite's time, so each project the tests need is built,
run and exported once (on first use) and shared. A test that only reads a project takes the shared
folder and must not change it; a test that changes one (signs it, edits its inputs, tampers with a
file) takes a private copy: ``shutil.copytree`` of the executed folder, with ``out/`` and the result
cache, so the copy is as run as the original (the run record hashes contents, not paths) and a rerun
after an edit finds the unchanged expensive results in the cache.

Also built once: the demo (``quick_demo``, coarsened) and one column-panel project with hostile text in
every user-typed field, reviewed and signed (``hostile_panel``), each read by tests in several folders.
"""

import json
import shutil
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))


class ExecutedProjects:
    """Projects made from a bundled template, run and exported once each, on first use.

    Each has the template's defaults with the numerical check coarsened by ``tests.helpers.make_quick``
    (which changes nothing in a template without those inputs): no test here reads a full-resolution
    result, and the full resolution runs in ``latticecalc demo`` and ``benchmarks/``.
    """

    def __init__(self, factory: pytest.TempPathFactory):
        self._factory = factory
        self._done: dict[str, Path] = {}

    def get(self, template: str) -> Path:
        """The shared executed project of ``template``. Do not modify it: take a :meth:`copy`."""
        if template not in self._done:
            from latticecalc.cli import main as cli
            from tests.helpers import make_quick

            # through the command line, as a user would: new -> (inputs edited) -> run -> export
            folder = self._factory.mktemp(template) / template
            assert cli(["new", str(folder), "--template", template]) == 0
            make_quick(folder)
            assert cli(["run", str(folder)]) == 0
            assert cli(["export", str(folder)]) == 0
            self._done[template] = folder
        return self._done[template]

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

    with pytest.MonkeyPatch.context() as mp:
        mp.setattr(demo, "run_project", quick_run)
        return demo.build_demo(tmp_path_factory.mktemp("demo") / "demo", progress=None)


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

    folder = executed_projects.copy("column-panel", tmp_path_factory.mktemp("hostile") / "panel")

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

    edit(folder / "cover.toml", cover)
    edit(folder / "inputs.toml", inputs)
    first = export_project(folder, run=True, progress=None)
    step = json.loads(first.json.read_text(encoding="utf-8"))["results"][0]["id"]
    add_comment(folder, step=step, author=f"author {HOSTILE}", text=f"comment {HOSTILE}")
    reply_comment(folder, "CQ-1", author=f"replier {HOSTILE}", text=f"reply {HOSTILE}")
    sign_project(folder, role="prepared", name=f"signer {HOSTILE}", comment=f"remark {HOSTILE}")
    report = export_project(folder, pdf=shutil.which("chromium") is not None)
    assert report.html.name == f"{open_project(folder).meta.package_stem}.html"
    return report.html
