"""Templates are tests too: every bundled template runs with its own defaults and exports a package.

Each template's project is run and exported once per session (``executed_projects`` in
tests/conftest.py) and other tests take copies of the same runs. The column-panel's numerical check
is coarsened there (``make_quick``: fewer wave vectors, frequencies and Monte Carlo samples): this
test asks whether the template runs and exports, not what its full-resolution numbers are.
"""

from __future__ import annotations

import json

import pytest
from tests.helpers import package_paths

from latticecalc.project import open_project
from latticecalc.project.state import stale_files
from latticecalc.project.templates import list_templates

pytestmark = pytest.mark.slow


@pytest.mark.parametrize("name", [t.name for t in list_templates()])
def test_template_runs_and_exports(executed_projects, name):
    folder = executed_projects.get(name)
    assert stale_files(open_project(folder)) == []      # its defaults were run, unchanged since
    html_path, json_path = package_paths(folder)
    data = json.loads(json_path.read_text())
    assert data["project"]["template"] == name
    assert data["results"], "a template that shows no result is not doing its job"
    html = html_path.read_text()
    assert "<math" in html and "licensed professional engineer" in html
