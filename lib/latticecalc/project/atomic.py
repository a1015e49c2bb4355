"""Atomic file writes: a reader sees the old file or the new one, never half of one.

Every file the kit writes goes through these functions.  The data are written to a temporary file
beside the target, synced, then renamed over it.  When the write fails (disk full, permission
denied, read-only file system, quota) the temporary file is removed, the previous file is left as
it was, and a :class:`~latticecalc.errors.FileWriteError` names the file and the reason.  A target
that is a symbolic link is refused (:class:`~latticecalc.errors.SymlinkError`): the kit never
replaces a link with a file, nor writes through one.
"""

from __future__ import annotations

import errno
import os
import tempfile
from pathlib import Path

from latticecalc.errors import FileWriteError, SymlinkError

#: Bytes handed to one ``os.write`` call.
_CHUNK = 1 << 20
_REASONS = {
    errno.ENOSPC: "the disk is full (no space left on device)",
    errno.EDQUOT: "the disk quota is exceeded",
    errno.EACCES: "permission denied",
    errno.EPERM: "operation not permitted",
    errno.EROFS: "the file system is read-only",
    errno.ENAMETOOLONG: "the file name is too long",
}


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def write_error(exc: OSError, path: Path, *, input_name: str | None = None,
                unchanged: str = "nothing was written and the previous file, if any, is unchanged") -> FileWriteError:
    """The :class:`FileWriteError` for ``exc`` raised while writing ``path``."""
    reason = _REASONS.get(exc.errno) or exc.strerror or type(exc).__name__
    hint = {errno.ENOSPC: "Free some disk space and run the command again",
            errno.EDQUOT: "Free some space within the quota and run the command again",
            errno.EROFS: "Write the project to a writable folder"}.get(
        exc.errno, "Check the folder's permissions and run the command again")
    err = FileWriteError(f"could not write the file: {reason}; {unchanged}", input_name=input_name,
                         file=str(path), hint=hint)
    err.errno, err.strerror, err.filename = exc.errno, exc.strerror, str(path)
    return err


def refuse_link(path: Path, *, input_name: str | None = None) -> None:
    """:class:`SymlinkError` when ``path`` itself is a symbolic link (the kit writes only real files)."""
    if os.path.islink(path):
        raise SymlinkError("the kit does not write through a symbolic link; nothing was written",
                           input_name=input_name, file=str(path), expected="a regular file or no file",
                           got="a symbolic link", hint="Remove the link, or name the file it points to")


def _write_fd(fd: int, data: bytes) -> None:
    view = memoryview(data)
    while view:
        n = os.write(fd, view[:_CHUNK])
        view = view[n:]
    os.fsync(fd)


def _stage(path: Path, data: bytes) -> str:
    """Write ``data`` to a new synced temporary file beside ``path``; return its name (removed on failure)."""
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=path.parent)
    try:
        try:
            os.fchmod(fd, 0o666 & ~_umask())
            _write_fd(fd, data)
        finally:
            os.close(fd)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return tmp


def write_bytes_atomic(path: Path, data: bytes, *, input_name: str | None = None) -> None:
    """Write ``data`` to a temporary file beside ``path``, fsync it, then rename it over ``path``.

    Raises
    ------
    SymlinkError
        If ``path`` is a symbolic link (nothing is written).
    FileWriteError
        If the write fails (disk full, permission denied, ...); ``path`` is left as it was.
    """
    path = Path(path)
    refuse_link(path, input_name=input_name)
    try:
        tmp = _stage(path, data)
    except OSError as exc:
        raise write_error(exc, path, input_name=input_name) from None
    try:
        os.replace(tmp, path)
    except BaseException as exc:
        Path(tmp).unlink(missing_ok=True)
        if isinstance(exc, OSError):
            raise write_error(exc, path, input_name=input_name) from None
        raise


def write_text_atomic(path: Path, text: str, *, input_name: str | None = None) -> None:
    """Atomic UTF-8 text write (see :func:`write_bytes_atomic`)."""
    write_bytes_atomic(path, text.encode("utf-8"), input_name=input_name)


def write_many_atomic(files: dict[Path, str]) -> None:
    """Write several text files as one step: all are staged (written and synced) first, then renamed.

    If staging any of them fails, none of the targets is touched (:class:`FileWriteError`).  A
    rename that fails after others succeeded is reported with the files already replaced.
    """
    staged: list[tuple[str, Path]] = []
    targets = [Path(p) for p in files]
    for path in targets:
        refuse_link(path)
    current = targets[0] if targets else Path(".")
    try:
        for path, text in zip(targets, files.values()):
            current = path
            staged.append((_stage(path, text.encode("utf-8")), path))
    except BaseException as exc:
        for tmp, _ in staged:
            Path(tmp).unlink(missing_ok=True)
        if isinstance(exc, OSError):
            raise write_error(exc, current) from None
        raise
    done: list[Path] = []
    for k, (tmp, path) in enumerate(staged):
        try:
            os.replace(tmp, path)
        except OSError as exc:
            for rest, _ in staged[k:]:
                Path(rest).unlink(missing_ok=True)
            raise write_error(exc, path, unchanged="this file is unchanged" + (
                "; already replaced: " + ", ".join(p.name for p in done) if done else
                " and so are the others")) from None
        done.append(path)
