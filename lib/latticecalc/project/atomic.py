"""Atomic file writes: a reader sees the old file or the new one, never half of one."""

from __future__ import annotations

import os
import tempfile
from pathlib import Path


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def write_bytes_atomic(path: Path, data: bytes) -> None:
    """Write ``data`` to a temporary file beside ``path``, fsync it, then rename it over ``path``."""
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=path.parent)
    try:
        os.fchmod(fd, 0o666 & ~_umask())
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise


def write_text_atomic(path: Path, text: str) -> None:
    """Atomic UTF-8 text write."""
    write_bytes_atomic(path, text.encode("utf-8"))


def write_many_atomic(files: dict[Path, str]) -> None:
    """Write several text files as one step: all are staged (written and synced) first, then renamed.

    If staging any of them fails, none of the targets is touched.
    """
    staged: list[tuple[str, Path]] = []
    try:
        for path, text in files.items():
            path = Path(path)
            path.parent.mkdir(parents=True, exist_ok=True)
            fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=path.parent)
            staged.append((tmp, path))
            os.fchmod(fd, 0o666 & ~_umask())
            with os.fdopen(fd, "wb") as fh:
                fh.write(text.encode("utf-8"))
                fh.flush()
                os.fsync(fh.fileno())
    except BaseException:
        for tmp, _ in staged:
            Path(tmp).unlink(missing_ok=True)
        raise
    for tmp, path in staged:
        os.replace(tmp, path)
