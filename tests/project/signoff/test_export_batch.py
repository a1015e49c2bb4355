"""An export is one batch: package HTML, JSON and revision record are staged together, leftovers of a
killed export are swept by the next, and ``verify`` names summary text edited outside the id'd blocks.

No physics here; what is checked is the kit's own write discipline (common practice: a reader sees the
old set of files or the new one, never a revision record ahead of the package it describes).
"""

from __future__ import annotations

import errno
from pathlib import Path

import pytest

from latticecalc.errors import FileWriteError
from latticecalc.project import open_project
from latticecalc.project.export import export_project
from latticecalc.project.signoff import verify_package


def _package(folder: Path) -> Path:
    return folder / "out" / f"{open_project(folder).meta.package_stem}.html"


def test_leftovers_of_a_killed_export_are_swept_and_other_files_kept(project):
    out = project / "out"
    stem = open_project(project).meta.package_stem
    left = [out / f".{stem}.html.k3j9x.part", out / f".{stem}.json.p0q1r.part",
            out / "revisions" / ".A.json.zz81y.part"]
    for p in left:
        p.parent.mkdir(parents=True, exist_ok=True)
        p.write_text("half a file")
    other = out / ".run-record.json.a1b2c.part"          # not the export's: another command may be writing it
    other.write_text("someone else's")
    export_project(project)
    assert [p for p in left if p.exists()] == []
    assert other.read_text() == "someone else's"


def test_a_failed_revision_record_write_leaves_package_and_record_as_they_were(project, monkeypatch):
    from latticecalc.project import atomic

    html_before = _package(project).read_bytes()
    record = project / "out" / "revisions" / "A.json"
    record_before = record.read_bytes()
    real = atomic._stage

    def full_disk_for_the_record(path, data):
        if Path(path).parent.name == "revisions":
            raise OSError(errno.ENOSPC, "No space left on device")
        return real(path, data)

    monkeypatch.setattr(atomic, "_stage", full_disk_for_the_record)
    with pytest.raises(FileWriteError, match="disk is full"):
        export_project(project)
    assert _package(project).read_bytes() == html_before
    assert record.read_bytes() == record_before
    assert not list((project / "out").glob(".*.part")) and not list(record.parent.glob(".*.part"))


def test_an_edited_summary_digit_is_named_not_called_markup(project, tmp_path):
    html = _package(project).read_text(encoding="utf-8")
    box = html.index('<div class="lc-summary">')
    cell = html.index("<td>", html.index("<th>Checks</th>", box))
    shown = html[cell + 4:html.index("</td>", cell)]            # "6 hold, 3 fail"
    ok = shown.split(" hold")[0]
    edited = shown.replace(ok, str(int(ok) + 1), 1)
    tampered = tmp_path / "tampered.html"
    tampered.write_text(html[:cell + 4] + edited + html[cell + 4 + len(shown):], encoding="utf-8")
    report = verify_package(tampered)
    text = report.text()
    assert "no text changed" not in text
    assert f"'{ok}' became '{int(ok) + 1}' after 'Checks'" in text
