"""The review cycle: comments, sign-off rules, VOID after a change, revisions, atomic export.

The rules tested (checker independent of the preparer, no 'checked' with open comments,
approval after a check) are `common practice` for engineering calculation sign-off; the issue
that asks for them is the project's own. Nothing here asserts a physical value.
"""

from __future__ import annotations

import errno
import json
import os
import re
from html import unescape
from pathlib import Path

import pytest
import tomlkit

from latticecalc.cli import main
from latticecalc.errors import InputError, LatticeCalcError, ProjectError
from latticecalc.project import atomic, open_project
from latticecalc.project.export import export_project
from latticecalc.project.runner import run_project
from latticecalc.project.signoff import (
    add_comment,
    close_comment,
    compare_revisions,
    list_comments,
    reply_comment,
    sign_project,
    verify_package,
)
from latticecalc.project.signoff.records import load_records
from latticecalc.project.signoff.verify import read_embedded

PREPARER = "Pat Preparer"
CHECKER = "Chris Checker"
APPROVER = "Alex Approver"
RESOLVED = "failing checks reviewed: accepted for this test"
QUALIFIED = "for prototype fabrication only"   # an approval over failing checks states its limit
#: The input changed after signing: it changes the strut sizing's results and no expensive section's, so each
#: rerun below finds the Bloch, panel and receiver results in the copied result cache (the strut diameter,
#: used before, recomputed them all: most of a minute per rerun). Any input would do for the cycle tested here.
INPUT = "strut.target_frequency"


def package_of(folder: Path) -> Path:
    return folder / "out" / f"{open_project(folder).meta.package_stem}.html"


def set_input(folder: Path, dotted: str, value: str) -> None:
    path = folder / "inputs.toml"
    doc = tomlkit.parse(path.read_text(encoding="utf-8"))
    table, key = dotted.split(".")
    doc[table][key] = value
    path.write_text(tomlkit.dumps(doc), encoding="utf-8")


def set_meta(folder: Path, table: str, key: str, value: str) -> None:
    path = folder / "cover.toml"
    doc = tomlkit.parse(path.read_text(encoding="utf-8"))
    doc[table][key] = value
    path.write_text(tomlkit.dumps(doc), encoding="utf-8")


def a_step(folder: Path) -> str:
    data = json.loads(package_of(folder).with_suffix(".json").read_text(encoding="utf-8"))
    return data["results"][0]["id"]


def test_review_comments_block_checked_until_closed_and_show_beside_their_step(project):
    step = a_step(project)
    with pytest.raises(InputError, match="no such step"):
        add_comment(project, step="no.such-step", author=CHECKER, text="?")
    c = add_comment(project, step=step, author=CHECKER, text="Where does the end fixity come from?")
    assert c.id == "CQ-1" and c.status == "open"
    with pytest.raises(ProjectError, match="checker queries are open: CQ-1"):
        sign_project(project, role="checked", name=CHECKER, comment=RESOLVED)
    export_project(project)
    html = package_of(project).read_text(encoding="utf-8")
    title = html.split('id="title-block"', 1)[1].split("</table>", 1)[0]
    assert "<th>Open comments</th><td>1</td>" in title
    after_step = html.split(f'id="step-{step}"', 1)[1]
    assert after_step.index("lc-comment-open") < after_step.index('class="lc-step ')  # beside its own step
    reply_comment(project, "CQ-1", author=PREPARER, text="Node detail N3, see drawing")
    close_comment(project, "CQ-1", author=CHECKER, text="Agreed")
    with pytest.raises(InputError, match="closed already"):
        close_comment(project, "CQ-1", author=CHECKER)
    [c] = list_comments(project)
    assert c.status == "closed" and [r["author"] for r in c.replies] == [PREPARER, CHECKER]
    assert list_comments(project, include_closed=False) == []
    sign_project(project, role="checked", name=CHECKER, comment=RESOLVED)
    export_project(project)
    html = package_of(project).read_text(encoding="utf-8")
    assert "<th>Open comments</th><td>0</td>" in html
    assert read_embedded(html)["status"] == "checked"


def test_status_follows_preliminary_checked_approved(project):
    pkg = package_of(project)
    assert read_embedded(pkg.read_text(encoding="utf-8"))["status"] == "preliminary"
    with pytest.raises(ProjectError, match="before a current 'checked'"):
        sign_project(project, role="approved", name=APPROVER, comment=RESOLVED, qualification=QUALIFIED)
    sign_project(project, role="prepared", name=PREPARER)
    with pytest.raises(ProjectError, match="must not be the preparer"):
        sign_project(project, role="checked", name=PREPARER, comment=RESOLVED)
    failing = [r["id"] for r in json.loads(pkg.with_suffix(".json").read_text())["results"] if r.get("ok") is False]
    if failing:  # a failing check needs the checker's word on it
        with pytest.raises(InputError, match="checks fail"):
            sign_project(project, role="checked", name=CHECKER)
    sign_project(project, role="checked", name=CHECKER, comment=RESOLVED)
    sign_project(project, role="approved", name=APPROVER, comment=RESOLVED, qualification=QUALIFIED)
    export_project(project)
    html = pkg.read_text(encoding="utf-8")
    assert read_embedded(html)["status"] == "approved"
    assert 'lc-status-approved">approved<' in html
    assert verify_package(pkg).ok


def test_changing_an_input_after_signing_voids_the_signoff_and_names_the_input(project, capsys):
    """Also the revision cycle: rev A signed, rev B with a new input, A and B compared."""
    sign_project(project, role="checked", name=CHECKER, comment=RESOLVED)
    export_project(project)
    set_input(project, INPUT, "42 Hz")
    with pytest.raises(ProjectError, match="inputs.toml"):  # stale: refuses to sign
        sign_project(project, role="approved", name=APPROVER, comment=RESOLVED, qualification=QUALIFIED)
    with pytest.raises(ProjectError, match="changed since the last run"):
        export_project(project)
    run_project(project, progress=None)
    export_project(project)
    html = package_of(project).read_text(encoding="utf-8")
    title = unescape(html.split('id="title-block"', 1)[1].split("</table>", 1)[0])
    assert "VOID" in title
    assert f"inputs changed: {INPUT} (40 Hz -> 42 Hz)" in title       # in the unit the input was typed in
    assert "results changed:" in title
    assert read_embedded(html)["status"] == "preliminary"
    assert verify_package(package_of(project)).ok  # the package is honest about the void sign-off

    # a further change issued as revision B: both revisions kept, compared, and in the history
    # (revision A's record was refreshed by the export above: it is not approved)
    set_meta(project, "calc", "revision", "B")
    set_meta(project, "calc", "revision_note", "Target strut frequency raised to 45 Hz after the check")
    set_input(project, INPUT, "45 Hz")
    run_project(project, progress=None)
    export_project(project)
    # revision A's sign-offs are summarised as A's, not listed as void rows of B (common practice)
    signoffs = package_of(project).read_text(encoding="utf-8").split('id="signoffs"', 1)[1].split("</section>")[0]
    assert "<li>Revision A: checked by" in signoffs and "VOID" not in signoffs
    revs = sorted(p.name for p in (project / "out" / "revisions").glob("*.json"))
    assert revs == ["A.json", "B.json"]
    comp = compare_revisions(project, a="A", b="B")
    assert any(s.startswith(INPUT) for s in comp.changes.inputs)
    assert comp.changes.results and "revision (A -> B)" in comp.changes.project
    assert main(["changes", str(project), "--from", "A", "--to", "B"]) == 0
    out = capsys.readouterr().out
    assert f"Inputs:\n  {INPUT} (42 Hz -> 45 Hz)" in out
    assert "Results (as shown):" in out
    assert out.index("Revision A to revision B:") < out.index("Inputs:")
    history = package_of(project).read_text(encoding="utf-8").split('id="revisions"', 1)[1].split("</section>")[0]
    assert re.search(r"<td>A</td>.*<td>preliminary</td>.*<td>B</td>", history, re.DOTALL)
    assert INPUT in history and "Target strut frequency raised to 45 Hz after the check" in history
    with pytest.raises(LatticeCalcError, match="no exported record"):
        compare_revisions(project, a="A", b="Z")


def test_records_are_append_only(project):
    sign_project(project, role="prepared", name=PREPARER)
    path = project / "signoff" / "signatures.jsonl"
    first = path.read_bytes()
    sign_project(project, role="checked", name=CHECKER, comment=RESOLVED)
    second = path.read_bytes()
    assert second.startswith(first) and len(second.splitlines()) == 2
    assert [r["seq"] for r in load_records(open_project(project))] == [1, 2]


def test_failing_or_never_run_project_cannot_be_signed(project):
    (project / "out" / "run-record.json").unlink()
    with pytest.raises(ProjectError, match="never run"):
        sign_project(project, role="prepared", name=PREPARER)
    assert main(["sign", str(project), "--role", "prepared", "--name", PREPARER]) == 2


def test_interrupted_export_leaves_the_previous_package_intact(project, monkeypatch):
    pkg = package_of(project)
    before = pkg.read_bytes()
    json_before = pkg.with_suffix(".json").read_bytes()
    sign_project(project, role="prepared", name=PREPARER)  # so the new package would differ
    real_write = atomic._write_fd
    calls = []

    def failing_write(fd, data):  # export stages the HTML, then the JSON: the second write fills the disk
        calls.append(fd)
        if len(calls) == 2:
            os.write(fd, bytes(data[: len(data) // 2]))
            raise OSError(errno.ENOSPC, "disk full (simulated)")
        real_write(fd, data)

    monkeypatch.setattr(atomic, "_write_fd", failing_write)
    with pytest.raises(OSError, match="disk is full"):        # a named error (FileWriteError is an OSError)
        export_project(project)
    monkeypatch.undo()
    assert len(calls) == 2
    assert pkg.read_bytes() == before
    assert pkg.with_suffix(".json").read_bytes() == json_before
    assert not list((project / "out").glob(".*.part"))
    assert verify_package(pkg).ok


def test_hostile_user_strings_are_escaped_in_the_package(hostile_panel):
    """The session's hostile project (tests/conftest.py): the project's name, number and client, the calc's
    title and preparer, an input's source, a comment, its reply and a sign-off all hold ``HOSTILE``."""
    html = hostile_panel.read_text(encoding="utf-8")
    assert "<script>window" not in html and "<img src=x" not in html and "<svg onload" not in html
    assert html.count("<script") == 1  # only the embedded JSON data element
    assert "&lt;script&gt;window.__lcPwned = 1; alert(&quot;x&quot;)&lt;/script&gt;" in html
    for field in ("name", "number", "client", "title", "author", "comment", "replier", "reply", "signer", "remark",
                  "source"):
        assert f"{field} &lt;script&gt;window.__lcPwned" in html, field   # each field shown, as text
    assert verify_package(hostile_panel).ok


def test_an_approved_revision_record_is_frozen(project):
    from latticecalc.project.signoff.revisions import record_export, revisions_dir

    proj = open_project(project)
    data = {"project": {"revision": "A"}, "generated": "2026-01-01T00:00:00+00:00"}
    approved = {"revision": "A", "first_exported": data["generated"], "exported": data["generated"],
                "fingerprint": "f" * 64, "status": "approved", "content": {}, "package": data}
    assert record_export(proj, approved)
    path = revisions_dir(proj) / "A.json"
    frozen = path.read_bytes()
    assert not record_export(proj, approved | {"fingerprint": "0" * 64, "status": "preliminary"})
    assert path.read_bytes() == frozen
    assert record_export(proj, approved | {"exported": "2026-01-02T00:00:00+00:00"})  # same content: refreshed


def test_a_removed_signoff_record_breaks_the_chain(project):
    sign_project(project, role="prepared", name=PREPARER)
    sign_project(project, role="checked", name=CHECKER, comment=RESOLVED)
    sign_project(project, role="approved", name=APPROVER, comment=RESOLVED, qualification=QUALIFIED)
    path = project / "signoff" / "signatures.jsonl"
    lines = path.read_text(encoding="utf-8").splitlines(keepends=True)
    path.write_text(lines[0] + lines[2], encoding="utf-8")  # someone deletes the 'checked' record
    with pytest.raises(ProjectError, match="chain of sign-offs is broken"):
        sign_project(project, role="prepared", name=PREPARER)
    export_project(project)
    html = package_of(project).read_text(encoding="utf-8")
    assert read_embedded(html)["status"] == "preliminary"
    report = verify_package(package_of(project))
    assert any("sign-off 3 (approved, Alex Approver): the record before it is missing" in p
               for p in report.problems), report.text()
