"""Shared fixtures: projects that are run and exported once per test session.

Running a project's notebooks is most of the suite's time, so each project the tests need is built,
run and exported once (on first use) and shared. A test that only reads a project takes the shared
folder and must not change it; a test that changes one (signs it, edits its inputs, tampers with a
file) takes a private copy: ``shutil.copytree`` of the executed folder, with ``out/`` and the result
cache, so the copy is as run as the original (the run record hashes contents, not paths) and a rerun
after an edit finds the unchanged expensive results in the cache.
"""

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
