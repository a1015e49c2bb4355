"""An upstream calc package exported again unchanged does not make its importer stale; a change does.

Sources: the kit's lineage rule (DEVELOPERS.md, "Files a project reads"): an import is identified by what
it says (fingerprint, status, sign-offs), which is what the importing sheet reads and shows; `common
practice` for calculation packages: reissuing an unchanged upstream document does not reopen the
downstream calculation, a new revision or a new signature does.
"""

from __future__ import annotations

import json
import time
from pathlib import Path

from latticecalc.project.export import export_project
from latticecalc.project.inputs import set_values
from latticecalc.project.lineage import data_files, export_identity, file_sha256
from latticecalc.project.project import open_project
from latticecalc.project.signoff import sign_project
from latticecalc.project.state import current_state
from latticecalc.project.templates import new_project


def _json_of(folder: Path) -> Path:
    return folder / "out" / f"{open_project(folder).meta.package_stem}.json"


def test_an_unchanged_reexport_keeps_the_importer_current_and_a_new_signoff_does_not(executed_projects, tmp_path):
    survey = executed_projects.copy("site-survey", tmp_path / "survey")
    panel = new_project(tmp_path / "panel", template="column-panel")
    name = "../survey/out/" + _json_of(survey).name
    set_values(panel / "inputs.toml", open_project(panel).template, {"coverage.survey_results": name})
    key = f"{name} (coverage.survey_results)"

    before_bytes, before = file_sha256(_json_of(survey)), current_state(open_project(panel))
    row = next(f for f in data_files(open_project(panel)) if f.input_name == "coverage.survey_results")
    assert row.basis == "export" and row.sha256 == export_identity(_json_of(survey))
    assert row.package is not None and row.package.status == "preliminary"

    time.sleep(1.1)                                                 # the generation time is kept to the second
    export_project(survey)                                          # exported again, nothing changed
    assert file_sha256(_json_of(survey)) != before_bytes            # a new file (its generation time) ...
    assert current_state(open_project(panel))[key] == before[key]  # ... saying the same: still current

    sign_project(survey, role="prepared", name=open_project(survey).meta.prepared_by)
    export_project(survey)                                          # a new sign-off: the importer shows it
    after = current_state(open_project(panel))
    assert [k for k in after if after[k] != before[k]] == [key]


def test_a_json_that_is_not_a_sealed_export_is_hashed_by_its_bytes(tmp_path):
    plain = tmp_path / "plain.json"
    plain.write_text(json.dumps({"results": []}), encoding="utf-8")
    assert export_identity(plain) is None
    broken = tmp_path / "broken.json"
    broken.write_text("{not json", encoding="utf-8")
    assert export_identity(broken) is None                        # never raises: the stale check stays quiet
