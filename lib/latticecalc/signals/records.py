"""Reading and checking measured vibration records (CSV and NumPy ``.npy``).

A record is one to three channels of acceleration or velocity sampled at a constant rate.

CSV layout
----------
Optional comment lines at the top (``# sample_rate = 1000 Hz``, ``# unit = m/s^2``), then one
header row naming the columns, with the unit in square brackets or parentheses
(``time [s], x [m/s^2], y [m/s^2], z [m/s^2]``), then the data rows.  The separator is a comma,
a semicolon or a tab (taken from the header row).  A time column (named ``t`` or ``time``) gives
the sample rate; without one, state the sample rate in a comment or in the inputs.  ``g`` in a
unit means the standard acceleration of gravity (9.80665 m/s²), not the gram.

Checks
------
Empty file, text in a number column, rows with a wrong number of fields, NaN or infinite values,
non-monotonic time, gaps and uneven sampling in the time column, a unit that is neither an
acceleration nor a velocity: :class:`~latticecalc.errors.RecordError` naming the file and line.
Clipping (flat tops at full scale) gives a :class:`RecordWarning` and is listed in
``Record.warnings``.  A record too short for the lowest band asked, or sampled too slowly for the
highest, is refused by :meth:`Record.check_bands`.

Large ``.npy`` files are memory-mapped and checked block by block, so a one-hour record is never
copied whole.  CSV files are read and parsed block by block into the final array, so memory stays
near that array's size.

Files
-----
Records are opened through :mod:`latticecalc.files`: regular files only (a folder, FIFO,
device or socket is refused before it is opened), within the size cap of their kind (CSV: the
array, samples × columns × 8 bytes, 500 MB; ``.npy``: the array from its header, 2 GB; raised by
``max_bytes=`` or the environment variables named there), UTF-8 text for CSV.  A CSV file whose
first row is not a header of column names is not a record, and nothing of it is quoted; units and a
sample-rate source are settled from the header before any data row is read.
"""

from __future__ import annotations

import bisect
import io
import math
import mmap as mmap_module
import os
import re
import warnings
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pint

from latticecalc import files
from latticecalc.errors import LatticeCalcError, RecordError
from latticecalc.files import excerpt
from latticecalc.sheet import COMMON_PRACTICE, CalcResult, Source, quantity_step
from latticecalc.signals.bands import DEFAULT_HIGHEST, DEFAULT_LOWEST, third_octave_bands
from latticecalc.units import Q_, check_dimension, check_positive, ureg

#: Relative deviation of a time step from the median step above which sampling counts as uneven.
UNEVEN_TOLERANCE = 0.01
#: A time step longer than this many median steps is reported as a gap.
GAP_FACTOR = 1.5
#: Consecutive equal samples at a channel's extreme taken as a clipped flat top.
CLIP_RUN = 3
#: Samples per block when scanning large arrays.
BLOCK_SAMPLES = 1 << 20
#: Sample rate over highest band-edge frequency required (anti-alias margin of analysers).
NYQUIST_MARGIN = 2.56
#: Minimum bandwidth-time product B·T of the lowest band (random error of the mean square
#: 1/sqrt(B·T) <= 0.5, Bendat & Piersol).
MIN_BT = 4.0

BENDAT_PIERSOL = Source(author="Bendat, J. S. & Piersol, A. G.",
                        title="Random Data: Analysis and Measurement Procedures, 4th ed.", year=2010,
                        locator="§8.2, normalized random error of mean-square estimates 1/sqrt(B T)",
                        tag="from memory")

QUANTITIES = ("acceleration", "velocity")


class RecordWarning(UserWarning):
    """A record can be used but something in it deserves a look (clipping)."""


class DemoRecordError(RecordError):
    """Synthetic demo data would replace a file, leave the project folder or go through a link.

    Nothing is written.  The error names the input (``record.file``, ``test.input_file``) and the
    path concerned.
    """


def _unit_of(text: str, *, file: str, line: int | None, column: str) -> tuple[str, str]:
    """Parse a unit text; return (pint unit text, 'acceleration' | 'velocity')."""
    raw = text.strip()
    fixed = re.sub(r"(?<![A-Za-z_])g(?![A-Za-z_0-9])", "g_0", raw)
    try:
        unit = ureg.Unit(fixed)
    except (pint.errors.UndefinedUnitError, pint.errors.DefinitionSyntaxError, ValueError,
            AttributeError, TypeError, SyntaxError):
        raise RecordError("unknown unit", input_name=column, expected="an acceleration (m/s², mm/s², g) "
                          "or a velocity (m/s, mm/s)", got=excerpt(raw, limit=40), file=file, line=line) from None
    q = Q_(1.0, unit)
    for kind in QUANTITIES:
        try:
            check_dimension(q, name=column, expected=kind)
            return str(unit), kind
        except LatticeCalcError:
            continue
    raise RecordError("the unit is neither an acceleration nor a velocity", input_name=column,
                      expected="an acceleration (m/s², mm/s², g) or a velocity (m/s, mm/s)",
                      got=f"{excerpt(raw, limit=40)} ({q.dimensionality})", file=file, line=line)


@dataclass(frozen=True, kw_only=True)
class Record(CalcResult):
    """A checked record.  ``value`` maps channel names to Quantity arrays (views, not copies).

    Attributes
    ----------
    file:
        Where it was read from.
    channels:
        Channel names, in file order.
    data:
        Samples, shape ``(n, channels)``, in ``unit`` (may be a read-only memory map).
    unit:
        Unit of every channel (pint text).
    quantity:
        ``"acceleration"`` or ``"velocity"``.
    sample_rate:
        Samples per second [frequency].
    warnings:
        Messages about usable but doubtful data (clipping).
    """

    file: str
    channels: tuple[str, ...]
    data: np.ndarray
    unit: str
    quantity: str
    sample_rate: pint.Quantity
    warnings: tuple[str, ...] = ()

    @property
    def n_samples(self) -> int:
        """Number of samples per channel."""
        return int(self.data.shape[0])

    @property
    def duration(self) -> pint.Quantity:
        """Record length, n / sample rate [time]."""
        return (self.n_samples / self.sample_rate).to("s")

    def channel(self, name: str) -> pint.Quantity:
        """One channel as a Quantity array in the record's unit."""
        if name not in self.channels:
            raise RecordError("no such channel", input_name="channel", expected=", ".join(self.channels),
                              got=repr(name), file=self.file)
        return Q_(self.data[:, self.channels.index(name)], self.unit)

    def blocks(self, *, samples: int = BLOCK_SAMPLES) -> Iterator[tuple[int, np.ndarray]]:
        """Yield ``(first_sample, block)`` with ``block`` of shape ``(<= samples, channels)``."""
        for start in range(0, self.n_samples, samples):
            yield start, np.asarray(self.data[start:start + samples])

    def check_bands(self, *, lowest=DEFAULT_LOWEST, highest=DEFAULT_HIGHEST, min_bt: float = MIN_BT) -> None:
        """Refuse a record too short for the lowest band or sampled too slowly for the highest.

        The record must last at least ``min_bt / B`` (B the lowest band's bandwidth; Bendat &
        Piersol 2010: random error of a band mean square 1/sqrt(B·T)), and the sample rate must be
        at least 2.56 times the highest band's upper edge (common practice for analysers).
        """
        bands = third_octave_bands(lowest=lowest, highest=highest)
        width = float((bands.upper[0] - bands.lower[0]).to("Hz").m)
        need_t = min_bt / width
        have_t = float(self.duration.to("s").m)
        if have_t < need_t:
            raise RecordError("record too short for the lowest band", input_name="duration",
                              expected=f">= {need_t:.1f} s for the {bands.value['nominal'][0]} Hz band "
                              f"(B·T >= {min_bt:g})", got=f"{have_t:.2f} s", file=self.file,
                              hint="Use a longer record or a higher lowest band")
        fs = float(self.sample_rate.to("Hz").m)
        f2 = float(bands.upper[-1].to("Hz").m)
        if fs < NYQUIST_MARGIN * f2:
            raise RecordError("sample rate too low for the bands asked", input_name="sample_rate",
                              expected=f">= {NYQUIST_MARGIN * f2:.0f} Hz ({NYQUIST_MARGIN} × the "
                              f"{bands.value['nominal'][-1]} Hz band's upper edge {f2:.1f} Hz)",
                              got=f"{fs:g} Hz", file=self.file,
                              hint="Lower the highest band or use a faster-sampled record")


# --- CSV --------------------------------------------------------------------------------------
_HEADER_UNIT = re.compile(r"^\s*(?P<name>[^\[\(]*?)\s*[\[\(](?P<unit>[^\]\)]*)[\]\)]\s*$")
_COMMENT_KEY = re.compile(r"^#\s*(?P<key>[A-Za-z_ ]+?)\s*[:=]\s*(?P<value>.+?)\s*$")
#: A column name: a letter or '_' first, then letters, digits, spaces, '_', '-', '.', '+', "'" (64 at most).
_COLUMN_NAME = re.compile(r"^[^\W\d][\w .+'-]{0,63}$")
#: Bytes searched for the comment lines and the header row.
CSV_HEAD_BYTES = 1 << 20
#: Bytes of a CSV record read and parsed at a time: the text of one block is held, never the whole file's.
CSV_BLOCK_BYTES = 1 << 20
#: Longest data line accepted (a record has at most a time column and three channels).
CSV_MAX_LINE = 1 << 16


def _split(line: str, sep: str | None) -> list[str]:
    return [c.strip() for c in (line.split(sep) if sep else line.split())]


def _is_data(line: str) -> bool:
    text = line.strip()
    return bool(text) and not text.startswith("#")


def _first_bad_line(lines: list[str], first_line: int, sep: str | None, names: list[str], file: str) -> RecordError:
    """The error for the first data line that is not ``len(names)`` numbers.

    Only a short, escaped excerpt of the offending field is quoted (the header was valid, so the
    file is a record), never the line.
    """
    ncol = len(names)
    for k, line in enumerate(lines):
        if not _is_data(line):
            continue
        cells = _split(line.split("#", 1)[0], sep)
        if len(cells) != ncol:
            return RecordError("wrong number of fields in a row", input_name="row",
                               expected=f"{ncol} fields", got=f"{len(cells)}", file=file, line=first_line + k)
        for name, c in zip(names, cells):
            try:
                float(c)
            except ValueError:
                return RecordError("text in a number column", input_name=name, expected="a number",
                                   got=excerpt(c, limit=20) if c else "an empty field", file=file,
                                   line=first_line + k)
    return RecordError("cannot read the data rows", file=file, line=first_line)


def _header(head: str, *, sep: str | None, file: str, line: int, input_name: str) -> tuple[list[str], list]:
    """Column names and units of the header row; RecordError (quoting nothing of the row) otherwise."""
    cells = [head.strip()] if sep is None and _HEADER_UNIT.match(head.strip()) else _split(head, sep)
    names, units = [], []
    for cell in (c[1:-1].strip() if len(c) > 1 and c[0] == c[-1] == '"' else c for c in cells):
        m = _HEADER_UNIT.match(cell)
        names.append((m.group("name") if m else cell).strip())
        units.append(m.group("unit").strip() if m else None)
    if any(_is_number(n) for n in names):
        raise RecordError("the first row is not a header", input_name=input_name,
                          expected="column names such as 'time [s], z [m/s^2]'", got="a row of numbers",
                          file=file, line=line)
    if len(head) > 1000 or not all(_COLUMN_NAME.match(n) for n in names) or any(
            u is not None and len(u) > 40 for u in units):
        raise RecordError("not a record: the first row is not a header of column names", input_name=input_name,
                          expected="a header such as 'time [s], z [m/s^2]' (names of letters, digits, spaces, "
                          "'_', '-' and '.', each with its unit in [ ] or ( )), comma, semicolon or tab separated",
                          got=f"a first row of {len(names)} field(s) that are not all column names",
                          file=file, line=line, hint="Check that the path names the record")
    return names, units


class _Rows:
    """Where each data row of a CSV record came from: the file line of row ``r`` (:meth:`line_of`)."""

    def __init__(self) -> None:
        self.first_rows: list[int] = []
        self.blocks: list[tuple[int, np.ndarray | None]] = []

    def add(self, first_row: int, first_line: int, lines: np.ndarray | None) -> None:
        """A block of rows starting at ``first_line``; ``lines`` the line of each row unless one a line."""
        self.first_rows.append(first_row)
        self.blocks.append((first_line, lines))

    def line_of(self, row: int) -> int | None:
        """The 1-based file line of data row ``row``."""
        k = bisect.bisect_right(self.first_rows, row) - 1
        if k < 0:
            return None
        first_line, lines = self.blocks[k]
        offset = row - self.first_rows[k]
        if lines is None:
            return first_line + offset
        return int(lines[offset]) if offset < lines.size else None


class _Table:
    """The parsed columns of a CSV record, grown block by block within the size cap."""

    def __init__(self, *, ncol: int, tcol: int | None, chan_idx: list[int], cap: int, total_bytes: int,
                 what: str, input_name: str, file: str) -> None:
        self.ncol, self.tcol, self.chan_idx = ncol, tcol, chan_idx
        self.cap, self.total_bytes = cap, total_bytes
        self.what, self.input_name, self.file = what, input_name, file
        self.rows = 0
        self.time: np.ndarray | None = None
        self.channels: np.ndarray | None = None

    def _check(self, rows: int) -> None:
        size = rows * self.ncol * 8
        if size > self.cap:
            raise files.too_large(kind="csv", size=size, cap=self.cap, what=self.what, input_name=self.input_name,
                                  file=self.file, detail=f": about {rows:,} samples × {self.ncol} columns "
                                  f"as 8-byte numbers (estimated from its size)")

    def _reserve(self, rows: int) -> None:
        self._check(rows)
        nchan = len(self.chan_idx)
        if self.channels is None:
            self.channels = np.empty((rows, nchan))
            self.time = np.empty(rows) if self.tcol is not None else None
        else:
            self.channels.resize((rows, nchan), refcheck=False)   # in place: no view of it exists yet
            if self.time is not None:
                self.time.resize(rows, refcheck=False)

    def append(self, block: np.ndarray, *, consumed: int, block_bytes: int) -> None:
        """Copy a parsed block in; the first block sets the estimate of the record's length."""
        n = block.shape[0]
        need = self.rows + n
        if self.channels is None:
            per_row = max(block_bytes / n, 1.0)
            estimate = need + math.ceil(max(self.total_bytes - consumed, 0) / per_row)
            self._check(estimate)
            self._reserve(math.ceil(estimate * 1.02) + 1)
        elif need > self.channels.shape[0]:
            self._check(need)
            self._reserve(max(need, math.ceil(self.channels.shape[0] * 1.25)))
        self.channels[self.rows:need] = block[:, self.chan_idx]
        if self.time is not None:
            self.time[self.rows:need] = block[:, self.tcol]
        self.rows = need

    def finish(self) -> tuple[np.ndarray | None, np.ndarray]:
        """``(time, channels)`` trimmed to the rows read."""
        if self.channels is None:
            self._reserve(0)
        self.channels.resize((self.rows, len(self.chan_idx)), refcheck=False)
        if self.time is not None:
            self.time.resize(self.rows, refcheck=False)
        return self.time, self.channels


def _parse_block(chunk: bytes, *, first_line: int, sep: str | None, names: list[str], file: str,
                 input_name: str) -> tuple[np.ndarray, np.ndarray | None]:
    """Parse whole lines of a CSV record; ``(rows, line of each row or None when one row a line)``."""
    text = files.decode_text(chunk, what="the record", input_name=input_name, file=file, quote=False,
                             first_line=first_line)
    lines_in = chunk.count(b"\n") + (0 if chunk.endswith(b"\n") else 1)
    lines = None
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")      # a block of comment or blank lines only is no data
        try:
            block = np.loadtxt(io.StringIO(text), delimiter=sep, comments="#", ndmin=2, dtype=float)
        except ValueError:
            block = None
        if block is None or (block.shape[0] and block.shape[1] != len(names)) or (
                block.shape[0] != lines_in and block.shape[0]):
            all_lines = text.split("\n")
            keep = [k for k, ln in enumerate(all_lines) if _is_data(ln)]
            try:
                block = np.loadtxt(io.StringIO("\n".join(all_lines[k] for k in keep)), delimiter=sep,
                                   comments="#", ndmin=2, dtype=float)
            except ValueError:
                raise _first_bad_line(all_lines, first_line, sep, names, file) from None
            if block.shape[0] and block.shape[1] != len(names):
                raise _first_bad_line(all_lines, first_line, sep, names, file)
            lines = np.asarray(keep, dtype=np.int64) + first_line if block.shape[0] == len(keep) else None
    if block.shape[0] == 0:
        return np.empty((0, len(names))), None
    bad = ~np.isfinite(block)
    if bad.any():
        row, col = (int(x) for x in np.argwhere(bad)[0])
        line = int(lines[row]) if lines is not None else first_line + row
        raise RecordError("missing or non-finite value (NaN or inf)", input_name=names[col],
                          expected="a finite number", got=repr(float(block[row, col])), file=file, line=line)
    return block, lines


def read_csv(path, *, sample_rate=None, unit: str | None = None, time_column: str | None = None,
             full_scale=None, input_name: str = "record.file", max_bytes=None) -> Record:
    """Read and check a CSV record.

    The file is read block by block (:data:`CSV_BLOCK_BYTES`), so memory stays near the size of the
    final array; a record whose array (samples × columns × 8 bytes) would exceed the CSV cap of
    :mod:`latticecalc.files` (500 MB unless ``max_bytes`` or ``LATTICECALC_MAX_CSV_RECORD_BYTES``
    says otherwise) is refused before it is read.  Only a regular UTF-8 file is read (a folder, FIFO or
    device is refused before it is opened); a file whose first row is not a header of column names is
    not a record, and nothing of it is quoted in the error.

    Parameters
    ----------
    path:
        The CSV file.
    sample_rate:
        Samples per second [frequency]; needed when the file has no time column and no
        ``# sample_rate =`` comment.
    unit:
        Unit of the channels (``"m/s^2"``, ``"mm/s"``, ``"g"``) when the header does not give one;
        a unit in the header wins only if this is ``None``.
    time_column:
        Name of the time column (default: a column named ``t`` or ``time``, if any).
    full_scale:
        The sensor's full-scale value [acceleration or velocity]; samples at 99.9 % of it or more
        are reported as clipped.  Without it, flat tops at the channel's extreme are reported.
    input_name:
        The input that named the file, for the messages.
    max_bytes:
        Cap on the record's array in bytes (default: the CSV cap, see :mod:`latticecalc.files`).

    Returns
    -------
    Record
    """
    file = str(path)
    cap = files.limit_for("csv", max_bytes)
    with files.open_regular(path, what="the record", input_name=input_name, file=file) as fh:
        total = os.fstat(fh.fileno()).st_size
        head = fh.read(CSV_HEAD_BYTES)
        eof = len(head) < CSV_HEAD_BYTES
        if head.startswith(b"\xef\xbb\xbf"):
            head = head[3:]
        cut = len(head) if eof else head.rfind(b"\n") + 1
        if cut == 0 and not eof:
            raise RecordError("not a record: no line break in its first MB", input_name=input_name, file=file,
                              expected="a header row, then one row of numbers per line", got="one very long line")
        lines = files.decode_text(head[:cut], what="the record", input_name=input_name, file=file,
                                  quote=False).split("\n")
        meta: dict[str, str] = {}
        k = 0
        while k < len(lines) and not _is_data(lines[k]):
            m = _COMMENT_KEY.match(lines[k].strip())
            if m:
                meta[m.group("key").strip().lower().replace(" ", "_")] = m.group("value")
            k += 1
        if k >= len(lines):
            if eof:
                raise RecordError("empty file: no header row and no data", file=file, line=1,
                                  expected="a header row naming the columns, then data rows")
            raise RecordError("not a record: no header row in its first MB", input_name=input_name, file=file,
                              expected="a header row naming the columns, then data rows")
        header_line = k
        head_text = lines[k]
        sep = "," if "," in head_text else (";" if ";" in head_text else ("\t" if "\t" in head_text else None))
        names, units = _header(head_text, sep=sep, file=file, line=header_line + 1, input_name=input_name)
        ncol = len(names)
        lowered = [n.lower() for n in names]
        tcol = None
        if time_column is not None:
            if time_column not in names:
                raise RecordError("time column not found", input_name="time_column", expected=", ".join(names),
                                  got=excerpt(time_column, limit=40), file=file, line=header_line + 1)
            tcol = names.index(time_column)
        else:
            for i, n in enumerate(lowered):
                if n in ("t", "time") or n.startswith("time"):
                    tcol = i
                    break
        chan_idx = [i for i in range(ncol) if i != tcol]
        if not chan_idx:
            raise RecordError("no channel columns besides time", file=file, line=header_line + 1)
        if len(chan_idx) > 3:
            raise RecordError("too many channels", expected="one to three channels", got=str(len(chan_idx)),
                              file=file, line=header_line + 1)
        # units and a sample-rate source are settled before any data row is read (or quoted)
        chosen, scales = None, []
        for i in chan_idx:
            text_u = unit if unit is not None else (units[i] or meta.get("unit"))
            if text_u is None:
                raise RecordError("no unit for the channel", input_name=names[i],
                                  expected="a unit in the header ('z [m/s^2]'), a '# unit =' comment, or "
                                  "the unit input", got="none", file=file, line=header_line + 1)
            u, kind = _unit_of(text_u, file=file, line=header_line + 1, column=names[i])
            if chosen is None:
                chosen = (u, kind)
            elif Q_(1.0, u).dimensionality != Q_(1.0, chosen[0]).dimensionality:
                raise RecordError("channels mix acceleration and velocity", input_name=names[i],
                                  expected=chosen[1], got=kind, file=file, line=header_line + 1)
            scales.append(1.0 if u == chosen[0] else float(Q_(1.0, u).to(chosen[0]).m))
        stated = sample_rate if sample_rate is not None else meta.get("sample_rate")
        if tcol is None and stated is None:
            raise RecordError("no time column and no sample rate", input_name="sample_rate",
                              expected="a 'time [s]' column, a '# sample_rate = 1000 Hz' comment, or "
                              "the sample_rate input", got="neither", file=file)
        # the data, block by block
        start = 0
        for _ in range(header_line + 1):
            nl = head.find(b"\n", start)
            start = len(head) if nl < 0 else nl + 1
        carry = head[start:]
        consumed = start
        del head, lines
        line_no = header_line + 2
        table = _Table(ncol=ncol, tcol=tcol, chan_idx=chan_idx, cap=cap, total_bytes=total, what="the record",
                       input_name=input_name, file=file)
        rows = _Rows()
        while True:
            more = b"" if eof else fh.read(CSV_BLOCK_BYTES)
            eof = eof or not more
            buf = carry + more
            if eof:
                chunk, carry = buf, b""
            else:
                cut = buf.rfind(b"\n") + 1
                chunk, carry = buf[:cut], buf[cut:]
                if len(carry) > CSV_MAX_LINE:
                    raise RecordError(f"a line longer than {CSV_MAX_LINE} bytes: not a row of a record",
                                      input_name=input_name, file=file,
                                      line=line_no + chunk.count(b"\n"), expected="one row of numbers per line")
            if chunk:
                block, row_lines = _parse_block(chunk, first_line=line_no, sep=sep, names=names, file=file,
                                                input_name=input_name)
                consumed += len(chunk)
                if block.shape[0]:
                    rows.add(table.rows, line_no, row_lines)
                    table.append(block, consumed=consumed, block_bytes=len(chunk))
                line_no += chunk.count(b"\n")
            del buf, chunk
            if eof:
                break
    time, data = table.finish()
    if table.rows == 0:
        raise RecordError("no data rows after the header", file=file, line=header_line + 1)
    fs_q = None
    if tcol is not None:
        t_unit = units[tcol] or "s"
        try:
            t_scale = float(Q_(1.0, t_unit).to("s").m)
        except (pint.errors.DimensionalityError, pint.errors.UndefinedUnitError, pint.errors.DefinitionSyntaxError,
                ValueError, AttributeError, TypeError, SyntaxError):
            raise RecordError("the time column's unit is not a time", input_name=names[tcol],
                              expected="s or ms", got=excerpt(t_unit, limit=40), file=file,
                              line=header_line + 1) from None
        if t_scale != 1.0:
            time *= t_scale
        fs_q = _rate_from_time(time, file=file, line_of=rows.line_of)
        del time
    if stated is not None:
        from latticecalc.units import parse

        stated_q = parse(stated, name="sample_rate", expected="frequency", file=file)
        check_positive(stated_q, name="sample_rate")
        if fs_q is not None and abs(float((stated_q / fs_q).to("").m) - 1) > UNEVEN_TOLERANCE:
            raise RecordError("the stated sample rate disagrees with the time column",
                              input_name="sample_rate",
                              expected=f"{fs_q.to('Hz'):.6g~P} (from the time column)",
                              got=f"{stated_q:~P}", file=file)
        fs_q = fs_q if fs_q is not None else stated_q.to("Hz")
    for j, factor in enumerate(scales):
        if factor != 1.0:
            data[:, j] *= factor
    return _finish(file=file, channels=tuple(names[i] for i in chan_idx), data=data, unit=chosen[0],
                   quantity=chosen[1], sample_rate=fs_q, full_scale=full_scale,
                   line_of=rows.line_of, source_text="CSV")


def _is_number(text: str) -> bool:
    try:
        float(text)
        return True
    except ValueError:
        return False


def _rate_from_time(t: np.ndarray, *, file: str, line_of) -> pint.Quantity:
    """Sample rate from a time column [s], checked block by block (one full-length temporary: the median step)."""
    if t.size < 2:
        raise RecordError("a single row cannot define a sample rate", file=file, line=line_of(0))
    n = t.size
    step = 1 << 18
    for start in range(0, n - 1, step):
        dt = np.diff(t[start:start + step + 1])
        nonpos = np.flatnonzero(dt <= 0)
        if nonpos.size:
            r = start + int(nonpos[0]) + 1
            raise RecordError("time does not increase (non-monotonic or repeated time)", input_name="time",
                              expected=f"a time after {t[r - 1]:.9g} s", got=f"{t[r]:.9g} s", file=file,
                              line=line_of(r))
    med = float(np.median(np.diff(t), overwrite_input=True))
    for start in range(0, n - 1, step):
        dt = np.diff(t[start:start + step + 1])
        gaps = np.flatnonzero(dt > GAP_FACTOR * med)
        if gaps.size:
            r = start + int(gaps[0]) + 1
            raise RecordError("gap in the time column", input_name="time",
                              expected=f"a step of {med:.6g} s",
                              got=f"{t[r] - t[r - 1]:.6g} s (from {t[r - 1]:.9g} s)",
                              file=file, line=line_of(r), hint="Split the record at the gap or fill it")
    for start in range(0, n - 1, step):
        dt = np.diff(t[start:start + step + 1])
        uneven = np.flatnonzero(np.abs(dt - med) > UNEVEN_TOLERANCE * med)
        if uneven.size:
            r = start + int(uneven[0]) + 1
            raise RecordError("uneven sampling", input_name="time",
                              expected=f"a step of {med:.6g} s ± {UNEVEN_TOLERANCE:.0%}",
                              got=f"{t[r] - t[r - 1]:.6g} s", file=file, line=line_of(r),
                              hint="Resample the record to a constant rate first")
    fs = (n - 1) / (t[-1] - t[0])
    return Q_(fs, "Hz")


def _runs_at(x: np.ndarray, level: float, min_run: int) -> np.ndarray:
    """Start indices of runs of ``min_run`` or more consecutive samples equal to ``level``."""
    idx = np.flatnonzero(x == level)
    if idx.size < min_run:
        return np.array([], dtype=int)
    breaks = np.flatnonzero(np.diff(idx) != 1)
    starts = np.concatenate(([0], breaks + 1))
    ends = np.concatenate((breaks + 1, [idx.size]))
    keep = (ends - starts) >= min_run
    return idx[starts[keep]]


def release_pages(array) -> None:
    """Let the system drop the pages of a memory-mapped record read so far (no-op for arrays in memory).

    Reading one channel of an (n, 3) file touches every page of the file, and mapped pages count in
    the process's resident memory until dropped; dropped pages stay in the page cache and are read
    again when needed.  Long-record passes call this after each block.
    """
    base = array
    while base is not None:
        mm = getattr(base, "_mmap", None)
        if mm is not None:
            try:
                mm.madvise(mmap_module.MADV_DONTNEED)
            except (AttributeError, OSError, ValueError):   # platform without it, or a closed map
                pass
            return
        base = getattr(base, "base", None)


def _finish(*, file, channels, data, unit, quantity, sample_rate, full_scale, line_of, source_text) -> Record:
    fs = check_positive(check_dimension(sample_rate, name="sample_rate", expected="frequency"),
                        name="sample_rate").to("Hz")
    n = data.shape[0]
    if n == 0:
        raise RecordError("the record has no samples", file=file, line=1)
    fs_val = None
    if full_scale is not None:
        fs_val = float(check_dimension(full_scale, name="full_scale", expected=unit).to(unit).m)
    messages = []
    for c, name in enumerate(channels):
        hi, lo = -np.inf, np.inf
        for start in range(0, n, BLOCK_SAMPLES):
            block = np.array(data[start:start + BLOCK_SAMPLES, c], dtype=float)
            release_pages(data)
            bad = ~np.isfinite(block)
            if bad.any():
                r = start + int(np.flatnonzero(bad)[0])
                raise RecordError("missing or non-finite value (NaN or inf)", input_name=name,
                                  expected="a finite number", got=repr(block[r - start]), file=file,
                                  line=line_of(r))
            hi, lo = max(hi, float(block.max())), min(lo, float(block.min()))
        first, count = None, 0
        if hi == lo and fs_val is None:
            continue   # a constant channel has no peaks to clip
        for start in range(0, n, BLOCK_SAMPLES):
            block = np.array(data[start:start + BLOCK_SAMPLES, c], dtype=float)
            release_pages(data)
            if fs_val is not None:
                rows = np.flatnonzero(np.abs(block) >= 0.999 * fs_val)
            else:
                rows = np.concatenate([_runs_at(block, level, CLIP_RUN) for level in (hi, lo) if level != 0]
                                      or [np.array([], dtype=int)])
            if rows.size:
                count += rows.size
                first = start + int(rows.min()) if first is None else first
        if first is not None:
            line = line_of(first)
            what = ("samples at or above 99.9 % of full scale" if fs_val is not None
                    else "flat tops at its extreme")
            msg = (f"{file}, line {line}: channel {name!r} looks clipped ({count} {what}); "
                   "levels near the clipped peaks are underestimated")
            messages.append(msg)
            warnings.warn(msg, RecordWarning, stacklevel=3)
    duration = Q_(n / float(fs.m), "s")
    steps = (
        quantity_step(id="record.sample-rate", description=f"Sample rate of {Path(file).name}", value=fs,
                      unit="Hz", method=source_text, sig=6),
        quantity_step(id="record.duration", description="Record length", value=duration, unit="s",
                      method=f"{n} samples / sample rate", sig=5),
        quantity_step(id="record.channels", description=f"Channels ({quantity}, {unit}): "
                      + ", ".join(channels), value=Q_(len(channels), ""), method="count",
                      source=COMMON_PRACTICE if messages else None,
                      note="; ".join(messages)),
    )
    return Record(value={name: Q_(data[:, i], unit) for i, name in enumerate(channels)}, steps=steps,
                  file=file, channels=tuple(channels), data=data, unit=unit, quantity=quantity,
                  sample_rate=fs, warnings=tuple(messages), title=f"Record {Path(file).name}")


def _npy_header(fh, *, file: str, input_name: str) -> tuple[tuple[int, ...], bool, np.dtype]:
    """``(shape, fortran_order, dtype)`` from a ``.npy`` header; nothing of the file is quoted on failure."""
    fmt = np.lib.format
    try:
        version = fmt.read_magic(fh)
        if version == (1, 0):
            return fmt.read_array_header_1_0(fh)
        if version == (2, 0):
            return fmt.read_array_header_2_0(fh)
        return fmt._read_array_header(fh, version)
    except (ValueError, TypeError, SyntaxError, OSError, EOFError, KeyError):
        raise RecordError("not a NumPy .npy file (no valid .npy header)", input_name=input_name, file=file,
                          expected="a file written by numpy.save",
                          hint="Check that the path names the record") from None


def read_npy(path, *, sample_rate, unit: str, channels: tuple[str, ...] | None = None, full_scale=None,
             mmap: bool = True, input_name: str = "record.file", max_bytes=None) -> Record:
    """Read and check a NumPy ``.npy`` record (memory-mapped by default).

    Only a regular file is read (a folder, FIFO or device is refused before it is opened).  The
    header is read first: an array of objects (pickles) is refused, and so is an array whose data
    (samples × channels × bytes per sample) exceed the ``.npy`` cap of
    :mod:`latticecalc.files` (2 GB unless ``max_bytes`` or ``LATTICECALC_MAX_NPY_RECORD_BYTES``
    says otherwise) or the file's own size (a truncated file).

    Parameters
    ----------
    path:
        The ``.npy`` file: shape ``(n,)`` or ``(n, channels)`` with one to three channels.
    sample_rate:
        Samples per second [frequency].
    unit:
        Unit of the samples (an acceleration or a velocity, e.g. ``"m/s^2"``).
    channels:
        Channel names (default ``x, y, z`` or ``ch1``).
    full_scale:
        Sensor full scale [same dimension as ``unit``], for the clipping check.
    mmap:
        Map the file instead of loading it (a one-hour record is then scanned block by block).
    input_name:
        The input that named the file, for the messages.
    max_bytes:
        Cap on the array's data in bytes (default: the ``.npy`` cap).
    """
    file = str(path)
    cap = files.limit_for("npy", max_bytes)
    with files.open_regular(path, what="the record", input_name=input_name, file=file) as fh:
        size = os.fstat(fh.fileno()).st_size
        if size == 0:
            raise RecordError("empty file", input_name=input_name, file=file, line=1)
        shape, fortran, dtype = _npy_header(fh, file=file, input_name=input_name)
        if dtype.hasobject or not np.issubdtype(dtype, np.number):
            raise RecordError("the array is not numeric", input_name=input_name, expected="float samples",
                              got=str(dtype)[:40], file=file)
        if len(shape) not in (1, 2):
            raise RecordError("wrong array shape", input_name=input_name,
                              expected="(samples,) or (samples, channels)", got=str(shape)[:60], file=file)
        count = math.prod(shape)
        nbytes = count * dtype.itemsize
        if nbytes > cap:
            raise files.too_large(kind="npy", size=nbytes, cap=cap, what="the record", input_name=input_name,
                                  file=file, detail=f": {' × '.join(f'{s:,}' for s in shape)} values of "
                                  f"{dtype.itemsize} bytes")
        offset = fh.tell()
        if offset + nbytes > size:
            raise RecordError("the .npy file is truncated", input_name=input_name, file=file,
                              expected=f"{nbytes:,} bytes of data (from its header)",
                              got=f"{max(size - offset, 0):,} bytes")
        order = "F" if fortran else "C"
        if count == 0:
            arr = np.empty(shape, dtype=dtype, order=order)
        elif mmap:
            arr = np.memmap(fh, dtype=dtype, mode="r", offset=offset, shape=shape, order=order)
        else:
            arr = np.fromfile(fh, dtype=dtype, count=count).reshape(shape, order=order)
    if arr.ndim == 1:
        arr = arr[:, None]
    if arr.shape[1] > 3 and arr.shape[0] <= 3:
        arr = arr.T
    if arr.shape[1] > 3:
        raise RecordError("too many channels", expected="one to three", got=str(arr.shape[1]), file=file)
    fs = check_dimension(sample_rate, name="sample_rate", expected="frequency")
    check_positive(fs, name="sample_rate")
    u, kind = _unit_of(unit, file=file, line=None, column="unit")
    names = tuple(channels) if channels else _default_names(arr.shape[1])
    if len(names) != arr.shape[1]:
        raise RecordError("channel names do not match the array", input_name="channels",
                          expected=f"{arr.shape[1]} names", got=str(len(names)), file=file)
    return _finish(file=file, channels=names, data=arr, unit=u, quantity=kind, sample_rate=fs,
                   full_scale=full_scale, line_of=lambda r: r + 1, source_text="stated (.npy file)")


def from_array(data, *, sample_rate, channels: tuple[str, ...] | None = None, name: str = "<array>",
               full_scale=None) -> Record:
    """A checked record from a Quantity array of shape ``(n,)`` or ``(n, channels)``."""
    if not isinstance(data, pint.Quantity):
        raise RecordError("samples need a unit", input_name="data", expected="a Quantity array",
                          got=type(data).__name__, file=name)
    u, kind = _unit_of(str(data.units), file=name, line=None, column="data")
    arr = np.asarray(data.magnitude, dtype=float)
    if arr.ndim == 1:
        arr = arr[:, None]
    names = tuple(channels) if channels else _default_names(arr.shape[1])
    return _finish(file=name, channels=names, data=arr, unit=u, quantity=kind,
                   sample_rate=check_dimension(sample_rate, name="sample_rate", expected="frequency"),
                   full_scale=full_scale, line_of=lambda r: r + 1, source_text="stated")


def _default_names(count: int) -> tuple[str, ...]:
    return ("x", "y", "z")[:count] if count > 1 else ("ch1",)


def bt_product(*, bandwidth, duration) -> float:
    """Bandwidth-time product B·T (dimensionless) of a band estimate."""
    b = check_dimension(bandwidth, name="bandwidth", expected="frequency")
    t = check_dimension(duration, name="duration", expected="time")
    return float((b * t).to("").m)


def random_error(*, bandwidth, duration) -> float:
    """Normalized random error of a band mean-square estimate, 1/sqrt(B·T) (Bendat & Piersol 2010)."""
    return 1.0 / math.sqrt(bt_product(bandwidth=bandwidth, duration=duration))


def read_record(path, *, sample_rate=None, unit: str | None = None, full_scale=None,
                demo_seed: int | None = None, demo_input: str = "record.file", max_bytes=None) -> Record:
    """Read a CSV or ``.npy`` record by its suffix (see :func:`read_csv`, :func:`read_npy`).

    ``demo_seed``: when given and no file (nor link) is at ``path``, the invented demo site record
    (:func:`latticecalc.signals.synthetic.ensure_demo_record`) is written there first, only inside
    the project folder and never through a link; :class:`DemoRecordError` (naming ``demo_input``,
    the input that gave the path) otherwise.  An existing file is read, never replaced.

    ``demo_input`` also names the input in every error about the file (a folder, a FIFO or device,
    too large, not a record).  ``max_bytes`` raises or lowers the size cap of the record's kind
    (:mod:`latticecalc.files`).
    """
    p = Path(path)
    if demo_seed is not None and not p.exists():
        from latticecalc.signals.synthetic import ensure_demo_record

        ensure_demo_record(p, seed=int(demo_seed), input_name=demo_input)
    if p.suffix.lower() == ".npy":
        if sample_rate is None or unit is None:
            raise RecordError("a .npy record needs its sample rate and unit", input_name="record.sample_rate",
                              expected="record.sample_rate and record.unit in the inputs", got="missing",
                              file=str(p))
        return read_npy(p, sample_rate=sample_rate, unit=unit, full_scale=full_scale, input_name=demo_input,
                        max_bytes=max_bytes)
    return read_csv(p, sample_rate=sample_rate, unit=unit, full_scale=full_scale, input_name=demo_input,
                    max_bytes=max_bytes)
