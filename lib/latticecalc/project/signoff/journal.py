"""Append-only, hash-chained JSON-lines files (sign-offs, review events).

An append reads the file, checks nothing was lost since, and writes the old bytes plus one new
line through :func:`~latticecalc.project.atomic.write_text_atomic` under an exclusive lock: a
reader sees the file before or after the append, never half a line, and no existing line is
ever changed or removed.

Each record carries ``seq`` (1, 2, …) and ``previous``, the SHA-256 of the record before it
(:func:`record_link`), so a record removed from the middle or altered shows as a break in the
chain (:func:`chain_breaks`). A chain alone cannot show records cut from its *end*, so every
append also writes the journal's head (record count and the link of the last record) to
``signoff/heads.json``; :func:`head_problem` compares a journal with its head. The head is a
plain hash, like the chain: it shows a careless or accidental cut, not a determined forger
(only a keyed sign-off shows who signed what).
"""

from __future__ import annotations

import fcntl
import hashlib
import json
from contextlib import contextmanager
from pathlib import Path

from latticecalc.errors import ProjectError
from latticecalc.project.atomic import write_bytes_atomic, write_text_atomic

SIGNOFF_DIR = "signoff"
HEADS_FILE = "heads.json"
#: Fields left out of a record's link hash: the bulky content (bound through the fingerprint) and
#: what an export adds to the embedded copy.
UNLINKED_FIELDS = ("content", "state")


def _canonical(value) -> str:
    return json.dumps(value, sort_keys=True, separators=(",", ":"), ensure_ascii=False, allow_nan=False)


@contextmanager
def _locked(path: Path):
    path.parent.mkdir(parents=True, exist_ok=True)
    lock = path.parent / f".{path.name}.lock"
    with open(lock, "a+b") as fh:
        fcntl.flock(fh.fileno(), fcntl.LOCK_EX)
        try:
            yield
        finally:
            fcntl.flock(fh.fileno(), fcntl.LOCK_UN)


def record_link(record: dict) -> str:
    """SHA-256 of a record's canonical JSON (minus :data:`UNLINKED_FIELDS`); the next record's ``previous``."""
    body = {k: v for k, v in record.items() if k not in UNLINKED_FIELDS}
    return hashlib.sha256(_canonical(body).encode("utf-8")).hexdigest()


def chain_breaks(records: list[dict]) -> list[int]:
    """Indexes of records whose ``seq`` or ``previous`` does not follow from the record before."""
    out = []
    previous = ""
    for n, rec in enumerate(records, start=1):
        if rec.get("seq") != n or rec.get("previous", "") != previous:
            out.append(n - 1)
        previous = record_link(rec)
    return out


def head_of(records: list[dict]) -> dict:
    """The head of a chain: how many records, and the link of the last one."""
    return {"count": len(records), "link": record_link(records[-1]) if records else ""}


def heads_path(path: Path) -> Path:
    """The heads file beside a journal."""
    return Path(path).parent / HEADS_FILE


def read_heads(folder: Path) -> dict | None:
    """``signoff/heads.json`` (journal file name -> head), or None when there is none."""
    path = Path(folder) / HEADS_FILE
    if not path.is_file():
        return None
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except (json.JSONDecodeError, UnicodeDecodeError):
        return {"_error": "not valid JSON"}
    return data if isinstance(data, dict) else {"_error": "not a JSON object"}


def label(path: Path) -> str:
    """How messages name a journal: ``signoff/review.jsonl`` (no machine path)."""
    path = Path(path)
    return f"{path.parent.name}/{path.name}"


def head_problem(path: Path, records: list[dict], *, what: str) -> str:
    """Why the journal ``path`` no longer reaches the head recorded for it (``""`` if it does).

    The journal may run ahead of its head (an append interrupted between the two writes), never
    behind it or off it.
    """
    path = Path(path)
    name, heads_name = label(path), label(heads_path(path))
    heads = read_heads(path.parent)
    if heads is None:
        if records:
            return (f"{name}: the record of its last {what} ({heads_name}) is missing, so a cut at the end "
                    "of the file cannot be ruled out")
        return ""
    if "_error" in heads:
        return f"{heads_name}: {heads['_error']}"
    head = heads.get(path.name)
    if not isinstance(head, dict):
        if records:
            return f"{name}: {heads_name} holds no head for it, so a cut at the end cannot be ruled out"
        return ""
    count, link = head.get("count", 0), head.get("link", "")
    if not isinstance(count, int) or count < 0:
        return f"{heads_name}: the head of {path.name} is not a record count"
    if len(records) < count:
        return (f"{name}: {count} {what}(s) were written but {len(records)} remain: the file was truncated or "
                "edited")
    if count and record_link(records[count - 1]) != link:
        return f"{name}: {what} {count} is not the one written: the file was truncated or edited"
    return ""


def read_lines(path: Path) -> list[dict]:
    """Every record of a JSON-lines file, in order (``[]`` if the file does not exist).

    Raises
    ------
    ProjectError
        Naming the file and line of a line that is not a JSON object.
    """
    path = Path(path)
    if not path.is_file():
        return []
    out = []
    for n, line in enumerate(path.read_text(encoding="utf-8").splitlines(), start=1):
        if not line.strip():
            continue
        try:
            rec = json.loads(line)
        except json.JSONDecodeError as exc:
            raise ProjectError(f"not a JSON record ({exc.msg})", input_name=path.name, file=str(path),
                               line=n, hint="Records are append-only: restore the file from version control") from None
        if not isinstance(rec, dict):
            raise ProjectError("not a JSON object", input_name=path.name, file=str(path), line=n)
        out.append(rec)
    return out


def _write_head(path: Path, records: list[dict]) -> None:
    hp = heads_path(path)
    with _locked(hp):
        heads = read_heads(path.parent)
        if heads is None or "_error" in heads:
            heads = {}
        heads[path.name] = head_of(records)
        write_text_atomic(hp, json.dumps(heads, indent=1, sort_keys=True) + "\n")


def append_line(path: Path, record: dict, *, prepare=None) -> dict:
    """Append ``record`` as one JSON line, then record the journal's new head; return the record.

    ``prepare(existing_records, record)`` (optional) runs under the lock and may complete the
    record (sequence numbers, links) or raise to refuse it.
    """
    path = Path(path)
    with _locked(path):
        old = path.read_bytes() if path.is_file() else b""
        existing = read_lines(path)
        if prepare is not None:
            record = prepare(existing, record)
        if old and not old.endswith(b"\n"):
            old += b"\n"
        line = json.dumps(record, ensure_ascii=False, sort_keys=True, separators=(",", ":")) + "\n"
        write_bytes_atomic(path, old + line.encode("utf-8"))
        _write_head(path, [*existing, record])
    return record


__all__ = ["HEADS_FILE", "SIGNOFF_DIR", "UNLINKED_FIELDS", "append_line", "chain_breaks", "head_of",
           "head_problem", "label", "read_heads", "read_lines", "record_link"]
