"""Templates are tests too: every bundled template runs with its own defaults and exports a package."""

from __future__ import annotations

import json

import pytest

from latticecalc.project.export import export_project
from latticecalc.project.templates import list_templates, new_project

pytestmark = pytest.mark.slow


@pytest.mark.parametrize("name", [t.name for t in list_templates()])
def test_template_runs_and_exports(tmp_path, name):
    folder = new_project(tmp_path / name, template=name)
    report = export_project(folder, run=True, progress=None)
    data = json.loads(report.json.read_text())
    assert data["project"]["template"] == name
    assert data["results"], "a template that shows no result is not doing its job"
    html = report.html.read_text()
    assert "<math" in html and "licensed professional engineer" in html
