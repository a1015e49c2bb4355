"""Review comments against step ids: add, reply, close (``signoff/review.jsonl``, append-only).

Each line is one event: ``add`` (id ``CQ-<n>``, step, author, text, time), ``reply`` or ``close``
(comment id, author, text, time). The state of a comment is the replay of its events; nothing is
ever edited or removed. A comment is made against a step id that exists in the project's last
exported package JSON (a result or check id, or an input name).

Events are chained like sign-off records: each holds ``seq`` and ``previous`` (the hash of the
event before it), and every append records the file's head in ``signoff/heads.json``; each
sign-off also records the review head its signer saw. :func:`review_problems` names an event
removed, altered or cut from the end (an emptied file included); ``sign`` and every review
command refuse until the file is restored.
"""

from __future__ import annotations

import json
from dataclasses import dataclass, field
from datetime import UTC, datetime
from pathlib import Path

from latticecalc.errors import InputError, ProjectError
from latticecalc.project.project import Project, open_project
from latticecalc.project.signoff.journal import (
    SIGNOFF_DIR,
    append_line,
    chain_breaks,
    head_problem,
    label,
    read_lines,
    record_link,
)

REVIEW_FILE = "review.jsonl"
#: Comments are the checker's queries, numbered CQ-1, CQ-2, … (files made before keep their R1, R2, …).
QUERY_PREFIX = "CQ-"
MAX_TEXT = 4000


@dataclass(kw_only=True)
class ReviewComment:
    """One comment with its replies, replayed from the review file."""

    id: str
    step: str
    author: str
    text: str
    time: str
    status: str = "open"
    replies: list[dict] = field(default_factory=list)
    closed_by: str = ""
    closed_time: str = ""

    def to_dict(self) -> dict:
        """JSON-ready form (what the package shows beside the step)."""
        return {"id": self.id, "step": self.step, "author": self.author, "text": self.text, "time": self.time,
                "status": self.status, "replies": list(self.replies), "closed_by": self.closed_by,
                "closed_time": self.closed_time}


def review_path(project: Project) -> Path:
    """Where the project's review events are kept."""
    return project.folder / SIGNOFF_DIR / REVIEW_FILE


def _now() -> str:
    return datetime.now(UTC).isoformat(timespec="seconds")


def _text(value: str, name: str) -> str:
    if not isinstance(value, str) or not value.strip():
        raise InputError("must not be empty", input_name=name, got=repr(value))
    if len(value) > MAX_TEXT:
        raise InputError("too long", input_name=name, expected=f"at most {MAX_TEXT} characters",
                         got=f"{len(value)} characters")
    return value.strip()


def replay(events: list[dict], *, file: str = REVIEW_FILE) -> list[ReviewComment]:
    """Comments in order of creation, with their replies and status."""
    comments: dict[str, ReviewComment] = {}
    for n, ev in enumerate(events, start=1):
        kind, cid = ev.get("event"), ev.get("id")
        if kind == "add":
            comments[cid] = ReviewComment(id=cid, step=ev.get("step", ""), author=ev.get("author", ""),
                                          text=ev.get("text", ""), time=ev.get("time", ""))
        elif kind in ("reply", "close") and cid in comments:
            c = comments[cid]
            if kind == "reply" or ev.get("text"):
                c.replies.append({"author": ev.get("author", ""), "text": ev.get("text", ""),
                                  "time": ev.get("time", ""), "closing": kind == "close"})
            if kind == "close":
                c.status, c.closed_by, c.closed_time = "closed", ev.get("author", ""), ev.get("time", "")
        else:
            raise ProjectError(f"unknown review event {kind!r} for comment {cid!r}", input_name=REVIEW_FILE,
                               file=file, line=n)
    return list(comments.values())


def event_chain_problems(events: list[dict], *, file: str = REVIEW_FILE) -> list[str]:
    """Where the chain of review events is broken (an event removed, reordered or altered)."""
    return [f"{file}: review event {events[i].get('seq')} ({events[i].get('event')} {events[i].get('id')}): the "
            "event before it is missing or was altered (the chain of review events is broken)"
            for i in chain_breaks(events)]


def review_problems(project: Project, *, signoffs: list[dict] | None = None) -> list[str]:
    """Why the project's review file cannot be trusted: chain broken, or cut short of a recorded head.

    ``signoffs`` (the sign-off records) each hold the review head their signer saw: the file must
    still reach every one of them.
    """
    path = review_path(project)
    events = read_lines(path)
    problems = event_chain_problems(events, file=label(path))
    head = head_problem(path, events, what="review event")
    if head:
        problems.append(head)
    for rec in signoffs or []:
        seen = rec.get("review")
        if not isinstance(seen, dict):
            continue
        count, link = seen.get("count", 0), seen.get("link", "")
        if not isinstance(count, int) or count > len(events) or (count and record_link(events[count - 1]) != link):
            problems.append(f"{label(path)}: sign-off {rec.get('seq')} saw {count} review event(s) but the file holds "
                            f"{len(events)} that do not include them: it was truncated or edited")
    return problems


def _refuse_if_broken(project: Project, events: list[dict]) -> None:
    path = review_path(project)
    broken = event_chain_problems(events, file=label(path))
    head = head_problem(path, events, what="review event")
    problems = broken + ([head] if head else [])
    if problems:
        raise ProjectError(problems[0], input_name=str(project.folder),
                           hint="Review events are append-only: restore the file from version control")


def _chain(existing: list[dict], rec: dict) -> dict:
    return rec | {"seq": len(existing) + 1, "previous": record_link(existing[-1]) if existing else ""}


def load_comments(project: Project) -> list[ReviewComment]:
    """The project's review comments (empty if none were made)."""
    path = review_path(project)
    return replay(read_lines(path), file=str(path))


def known_step_ids(project: Project) -> set[str]:
    """Step, check and input ids of the project's last exported package JSON."""
    path = project.out / f"{project.meta.package_stem}.json"
    if not path.is_file():
        raise ProjectError("has no exported package to review yet", input_name=str(project.folder),
                           hint="Export it first: latticecalc export DIR --run")
    data = json.loads(path.read_text(encoding="utf-8"))
    return {r["id"] for r in data.get("results", [])} | {i["id"] for i in data.get("inputs", [])}


def add_comment(folder: str | Path, *, step: str, author: str, text: str) -> ReviewComment:
    """Add a comment against ``step`` (a step id of the last export); returns it with its new id."""
    project = open_project(folder)
    ids = known_step_ids(project)
    if step not in ids:
        raise InputError("no such step in the last exported package", input_name="--at", got=repr(step),
                         expected="a step, check or input id shown in the package, e.g. "
                         + ", ".join(sorted(ids)[:3]))
    record = {"event": "add", "step": step, "author": _text(author, "--by"), "text": _text(text, "--text"),
              "time": _now()}

    def number(existing: list[dict], rec: dict) -> dict:
        _refuse_if_broken(project, existing)
        n = sum(1 for e in existing if e.get("event") == "add") + 1
        return _chain(existing, rec | {"id": f"{QUERY_PREFIX}{n}"})

    rec = append_line(review_path(project), record, prepare=number)
    return replay([rec])[0]


def checkers_of(project: Project) -> list[str]:
    """Who may act as a checker on this project: names of its ``checked`` sign-offs and of keys trusted to check."""
    from latticecalc.project.signoff.records import load_records
    from latticecalc.project.signoff.trust import project_trust

    names = [str(r.get("name", "")) for r in load_records(project) if r.get("role") == "checked"]
    trust = project_trust(project.folder)
    if trust is not None and trust.bound:
        names += [k.person for k in trust.keys.values() if "checked" in k.roles and k.person]
    return names


def close_refusal(project: Project, comment: ReviewComment, closer: str) -> str:
    """Why ``closer`` may not close ``comment`` ("" if they may): only its author or a checker closes it.

    A checker is a person who signed this project ``checked`` or whose key the project's trust list allows
    to sign ``checked``; names are compared as :func:`~latticecalc.project.signoff.identity.same_person`
    does. The preparer (``calc.prepared_by``) may close only a comment they wrote.
    """
    from latticecalc.project.signoff.identity import same_person

    if same_person(closer, comment.author):
        return ""
    if same_person(closer, project.meta.prepared_by):
        return (f"the preparer cannot settle query {comment.id} raised by {comment.author}: only its author or a "
                "checker settles a query")
    if any(same_person(closer, name) for name in checkers_of(project)):
        return ""
    return f"only the query's author ({comment.author}) or a checker of this project may settle query {comment.id}"


def _follow_up(folder: str | Path, kind: str, comment_id: str, author: str, text: str) -> ReviewComment:
    project = open_project(folder)
    record = {"event": kind, "id": comment_id, "author": _text(author, "--by"),
              "text": _text(text, "--text") if (kind == "reply" or text) else "", "time": _now()}

    def check(existing: list[dict], rec: dict) -> dict:
        _refuse_if_broken(project, existing)
        state = {c.id: c for c in replay(existing)}
        if comment_id not in state:
            raise InputError("no such checker query", input_name="query", got=repr(comment_id),
                             expected="one of " + (", ".join(state) or "(none yet)"))
        if kind == "close" and state[comment_id].status == "closed":
            raise InputError("is closed already", input_name=comment_id)
        if kind == "close":
            why = close_refusal(project, state[comment_id], record["author"])
            if why:
                raise InputError(why, input_name="--by", got=repr(record["author"]),
                                 hint="The preparer answers it (latticecalc query answer); its author or a checker "
                                      "settles it")
        return _chain(existing, rec)

    append_line(review_path(project), record, prepare=check)
    return {c.id: c for c in load_comments(project)}[comment_id]


def reply_comment(folder: str | Path, comment_id: str, *, author: str, text: str) -> ReviewComment:
    """Add a reply to comment ``comment_id``."""
    return _follow_up(folder, "reply", comment_id, author, text)


def close_comment(folder: str | Path, comment_id: str, *, author: str, text: str = "") -> ReviewComment:
    """Close comment ``comment_id`` (optionally with a closing remark)."""
    return _follow_up(folder, "close", comment_id, author, text)


def list_comments(folder: str | Path, *, include_closed: bool = True) -> list[ReviewComment]:
    """The project's comments (all, or only the open ones)."""
    comments = load_comments(open_project(folder))
    return [c for c in comments if include_closed or c.status == "open"]


__all__ = ["ReviewComment", "add_comment", "checkers_of", "close_comment", "close_refusal", "event_chain_problems",
           "list_comments", "load_comments", "reply_comment", "review_problems"]
