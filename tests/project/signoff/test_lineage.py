"""Data lineage: the files a project reads are hashed into its stale check and fingerprint, and the calc
package exports it imports are verified before any value of theirs is used.

The hash is SHA-256 (FIPS 180-4, via Python's ``hashlib``); signatures Ed25519 (RFC 8032, Josefsson &
Liusvaara 2017, via the ``cryptography`` library). That a calculation is no more final than the data it
rests on (an import must be checked before the importing calculation is) is common practice.
"""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import pytest

from latticecalc.errors import LatticeCalcError, ProjectError, RecordError
from latticecalc.project import open_project
from latticecalc.project.export import export_project
from latticecalc.project.inputs import set_values
from latticecalc.project.lineage import check_export, seal_digest, upstream_problems
from latticecalc.project.signoff import sign_project, verify_package
from latticecalc.project.signoff.extras import signoff_view
from latticecalc.project.signoff.fingerprint import fingerprint_of
from latticecalc.project.signoff.records import current_package
from latticecalc.project.templates import new_project

pytestmark = pytest.mark.slow

RECORD = "records/site-demo.csv"


@pytest.fixture
def survey(executed_projects, tmp_path) -> Path:
    """A private copy of the session's site-survey project (its demo record generated from the seed, run and
    exported once: tests/conftest.py)."""
    return executed_projects.copy("site-survey", tmp_path / "survey")


def _json_of(folder: Path) -> Path:
    return folder / "out" / f"{open_project(folder).meta.package_stem}.json"


def _edit_record(folder: Path) -> None:
    """Double one channel's value on one line of the record (a plausible hand edit)."""
    path = folder / RECORD
    lines = path.read_text(encoding="utf-8").splitlines()
    cells = lines[5].split(",")
    cells[-1] = repr(2 * float(cells[-1]) + 1e-3)
    lines[5] = ",".join(cells)
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")


def test_the_run_records_the_generated_record_and_the_package_names_its_hash(survey):
    pkg = json.loads(_json_of(survey).read_text(encoding="utf-8"))
    row = next(r for r in pkg["inputs"] if r["id"] == "record.file")
    assert "SHA-256" in row["source"]
    files = pkg["signoff"]["fingerprint_content"]["files"]
    assert [f["path"] for f in files] == [RECORD] and len(files[0]["sha256"]) == 64


def test_a_record_edited_after_signing_stops_export_and_voids_the_signoff_naming_the_file(survey):
    sign_project(survey, role="prepared", name="Pat Preparer")
    export_project(survey)
    _edit_record(survey)
    with pytest.raises(ProjectError, match=r"records/site-demo\.csv \(record\.file\)"):
        export_project(survey)
    with pytest.raises(ProjectError, match=r"records/site-demo\.csv"):
        sign_project(survey, role="checked", name="Chris Checker", comment="reviewed")
    project = open_project(survey)
    data, doc = current_package(project)
    _fp, _content, states, status = signoff_view(project, data, doc)
    assert status == "preliminary" and not states[0].valid
    assert "data files changed: records/site-demo.csv (record.file) (contents changed" in states[0].reason


def test_the_exported_json_verifies_and_an_edited_result_does_not(survey, tmp_path):
    path = _json_of(survey)
    report = verify_package(path)
    assert report.ok, report.text()
    assert any("status preliminary" in n for n in report.notes)
    data = json.loads(path.read_text(encoding="utf-8"))
    row = next(r for r in data["results"] if isinstance(r.get("value"), float))
    row["value"] = row["value"] * 1.5
    edited = tmp_path / "edited.json"
    edited.write_text(json.dumps(data), encoding="utf-8")
    report = verify_package(edited)
    assert not report.ok and "seal" in report.problems[0]
    data["seal"]["sha256"] = seal_digest(data)                 # resealed by hand: the fingerprint still holds
    edited.write_text(json.dumps(data), encoding="utf-8")
    report = verify_package(edited)
    assert not report.ok and row["id"] in report.problems[0], report.text()


def test_a_forged_status_in_the_export_is_refused(survey, tmp_path):
    data = json.loads(_json_of(survey).read_text(encoding="utf-8"))
    data["signoff"]["status"] = "approved"
    data["seal"]["sha256"] = seal_digest(data)
    forged = tmp_path / "forged.json"
    forged.write_text(json.dumps(data), encoding="utf-8")
    with pytest.raises(RecordError, match="states the status 'approved' but its sign-offs give 'preliminary'"):
        check_export(forged, input_name="coverage.survey_results")


def test_an_export_without_a_seal_is_refused_by_name(tmp_path):
    old = tmp_path / "old.json"
    old.write_text(json.dumps({"project": {"calc_id": "X"}, "results": []}), encoding="utf-8")
    with pytest.raises(RecordError, match="no seal") as err:
        check_export(old, input_name="lattice.calibration")
    assert err.value.input_name == "lattice.calibration"


def test_signed_upstream_gives_its_status_and_preliminary_upstream_blocks_checking(survey):
    export_project(survey)
    found = check_export(_json_of(survey), input_name="coverage.survey_results")
    assert found.status == "preliminary"
    sign_project(survey, role="prepared", name="Pat Preparer")
    sign_project(survey, role="checked", name="Chris Checker", comment="criterion exceedance reviewed")
    export_project(survey)
    found = check_export(_json_of(survey), input_name="coverage.survey_results")
    assert found.status == "checked" and found.fingerprint == fingerprint_of(
        json.loads(_json_of(survey).read_text(encoding="utf-8"))["signoff"]["fingerprint_content"])
    from latticecalc.project.lineage import DataFile

    row = DataFile(input_name="coverage.survey_results", text="s.json", path=Path("s.json"), sha256="0" * 64,
                   size=1, package=found)
    assert upstream_problems([row.to_dict()], "checked") == []
    assert "cannot be marked approved before it is approved" in upstream_problems([row.to_dict()], "approved")[0]


@pytest.fixture
def ran_prototype(executed_projects) -> Path:
    """The session's prototype-test project, run and exported once (tests/conftest.py). Read only: copy it."""
    return executed_projects.get("prototype-test")


def test_a_calibration_export_edited_to_1e300_mpa_is_refused_before_use(ran_prototype, tmp_path):
    from latticecalc.project.column_panel import design_from_inputs

    panel = new_project(tmp_path / "panel", template="column-panel")
    coupon = json.loads(_json_of(ran_prototype).read_text(encoding="utf-8"))
    (panel / "coupon.json").write_text(json.dumps(coupon), encoding="utf-8")
    set_values(panel / "inputs.toml", open_project(panel).template, {"lattice.calibration": "coupon.json"})
    design = design_from_inputs(open_project(panel).inputs, folder=panel)    # the genuine export is taken
    assert design.calibration is not None
    row = next(r for r in coupon["results"] if r["id"] == "calibration.modulus")
    row["value"] = 1e300
    (panel / "coupon.json").write_text(json.dumps(coupon), encoding="utf-8")
    with pytest.raises(LatticeCalcError, match="seal") as err:
        design_from_inputs(open_project(panel).inputs, folder=panel)
    assert err.value.input_name == "lattice.calibration" and err.value.file == "coupon.json"


def test_a_changed_upstream_export_makes_the_importing_project_stale(ran_prototype, tmp_path):
    from latticecalc.project.state import stale_files

    coupon_dir = tmp_path / "coupon"
    shutil.copytree(ran_prototype, coupon_dir)
    panel = new_project(tmp_path / "panel", template="column-panel")
    set_values(panel / "inputs.toml", open_project(panel).template,
               {"lattice.calibration": "../coupon/out/" + _json_of(coupon_dir).name})
    # the state a run would record, then the upstream exported again after a new sign-off
    from latticecalc.project.state import current_state

    before = current_state(open_project(panel))
    sign_project(coupon_dir, role="prepared", name="Pat Preparer")
    export_project(coupon_dir)
    after = current_state(open_project(panel))
    changed = [k for k in after if after[k] != before[k]]
    assert changed == [f"../coupon/out/{_json_of(coupon_dir).name} (lattice.calibration)"]
    assert stale_files(open_project(panel)) == ["(never run)"]   # and a never-run project says so


def test_an_edited_input_in_the_export_is_refused_even_resealed(survey, tmp_path):
    data = json.loads(_json_of(survey).read_text(encoding="utf-8"))
    row = next(r for r in data["inputs"] if r["id"] == "criterion.id")   # what the survey was judged against
    row["text"] = "VC-A" if row["text"] != "VC-A" else "VC-E"
    data["seal"]["sha256"] = seal_digest(data)
    edited = tmp_path / "edited.json"
    edited.write_text(json.dumps(data), encoding="utf-8")
    with pytest.raises(RecordError, match="the input criterion.id is not the fingerprinted one"):
        check_export(edited, input_name="coverage.survey_results")
