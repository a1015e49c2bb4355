"""Append-only JSON-lines files (sign-offs, review events).

An append reads the file, checks nothing was lost since, and writes the old bytes plus one new
line through :func:`~latticecalc.project.atomic.write_text_atomic` under an exclusive lock: a
reader sees the file before or after the append, never half a line, and no existing line is
ever changed or removed.
"""

from __future__ import annotations

import fcntl
import json
from contextlib import contextmanager
from pathlib import Path

from latticecalc.errors import ProjectError
from latticecalc.project.atomic import write_bytes_atomic

SIGNOFF_DIR = "signoff"


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


def append_line(path: Path, record: dict, *, prepare=None) -> dict:
    """Append ``record`` as one JSON line; return it.

    ``prepare(existing_records, record)`` (optional) runs under the lock and may complete the
    record (sequence numbers) or raise to refuse it.
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
    return record


__all__ = ["SIGNOFF_DIR", "append_line", "read_lines"]
