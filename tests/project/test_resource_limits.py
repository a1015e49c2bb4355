"""Files the kit reads are bounded: regular files only, a size cap per kind, CSV records read in blocks.

Found by testers: ``record.file = "/dev/zero"`` took 2.7 GB in 3 s, a FIFO hung the run, a 100 MB
CSV peaked at several times its array's size.  The basis of each check is common practice for tools
that read user files (refuse special files before opening them; state a limit and how to raise it;
hold memory near the size of the result).  Memory is measured (the reading process's peak resident memory,
or tracemalloc where Linux's peak reset is missing), never timed.
"""

from __future__ import annotations

import io
import os
import shutil
import signal
import stat
import subprocess
import sys
import tracemalloc
import warnings
from contextlib import contextmanager
from pathlib import Path

import numpy as np
import pytest

from latticecalc import Q_, files
from latticecalc.errors import FileTooLargeError, InputError, RecordError, SpecialFileError
from latticecalc.project.inputs import load_inputs
from latticecalc.project.meta import load_meta
from latticecalc.project.schema import load_template_spec
from latticecalc.project.templates import templates_root
from latticecalc.signals import records as R
from latticecalc.signals.frf import calibration_from_export

TEMPLATE = templates_root() / "column-panel"
#: Seconds after which a read that should have been refused counts as hung.
HANG_SECONDS = 10
#: Peak memory over the record's array for a 100 MB CSV (measured 1.98 as the reading process's peak resident
#: memory, 1.75 traced by tracemalloc; 9.3 traced before the reader read in blocks).
PEAK_RATIO_LIMIT = 2.5


@pytest.fixture
def project(tmp_path) -> Path:
    dest = tmp_path / "proj"
    shutil.copytree(TEMPLATE, dest)
    return dest


@contextmanager
def _no_hang():
    """Fail instead of hanging when a call blocks (a FIFO opened for reading waits for a writer)."""

    def alarm(signum, frame):
        raise AssertionError(f"the read blocked for {HANG_SECONDS} s")

    old = signal.signal(signal.SIGALRM, alarm)
    signal.alarm(HANG_SECONDS)
    try:
        yield
    finally:
        signal.alarm(0)
        signal.signal(signal.SIGALRM, old)


def _csv(path: Path, rows: int) -> Path:
    t = np.arange(rows) / 100.0
    body = "\n".join(f"{ti:.2f},{0.01 * np.sin(ti):.6f}" for ti in t)
    path.write_text("time [s],z [m/s^2]\n" + body + "\n")
    return path


# --- special files -------------------------------------------------------------------------------
@pytest.mark.parametrize("name", ["rec.csv", "rec.npy"])
def test_fifo_record_is_refused_promptly(tmp_path, name):
    fifo = tmp_path / name
    os.mkfifo(fifo)
    with _no_hang(), pytest.raises(SpecialFileError) as err:
        R.read_record(fifo, sample_rate=Q_(100, "Hz"), unit="m/s^2")
    # common practice: a FIFO is refused from its stat, before it is opened (opening it blocks)
    assert "FIFO" in str(err.value) and err.value.input_name == "record.file"


def test_fifo_inputs_and_exports_are_refused_promptly(project, tmp_path):
    (project / "inputs.toml").unlink()
    os.mkfifo(project / "inputs.toml")
    with _no_hang(), pytest.raises(SpecialFileError, match="inputs.toml"):     # common practice
        load_inputs(project / "inputs.toml", load_template_spec(TEMPLATE / "template.toml"))
    os.mkfifo(tmp_path / "coupon.json")
    with _no_hang(), pytest.raises(SpecialFileError, match="lattice.calibration"):
        calibration_from_export(tmp_path / "coupon.json")


@pytest.mark.skipif(not os.path.exists("/dev/zero") or not stat.S_ISCHR(os.stat("/dev/zero").st_mode),
                    reason="no /dev/zero character device")
@pytest.mark.parametrize("via", ["direct", "link.csv", "link.npy", "cover.toml"])
def test_dev_zero_is_refused_by_its_type(tmp_path, via):
    path = Path("/dev/zero")
    if via != "direct":
        path = tmp_path / via
        path.symlink_to("/dev/zero")
    tracemalloc.start()
    try:
        with _no_hang(), pytest.raises(SpecialFileError) as err:
            if via == "cover.toml":
                load_meta(path)
            else:
                R.read_record(path, sample_rate=Q_(100, "Hz"), unit="m/s^2")
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    # common practice: a device is refused by its type, nothing read (before: 2.7 GB in 3 s)
    assert "character device" in str(err.value)
    assert peak < 50e6


# --- size caps -----------------------------------------------------------------------------------
def test_inputs_over_the_toml_cap_are_refused_with_the_cap(project, monkeypatch):
    path = project / "inputs.toml"
    path.write_text(path.read_text() + ("# padding padding padding padding padding padding\n" * 25_000))
    spec = load_template_spec(TEMPLATE / "template.toml")
    with pytest.raises(FileTooLargeError) as err:
        load_inputs(path, spec)
    msg = str(err.value)
    # common practice: the limit is stated, with how to raise it
    assert "1 MB" in msg and "LATTICECALC_MAX_TOML_BYTES" in msg
    monkeypatch.setenv("LATTICECALC_MAX_TOML_BYTES", "4M")
    assert "cell.width" in load_inputs(path, spec)


def test_json_export_over_its_cap_is_refused(tmp_path, monkeypatch):
    p = tmp_path / "coupon.json"
    p.write_text('{"results": [], "project": {}, "pad": "' + "x" * 20_000 + '"}')
    monkeypatch.setenv("LATTICECALC_MAX_JSON_BYTES", "10k")
    with pytest.raises(FileTooLargeError, match="LATTICECALC_MAX_JSON_BYTES") as err:   # common practice
        calibration_from_export(p)
    assert "10 kB" in str(err.value) and err.value.input_name == "lattice.calibration"


def test_csv_record_over_its_cap_is_refused_before_it_is_read(tmp_path, monkeypatch):
    p = _csv(tmp_path / "rec.csv", 5000)                      # 5000 samples x 2 columns x 8 bytes = 80 kB
    monkeypatch.setenv("LATTICECALC_MAX_CSV_RECORD_BYTES", "20k")
    with pytest.raises(FileTooLargeError) as err:
        R.read_record(p)
    msg = str(err.value)
    # common practice: the estimate (samples x columns), the cap and the two ways to raise it
    assert "samples × 2 columns" in msg and "20 kB" in msg
    assert "LATTICECALC_MAX_CSV_RECORD_BYTES" in msg and "max_bytes" in msg
    assert R.read_record(p, max_bytes="1M").n_samples == 5000
    monkeypatch.delenv("LATTICECALC_MAX_CSV_RECORD_BYTES")
    assert R.read_csv(p).n_samples == 5000


def test_npy_record_over_its_cap_is_refused_from_its_header(tmp_path, monkeypatch):
    p = tmp_path / "rec.npy"
    np.save(p, np.zeros((5000, 3)))                           # 120 kB of samples
    monkeypatch.setenv("LATTICECALC_MAX_NPY_RECORD_BYTES", "100k")
    with pytest.raises(FileTooLargeError) as err:
        R.read_record(p, sample_rate=Q_(100, "Hz"), unit="m/s^2")
    # common practice: the shape from the header, the cap, how to raise it
    assert "5,000 × 3" in str(err.value) and "100 kB" in str(err.value)
    assert R.read_record(p, sample_rate=Q_(100, "Hz"), unit="m/s^2", max_bytes=10**6).n_samples == 5000


def test_npy_header_claiming_a_huge_array_is_refused(tmp_path):
    p = tmp_path / "rec.npy"
    with open(p, "wb") as fh:
        np.lib.format.write_array_header_1_0(fh, {"descr": "<f8", "fortran_order": False,
                                                  "shape": (10**11, 3)})
        fh.write(b"\0" * 64)
    with pytest.raises(FileTooLargeError, match="2 GB"):     # common practice: the 2 GB default cap
        R.read_npy(p, sample_rate=Q_(100, "Hz"), unit="m/s^2")
    with pytest.raises(RecordError, match="truncated"):       # common practice: header vs file size
        R.read_npy(p, sample_rate=Q_(100, "Hz"), unit="m/s^2", max_bytes=10**13)


def test_one_endless_line_is_not_a_record(tmp_path):
    p = tmp_path / "rec.csv"
    p.write_bytes(b"1" * (3 * files.LIMITS["toml"].default))
    with pytest.raises(RecordError, match="not a record"):    # common practice: bounded line length
        R.read_csv(p)
    q = tmp_path / "rec2.csv"
    q.write_bytes(b"time [s],z [m/s^2]\n0.00,0.1\n" + b"1" * (R.CSV_MAX_LINE + R.CSV_BLOCK_BYTES + 10))
    with pytest.raises(RecordError, match="longer than") as err:
        R.read_csv(q)
    assert err.value.line == 3


def test_record_read_in_blocks_matches_the_whole(tmp_path, monkeypatch):
    p = _csv(tmp_path / "rec.csv", 3000)
    whole = R.read_csv(p)
    monkeypatch.setattr(R, "CSV_BLOCK_BYTES", 97)             # many blocks, lines split across them
    monkeypatch.setattr(R, "CSV_HEAD_BYTES", 64)
    parts = R.read_csv(p)
    # common practice: reading in blocks changes nothing in the result
    np.testing.assert_array_equal(parts.data, whole.data)
    assert parts.sample_rate == whole.sample_rate


def test_bad_line_found_across_blocks(tmp_path, monkeypatch):
    p = _csv(tmp_path / "rec.csv", 3000)
    lines = p.read_text().splitlines()
    lines[2500] = lines[2500].split(",")[0] + ",nan"
    p.write_text("\n".join(lines) + "\n")
    monkeypatch.setattr(R, "CSV_BLOCK_BYTES", 500)
    with pytest.raises(RecordError, match="NaN") as err:
        R.read_csv(p)
    assert err.value.line == 2501                              # common practice: the file's own line


@pytest.mark.parametrize("text, expected", [("750M", 750 * 10**6), ("4 GB", 4 * 10**9), ("2000", 2000),
                                            ("1.5k", 1500)])
def test_size_text(text, expected):
    assert files.parse_size(text, name="X") == expected       # common practice: decimal units


def test_bad_cap_in_the_environment_is_named(tmp_path, monkeypatch):
    monkeypatch.setenv("LATTICECALC_MAX_CSV_RECORD_BYTES", "lots")
    with pytest.raises(InputError, match="LATTICECALC_MAX_CSV_RECORD_BYTES"):   # common practice
        R.read_csv(_csv(tmp_path / "rec.csv", 10))


# --- memory --------------------------------------------------------------------------------------
def _big_csv(path: Path, size: int) -> Path:
    """A three-axis record of ``size`` bytes at 1 kHz: 100,000 rows of noise, repeated under a rising time column."""
    rng = np.random.default_rng(1)
    text = io.StringIO()
    np.savetxt(text, rng.normal(size=(100_000, 3)) * 1e-3, delimiter=",", fmt="%.6e")
    rows = text.getvalue().splitlines()
    with open(path, "w") as fh:
        fh.write("time [s],x [m/s^2],y [m/s^2],z [m/s^2]\n")
        k = 0
        while fh.tell() < size:
            fh.write("".join(f"{(k + i) / 1000.0:.3f},{row}\n" for i, row in enumerate(rows)))
            k += len(rows)
    return path


#: Run in a child process: the peak resident memory while the record is read, over its array's size
#: (Linux: the peak is reset through /proc/self/clear_refs just before the read).
_PEAK_OF_READ = """
import sys, warnings
from latticecalc.signals import records as R

def status(key):
    with open("/proc/self/status") as fh:
        return next(int(line.split()[1]) * 1024 for line in fh if line.startswith(key))

warnings.simplefilter("ignore")
before = status("VmRSS:")
with open("/proc/self/clear_refs", "w") as fh:
    fh.write("5")
rec = R.read_csv(sys.argv[1])
print(rec.n_samples, rec.data.nbytes, status("VmHWM:") - before)
"""


def _peak_of_read(path: Path) -> tuple[int, int, int, str]:
    """(samples, array bytes, peak bytes, how measured): resident memory of a child process where Linux lets
    a process reset its own peak, else memory traced by tracemalloc in this process (several times slower)."""
    done = subprocess.run([sys.executable, "-c", _PEAK_OF_READ, str(path)], capture_output=True, text=True)
    if done.returncode == 0:
        n, nbytes, peak = (int(x) for x in done.stdout.split())
        return n, nbytes, peak, "peak resident memory of the reading process"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        tracemalloc.start()
        try:
            rec = R.read_csv(path)
            peak = tracemalloc.get_traced_memory()[1]
        finally:
            tracemalloc.stop()
    return rec.n_samples, rec.data.nbytes, peak, "memory traced by tracemalloc"


@pytest.mark.slow
def test_100_mb_csv_peak_memory_stays_near_the_array(tmp_path):
    p = _big_csv(tmp_path / "big.csv", 100_000_000)
    n, nbytes, peak, how = _peak_of_read(p)
    ratio = peak / nbytes
    print(f"100 MB CSV: {n} samples, array {nbytes / 1e6:.1f} MB, peak {peak / 1e6:.1f} MB ({how}), "
          f"ratio {ratio:.2f}")
    assert n > 2_000_000
    # common practice: memory held near the result (the time column and one median temporary on top)
    assert ratio < PEAK_RATIO_LIMIT
