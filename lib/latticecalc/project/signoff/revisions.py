"""Revisions: the exported JSON of each revision kept in ``out/revisions/<rev>.json``.

Each export refreshes the record of the project's *current* revision (``calc.revision`` in
``project.toml``), keeping its first export time, until that revision is approved: then the
record is frozen, and a later export of the same revision with different content leaves it as it
was (the package's history says so). Another revision's record is never touched.
"""

from __future__ import annotations

import json
from dataclasses import dataclass
from html import escape
from pathlib import Path

from latticecalc.errors import InputError, ProjectError
from latticecalc.project.atomic import write_text_atomic
from latticecalc.project.project import Project, open_project
from latticecalc.project.signoff.fingerprint import ContentChanges, diff_content

REVISIONS_DIR = "revisions"


def revisions_dir(project: Project) -> Path:
    """Folder of the per-revision records."""
    return project.out / REVISIONS_DIR


def load_revisions(project: Project) -> list[dict]:
    """Stored revision records, oldest first export first."""
    folder = revisions_dir(project)
    out = []
    for p in sorted(folder.glob("*.json")) if folder.is_dir() else []:
        try:
            rec = json.loads(p.read_text(encoding="utf-8"))
        except json.JSONDecodeError as exc:
            raise ProjectError(f"revision record is not valid JSON ({exc.msg})", input_name=p.name,
                               file=str(p)) from None
        out.append(rec)
    return sorted(out, key=lambda r: (r.get("first_exported", ""), r.get("revision", "")))


def revision_record(*, data: dict, fingerprint: str, content: dict, status: str, previous: dict | None) -> dict:
    """The record of this export (keeps the first export time of an earlier record)."""
    first = previous.get("first_exported") if previous else None
    return {"revision": data["project"]["revision"], "first_exported": first or data["generated"],
            "exported": data["generated"], "fingerprint": fingerprint, "status": status,
            "content": content, "package": data}


def revision_text(project: Project, record: dict) -> tuple[Path, str] | None:
    """Where ``record`` goes and its JSON text; None if that revision is frozen (approved, other content)."""
    path = revisions_dir(project) / f"{record['revision']}.json"
    if path.is_file():
        old = json.loads(path.read_text(encoding="utf-8"))
        if old.get("status") == "approved" and old.get("fingerprint") != record["fingerprint"]:
            return None
    return path, json.dumps(record, indent=1, ensure_ascii=False)


def record_export(project: Project, record: dict) -> bool:
    """Store ``record`` as the current revision's; False if that revision is frozen (approved)."""
    found = revision_text(project, record)
    if found is None:
        return False
    write_text_atomic(*found)
    return True


@dataclass(frozen=True, kw_only=True)
class Comparison:
    """What changed from revision ``a`` to revision ``b``."""

    a: str
    b: str
    changes: ContentChanges

    def lines(self) -> list[str]:
        """Human-readable lines, one per changed item."""
        c = self.changes
        out = [f"Changes from revision {self.a} to revision {self.b}: {len(c.inputs)} input(s), "
               f"{len(c.results)} key result(s), {len(c.notebooks)} notebook(s), {len(c.project)} project field(s)"]
        if c.empty:
            return out + ["  no inputs or key results changed"]
        for label, items in (("input", c.inputs), ("result", c.results), ("notebook", c.notebooks),
                             ("project", c.project)):
            out += [f"  {label:<8} {item}" for item in items]
        if c.kit_version:
            out.append(f"  kit      {c.kit_version}")
        return out


def compare_revisions(folder: str | Path, *, a: str, b: str) -> Comparison:
    """Inputs, key results, notebook code and project fields that changed from revision a to b."""
    project = open_project(folder)
    records = {r["revision"]: r for r in load_revisions(project)}
    for name, rev in (("--from", a), ("--to", b)):
        if rev not in records:
            raise InputError("no exported record of that revision", input_name=name, got=repr(rev),
                             expected="one of " + (", ".join(records) or "(none: export first)"))
    return Comparison(a=a, b=b, changes=diff_content(records[a]["content"], records[b]["content"]))


def history_html(stored: list[dict], current: dict, *, frozen: bool) -> str:
    """The package's revision history table (stored revisions plus the one being exported)."""
    rows = {r["revision"]: r for r in stored}
    if not frozen:
        rows[current["revision"]] = current
    ordered = sorted(rows.values(), key=lambda r: (r.get("first_exported", ""), r.get("revision", "")))
    html = []
    prev = None
    for r in ordered:
        if prev is None:
            what = "first issue"
        else:
            ch = diff_content(prev["content"], r["content"])
            what = "no change to inputs or results" if ch.empty else ch.describe(max_items=6)
        html.append(f"<tr><td>{escape(r['revision'])}</td><td>{escape(r.get('first_exported', '')[:10])}</td>"
                    f"<td>{escape(r.get('exported', '')[:19])}</td><td>{escape(r.get('status', ''))}</td>"
                    f'<td class="lc-fingerprint">{escape(r.get("fingerprint", "")[:16])}</td>'
                    f"<td>{escape(what)}</td></tr>")
        prev = r
    note = ""
    if frozen:
        note = (f"<p><strong>Revision {escape(current['revision'])} was approved with different content; "
                "its record is kept as approved. Raise the revision in project.toml for a new issue.</strong></p>")
    return (note + '<table class="lc-revisions"><thead><tr><th>Revision</th><th>First exported</th>'
            "<th>Last exported (UTC)</th><th>Status</th><th>Fingerprint</th><th>Changes from the previous"
            "</th></tr></thead><tbody>" + "".join(html) + "</tbody></table>")


__all__ = ["Comparison", "compare_revisions", "history_html", "load_revisions", "record_export",
           "revision_record"]
