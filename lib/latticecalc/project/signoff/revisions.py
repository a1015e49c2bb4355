"""Revisions: the exported JSON of each revision kept in ``out/revisions/<rev>.json``.

Each export refreshes the record of the project's *current* revision (``calc.revision`` in
``cover.toml``), keeping its first export time, until that revision is approved: then the
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
from latticecalc.project.signoff.fingerprint import ContentChanges, diff_content, paired

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


def check_changes(old: dict, new: dict) -> tuple[list[str], list[str]]:
    """(verdicts that changed, utilisations that moved in their shown digits) between two contents."""
    verdicts, moved = [], []
    for cid, ca, cb in paired(old.get("checks", []), new.get("checks", []), key=lambda c: c.get("id")):
        if ca is None:
            verdicts.append(f"{cid}: new check, {cb.get('verdict')} (utilisation {cb.get('utilisation_text')})")
        elif cb is None:
            verdicts.append(f"{cid}: no longer checked (was {ca.get('verdict')})")
        elif ca.get("verdict") != cb.get("verdict"):
            verdicts.append(f"{cid}: {ca.get('verdict')} -> {cb.get('verdict')} (utilisation "
                            f"{ca.get('utilisation_text')} -> {cb.get('utilisation_text')})")
        elif ca.get("utilisation_text") != cb.get("utilisation_text"):
            moved.append(f"{cid}: utilisation {ca.get('utilisation_text')} -> {cb.get('utilisation_text')} "
                         f"(still {cb.get('verdict')})")
    return verdicts, moved


def shown_result_changes(old: dict, new: dict) -> list[str]:
    """Key results whose shown text changed (a change below the shown digits is not listed)."""
    out = []
    for rid, ra, rb in paired(old.get("results", []), new.get("results", []), key=lambda r: r.get("id")):
        if ra is None:
            out.append(f"{rid}: new, {rb.get('text', '')}")
        elif rb is None:
            out.append(f"{rid}: no longer computed (was {ra.get('text', '')})")
        elif ra.get("text", "") != rb.get("text", ""):
            out.append(f"{rid}: {ra.get('text', '')} -> {rb.get('text', '')}")
    return out


@dataclass(frozen=True, kw_only=True)
class Comparison:
    """What changed from revision ``a`` to revision ``b``: verdicts first, then inputs, then shown results."""

    a: str
    b: str
    changes: ContentChanges
    verdicts: tuple[str, ...] = ()
    utilisations: tuple[str, ...] = ()
    results: tuple[str, ...] = ()

    def lines(self) -> list[str]:
        """Human-readable lines: a one-line tally, then each group that has entries (unchanged ones hidden)."""
        c = self.changes
        tally = (f"{len(self.verdicts)} verdict(s) changed, {len(self.utilisations)} utilisation(s) moved, "
                 f"{len(c.inputs)} input(s), {len(self.results)} result(s) shown differently, "
                 f"{len(c.files)} data file(s), {len(c.notebooks)} notebook(s), {len(c.project)} project field(s)")
        out = [f"Revision {self.a} to revision {self.b}: {tally}"]
        groups = (("Verdicts", self.verdicts), ("Utilisations", self.utilisations), ("Inputs", c.inputs),
                  ("Results (as shown)", self.results), ("Data files", c.files), ("Notebook code", c.notebooks),
                  ("Project", c.project))
        for title, items in groups:
            if items:
                out.append(f"{title}:")
                out += [f"  {item}" for item in items]
        if c.kit_version:
            out.append(f"Kit version: {c.kit_version}")
        if len(out) == 1:
            out.append("  nothing a reader would see changed")
        return out


def compare_revisions(folder: str | Path, *, a: str, b: str) -> Comparison:
    """Verdicts, utilisations, inputs, shown results, files, notebook code and project fields, revision a to b."""
    project = open_project(folder)
    records = {r["revision"]: r for r in load_revisions(project)}
    for name, rev in (("--from", a), ("--to", b)):
        if rev not in records:
            raise InputError("no exported record of that revision", input_name=name, got=repr(rev),
                             expected="one of " + (", ".join(records) or "(none: export first)"))
    old, new = records[a]["content"], records[b]["content"]
    verdicts, moved = check_changes(old, new)
    return Comparison(a=a, b=b, changes=diff_content(old, new), verdicts=tuple(verdicts), utilisations=tuple(moved),
                      results=tuple(shown_result_changes(old, new)))


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
        note = str((r.get("package", {}).get("project") or {}).get("revision_note", "")) or "—"
        html.append(f"<tr><td>{escape(r['revision'])}</td><td>{escape(r.get('first_exported', '')[:10])}</td>"
                    f"<td>{escape(r.get('exported', '')[:19])}</td><td>{escape(r.get('status', ''))}</td>"
                    f'<td class="lc-fingerprint">{escape(r.get("fingerprint", "")[:16])}</td>'
                    f"<td>{escape(note)}</td><td>{escape(what)}</td></tr>")
        prev = r
    note = ""
    if frozen:
        note = (f"<p><strong>Revision {escape(current['revision'])} was approved with different content; "
                "its record is kept as approved. Raise the revision in cover.toml for a new issue.</strong></p>")
    return (note + '<table class="lc-revisions"><thead><tr><th>Revision</th><th>First exported</th>'
            "<th>Last exported (UTC)</th><th>Status</th><th>Fingerprint</th><th>Revision note</th>"
            "<th>Changes from the previous</th></tr></thead><tbody>" + "".join(html) + "</tbody></table>")


__all__ = ["Comparison", "compare_revisions", "history_html", "load_revisions", "record_export",
           "revision_record"]
