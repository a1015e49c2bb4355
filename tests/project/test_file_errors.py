"""Files the kit reads or writes fail with a named error, never a raw traceback, and never echo a record.

Each case was found by a tester as a raw traceback (or an echo of file content); the checks are
behaviour, their basis common practice for tools that read user files: name the input, the file
and the line; accept UTF-8 with or without a byte-order mark and refuse other encodings by name;
refuse a folder, a special file or a symbolic link where a file is read or written; leave the old
file intact when a write fails; quote at most a short, escaped excerpt of a text input's line, and
nothing of a file that is not a valid record.
"""

from __future__ import annotations

import errno
import json
import os
import shutil
from pathlib import Path

import numpy as np
import pytest
from tests.helpers import assert_quantity_close

from latticecalc import Q_
from latticecalc.errors import (
    BinaryFileError,
    DuplicateKeyError,
    FileEncodingError,
    FileError,
    FileFormatError,
    FileWriteError,
    FolderError,
    InputError,
    LatticeCalcError,
    MissingFileError,
    RecordError,
    SymlinkError,
)
from latticecalc.project import atomic
from latticecalc.project import templates as T
from latticecalc.project.inputs import load_inputs, set_values
from latticecalc.project.meta import load_meta
from latticecalc.project.schema import load_template_spec
from latticecalc.project.templates import new_project, templates_root
from latticecalc.signals import records as R
from latticecalc.signals.coverage import survey_from_export, survey_requirement
from latticecalc.signals.frf import calibration_from_export

TEMPLATE = templates_root() / "column-panel"
# An ASCII-only line appended to a file saved in each encoding (Latin-1 needs a non-ASCII letter).
LATIN1_LINE = "# café, Zürich\n"


@pytest.fixture
def project(tmp_path) -> Path:
    dest = tmp_path / "proj"
    shutil.copytree(TEMPLATE, dest)
    return dest


def _spec():
    return load_template_spec(TEMPLATE / "template.toml")


def _ascii(text: str) -> str:
    return text.encode("ascii", "replace").decode("ascii")


def _load(kind: str, folder: Path):
    if kind == "inputs.toml":
        return load_inputs(folder / kind, _spec())
    return load_meta(folder / kind)


def _encoded(kind: str, encoding: str) -> bytes:
    text = (TEMPLATE / kind).read_text(encoding="utf-8")
    if encoding == "utf-16":
        return text.encode("utf-16")                         # with its byte-order mark, as Notepad saves it
    if encoding == "utf-16-le":
        return text.encode("utf-16-le")                      # without a byte-order mark
    if encoding == "latin-1":
        return (_ascii(text) + LATIN1_LINE).encode("latin-1")
    raise AssertionError(encoding)


# --- encodings, binary, BOM ----------------------------------------------------------------------
@pytest.mark.parametrize("kind", ["inputs.toml", "cover.toml"])
@pytest.mark.parametrize("encoding, words", [("utf-16", "UTF-16"), ("utf-16-le", "UTF-16"),
                                             ("latin-1", "not UTF-8")])
def test_other_encodings_are_refused_by_name(project, kind, encoding, words):
    (project / kind).write_bytes(_encoded(kind, encoding))
    with pytest.raises(FileEncodingError) as err:
        _load(kind, project)
    msg = str(err.value)
    # common practice: the message names the file, says what it found and what to do
    assert kind in msg and words in msg and "UTF-8" in msg
    assert isinstance(err.value, InputError)          # callers catching InputError keep working
    if encoding == "latin-1":
        lines = _ascii((TEMPLATE / kind).read_text(encoding="utf-8")).splitlines()
        assert err.value.line == len(lines) + 1       # the line of the é
        assert "0xE9" in msg and "Latin-1" in msg


@pytest.mark.parametrize("kind", ["inputs.toml", "cover.toml"])
def test_binary_content_is_refused_by_name(project, kind):
    png = b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR" + bytes(range(256)) * 4
    (project / kind).write_bytes(png)
    with pytest.raises(BinaryFileError) as err:
        _load(kind, project)
    # common practice: binary content is named as such, with the file, and none of it is quoted
    assert kind in str(err.value) and "binary" in str(err.value)
    assert "IHDR" not in str(err.value)


@pytest.mark.parametrize("kind", ["inputs.toml", "cover.toml"])
def test_utf8_byte_order_mark_is_accepted_and_stripped(project, kind):
    text = (TEMPLATE / kind).read_text(encoding="utf-8")
    (project / kind).write_bytes(b"\xef\xbb\xbf" + text.encode("utf-8"))
    # common practice: Windows editors write a UTF-8 BOM; before, tomllib said "Empty key at line 1"
    got = _load(kind, project)
    assert got == _load_fresh(kind, project, text)


def _load_fresh(kind, project, text):
    other = project.parent / "fresh"
    shutil.copytree(project, other)
    (other / kind).write_text(text, encoding="utf-8")
    return _load(kind, other)


def test_bom_is_dropped_when_inputs_are_saved(project):
    path = project / "inputs.toml"
    path.write_bytes(b"\xef\xbb\xbf" + path.read_bytes())
    set_values(path, _spec(), {"cell.width": "130 mm"})
    # common practice: the kit writes UTF-8 without a BOM
    assert not path.read_bytes().startswith(b"\xef\xbb\xbf")
    assert_quantity_close(load_inputs(path, _spec())["cell.width"], 130, unit="mm", rtol=0)


# --- duplicate keys and syntax -------------------------------------------------------------------
def test_duplicate_key_in_inputs_names_the_key_and_both_lines(project):
    path = project / "inputs.toml"
    text = path.read_text()
    assert 'width = "120 mm"' in text
    path.write_text(text.replace('width = "120 mm"', 'width = "120 mm"\nwidth = "130 mm"', 1))
    first = next(i for i, ln in enumerate(path.read_text().splitlines(), 1) if ln.startswith('width = "120'))
    with pytest.raises(DuplicateKeyError) as err:
        load_inputs(path, _spec())
    # common practice: tomlkit's KeyAlreadyPresent traceback becomes the key, the file and both lines
    assert err.value.input_name == "cell.width"
    assert err.value.line == first + 1
    assert f"lines {first} and {first + 1}" in str(err.value) and "inputs.toml" in str(err.value)


def test_duplicate_table_in_project_file_is_named(project):
    path = project / "cover.toml"
    path.write_text(path.read_text() + '\n[calc]\nid = "X-1"\n')
    with pytest.raises(DuplicateKeyError) as err:
        load_meta(path)
    # common practice: the table and the line of its second declaration
    assert err.value.input_name == "calc" and "[calc]" in str(err.value)
    assert err.value.line == len(path.read_text().splitlines()) - 1


def test_syntax_error_quotes_only_a_short_escaped_excerpt(project):
    path = project / "inputs.toml"
    hostile = "width = 120 mm \x1b[31m\u202e" + "x" * 200
    path.write_text(path.read_text().replace('width = "120 mm"', hostile, 1))
    with pytest.raises(FileFormatError) as err:
        load_inputs(path, _spec())
    msg = str(err.value)
    # common practice: no control or direction character reaches the message, and the excerpt is short
    assert "\x1b" not in msg and "\u202e" not in msg
    assert "x" * 61 not in msg
    assert err.value.line is not None and "inputs.toml" in msg


# --- folders, symlinks, missing files ------------------------------------------------------------
@pytest.mark.parametrize("name", ["rec.csv", "rec.npy"])
def test_record_path_that_is_a_folder(tmp_path, name):
    (tmp_path / name).mkdir()
    with pytest.raises(FolderError) as err:
        R.read_record(tmp_path / name, sample_rate=Q_(100, "Hz"), unit="m/s^2")
    # common practice: the input and the path are named; before, IsADirectoryError
    assert err.value.input_name == "record.file" and str(tmp_path / name) in str(err.value)


def test_inputs_file_that_is_a_folder(project):
    (project / "inputs.toml").unlink()
    (project / "inputs.toml").mkdir()
    with pytest.raises(FolderError, match="inputs.toml"):   # common practice
        load_inputs(project / "inputs.toml", _spec())


def test_missing_files_are_named(tmp_path):
    with pytest.raises(MissingFileError, match="not found"):     # common practice
        R.read_record(tmp_path / "none.csv")
    with pytest.raises(MissingFileError, match="not found"):
        load_meta(tmp_path / "cover.toml")
    (tmp_path / "dangling.csv").symlink_to(tmp_path / "nowhere.csv")
    with pytest.raises(MissingFileError, match="link to nothing"):
        R.read_csv(tmp_path / "dangling.csv")


def test_new_into_a_symlink_is_refused(tmp_path):
    target = tmp_path / "real"
    target.mkdir()
    link = tmp_path / "link"
    link.symlink_to(target)
    with pytest.raises(SymlinkError) as err:
        new_project(link, template="column-panel")
    # common practice: nothing is made through the link, and the error names the path
    assert str(link) in str(err.value)
    assert list(target.iterdir()) == [] and link.is_symlink()
    dangling = tmp_path / "dangling"
    dangling.symlink_to(tmp_path / "nowhere")
    with pytest.raises(SymlinkError):
        new_project(dangling, template="column-panel")
    assert not (tmp_path / "nowhere").exists()


def test_new_into_an_empty_folder_still_works(tmp_path):
    dest = tmp_path / "empty"
    dest.mkdir()
    new_project(dest, template="column-panel")
    # common practice: the documented 'must not exist, or be empty' still holds
    assert (dest / "inputs.toml").is_file()
    assert [p.name for p in tmp_path.iterdir()] == ["empty"]        # no staging folder left


def test_atomic_write_refuses_a_symlink(tmp_path):
    real = tmp_path / "real.toml"
    real.write_text("old")
    link = tmp_path / "inputs.toml"
    link.symlink_to(real)
    with pytest.raises(SymlinkError):                     # common practice: never replace or follow a link
        atomic.write_text_atomic(link, "new")
    assert real.read_text() == "old" and link.is_symlink()


# --- failed writes -------------------------------------------------------------------------------
def _full_disk(monkeypatch):
    real_write = os.write

    def write(fd, data):
        real_write(fd, bytes(data[: max(len(data) // 2, 1)]))   # half lands, then the disk is full
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(atomic.os, "write", write)


def _leftovers(folder: Path) -> list[str]:
    return sorted(p.name for p in folder.iterdir() if p.name.endswith(".part") or ".part" in p.name)


def test_full_disk_leaves_the_old_inputs_and_raises_a_named_error(project, monkeypatch):
    path = project / "inputs.toml"
    before = path.read_bytes()
    _full_disk(monkeypatch)
    with pytest.raises(FileWriteError) as err:
        set_values(path, _spec(), {"cell.width": "130 mm"})
    monkeypatch.undo()
    # common practice: the old file intact, no temporary file left, the reason and the file named
    assert path.read_bytes() == before
    assert _leftovers(project) == []
    assert err.value.errno == errno.ENOSPC and isinstance(err.value, OSError)
    assert "disk is full" in str(err.value) and "inputs.toml" in str(err.value)


def test_failed_rename_leaves_the_old_file(tmp_path, monkeypatch):
    path = tmp_path / "run-record.json"
    path.write_text("old")

    def replace(src, dst):
        raise PermissionError(errno.EACCES, "Permission denied")

    monkeypatch.setattr(atomic.os, "replace", replace)
    with pytest.raises(FileWriteError, match="permission denied") as err:
        atomic.write_text_atomic(path, "new")
    monkeypatch.undo()
    assert path.read_text() == "old" and _leftovers(tmp_path) == []      # common practice
    assert err.value.errno == errno.EACCES


def test_full_disk_during_write_many_touches_no_target(tmp_path, monkeypatch):
    a, b = tmp_path / "a.html", tmp_path / "a.json"
    a.write_text("old a")
    b.write_text("old b")
    _full_disk(monkeypatch)
    with pytest.raises(FileWriteError):
        atomic.write_many_atomic({a: "new a" * 1000, b: "new b"})
    monkeypatch.undo()
    # common practice: the package's HTML and JSON stay a matching pair
    assert (a.read_text(), b.read_text()) == ("old a", "old b") and _leftovers(tmp_path) == []


def test_full_disk_during_new_leaves_nothing(tmp_path, monkeypatch):
    calls = []
    real_copyfile = shutil.copyfile

    def copyfile(src, dst, **kw):
        calls.append(src)
        if len(calls) > 2:
            raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC), dst)
        return real_copyfile(src, dst, **kw)

    monkeypatch.setattr(T.shutil, "copyfile", copyfile)
    dest = tmp_path / "proj"
    with pytest.raises(FileWriteError) as err:
        new_project(dest, template="column-panel")
    monkeypatch.undo()
    # common practice: no half-made project folder and no staging folder
    assert list(tmp_path.iterdir()) == []
    assert err.value.errno == errno.ENOSPC and "disk is full" in str(err.value)


# --- records that are not records ----------------------------------------------------------------
PASSWD = ("root:x:0:0:root:/root:/bin/bash\n"
          "daemon:x:1:1:daemon:/usr/sbin:/usr/sbin/nologin\n"
          "bin:x:2:2:bin:/bin:/usr/sbin/nologin\n")


@pytest.mark.parametrize("source", ["/etc/passwd", "copy"])
def test_a_system_file_as_record_is_not_echoed(tmp_path, source):
    path = Path(source) if source != "copy" else tmp_path / "passwd"
    if source == "copy":
        path.write_text(PASSWD)
    elif not path.is_file():
        pytest.skip("no /etc/passwd here")
    lines = [ln for ln in path.read_text(errors="replace").splitlines() if ln.strip()]
    with pytest.raises(LatticeCalcError) as err:
        R.read_record(path, sample_rate=Q_(100, "Hz"), unit="m/s^2")
    msg = str(err.value)
    # common practice: a file that is not a record is refused without quoting it (before: its second line)
    assert "not a record" in msg
    for line in lines[:5]:
        assert line not in msg and line.split(":")[0] + ":" not in msg


def test_a_text_file_with_a_name_like_first_line_is_not_echoed(tmp_path):
    p = tmp_path / "notes.csv"
    p.write_text("notes\nthe site password is hunter2\n")
    with pytest.raises(RecordError, match="no unit") as err:
        R.read_csv(p)
    # common practice: units and a sample-rate source are settled before any data row is read or quoted
    assert "hunter2" not in str(err.value)


def test_bad_cell_in_a_valid_record_is_quoted_short(tmp_path):
    p = tmp_path / "rec.csv"
    p.write_text("time [s],z [m/s^2]\n0.00,0.1\n0.01," + "secret" * 20 + "\n")
    with pytest.raises(RecordError, match="text in a number column") as err:
        R.read_csv(p)
    # common practice: at most a short excerpt of the field, on its line
    assert err.value.line == 3 and "secret" * 4 not in str(err.value)


def test_utf16_and_latin1_records_are_named_without_content(tmp_path):
    text = "time [s],z [m/s^2]\n0.00,0.1\n0.01,0.2\n"
    p = tmp_path / "u16.csv"
    p.write_bytes(text.encode("utf-16"))
    with pytest.raises(FileEncodingError, match="UTF-16"):       # common practice
        R.read_csv(p)
    q = tmp_path / "l1.csv"
    q.write_bytes("# Messung Zürich\n".encode("latin-1") + text.encode())
    with pytest.raises(FileEncodingError) as err:
        R.read_csv(q)
    assert err.value.line == 1 and "Messung" not in str(err.value)


def test_csv_record_with_bom_and_crlf_still_reads(tmp_path):
    p = tmp_path / "rec.csv"
    rows = "".join(f"{k / 100:.2f},{0.1 * k:.2f}\r\n" for k in range(10))
    p.write_bytes(b"\xef\xbb\xbf" + ("# unit = m/s^2\r\ntime [s],z\r\n" + rows).encode())
    rec = R.read_csv(p)
    # common practice: Excel's CSV (BOM, CRLF) is a record
    assert rec.n_samples == 10 and rec.channels == ("z",)
    assert_quantity_close(rec.sample_rate, 100, unit="Hz", rtol=1e-9)


def test_blank_and_comment_lines_keep_line_numbers(tmp_path):
    p = tmp_path / "rec.csv"
    p.write_text("time [s],z [m/s^2]\n0.00,0.1\n\n# note\n   \n0.01,0.2\n0.02,nan\n")
    with pytest.raises(RecordError, match="NaN") as err:
        R.read_csv(p)
    assert err.value.line == 7                         # common practice: the file's own line


def test_npy_that_is_text_is_not_echoed(tmp_path):
    p = tmp_path / "rec.npy"
    p.write_text(PASSWD)
    with pytest.raises(RecordError, match="not a NumPy") as err:
        R.read_npy(p, sample_rate=Q_(100, "Hz"), unit="m/s^2")
    assert "root:x" not in str(err.value)              # common practice: numpy's message quoted the bytes


def test_npy_of_objects_is_refused(tmp_path):
    p = tmp_path / "rec.npy"
    np.save(p, np.array([{"a": 1}, None], dtype=object), allow_pickle=True)
    with pytest.raises(RecordError, match="not numeric"):       # common practice: never unpickle
        R.read_npy(p, sample_rate=Q_(100, "Hz"), unit="m/s^2")


# --- exports of other projects -------------------------------------------------------------------
def _calibration(tmp_path, **over):
    rows = {"calibration.modulus": {"value": 14.2, "unit": "MPa"},
            "calibration.uncertainty": {"value": 0.3, "unit": "MPa"},
            "calibration.relative-bound": {"value": 0.15, "unit": ""}}
    for key, row in over.items():
        rows[key.replace("_", ".", 1).replace("_", "-")] = row
    p = tmp_path / "coupon.json"
    p.write_text(json.dumps({"generated": "2026-12-01", "results": [{"id": k, **v} for k, v in rows.items()],
                             "project": {"calc_id": "PT-1", "revision": "A", "title": "coupon", "prepared_by": "T"}}))
    return p


def test_calibration_export_reads(tmp_path):
    got = calibration_from_export(_calibration(tmp_path))
    assert_quantity_close(got.modulus, 14.2, unit="MPa", rtol=0)          # common practice: round trip
    assert_quantity_close(got.relative_bound, 0.15, unit="", rtol=0)


@pytest.mark.parametrize("row, words", [
    ({"value": "fourteen MPa", "unit": "MPa"}, "not a number"),
    ({"value": None, "unit": "MPa"}, "not a number"),
    ({"value": [14.2], "unit": "MPa"}, "not a number"),
    ({"value": 14.2, "unit": "mm"}, "not a pressure"),
    ({"value": 14.2, "unit": "bananas"}, "not a pressure"),
    ({"value": 14.2, "unit": 3}, "not a unit"),
])
def test_calibration_modulus_as_text_or_wrong_unit_is_named(tmp_path, row, words):
    p = _calibration(tmp_path, calibration_modulus=row)
    with pytest.raises(RecordError) as err:
        calibration_from_export(p)
    # common practice: the input, the step and the file; before, ValueError from float()
    assert err.value.input_name == "lattice.calibration" and words in str(err.value)
    assert "calibration.modulus" in str(err.value) and str(p) in str(err.value)


def test_calibration_export_not_json_or_not_utf8(tmp_path):
    p = tmp_path / "coupon.json"
    p.write_text('{"results": [\n  {"id": "calibration.modulus", "value": 14.2,,}\n')
    with pytest.raises(FileFormatError) as err:
        calibration_from_export(p)
    assert err.value.line == 2 and err.value.input_name == "lattice.calibration"     # common practice
    p.write_bytes('{"results": [], "project": {"title": "Prüfung"}}'.encode("latin-1"))
    with pytest.raises(FileEncodingError):
        calibration_from_export(p)
    p.write_text("[" * 100_000)
    with pytest.raises(FileFormatError, match="nested too deeply"):
        calibration_from_export(p)


def test_survey_export_with_text_values_is_named(tmp_path):
    p = tmp_path / "survey.json"
    p.write_text(json.dumps({"results": [{"id": "peaks.target-frequencies", "value": ["39 Hz"], "unit": "Hz"},
                                         {"id": "peaks.target-losses", "value": [10.0], "unit": "dB"}]}))
    with pytest.raises(RecordError, match="not numbers") as err:
        survey_from_export(p)
    assert err.value.input_name == "coverage.survey_results"      # common practice
    p.write_text(json.dumps({"results": [{"id": "peaks.target-frequencies", "value": [39.0], "unit": "Hz"},
                                         {"id": "peaks.target-losses", "value": "ten", "unit": "dB"}]}))
    with pytest.raises(RecordError, match="peaks.target-losses"):
        survey_requirement(p)
    p.write_text(json.dumps({"results": {"id": "x"}}))
    with pytest.raises(RecordError, match="not a calc package"):
        survey_requirement(p)
    with pytest.raises(FolderError):
        survey_requirement(tmp_path)


def test_every_file_error_is_an_input_error_and_a_value_error():
    # common practice: callers that catch InputError or ValueError keep working
    assert issubclass(FileError, InputError) and issubclass(FileError, ValueError)
    assert issubclass(FileWriteError, LatticeCalcError) and issubclass(FileWriteError, OSError)
