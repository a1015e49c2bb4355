"""A column-panel project, made and run once per session for the sign-off tests; tests work on copies."""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest
from tests.helpers import make_quick

from latticecalc.project.export import export_project
from latticecalc.project.runner import run_project
from latticecalc.project.templates import new_project


@pytest.fixture(scope="session")
def ran_project(tmp_path_factory) -> Path:
    """A column-panel project that has been run and exported once (do not modify: copy it)."""
    folder = make_quick(new_project(tmp_path_factory.mktemp("proj") / "panel", template="column-panel"))
    run_project(folder, progress=None)
    export_project(folder)
    return folder


@pytest.fixture
def project(ran_project, tmp_path) -> Path:
    """A private copy of the run project (the run record stays valid: it hashes contents)."""
    dest = tmp_path / "panel"
    shutil.copytree(ran_project, dest)
    return dest
