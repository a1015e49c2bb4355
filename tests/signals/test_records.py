"""Reading records: good files, and bad records refused with the file and line named."""

import warnings

import numpy as np
import pytest
from tests.helpers import assert_quantity_close

from latticecalc import Q_
from latticecalc.errors import RecordError
from latticecalc.signals import records as R
from latticecalc.signals import synthetic


def _write(tmp_path, text, name="rec.csv"):
    p = tmp_path / name
    p.write_text(text)
    return p


def _csv(rows, header="time [s],z [m/s^2]"):
    return header + "\n" + "\n".join(rows) + "\n"


def _good_rows(n=50, fs=100.0):
    t = np.arange(n) / fs
    return [f"{ti:.4f},{0.01 * np.sin(2 * np.pi * 5 * ti):.6f}" for ti in t]


def test_reads_time_column_and_units(tmp_path):
    rec = R.read_csv(_write(tmp_path, _csv(_good_rows())))
    assert rec.channels == ("z",)
    assert rec.quantity == "acceleration"
    assert_quantity_close(rec.sample_rate, 100.0, unit="Hz", rtol=1e-9)
    assert rec.n_samples == 50
    assert_quantity_close(rec.duration, 0.5, unit="s", rtol=1e-12)


def test_sample_rate_from_comment_and_g_unit(tmp_path):
    text = "# sample_rate = 200 Hz\n# unit = g\nx,y,z\n" + "\n".join("0.001,0.002,0.003" for _ in range(10))
    rec = R.read_csv(_write(tmp_path, text))
    assert rec.channels == ("x", "y", "z")
    assert_quantity_close(rec.sample_rate, 200.0, unit="Hz", rtol=0)
    # 'g' is standard gravity, 9.80665 m/s² (CGPM 1901, from memory), never the gram
    assert_quantity_close(rec.channel("z")[0], 0.003 * 9.80665, unit="m/s^2", rtol=1e-12)


def test_velocity_record_and_mixed_units_scaled(tmp_path):
    text = "t [s],a [mm/s],b [m/s]\n" + "\n".join(f"{k / 100:.2f},1.0,0.001" for k in range(20))
    rec = R.read_csv(_write(tmp_path, text))
    assert rec.quantity == "velocity"
    assert_quantity_close(rec.channel("b"), np.full(20, 1.0), unit="mm/s", rtol=1e-12)


def test_round_trip_with_synthetic_writer(tmp_path):
    site = synthetic.site_record(duration=Q_(30, "s"), sample_rate=Q_(500, "Hz"), passbys=1, seed=4)
    p = synthetic.write_csv(site, tmp_path / "site.csv", digits=9)
    back = R.read_csv(p)
    assert back.channels == site.channels
    assert_quantity_close(back.sample_rate, 500.0, unit="Hz", rtol=1e-9)
    np.testing.assert_allclose(back.data, site.data, rtol=1e-8, atol=1e-12)


@pytest.mark.parametrize("text, line, words", [
    ("", 1, "empty file"),
    ("time [s],z [m/s^2]\n", 1, "no data rows"),
    (_csv(["0.00,0.1", "0.01,nan", "0.02,0.3"]), 3, "NaN"),
    (_csv(["0.00,0.1", "0.01,abc", "0.02,0.3"]), 3, "text in a number column"),
    (_csv(["0.00,0.1", "0.01,0.2", "0.03,0.3", "0.04,0.3", "0.05,0.3", "0.055,0.3"]), 4, "gap"),
    (_csv(["0.00,0.1", "0.02,0.2", "0.01,0.3"]), 4, "non-monotonic"),
    (_csv(["0.00,0.1", "0.01,0.2", "0.0205,0.3", "0.03,0.3", "0.04,0.3"]), 4, "uneven"),
    (_csv(["0.00,0.1", "0.01,0.2,0.5", "0.02,0.3"]), 3, "wrong number of fields"),
    (_csv(["0.00,0.1", "0.01,0.2"], header="time [s],z [kg]"), 1, "neither an acceleration nor a velocity"),
    (_csv(["0.00,0.1", "0.01,0.2"], header="time [s],z [bananas]"), 1, "unknown unit"),
])
def test_bad_records_name_file_and_line(tmp_path, text, line, words):
    p = _write(tmp_path, text)
    with pytest.raises(RecordError) as err:
        R.read_csv(p)
    assert err.value.file == str(p)
    assert err.value.line == line
    assert words in str(err.value)
    assert str(p) in str(err.value)


def test_no_unit_anywhere_is_refused(tmp_path):
    p = _write(tmp_path, _csv(["0.00,0.1", "0.01,0.2"], header="time,z"))
    with pytest.raises(RecordError, match="no unit"):
        R.read_csv(p)
    rec = R.read_csv(p, unit="mm/s^2")
    assert_quantity_close(rec.channel("z")[1], 0.2, unit="mm/s^2", rtol=1e-12)


def test_no_sample_rate_is_refused(tmp_path):
    p = _write(tmp_path, "z [m/s^2]\n0.1\n0.2\n")
    with pytest.raises(RecordError, match="no time column and no sample rate"):
        R.read_csv(p)
    assert R.read_csv(p, sample_rate=Q_(50, "Hz")).n_samples == 2


def test_clipping_warns_with_line(tmp_path):
    rows = _good_rows(40)
    for k in (10, 11, 12, 13):
        rows[k] = rows[k].split(",")[0] + ",0.05"
    p = _write(tmp_path, _csv(rows))
    with pytest.warns(R.RecordWarning, match="line 12"):
        rec = R.read_csv(p)
    assert rec.warnings and "clipped" in rec.warnings[0]
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        R.read_csv(_write(tmp_path, _csv(_good_rows(40)), "ok.csv"))


def test_record_too_short_or_too_slow_for_bands(tmp_path):
    rec = R.read_csv(_write(tmp_path, _csv(_good_rows(200))))   # 2 s at 100 Hz
    with pytest.raises(RecordError, match="too short") as err:
        rec.check_bands(lowest=Q_(1, "Hz"), highest=Q_(16, "Hz"))
    assert err.value.file == rec.file
    long = synthetic.site_record(duration=Q_(60, "s"), sample_rate=Q_(200, "Hz"), passbys=1, seed=1)
    with pytest.raises(RecordError, match="sample rate too low"):
        long.check_bands(lowest=Q_(1, "Hz"), highest=Q_(250, "Hz"))
    long.check_bands(lowest=Q_(1, "Hz"), highest=Q_(63, "Hz"))


def test_npy_memory_mapped_and_checked(tmp_path):
    data = np.random.default_rng(0).normal(size=(5000, 3)) * 1e-3
    p = tmp_path / "rec.npy"
    np.save(p, data)
    rec = R.read_npy(p, sample_rate=Q_(1000, "Hz"), unit="m/s^2")
    assert isinstance(rec.data, np.memmap)
    assert rec.channels == ("x", "y", "z")
    data[1234, 1] = np.nan
    np.save(p, data)
    with pytest.raises(RecordError, match="NaN") as err:
        R.read_npy(p, sample_rate=Q_(1000, "Hz"), unit="m/s^2")
    assert err.value.line == 1235
    with pytest.raises(RecordError, match="neither an acceleration nor a velocity"):
        R.read_npy(p, sample_rate=Q_(1000, "Hz"), unit="Pa")
    empty = tmp_path / "empty.npy"
    empty.write_bytes(b"")
    with pytest.raises(RecordError, match="empty file"):
        R.read_npy(empty, sample_rate=Q_(1000, "Hz"), unit="m/s^2")


def test_full_scale_clipping_and_read_record_by_suffix(tmp_path):
    data = np.zeros((2000, 1))
    data[::100, 0] = 0.5
    data[700:705, 0] = 2.0            # at full scale
    p = tmp_path / "clip.npy"
    np.save(p, data)
    with pytest.warns(R.RecordWarning, match="full scale"):
        rec = R.read_record(p, sample_rate=Q_(1000, "Hz"), unit="m/s^2", full_scale=Q_(2, "m/s^2"))
    assert "line 701" in rec.warnings[0]
    with pytest.raises(RecordError, match="needs its sample rate and unit"):
        R.read_record(p)


def test_demo_record_is_reproducible_and_written_once(tmp_path):
    a = synthetic.site_record(duration=Q_(20, "s"), passbys=1, seed=9)
    b = synthetic.site_record(duration=Q_(20, "s"), passbys=1, seed=9)
    np.testing.assert_array_equal(a.data, b.data)
    p = synthetic.ensure_demo_record(tmp_path / "records" / "demo.csv", seed=9, duration=Q_(20, "s"), passbys=1)
    stamp = p.stat().st_mtime_ns
    synthetic.ensure_demo_record(p, seed=9, duration=Q_(20, "s"), passbys=1)
    assert p.stat().st_mtime_ns == stamp
    rec = R.read_record(p)
    assert rec.channels == ("x", "y", "z")
    np.testing.assert_allclose(rec.data, a.data, rtol=1e-4, atol=1e-8)   # 5 significant figures in the CSV


def test_released_pages_of_a_mapped_record_read_back_the_same(tmp_path):
    # common practice: dropping mapped pages must never change what is read (they come back from the file)
    data = np.random.default_rng(3).standard_normal((50_000, 3))
    p = tmp_path / "rec.npy"
    np.save(p, data)
    rec = R.read_npy(p, sample_rate=Q_(1000, "Hz"), unit="m/s^2")
    z = rec.channel("z").magnitude
    assert getattr(z, "_mmap", None) is not None or isinstance(z.base, np.memmap)
    before = np.array(z[1000:2000])
    R.release_pages(z)
    np.testing.assert_array_equal(np.array(z[1000:2000]), before)
    np.testing.assert_array_equal(np.array(z), data[:, 2])
    R.release_pages(data)            # an array in memory: nothing to release, nothing changes
    np.testing.assert_array_equal(np.load(p), data)
