"""Review rules: who may close a comment, keyed and unkeyed sign-offs under ``verify --keys``, and what
``compare`` lists first.

Common practice (checking procedures of design offices): the checker's comment is closed by the checker
(its author), never by the preparer answering it; a comparison of two issues leads with the verdicts.
Signatures: Ed25519 (RFC 8032, Josefsson & Liusvaara 2017) via the ``cryptography`` library.
"""

from __future__ import annotations

import pytest

from latticecalc.errors import InputError
from latticecalc.project import open_project
from latticecalc.project.export import export_project
from latticecalc.project.signoff import (
    add_comment,
    close_comment,
    generate_keypair,
    reply_comment,
    sign_project,
    verify_package,
)
from latticecalc.project.signoff.revisions import check_changes, shown_result_changes

CHECKER = "Chris Checker"
RESOLVED = "failing checks reviewed: accepted for this test"


def _package(folder):
    return folder / "out" / f"{open_project(folder).meta.package_stem}.html"


def test_only_the_author_or_a_checker_closes_a_comment(project):
    preparer = open_project(project).meta.prepared_by
    c = add_comment(project, step="strut.f1-cc", author=CHECKER, text="Justify the clamped ends")
    reply_comment(project, c.id, author=preparer, text="Pinned bound added")
    with pytest.raises(InputError, match="the preparer cannot settle"):
        close_comment(project, c.id, author=preparer)
    with pytest.raises(InputError, match=r"only the query's author \(Chris Checker\) or a checker"):
        close_comment(project, c.id, author="Somebody Else")
    with pytest.raises(InputError, match="the preparer cannot settle"):   # a look-alike of the preparer's name
        close_comment(project, c.id, author=preparer.upper() + ".")
    assert close_comment(project, c.id, author="chris  checker").status == "closed"


def test_unkeyed_signoffs_are_notes_under_keys_and_failures_when_keys_are_required(project, tmp_path):
    key = generate_keypair(tmp_path / "keys", name="checker")
    sign_project(project, role="prepared", name=open_project(project).meta.prepared_by)        # unkeyed
    sign_project(project, role="checked", name=CHECKER, comment=RESOLVED, key=key.private)   # keyed
    export_project(project)
    report = verify_package(_package(project), keys=tmp_path / "keys")
    assert report.ok, report.text()
    assert any("(prepared," in n and "no keyed signature" in n for n in report.notes)
    strict = verify_package(_package(project), keys=tmp_path / "keys", require_keys=True)
    assert not strict.ok and any("(prepared," in p and "not signed with a key" in p for p in strict.problems)


def _content(checks, results):
    return {"checks": [{"id": i, "verdict": v, "utilisation_text": u} for i, v, u in checks],
            "results": [{"id": i, "text": t, "value": x} for i, t, x in results]}


def test_compare_lists_verdict_and_utilisation_changes_and_hides_unchanged_ones():
    old = _content([("a", "FAILS", "1.09"), ("b", "HOLDS", "4.34"), ("c", "HOLDS", "0.98")],
                   [("r1", "4.34 Hz", 4.3401), ("r2", "12 mm", 12.0)])
    new = _content([("a", "FAILS", "1.12"), ("b", "HOLDS", "4.34"), ("c", "FAILS", "1.02")],
                   [("r1", "4.34 Hz", 4.3404), ("r2", "12.5 mm", 12.5)])
    verdicts, moved = check_changes(old, new)
    assert verdicts == ["c: HOLDS -> FAILS (utilisation 0.98 -> 1.02)"]
    assert moved == ["a: utilisation 1.09 -> 1.12 (still FAILS)"]
    assert shown_result_changes(old, new) == ["r2: 12 mm -> 12.5 mm"]    # r1 moved below its shown digits


def test_an_approval_over_failing_checks_states_its_qualification_on_the_cover(project, tmp_path):
    from latticecalc.project.signoff.verify import block_texts

    sign_project(project, role="prepared", name=open_project(project).meta.prepared_by)
    sign_project(project, role="checked", name=CHECKER, comment=RESOLVED)
    with pytest.raises(InputError, match="must state its qualification") as err:
        sign_project(project, role="approved", name="Alex Approver", comment=RESOLVED)
    assert err.value.input_name == "--qualification"
    sign_project(project, role="approved", name="Alex Approver", comment=RESOLVED,
                 qualification="for prototype fabrication only")
    export_project(project)
    html = _package(project).read_text(encoding="utf-8")
    standing = block_texts(html)["status-standing"]
    assert "checks fail" in standing and not standing.startswith("0 of")
    assert "approved by Alex Approver with the qualification: for prototype fabrication only" in standing
    assert verify_package(_package(project)).ok
    tampered = tmp_path / "tampered.html"
    tampered.write_text(html.replace(standing.split(";")[0], "0 of 9 checks fail", 1), encoding="utf-8")
    report = verify_package(tampered)
    assert any(p.startswith("title block: the standing reads '0 of 9") for p in report.problems), report.text()
