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
copied whole.
"""

from __future__ import annotations

import math
import re
import warnings
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pint

from latticecalc.errors import LatticeCalcError, RecordError
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
                          "or a velocity (m/s, mm/s)", got=repr(raw), file=file, line=line) from None
    q = Q_(1.0, unit)
    for kind in QUANTITIES:
        try:
            check_dimension(q, name=column, expected=kind)
            return str(unit), kind
        except LatticeCalcError:
            continue
    raise RecordError("the unit is neither an acceleration nor a velocity", input_name=column,
                      expected="an acceleration (m/s², mm/s², g) or a velocity (m/s, mm/s)",
                      got=f"{raw!r} ({q.dimensionality})", file=file, line=line)


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


def _split(line: str, sep: str | None) -> list[str]:
    return [c.strip() for c in (line.split(sep) if sep else line.split())]


def _first_bad_line(lines: list[str], start: int, sep: str | None, ncol: int, file: str) -> RecordError:
    for k in range(start, len(lines)):
        text = lines[k].strip()
        if not text or text.startswith("#"):
            continue
        cells = _split(text, sep)
        if len(cells) != ncol:
            return RecordError("wrong number of fields in a row", input_name="row",
                               expected=f"{ncol} fields", got=f"{len(cells)}", file=file, line=k + 1)
        for c in cells:
            try:
                float(c)
            except ValueError:
                return RecordError("text in a number column", input_name="value", expected="a number",
                                   got=repr(c), file=file, line=k + 1)
    return RecordError("cannot read the data rows", file=file)


def _line_of_row(lines: list[str], start: int, row: int) -> int | None:
    seen = -1
    for k in range(start, len(lines)):
        text = lines[k].strip()
        if not text or text.startswith("#"):
            continue
        seen += 1
        if seen == row:
            return k + 1
    return None


def read_csv(path, *, sample_rate=None, unit: str | None = None, time_column: str | None = None,
             full_scale=None) -> Record:
    """Read and check a CSV record.

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

    Returns
    -------
    Record
    """
    file = str(path)
    p = Path(path)
    if not p.exists():
        raise RecordError("file not found", file=file)
    text = p.read_text(encoding="utf-8-sig", errors="replace")
    lines = text.splitlines()
    meta: dict[str, str] = {}
    k = 0
    while k < len(lines) and (not lines[k].strip() or lines[k].lstrip().startswith("#")):
        m = _COMMENT_KEY.match(lines[k].strip())
        if m:
            meta[m.group("key").strip().lower().replace(" ", "_")] = m.group("value")
        k += 1
    if k >= len(lines):
        raise RecordError("empty file: no header row and no data", file=file, line=1,
                          expected="a header row naming the columns, then data rows")
    header_line = k
    head = lines[k]
    sep = "," if "," in head else (";" if ";" in head else ("\t" if "\t" in head else None))
    names, units = [], []
    cells = [head.strip()] if sep is None and _HEADER_UNIT.match(head.strip()) else _split(head, sep)
    for cell in cells:
        m = _HEADER_UNIT.match(cell)
        names.append((m.group("name") if m else cell).strip())
        units.append(m.group("unit").strip() if m else None)
    if any(_is_number(n) for n in names):
        raise RecordError("the first row is not a header", expected="column names such as "
                          "'time [s], z [m/s^2]'", got=repr(head.strip()), file=file, line=header_line + 1)
    ncol = len(names)
    start = header_line + 1
    if not any(ln.strip() and not ln.lstrip().startswith("#") for ln in lines[start:]):
        raise RecordError("no data rows after the header", file=file, line=header_line + 1)
    try:
        data = np.loadtxt(p, delimiter=sep, skiprows=start, comments="#", ndmin=2, dtype=float,
                          encoding="utf-8-sig")
    except ValueError:
        raise _first_bad_line(lines, start, sep, ncol, file) from None
    if data.shape[1] != ncol:
        raise _first_bad_line(lines, start, sep, ncol, file)
    bad = ~np.isfinite(data)
    if bad.any():
        row, col = np.argwhere(bad)[0]
        raise RecordError("missing or non-finite value (NaN or inf)", input_name=names[col],
                          expected="a finite number", got=repr(lines[_line_of_row(lines, start, int(row)) - 1]
                                                               .strip()),
                          file=file, line=_line_of_row(lines, start, int(row)))
    # time column
    lowered = [n.lower() for n in names]
    tcol = None
    if time_column is not None:
        if time_column not in names:
            raise RecordError("time column not found", input_name="time_column", expected=", ".join(names),
                              got=repr(time_column), file=file, line=header_line + 1)
        tcol = names.index(time_column)
    else:
        for i, n in enumerate(lowered):
            if n in ("t", "time") or n.startswith("time"):
                tcol = i
                break
    fs_q = None
    if tcol is not None:
        t_unit = units[tcol] or "s"
        try:
            t_scale = float(Q_(1.0, t_unit).to("s").m)
        except (pint.errors.DimensionalityError, pint.errors.UndefinedUnitError):
            raise RecordError("the time column's unit is not a time", input_name=names[tcol],
                              expected="s or ms", got=repr(t_unit), file=file, line=header_line + 1) from None
        fs_q = _rate_from_time(data[:, tcol] * t_scale, file=file,
                               line_of=lambda r: _line_of_row(lines, start, r))
    stated = sample_rate if sample_rate is not None else meta.get("sample_rate")
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
    if fs_q is None:
        raise RecordError("no time column and no sample rate", input_name="sample_rate",
                          expected="a 'time [s]' column, a '# sample_rate = 1000 Hz' comment, or "
                          "the sample_rate input", got="neither", file=file)
    chan_idx = [i for i in range(ncol) if i != tcol]
    if not chan_idx:
        raise RecordError("no channel columns besides time", file=file, line=header_line + 1)
    if len(chan_idx) > 3:
        raise RecordError("too many channels", expected="one to three channels", got=str(len(chan_idx)),
                          file=file, line=header_line + 1)
    chosen = None
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
        elif u != chosen[0]:
            data[:, i] *= float(Q_(1.0, u).to(chosen[0]).m)
    channels = data[:, chan_idx]
    return _finish(file=file, channels=tuple(names[i] for i in chan_idx), data=channels, unit=chosen[0],
                   quantity=chosen[1], sample_rate=fs_q, full_scale=full_scale,
                   line_of=lambda r: _line_of_row(lines, start, r), source_text="CSV")


def _is_number(text: str) -> bool:
    try:
        float(text)
        return True
    except ValueError:
        return False


def _rate_from_time(t: np.ndarray, *, file: str, line_of) -> pint.Quantity:
    if t.size < 2:
        raise RecordError("a single row cannot define a sample rate", file=file, line=line_of(0))
    dt = np.diff(t)
    nonpos = np.flatnonzero(dt <= 0)
    if nonpos.size:
        r = int(nonpos[0]) + 1
        raise RecordError("time does not increase (non-monotonic or repeated time)", input_name="time",
                          expected=f"a time after {t[r - 1]:.9g} s", got=f"{t[r]:.9g} s", file=file,
                          line=line_of(r))
    med = float(np.median(dt))
    gaps = np.flatnonzero(dt > GAP_FACTOR * med)
    if gaps.size:
        r = int(gaps[0]) + 1
        raise RecordError("gap in the time column", input_name="time",
                          expected=f"a step of {med:.6g} s", got=f"{dt[r - 1]:.6g} s (from {t[r - 1]:.9g} s)",
                          file=file, line=line_of(r), hint="Split the record at the gap or fill it")
    uneven = np.flatnonzero(np.abs(dt - med) > UNEVEN_TOLERANCE * med)
    if uneven.size:
        r = int(uneven[0]) + 1
        raise RecordError("uneven sampling", input_name="time",
                          expected=f"a step of {med:.6g} s ± {UNEVEN_TOLERANCE:.0%}",
                          got=f"{dt[r - 1]:.6g} s", file=file, line=line_of(r),
                          hint="Resample the record to a constant rate first")
    fs = (t.size - 1) / (t[-1] - t[0])
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
            block = np.asarray(data[start:start + BLOCK_SAMPLES, c], dtype=float)
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
            block = np.asarray(data[start:start + BLOCK_SAMPLES, c], dtype=float)
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


def read_npy(path, *, sample_rate, unit: str, channels: tuple[str, ...] | None = None, full_scale=None,
             mmap: bool = True) -> Record:
    """Read and check a NumPy ``.npy`` record (memory-mapped by default).

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
    """
    file = str(path)
    p = Path(path)
    if not p.exists():
        raise RecordError("file not found", file=file)
    if p.stat().st_size == 0:
        raise RecordError("empty file", file=file, line=1)
    try:
        arr = np.load(p, mmap_mode="r" if mmap else None, allow_pickle=False)
    except ValueError as exc:
        raise RecordError(f"not a NumPy array file ({exc})", file=file) from None
    if not np.issubdtype(arr.dtype, np.number):
        raise RecordError("the array is not numeric", expected="float samples", got=str(arr.dtype), file=file)
    if arr.ndim == 1:
        arr = arr[:, None]
    if arr.ndim != 2:
        raise RecordError("wrong array shape", expected="(samples,) or (samples, channels)",
                          got=str(arr.shape), file=file)
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
                demo_seed: int | None = None, demo_input: str = "record.file") -> Record:
    """Read a CSV or ``.npy`` record by its suffix (see :func:`read_csv`, :func:`read_npy`).

    ``demo_seed``: when given and no file (nor link) is at ``path``, the invented demo site record
    (:func:`latticecalc.signals.synthetic.ensure_demo_record`) is written there first, only inside
    the project folder and never through a link; :class:`DemoRecordError` (naming ``demo_input``,
    the input that gave the path) otherwise.  An existing file is read, never replaced.
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
        return read_npy(p, sample_rate=sample_rate, unit=unit, full_scale=full_scale)
    return read_csv(p, sample_rate=sample_rate, unit=unit, full_scale=full_scale)
