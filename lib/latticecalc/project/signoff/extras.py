"""What sign-off, review and revisions add to an exported package (``package_extras``)."""

from __future__ import annotations

from html import escape
from pathlib import Path

from latticecalc.project.export.html import PackageExtras, SignRow
from latticecalc.project.project import Project
from latticecalc.project.signoff.fingerprint import fingerprint_content, fingerprint_of
from latticecalc.project.signoff.journal import head_problem
from latticecalc.project.signoff.keys import chain_problems
from latticecalc.project.signoff.records import ROLES, SignoffState, judge, load_records, signatures_path, status_of
from latticecalc.project.signoff.review import ReviewComment, load_comments, review_problems
from latticecalc.project.signoff.revisions import history_html, load_revisions, revision_record, revision_text
from latticecalc.project.signoff.standing import standing_text
from latticecalc.project.signoff.trust import project_trust
from latticecalc.project.signoff.verify import EMBED_FORMAT, SEAL_PLACEHOLDER

#: Longest "what changed" text shown in the title block (the sign-off table shows all of it).
TITLE_REASON_CHARS = 160


def _when(time: str) -> str:
    return time.replace("T", " ")[:16] + " UTC" if time else ""


def _this_revision(states: list[SignoffState], revision: str) -> list[SignoffState]:
    return [s for s in states if str(s.record.get("revision", revision)) == revision]


def current_approval(states: list[SignoffState]) -> dict | None:
    """The latest valid ``approved`` sign-off record (None when there is none)."""
    found = [s.record for s in states if s.valid and s.record.get("role") == "approved"]
    return found[-1] if found else None


def _sign_rows(states: list[SignoffState]) -> list[SignRow]:
    latest: dict[str, SignoffState] = {}  # per role: the latest valid sign-off, else the latest one
    for s in states:
        role = s.record.get("role", "")
        if s.valid or role not in latest or not latest[role].valid:
            latest[role] = s
    rows = []
    for role in ROLES:
        s = latest.get(role)
        if s is None:
            continue
        reason = s.reason
        if len(reason) > TITLE_REASON_CHARS:
            reason = reason[:TITLE_REASON_CHARS - 1] + "…"
        sig = s.record.get("signature") or {}
        rows.append(SignRow(role=role, name=s.record.get("name", ""), date=_when(s.record.get("time", "")),
                            void=not s.valid, void_reason=reason, signature=sig.get("key_id", "")))
    return rows


def _earlier_revisions(states: list[SignoffState], revision: str) -> str:
    """One line per earlier revision: who signed what (their sign-offs are that revision's, not void rows)."""
    by_rev: dict[str, list[dict]] = {}
    for s in states:
        rev = str(s.record.get("revision", revision))
        if rev != revision:
            by_rev.setdefault(rev, []).append(s.record)
    if not by_rev:
        return ""
    items = []
    for rev, recs in by_rev.items():
        latest: dict[str, dict] = {}
        for r in recs:
            latest[str(r.get("role", ""))] = r
        signed = ", ".join(f"{role} by {latest[role].get('name', '')} ({_when(str(latest[role].get('time', '')))[:10]})"
                           for role in ROLES if role in latest)
        items.append(f"<li>Revision {escape(rev)}: {escape(signed)}; it signed revision {escape(rev)}'s "
                     "content (see the revision history)</li>")
    return "<p>Earlier revisions:</p><ul class=\"lc-earlier-signoffs\">" + "".join(items) + "</ul>"


def _signature_block(all_states: list[SignoffState], extra: list[str], revision: str) -> str:
    broken = chain_problems([s.record for s in all_states]) + extra
    warning = "".join(f'<p class="lc-verdict-notok"><strong>{escape(p)}</strong></p>' for p in broken)
    states = _this_revision(all_states, revision)
    earlier = _earlier_revisions(all_states, revision)
    if not states:
        return ('<section id="signoffs"><h2>Sign-off record</h2>' + warning + "<p>Not signed off: this package "
                "is preliminary.</p>" + earlier + "</section>")
    rows = []
    for s in states:
        r = s.record
        sig = r.get("signature") or {}
        verdict = ('<strong class="lc-verdict-ok">current</strong>' if s.valid else
                   f'<strong class="lc-verdict-notok">VOID</strong> {escape(s.reason)}')
        seq = escape(str(r.get("seq", "")))
        rows.append(f'<tr id="signoff-{seq}"><td>{seq}</td>'
                    f"<td>{escape(str(r.get('role', '')))}</td><td>{escape(str(r.get('name', '')))}</td>"
                    f"<td>{escape(_when(str(r.get('time', ''))))}</td>"
                    f'<td class="lc-fingerprint">{escape(str(r.get("fingerprint", ""))[:16])}…</td>'
                    f'<td class="lc-fingerprint">{escape(sig.get("key_id", "")) or "no key"}</td><td>{verdict}</td>'
                    f"<td>{escape(str(r.get('comment', ''))) or '—'}</td></tr>")
    return ('<section id="signoffs"><h2>Sign-off record</h2>' + warning
            + '<table class="lc-signoffs"><thead><tr><th>#</th><th>Role</th><th>Name</th><th>Date</th>'
            "<th>Fingerprint</th><th>Key</th><th>State</th><th>Comment</th></tr></thead><tbody>"
            + "".join(rows) + "</tbody></table>"
            "<p>A sign-off is current while the package's fingerprint equals the one it signed; "
            "check with <code>latticecalc verify</code>.</p>" + earlier + "</section>")


def _comments_html(comments: list[ReviewComment], problems: list[str]) -> str:
    warning = "".join(f'<p class="lc-verdict-notok"><strong>{escape(p)}</strong></p>' for p in problems)
    if not comments:
        return warning
    rows = []
    for c in comments:
        replies = "".join(f"<br>↳ {escape(r['author'])}: {escape(r['text'])}" for r in c.replies)
        cls = "lc-verdict-notok" if c.status == "open" else "lc-verdict-ok"
        rows.append(f'<tr id="review-{escape(c.id)}"><td>{escape(c.id)}</td>'
                    f'<td><a href="#step-{escape(c.step)}">{escape(c.step)}</a></td>'
                    f'<td class="{cls}">{escape(c.status)}</td><td>{escape(c.author)}: {escape(c.text)}{replies}</td>'
                    f"</tr>")
    return (warning + '<table class="lc-review"><thead><tr><th>Id</th><th>Step</th><th>Status</th>'
            "<th>Comment and replies</th></tr></thead><tbody>" + "".join(rows) + "</tbody></table>")


def signoff_view(project: Project, data: dict, doc) -> tuple[str, dict, list[SignoffState], str]:
    """Fingerprint, its content, the judged sign-offs and the status, for package ``data``."""
    content = fingerprint_content(project, data, doc)
    fp = fingerprint_of(content)
    states = judge(load_records(project), fp, content, trust=project_trust(project.folder))
    return fp, content, states, status_of(states)


def package_extras(project: Project, data: dict, doc) -> PackageExtras:
    """Title-block status, fingerprint, sign-offs, review comments, revision history, embedded data."""
    from latticecalc.project.export.package import embed_json

    fp, content, states, status = signoff_view(project, data, doc)
    comments = load_comments(project)
    records = [s.record for s in states]
    review_broken = review_problems(project, signoffs=records)
    head = head_problem(signatures_path(project), records, what="sign-off")
    by_step: dict[str, list[dict]] = {}
    for c in comments:
        by_step.setdefault(c.step, []).append(c.to_dict())
    stored = load_revisions(project)
    previous = next((r for r in stored if r.get("revision") == project.meta.revision), None)
    current = revision_record(data=data, fingerprint=fp, content=content, status=status, previous=previous)
    frozen = bool(previous and previous.get("status") == "approved" and previous.get("fingerprint") != fp)
    embedded = {"format": EMBED_FORMAT, "fingerprint": fp, "fingerprint_content": content, "status": status,
                "open_comments": sum(c.status == "open" for c in comments),
                "signoffs": [{k: v for k, v in s.record.items() if k != "content"} | {"state": s.reason or "current"}
                             for s in states],
                "seal": SEAL_PLACEHOLDER}
    revision = project.meta.revision
    return PackageExtras(status=status, fingerprint=fp, signatures=_sign_rows(_this_revision(states, revision)),
                         standing=standing_text(content.get("checks"), current_approval(states)),
                         comments_by_step=by_step,
                         comments_html=_comments_html(comments, review_broken),
                         open_comments=embedded["open_comments"],
                         revision_history_html=history_html(stored, current, frozen=frozen),
                         signature_block_html=_signature_block(states, [head] if head else [], revision),
                         embedded_json=embed_json(embedded))


def revision_file(project: Project, data: dict, *, fingerprint: str, content: dict,
                  status: str) -> tuple[Path, str] | None:
    """Where the revision record of this export goes and its text (None when the revision is frozen: approved).

    ``fingerprint``, ``content`` and ``status`` are the ones the package was rendered with.
    """
    stored = load_revisions(project)
    previous = next((r for r in stored if r.get("revision") == project.meta.revision), None)
    return revision_text(project, revision_record(data=data, fingerprint=fingerprint, content=content,
                                                  status=status, previous=previous))
