"""Approval waits while a check relies on a value recalled from a source, not confirmed (common practice).

A site-survey project assessed against the VC-A curve (Amick et al. 2005, a value the kit's register
lists as recalled) can be prepared and checked, but not approved; the package names the source under
"Values to confirm before approval".
"""

from __future__ import annotations

import pytest

from latticecalc.errors import ProjectError
from latticecalc.project.signoff import sign_project

pytestmark = pytest.mark.slow


def test_approval_refused_while_a_check_relies_on_a_recalled_value(tmp_path, executed_projects):
    # a copy of the session's site-survey project with its defaults, run and exported (tests/conftest.py)
    folder = executed_projects.copy("site-survey", tmp_path / "survey")
    html = next((folder / "out").glob("*.html")).read_text(encoding="utf-8")
    assert "Values to confirm before approval" in html and "Amick" in html
    sign_project(folder, role="prepared", name="Pat Preparer")
    sign_project(folder, role="checked", name="Chris Checker", comment="failing checks reviewed")
    with pytest.raises(ProjectError, match="recalled from sources not yet confirmed") as e:
        sign_project(folder, role="approved", name="Alex Approver", comment="failing checks reviewed")
    assert "Amick" in str(e.value)
