"""Reading the files a project names, safely: one place that opens them and names what is wrong.

Every file the kit reads from a project (``inputs.toml``, ``cover.toml``, a JSON export of another
project, a measured record) goes through this module.  A file is refused with a named
:class:`~latticecalc.errors.FileError` that names the input that gave the path, the file and, where
known, the line:

* no file at the path: :class:`~latticecalc.errors.MissingFileError`;
* a folder: :class:`~latticecalc.errors.FolderError`;
* a FIFO, a character or block device (``/dev/zero``) or a socket:
  :class:`~latticecalc.errors.SpecialFileError`, refused from its ``stat`` before it is opened (a FIFO
  would block the read, a device never ends); the file is then opened non-blocking and checked
  again on the open descriptor, so one swapped in between is refused too;
* larger than the cap of its kind (table below): :class:`~latticecalc.errors.FileTooLargeError`,
  with the cap and how to raise it in the message;
* text not in UTF-8 (UTF-16 or UTF-32 with or without a byte-order mark, Latin-1,
  Windows-1252): :class:`~latticecalc.errors.FileEncodingError`.  A UTF-8 byte-order mark (as some
  Windows editors write) is accepted and stripped;
* binary content (a NUL byte): :class:`~latticecalc.errors.BinaryFileError`;
* TOML with a key or table given twice: :class:`~latticecalc.errors.DuplicateKeyError` naming the key
  and both lines; other TOML or JSON syntax errors: :class:`~latticecalc.errors.FileFormatError`.

Messages never quote more of a file than :func:`excerpt` of the offending line of a text input (60
characters at most, control and direction characters escaped), and never quote a measured record.

Size caps
---------
========  =======  =================================  ===================================
kind      default  measured as                        environment variable
========  =======  =================================  ===================================
``toml``  1 MB     file size                          ``LATTICECALC_MAX_TOML_BYTES``
``json``  50 MB    file size                          ``LATTICECALC_MAX_JSON_BYTES``
``csv``   500 MB   samples × columns × 8 bytes        ``LATTICECALC_MAX_CSV_RECORD_BYTES``
``npy``   2 GB     samples × channels × item size     ``LATTICECALC_MAX_NPY_RECORD_BYTES``
========  =======  =================================  ===================================

The record caps bound the array the record becomes (a CSV record is estimated from its size and
first lines, then held to it while it is read); a ``.npy`` record is memory-mapped, so its cap
bounds what a scan touches rather than what is held.  A variable holds a number of bytes,
optionally with a decimal suffix: ``750M``, ``4G``, ``4 GB`` (1 MB = 10⁶ bytes).  The record
readers also take ``max_bytes=`` (for a project input that raises the cap).
"""

from __future__ import annotations

import fcntl
import json
import os
import re
import stat
import tomllib
from dataclasses import dataclass
from pathlib import Path
from typing import Any, BinaryIO

from latticecalc.errors import (
    BinaryFileError,
    DuplicateKeyError,
    FileEncodingError,
    FileError,
    FileFormatError,
    FileReadError,
    FileTooLargeError,
    FolderError,
    InputError,
    MissingFileError,
    SpecialFileError,
)

#: Longest excerpt of a line quoted in a message (characters).
EXCERPT_CHARS = 60
_UNITS = {"": 1, "k": 10**3, "m": 10**6, "g": 10**9, "t": 10**12}


@dataclass(frozen=True, kw_only=True)
class SizeLimit:
    """The size cap of one kind of file."""

    kind: str
    default: int
    env: str
    measured_as: str


LIMITS = {
    "toml": SizeLimit(kind="toml", default=10**6, env="LATTICECALC_MAX_TOML_BYTES", measured_as="file size"),
    "json": SizeLimit(kind="json", default=50 * 10**6, env="LATTICECALC_MAX_JSON_BYTES", measured_as="file size"),
    "csv": SizeLimit(kind="csv", default=500 * 10**6, env="LATTICECALC_MAX_CSV_RECORD_BYTES",
                     measured_as="samples × columns × 8 bytes"),
    "npy": SizeLimit(kind="npy", default=2 * 10**9, env="LATTICECALC_MAX_NPY_RECORD_BYTES",
                     measured_as="samples × channels × bytes per sample"),
}


def format_size(n: float) -> str:
    """A byte count as people say it (decimal units): ``1 MB``, ``48.2 MB``, ``2 GB``."""
    for unit, scale in (("TB", 10**12), ("GB", 10**9), ("MB", 10**6), ("kB", 10**3)):
        if n >= scale:
            return f"{n / scale:.3g} {unit}"
    return f"{int(n)} bytes"


def parse_size(text: str, *, name: str) -> int:
    """Bytes from ``"750M"``, ``"4 GB"``, ``"2000000"`` (decimal suffixes k, M, G, T); InputError otherwise."""
    m = re.fullmatch(r"\s*(\d+(?:\.\d+)?)\s*([kKmMgGtT]?)[bB]?\s*", str(text)[:40])
    if not m or float(m.group(1)) * _UNITS[m.group(2).lower()] < 1:
        raise InputError("not a size", input_name=name, expected="a number of bytes, e.g. 750M or 4G",
                         got=excerpt(str(text), limit=20))
    return int(float(m.group(1)) * _UNITS[m.group(2).lower()])


def limit_for(kind: str, override: Any = None) -> int:
    """The cap in bytes for ``kind``: ``override`` if given, else the environment variable, else the default."""
    spec = LIMITS[kind]
    if override is not None:
        if isinstance(override, str):
            return parse_size(override, name="max_bytes")
        if isinstance(override, bool) or not isinstance(override, (int, float)) or not override >= 1:
            raise InputError("not a size", input_name="max_bytes", expected="a positive number of bytes",
                             got=repr(override)[:40])
        return int(override)
    raw = os.environ.get(spec.env, "").strip()
    return parse_size(raw, name=spec.env) if raw else spec.default


def too_large(*, kind: str, size: int, cap: int, what: str, input_name: str | None, file: str,
              detail: str = "") -> FileTooLargeError:
    """The :class:`FileTooLargeError` for ``size`` bytes over ``cap``, naming the cap and how to raise it."""
    spec = LIMITS[kind]
    return FileTooLargeError(
        f"{what} is too large to read{detail}", input_name=input_name, file=file,
        expected=f"at most {format_size(cap)} ({spec.measured_as}; the cap for {kind.upper()} files)",
        got=format_size(size),
        hint=f"If the file is right, raise the cap with the environment variable {spec.env} "
             f"(e.g. {spec.env}={_suggest(size)})" + (" or the reader's max_bytes=" if kind in ("csv", "npy")
                                                      else ""))


def _suggest(size: int) -> str:
    for unit, scale in (("G", 10**9), ("M", 10**6)):
        if size >= scale:
            return f"{-(-size * 2 // scale)}{unit}"
    return str(2 * size)


def not_a_number(value: Any) -> str | None:
    """Why ``value`` (read from an exported JSON) is not a finite number, in words; None when it is one."""
    import math

    if not isinstance(value, bool) and isinstance(value, (int, float)) and math.isfinite(value):
        return None
    if isinstance(value, str):
        return f"text {excerpt(value, limit=30)}"
    if isinstance(value, float):
        return repr(value)                    # NaN or infinity
    return "nothing" if value is None else f"a {type(value).__name__}"


def excerpt(text: str, *, limit: int = EXCERPT_CHARS) -> str:
    """A short, quoted excerpt of one line for a message: stripped, cut at ``limit`` characters.

    ``repr`` escapes every character that is not printable (controls, line and paragraph
    separators, bidirectional controls), so the excerpt cannot break or reorder the message.
    """
    s = str(text).strip()
    cut = len(s) > limit
    return repr(s[:limit]) + ("…" if cut else "")


# --- the file itself -----------------------------------------------------------------------------
def _special_name(mode: int) -> str:
    if stat.S_ISFIFO(mode):
        return "a FIFO (named pipe)"
    if stat.S_ISCHR(mode):
        return "a character device"
    if stat.S_ISBLK(mode):
        return "a block device"
    if stat.S_ISSOCK(mode):
        return "a socket"
    return "not a regular file"


def _check_mode(mode: int, *, what: str, input_name: str | None, file: str) -> None:
    if stat.S_ISREG(mode):
        return
    if stat.S_ISDIR(mode):
        raise FolderError(f"{what} is a folder, not a file", input_name=input_name, file=file,
                          expected="a regular file", got="a folder",
                          hint="Name the file inside the folder")
    raise SpecialFileError(f"{what} is {_special_name(mode)}, not a regular file; it was not read",
                           input_name=input_name, file=file, expected="a regular file",
                           got=_special_name(mode), hint="Copy the data into a regular file and name that")


def _os_error(exc: OSError, *, what: str, input_name: str | None, file: str) -> FileError:
    if isinstance(exc, (FileNotFoundError, NotADirectoryError)):
        return MissingFileError(f"{what} was not found", input_name=input_name, file=file,
                                got="no file at this path", expected="an existing file")
    reason = "permission denied" if isinstance(exc, PermissionError) else (exc.strerror or type(exc).__name__)
    return FileReadError(f"{what} cannot be read ({reason})", input_name=input_name, file=file)


def check_file(path: str | Path, *, what: str = "the file", input_name: str | None = None,
               file: str | None = None) -> os.stat_result:
    """``stat`` of ``path`` if it is a regular file (links followed); a named error otherwise, nothing opened."""
    file = str(path) if file is None else file
    try:
        st = os.stat(path)
    except OSError as exc:
        if isinstance(exc, FileNotFoundError) and os.path.islink(path):
            raise MissingFileError(f"{what} is a link to nothing", input_name=input_name, file=file,
                                   expected="an existing file", got="a dangling link") from None
        raise _os_error(exc, what=what, input_name=input_name, file=file) from None
    _check_mode(st.st_mode, what=what, input_name=input_name, file=file)
    return st


def open_regular(path: str | Path, *, what: str = "the file", input_name: str | None = None,
                 file: str | None = None) -> BinaryIO:
    """Open a regular file for binary reading, refusing folders and special files before opening.

    The file is opened with ``O_NONBLOCK`` (a FIFO swapped in after the check cannot block) and its
    descriptor checked again before it is returned, blocking again, for reading.
    """
    file = str(path) if file is None else file
    check_file(path, what=what, input_name=input_name, file=file)
    flags = os.O_RDONLY | os.O_NONBLOCK | getattr(os, "O_NOCTTY", 0) | getattr(os, "O_CLOEXEC", 0)
    try:
        fd = os.open(path, flags)
    except OSError as exc:
        raise _os_error(exc, what=what, input_name=input_name, file=file) from None
    try:
        _check_mode(os.fstat(fd).st_mode, what=what, input_name=input_name, file=file)
        fcntl.fcntl(fd, fcntl.F_SETFL, fcntl.fcntl(fd, fcntl.F_GETFL) & ~os.O_NONBLOCK)
        return os.fdopen(fd, "rb")
    except BaseException:
        os.close(fd)
        raise


def read_bytes(path: str | Path, *, kind: str, what: str = "the file", input_name: str | None = None,
               file: str | None = None, max_bytes: Any = None) -> bytes:
    """The bytes of a regular file no larger than the cap of ``kind`` (see the module's table)."""
    file = str(path) if file is None else file
    cap = limit_for(kind, max_bytes)
    with open_regular(path, what=what, input_name=input_name, file=file) as fh:
        size = os.fstat(fh.fileno()).st_size
        if size > cap:
            raise too_large(kind=kind, size=size, cap=cap, what=what, input_name=input_name, file=file)
        try:
            data = fh.read(cap + 1)
        except OSError as exc:
            raise _os_error(exc, what=what, input_name=input_name, file=file) from None
    if len(data) > cap:             # grew while it was read
        raise too_large(kind=kind, size=len(data), cap=cap, what=what, input_name=input_name, file=file)
    return data


# --- text ----------------------------------------------------------------------------------------
_UTF8_BOM = b"\xef\xbb\xbf"
_OTHER_BOMS = ((b"\xff\xfe\x00\x00", "UTF-32"), (b"\x00\x00\xfe\xff", "UTF-32"),
               (b"\xff\xfe", "UTF-16"), (b"\xfe\xff", "UTF-16"))
_SAVE_AS_UTF8 = "Save the file as UTF-8 (in most editors: Save As, Encoding: UTF-8)"


def _utf16_without_bom(data: bytes) -> bool:
    sample = data[:4096]
    half = len(sample) // 2
    if half < 2:
        return False
    even, odd = sample[0::2].count(0), sample[1::2].count(0)
    return max(even, odd) >= 0.7 * half and min(even, odd) <= 0.05 * half


def line_at(data: bytes, index: int) -> tuple[int, int]:
    """1-based ``(line, column)`` of byte ``index`` in ``data``."""
    start = data.rfind(b"\n", 0, index) + 1
    return data.count(b"\n", 0, index) + 1, index - start + 1


def decode_text(data: bytes, *, what: str = "the file", input_name: str | None = None, file: str,
                quote: bool = True, first_line: int = 1) -> str:
    """UTF-8 text from ``data`` (a UTF-8 byte-order mark stripped), or a named encoding or binary error.

    ``quote``: an encoding error may show an escaped excerpt of the offending line (text inputs);
    never for a measured record.  ``first_line``: the line number of ``data``'s first line.
    """
    for bom, name in _OTHER_BOMS:
        if data.startswith(bom):
            raise FileEncodingError(f"{what} is {name} text, not UTF-8", input_name=input_name, file=file,
                                    line=first_line, expected="UTF-8 text",
                                    got=f"{name} (byte-order mark {bom.hex(' ').upper()})", hint=_SAVE_AS_UTF8)
    if data.startswith(_UTF8_BOM):
        data = data[len(_UTF8_BOM):]
    nul = data.find(b"\0")
    if nul >= 0:
        if _utf16_without_bom(data):
            raise FileEncodingError(f"{what} looks like UTF-16 text (without a byte-order mark), not UTF-8",
                                    input_name=input_name, file=file, line=first_line, expected="UTF-8 text",
                                    got="UTF-16", hint=_SAVE_AS_UTF8)
        line, col = line_at(data, nul)
        raise BinaryFileError(f"{what} holds binary content, not text", input_name=input_name, file=file,
                              line=first_line + line - 1, expected="UTF-8 text",
                              got=f"a NUL byte at column {col}", hint="Name the text file, not a binary one")
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError as exc:
        line, col = line_at(data, exc.start)
        got = f"byte 0x{data[exc.start]:02X} at column {col}"
        if quote:
            start = data.rfind(b"\n", 0, exc.start) + 1
            end = data.find(b"\n", exc.start)
            got += " in " + excerpt(data[start:end if end >= 0 else None].decode("utf-8", "backslashreplace"))
        raise FileEncodingError(f"{what} is not UTF-8 text", input_name=input_name, file=file,
                                line=first_line + line - 1, expected="UTF-8 text", got=got,
                                hint="It was probably saved as Latin-1 or Windows-1252. " + _SAVE_AS_UTF8) from None


def read_text(path: str | Path, *, kind: str, what: str = "the file", input_name: str | None = None,
              file: str | None = None, quote: bool = True) -> str:
    """The UTF-8 text of a regular file within the cap of ``kind`` (BOM stripped); named errors otherwise."""
    file = str(path) if file is None else file
    data = read_bytes(path, kind=kind, what=what, input_name=input_name, file=file)
    return decode_text(data, what=what, input_name=input_name, file=file, quote=quote)


# --- TOML and JSON -------------------------------------------------------------------------------
_HEADER = re.compile(r"^\s*(\[\[?)\s*([^\]]+?)\s*\]\]?\s*(#.*)?$")
_KEY = re.compile(r'^\s*("[^"]*"|[A-Za-z0-9_\-.]+)\s*=')
_AT = re.compile(r"\(at line (\d+), column (\d+)\)")
_DUPLICATE = ("Cannot overwrite a value", "twice", "Cannot mutate immutable namespace")


def _duplicate_key(text: str, at: int | None) -> tuple[str, int, int] | None:
    """``(dotted key, first line, repeated line)`` of a key or table given twice, found line by line."""
    seen: dict[tuple[str, str], int] = {}
    table, scope = "", ""
    found = []
    for i, line in enumerate(text.splitlines(), start=1):
        m = _HEADER.match(line)
        if m:
            table = re.sub(r'["\s]', "", m.group(2))
            if m.group(1) == "[[":
                scope = f"{table}#{i}"          # each [[array]] element is a new table
                continue
            scope, key = table, ("", f"[{table}]")
        else:
            m = _KEY.match(line)
            if not m:
                continue
            name = m.group(1).strip('"')
            key = (scope, f"{table}.{name}" if table else name)
        if key in seen:
            found.append((key[1], seen[key], i))
        else:
            seen[key] = i
    for hit in found:
        if hit[2] == at:
            return hit
    return found[0] if found else None


def parse_toml(text: str, *, file: str, what: str = "the file", input_name: str | None = None) -> dict:
    """Parse TOML text, naming what is wrong with the line and an escaped excerpt of it.

    A key or table given twice is a :class:`DuplicateKeyError` (naming the key and both lines), any
    other error a :class:`FileFormatError`.
    """
    try:
        return tomllib.loads(text)
    except RecursionError:
        raise FileFormatError("not valid TOML (nested too deeply)", input_name=input_name, file=file) from None
    except tomllib.TOMLDecodeError as exc:
        msg = str(exc)
        m = _AT.search(msg)
        line = int(m.group(1)) if m else getattr(exc, "lineno", None)
        reason = re.sub(r"\s*\(at [^)]*\)\s*$", "", msg)
    lines = text.splitlines()
    if any(d in reason for d in _DUPLICATE):
        hit = _duplicate_key(text, line)
        if hit is not None:
            name, first, again = hit
            table = name.startswith("[")
            raise DuplicateKeyError(f"the {'table ' + name if table else 'key'} is given twice (lines {first} and "
                                    f"{again})", input_name=input_name or name.strip("[]"), file=file, line=again,
                                    expected="each key and each [table] once", got=excerpt(lines[again - 1]),
                                    hint=f"Keep one of the two (line {first} or line {again})") from None
        raise DuplicateKeyError(f"a key or table is given twice ({reason})", input_name=input_name, file=file,
                                line=line, expected="each key and each [table] once",
                                got=excerpt(lines[line - 1]) if line and line <= len(lines) else None) from None
    got = excerpt(lines[line - 1]) if line and line <= len(lines) else None
    raise FileFormatError(f"{what} is not valid TOML ({reason})", input_name=input_name, file=file, line=line,
                          got=got) from None


def read_toml(path: str | Path, *, what: str = "the file", input_name: str | None = None,
              file: str | None = None) -> tuple[str, dict]:
    """``(text, data)`` of a TOML file read through :func:`read_text` and :func:`parse_toml`."""
    file = str(path) if file is None else file
    text = read_text(path, kind="toml", what=what, input_name=input_name, file=file)
    return text, parse_toml(text, file=file, what=what, input_name=input_name)


def read_json(path: str | Path, *, what: str = "the file", input_name: str | None = None,
              file: str | None = None) -> Any:
    """Parsed JSON of a regular UTF-8 file within the JSON cap; :class:`FileFormatError` when not JSON."""
    file = str(path) if file is None else file
    text = read_text(path, kind="json", what=what, input_name=input_name, file=file)
    try:
        return json.loads(text)
    except RecursionError:
        raise FileFormatError(f"{what} is not valid JSON (nested too deeply)", input_name=input_name,
                              file=file) from None
    except json.JSONDecodeError as exc:
        lines = text.splitlines()
        got = excerpt(lines[exc.lineno - 1]) if 0 < exc.lineno <= len(lines) else None
        raise FileFormatError(f"{what} is not valid JSON ({exc.msg} at column {exc.colno})", input_name=input_name,
                              file=file, line=exc.lineno, got=got) from None
