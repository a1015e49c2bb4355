"""Failures found by testers of the review cycle, each reproduced here.

* a resealed package whose checks summary and summary box were flipped to HOLDS passed
  ``verify --keys`` (the keyed sign-offs did not cover what the reader sees);
* executed notebooks edited after the run (FAILS flipped to HOLDS) were exported and signed;
* a checker named like the preparer (look-alike letters, spacing, dots, invisible characters)
  was accepted, and one key signed prepared, checked and approved under three names;
* an emptied or truncated review file let ``sign checked`` through with a comment open.

The rules (checker independent of the preparer, one person per role) are `common practice` for
engineering calculation sign-off. The look-alike letters are from the Unicode confusables data
(Unicode Technical Standard #39), the normal form from UAX #15 (NFKC). No physics is asserted.
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import nbformat
import pytest

from latticecalc.cli import main
from latticecalc.errors import ProjectError
from latticecalc.project import open_project
from latticecalc.project.export import export_project
from latticecalc.project.export.package import embed_json
from latticecalc.project.signoff import add_comment, close_comment, generate_keypair, sign_project, verify_package
from latticecalc.project.signoff.journal import append_line
from latticecalc.project.signoff.keys import load_private_key, record_link, sign_bytes, signed_message
from latticecalc.project.signoff.records import current_fingerprint, signatures_path
from latticecalc.project.signoff.verify import SEAL_PLACEHOLDER, read_embedded, seal_package
from latticecalc.project.state import EXECUTED_DIR, RUN_RECORD, stale_files
from latticecalc.sheet.display import RECORD_MIME

PREPARER = "Dr. Pat Preparer"
CHECKER = "Chris Checker"
APPROVER = "Alex Approver"
RESOLVED = "failing checks reviewed: accepted for this test"
QUALIFIED = "for prototype fabrication only"   # an approval over failing checks states its limit
_DATA = re.compile(r'(<script type="application/json" id="lc-package-data">)(.*?)(</script>)', re.DOTALL)


def package_of(folder: Path) -> Path:
    return folder / "out" / f"{open_project(folder).meta.package_stem}.html"


def reseal(html: str) -> str:
    """Seal an edited package again, as anyone can: the seal is a plain SHA-256."""
    data = read_embedded(html)
    data["seal"] = SEAL_PLACEHOLDER
    m = _DATA.search(html)
    return seal_package(html[:m.start(2)] + embed_json(data) + html[m.end(2):])


def three_keys(tmp_path: Path):
    folder = tmp_path / "keys"
    return folder, {role: generate_keypair(folder, name=role) for role in ("prepared", "checked", "approved")}


def sign_all_three(project: Path, keys: dict) -> None:
    sign_project(project, role="prepared", name=PREPARER, key=keys["prepared"].private)
    sign_project(project, role="checked", name=CHECKER, comment=RESOLVED, key=keys["checked"].private)
    sign_project(project, role="approved", name=APPROVER, comment=RESOLVED, qualification=QUALIFIED,
                 key=keys["approved"].private)


# --- 3. what the reader sees is what was signed -------------------------------------------------

def test_resealed_package_with_flipped_verdicts_fails_verify_by_name(project, tmp_path):
    folder, keys = three_keys(tmp_path)
    sign_all_three(project, keys)
    export_project(project)
    pkg = package_of(project)
    assert verify_package(pkg, keys=folder).ok
    html = pkg.read_text(encoding="utf-8")
    assert 'lc-verdict-notok"><strong>FAILS</strong>' in html  # the quick project has failing checks

    head, rest = html.split('<section id="checks">', 1)
    table, tail = rest.split("</section>", 1)
    table = table.replace('<td class="lc-verdict-notok"><strong>FAILS</strong>',
                          '<td class="lc-verdict-ok"><strong>HOLDS</strong>')
    flipped = head + '<section id="checks">' + table + "</section>" + tail
    start = flipped.index('<div class="lc-summary">')
    end = flipped.index("</div>", flipped.index("</table>", start)) + len("</div>")
    box = flipped[start:end]
    box = re.sub(r"\d+ hold, \d+ fail", "13 hold, 0 fail", box).replace("(FAILS)", "(HOLDS)")
    tampered = tmp_path / "tampered.html"
    tampered.write_text(reseal(flipped[:start] + box + flipped[end:]), encoding="utf-8")

    report = verify_package(tampered, keys=folder)
    assert not report.ok
    text = report.text()
    failing = [r["id"] for r in read_embedded(html)["fingerprint_content"]["results"] if r.get("ok") is False]
    for check in failing:
        assert any(p.startswith(f"checks summary: {check}:") for p in report.problems), text
    assert any(p.startswith("summary box: 'Checks':") for p in report.problems), text
    assert any(p.startswith("summary box: 'Governing check':") for p in report.problems), text
    assert main(["verify", str(tampered), "--keys", str(folder)]) == 1


def test_a_keyed_signoff_signs_the_displayed_document_and_the_status_it_gives(project, tmp_path):
    folder, keys = three_keys(tmp_path)
    sign_all_three(project, keys)
    export_project(project)
    data = read_embedded(package_of(project).read_text(encoding="utf-8"))
    statuses = [(r["role"], r["status"]) for r in data["signoffs"]]
    assert statuses == [("prepared", "preliminary"), ("checked", "checked"), ("approved", "approved")]
    from latticecalc.project.signoff.fingerprint import display_digest

    assert {r["document"] for r in data["signoffs"]} == {display_digest(data["fingerprint_content"])}
    assert {"document", "status"} <= set(json.loads(signed_message(data["signoffs"][0])))


def _flip_coverage_verdicts(project: Path) -> list[str]:
    """Turn the failing checks of the executed coverage notebook into holding ones, as a hand edit would."""
    path = project / "out" / EXECUTED_DIR / "70_coverage.ipynb"
    nb = nbformat.read(str(path), as_version=4)
    flipped = []

    def flip(rec: dict) -> None:
        if rec.get("kind") == "result":
            for step in rec.get("steps", []):
                flip(step)
        elif rec.get("kind") == "check" and rec.get("ok") is False:
            rec["ok"], rec["verdict"] = True, "HOLDS"
            flipped.append(rec["id"])

    for cell in nb.cells:
        for out in cell.get("outputs", []):
            if RECORD_MIME in out.get("data", {}):
                flip(out["data"][RECORD_MIME])
    nbformat.write(nb, str(path))
    return flipped


def test_edited_executed_outputs_make_the_project_stale(project):
    """The run record hashes the executed notebooks: an edited output needs a rerun."""
    from latticecalc.project.state import executed_outputs

    proj = open_project(project)
    record_path = proj.out / RUN_RECORD
    record = json.loads(record_path.read_text(encoding="utf-8"))
    record.setdefault("outputs", executed_outputs(proj))  # what the runner records at the end of a run
    record_path.write_text(json.dumps(record), encoding="utf-8")
    assert stale_files(proj) == []
    assert _flip_coverage_verdicts(project)
    assert stale_files(proj) == ["out/executed/70_coverage.ipynb"]
    before = package_of(project).read_bytes()
    with pytest.raises(ProjectError, match=r"changed since the last run.*out/executed/70_coverage\.ipynb"):
        export_project(project)
    assert package_of(project).read_bytes() == before
    with pytest.raises(ProjectError, match=r"out/executed/70_coverage\.ipynb"):
        sign_project(project, role="checked", name=CHECKER, comment=RESOLVED)


def test_the_run_itself_records_the_executed_outputs(project):
    record = json.loads((project / "out" / RUN_RECORD).read_text(encoding="utf-8"))
    assert "outputs" in record
    _flip_coverage_verdicts(project)
    assert "out/executed/70_coverage.ipynb" in stale_files(open_project(project))


def test_flipped_verdicts_that_do_not_follow_from_demand_and_limit_are_refused(project):
    """Even with the run record's hashes rewritten to match, a verdict must follow from its demand and limit."""
    from latticecalc.project.state import executed_outputs

    flipped = _flip_coverage_verdicts(project)
    proj = open_project(project)
    record_path = proj.out / RUN_RECORD
    record = json.loads(record_path.read_text(encoding="utf-8"))
    record["outputs"] = executed_outputs(proj)  # the forger recomputes the plain hashes too
    record_path.write_text(json.dumps(record), encoding="utf-8")
    assert stale_files(proj) == []
    with pytest.raises(ProjectError, match="does not follow from its demand and limit"):
        sign_project(project, role="checked", name=CHECKER, comment=RESOLVED)
    export_project(project)
    report = verify_package(package_of(project))
    for check in flipped:
        assert any(p.startswith(f"check {check}:") and "does not follow" in p for p in report.problems), report.text()


def test_a_verdict_is_judged_from_its_demand_and_limit_as_the_sheet_judges_it():
    from latticecalc.project.signoff.display import check_problems

    def check(**kw):
        base = {"id": "c", "sense": "max", "demand": 2.0, "limit": 4.0, "utilisation": 0.5, "ok": True,
                "verdict": "HOLDS"}
        return {"checks": [base | kw]}

    assert check_problems(check()) == []
    assert check_problems(check(demand=-0.02, limit=10.0, sense="min", utilisation="inf", ok=False,
                                verdict="FAILS")) == []  # a loss that is negative never reaches the limit
    assert check_problems(check(demand="nan", utilisation="nan", ok=False, verdict="FAILS")) == []
    assert check_problems(check(demand=8.0, utilisation=2.0))  # HOLDS stated, utilisation 2
    assert check_problems(check(demand=8.0))  # utilisation not the demand's
    assert check_problems(check(verdict="FAILS"))
    assert check_problems(check(demand=4.0, utilisation=1.0, ok=True)) == []  # at the limit: holds
    # a package made before today's verdict words is judged in its own words
    assert check_problems(check(verdict="OK")) == []
    assert check_problems(check(verdict="NOT OK"))
    assert check_problems(check(verdict="HOLDS", utilisation=2.0, demand=8.0))


# --- 6. role separation ------------------------------------------------------------------------

LOOK_ALIKES = {
    "double space": "Dr. Pat  Preparer",
    "trailing dot": "Dr. Pat Preparer.",
    "Greek capital rho for P": "Dr. \u03a1at Preparer",
    "full-width D": "\uff24r. Pat Preparer",
    "zero-width space": "Dr. Pat Pre\u200bparer",
    "missing dot": "Dr Pat Preparer",
}


def test_look_alike_names_are_the_same_person():
    from latticecalc.project.signoff.identity import same_person

    for why, name in LOOK_ALIKES.items():
        assert same_person(name, PREPARER), why
    assert same_person("\u0410lex \u0410pprover", APPROVER)  # Cyrillic A
    assert same_person("chris\u00a0CHECKER", CHECKER)  # no-break space, case
    assert not same_person(CHECKER, PREPARER)
    assert not same_person("Pat Preparer", "Pam Preparer")


def test_a_checker_named_like_the_preparer_is_refused(project):
    sign_project(project, role="prepared", name=PREPARER)
    for why, name in LOOK_ALIKES.items():
        with pytest.raises(ProjectError, match="the checker must not be the preparer"):
            sign_project(project, role="checked", name=name, comment=RESOLVED)
            pytest.fail(f"accepted a checker named like the preparer ({why})")
    sign_project(project, role="checked", name=CHECKER, comment=RESOLVED)


def test_one_key_cannot_sign_two_roles_of_a_revision(project, tmp_path):
    key = generate_keypair(tmp_path / "k", name="one")
    sign_project(project, role="prepared", name=PREPARER, key=key.private)
    with pytest.raises(ProjectError, match="signed 'prepared' of revision A already"):
        sign_project(project, role="checked", name=CHECKER, comment=RESOLVED, key=key.private)
    other = generate_keypair(tmp_path / "k", name="two")
    sign_project(project, role="checked", name=CHECKER, comment=RESOLVED, key=other.private)
    with pytest.raises(ProjectError, match="signed 'checked' of revision A already"):
        sign_project(project, role="approved", name=APPROVER, comment=RESOLVED, qualification=QUALIFIED,
                     key=other.private)


def _forge(project: Path, signers: list[tuple[str, str, Path]]) -> None:
    """Append sign-off records by hand (chained and signed correctly), bypassing sign_project's rules."""
    fp, content = current_fingerprint(open_project(project))
    meta = open_project(project).meta
    for role, name, key_file in signers:
        private = load_private_key(key_file)
        record = {"role": role, "name": name, "time": "2026-12-01T00:00:00+00:00", "fingerprint": fp,
                  "comment": RESOLVED, "calc_id": meta.calc_id, "revision": meta.revision, "content": content}

        def complete(existing, rec, private=private):
            rec = rec | {"seq": len(existing) + 1, "previous": record_link(existing[-1]) if existing else ""}
            return rec | {"signature": sign_bytes(private, signed_message(rec))}

        append_line(signatures_path(open_project(project)), record, prepare=complete)


def test_verify_refuses_one_key_for_three_roles_under_three_names(project, tmp_path):
    key = generate_keypair(tmp_path / "keys", name="one")
    _forge(project, [("prepared", PREPARER, key.private), ("checked", CHECKER, key.private),
                     ("approved", APPROVER, key.private)])
    export_project(project)
    html = package_of(project).read_text(encoding="utf-8")
    assert read_embedded(html)["status"] == "preliminary"
    report = verify_package(package_of(project), keys=tmp_path / "keys")
    assert any("sign-off 2 (checked, Chris Checker): key " in p and "signed 'prepared' of revision A" in p
               for p in report.problems), report.text()
    assert any(p.startswith("sign-off 3 (approved, Alex Approver): key ") for p in report.problems), report.text()


def test_verify_refuses_a_forged_checker_named_like_the_preparer(project, tmp_path):
    a = generate_keypair(tmp_path / "keys", name="a")
    b = generate_keypair(tmp_path / "keys", name="b")
    _forge(project, [("prepared", PREPARER, a.private), ("checked", LOOK_ALIKES["Greek capital rho for P"],
                                                         b.private)])
    export_project(project)
    report = verify_package(package_of(project), keys=tmp_path / "keys")
    assert any("sign-off 2 (checked" in p and "the checker must not be the preparer" in p
               for p in report.problems), report.text()


def test_trusted_keys_file_binds_each_key_to_a_person_and_roles(project, tmp_path, capsys):
    from latticecalc.project.signoff.trust import TRUST_FILE, trust_key

    folder, keys = three_keys(tmp_path)
    trust_key(project, public=keys["prepared"].public, person=PREPARER, roles=["prepared"])
    trust_key(project, public=keys["checked"].public, person=CHECKER, roles=["checked"])
    assert main(["key", "trust", str(project), "--public", str(keys["approved"].public), "--person", APPROVER,
                 "--role", "approved"]) == 0
    assert (project / "signoff" / TRUST_FILE).is_file()
    stranger = generate_keypair(tmp_path / "other", name="stranger")
    with pytest.raises(ProjectError, match="not among the trusted keys"):
        sign_project(project, role="prepared", name=PREPARER, key=stranger.private)
    with pytest.raises(ProjectError, match="belongs to Dr. Pat Preparer"):
        sign_project(project, role="prepared", name="Someone Else", key=keys["prepared"].private)
    with pytest.raises(ProjectError, match="may sign only: checked"):
        sign_project(project, role="prepared", name=CHECKER, key=keys["checked"].private)
    with pytest.raises(ProjectError, match="needs a key"):
        sign_project(project, role="prepared", name=PREPARER)
    sign_all_three(project, keys)
    export_project(project)
    pkg = package_of(project)
    assert verify_package(pkg, keys=project / "signoff" / TRUST_FILE).ok
    assert verify_package(pkg, keys=project).ok  # a project folder: its signoff/trusted-keys.toml
    # the same package against another project's trust list that binds the checker's key to someone else
    other = tmp_path / "elsewhere"
    trust_key(other, public=keys["checked"].public, person="Mallory Other", roles=["checked"], create=True)
    report = verify_package(pkg, keys=other)
    assert any("sign-off 2 (checked, Chris Checker)" in p and "Mallory Other" in p for p in report.problems), \
        report.text()
    assert any("sign-off 1 (prepared" in p and "not among the trusted keys" in p for p in report.problems), \
        report.text()


# --- 10. review events are chained -------------------------------------------------------------

def _step(project: Path) -> str:
    data = json.loads(package_of(project).with_suffix(".json").read_text(encoding="utf-8"))
    return data["results"][0]["id"]


def test_an_emptied_review_file_with_an_open_comment_is_detected(project):
    add_comment(project, step=_step(project), author=CHECKER, text="Where does the end fixity come from?")
    (project / "signoff" / "review.jsonl").write_text("", encoding="utf-8")
    with pytest.raises(ProjectError, match="review"):
        sign_project(project, role="checked", name=CHECKER, comment=RESOLVED)
    with pytest.raises(ProjectError, match="review"):
        sign_project(project, role="prepared", name=PREPARER)
    (project / "signoff" / "review.jsonl").unlink()
    with pytest.raises(ProjectError, match="review"):
        sign_project(project, role="checked", name=CHECKER, comment=RESOLVED)


def test_a_truncated_review_file_is_detected(project):
    step = _step(project)
    add_comment(project, step=step, author=CHECKER, text="First question")
    close_comment(project, "CQ-1", author=CHECKER)
    add_comment(project, step=step, author=CHECKER, text="Second question, still open")
    path = project / "signoff" / "review.jsonl"
    lines = path.read_text(encoding="utf-8").splitlines(keepends=True)
    path.write_text("".join(lines[:-1]), encoding="utf-8")  # the open comment removed from the end
    with pytest.raises(ProjectError, match=r"review\.jsonl.*truncated or edited"):
        sign_project(project, role="checked", name=CHECKER, comment=RESOLVED)
    with pytest.raises(ProjectError, match="truncated or edited"):
        add_comment(project, step=step, author=CHECKER, text="x")
    export_project(project)
    html = package_of(project).read_text(encoding="utf-8")
    comments = html.split('id="comments"', 1)[1].split("</section>", 1)[0]
    assert "truncated or edited" in comments


def test_an_edited_review_event_breaks_the_chain(project):
    step = _step(project)
    add_comment(project, step=step, author=CHECKER, text="Is the bracket stiffness measured?")
    close_comment(project, "CQ-1", author=CHECKER, text="Yes")
    path = project / "signoff" / "review.jsonl"
    lines = path.read_text(encoding="utf-8").splitlines(keepends=True)
    lines[0] = lines[0].replace("Is the bracket stiffness measured?", "Fine.")
    path.write_text("".join(lines), encoding="utf-8")
    with pytest.raises(ProjectError, match="chain of review events is broken"):
        sign_project(project, role="checked", name=CHECKER, comment=RESOLVED)


def test_a_review_file_shorter_than_a_signoff_saw_is_detected(project):
    """The sign-off record holds the review head it saw: removing the head file does not hide a truncation."""
    step = _step(project)
    add_comment(project, step=step, author=CHECKER, text="One")
    close_comment(project, "CQ-1", author=CHECKER)
    sign_project(project, role="checked", name=CHECKER, comment=RESOLVED)
    (project / "signoff" / "review.jsonl").unlink()
    heads = project / "signoff" / "heads.json"
    data = json.loads(heads.read_text(encoding="utf-8"))
    data.pop("review.jsonl")
    heads.write_text(json.dumps(data), encoding="utf-8")
    with pytest.raises(ProjectError, match="sign-off 1 saw 2 review event"):
        sign_project(project, role="approved", name=APPROVER, comment=RESOLVED, qualification=QUALIFIED)
