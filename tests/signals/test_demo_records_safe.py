"""Synthetic demo records never destroy or escape: they are made only where no file of the record is.

Each case calls what the site-survey and prototype-test notebooks call (``records.read_record`` with
``demo_seed``, ``synthetic.ensure_demo_test``) on a project made from the template, from the project
folder as a notebook run does.  The rules checked are the kit's own (common practice for tools that
write beside user data): nothing is replaced, nothing is written outside the project folder or
through a link, and the refusal is a named error giving the input and the path.
"""

from __future__ import annotations

import os

import pytest

from latticecalc import Q_
from latticecalc.errors import LatticeCalcError
from latticecalc.project import open_project
from latticecalc.project.templates import new_project
from latticecalc.signals import records, synthetic

#: A short demo test, to keep the cases quick.
SHORT = Q_(4, "s")
REAL_INPUT = "time [s],input [m/s^2]\n0.000,0.25\n0.0005,-0.5\n0.001,0.125\n"


@pytest.fixture
def prototype(tmp_path, monkeypatch):
    folder = new_project(tmp_path / "proto", template="prototype-test")
    monkeypatch.chdir(folder)
    return folder


@pytest.fixture
def survey(tmp_path, monkeypatch):
    folder = new_project(tmp_path / "survey", template="site-survey")
    monkeypatch.chdir(folder)
    return folder


def _paths(folder):
    inp = open_project(folder).inputs
    return folder / inp["test.input_file"], folder / inp["test.output_file"], inp["test.demo_seed"]


def _refused(call, *, input_name: str, path) -> str:
    with pytest.raises(LatticeCalcError) as err:
        call()
    assert type(err.value).__name__ == "DemoRecordError"
    message = str(err.value)
    assert input_name in message and str(path) in message, message
    return message


def _files_under(folder):
    return sorted(p for p in folder.rglob("*") if p.is_file() or p.is_symlink())


def test_a_real_input_is_kept_when_the_demo_output_was_deleted(prototype):
    in_path, out_path, seed = _paths(prototype)
    in_path.parent.mkdir(parents=True, exist_ok=True)
    in_path.write_text(REAL_INPUT)                           # the user's real record; the output deleted
    _refused(lambda: synthetic.ensure_demo_test(in_path, out_path, seed=seed, duration=SHORT),
             input_name="test.output_file", path=out_path)
    assert in_path.read_text() == REAL_INPUT                 # common practice: user data untouched
    assert not os.path.lexists(out_path)


def test_a_real_output_is_kept_when_the_input_is_missing(prototype):
    in_path, out_path, seed = _paths(prototype)
    out_path.parent.mkdir(parents=True, exist_ok=True)
    out_path.write_text(REAL_INPUT.replace("input", "output"))
    _refused(lambda: synthetic.ensure_demo_test(in_path, out_path, seed=seed, duration=SHORT),
             input_name="test.input_file", path=in_path)
    assert not os.path.lexists(in_path)


def test_the_demo_pair_is_made_once_inside_the_project_and_then_left_alone(prototype):
    in_path, out_path, seed = _paths(prototype)
    synthetic.ensure_demo_test(in_path, out_path, seed=seed, duration=SHORT)
    stamps = (in_path.stat().st_mtime_ns, out_path.stat().st_mtime_ns)
    synthetic.ensure_demo_test(in_path, out_path, seed=seed, duration=SHORT)
    assert (in_path.stat().st_mtime_ns, out_path.stat().st_mtime_ns) == stamps
    # common practice: only the two records are written, no temporary file is left behind
    assert [p.name for p in _files_under(in_path.parent)] == sorted([in_path.name, out_path.name])
    rec_in, rec_out = records.read_record(in_path), records.read_record(out_path)
    assert rec_in.n_samples == rec_out.n_samples == int(SHORT.m * 2000)


def test_a_record_path_leaving_the_project_is_refused(survey, tmp_path):
    path = survey / "../outside/x.csv"
    _refused(lambda: records.read_record(path, demo_seed=7), input_name="record.file", path=path)
    assert not (tmp_path / "outside").exists()


def test_an_absolute_record_path_outside_the_project_is_refused(survey, tmp_path):
    path = tmp_path / "elsewhere" / "x.csv"
    _refused(lambda: records.read_record(path, demo_seed=7), input_name="record.file", path=path)
    assert not (tmp_path / "elsewhere").exists()


def test_a_dangling_link_is_not_written_through(survey, tmp_path):
    target = tmp_path / "outside" / "big.csv"
    target.parent.mkdir()
    link = survey / "records" / "site-demo.csv"
    link.parent.mkdir(parents=True, exist_ok=True)
    os.symlink(target, link)
    _refused(lambda: records.read_record(link, demo_seed=7), input_name="record.file", path=link)
    assert not os.path.lexists(target)
    assert link.is_symlink()


def test_a_linked_folder_is_not_written_through(survey, tmp_path):
    (tmp_path / "outside").mkdir()
    os.symlink(tmp_path / "outside", survey / "records")
    path = survey / "records" / "site-demo.csv"
    _refused(lambda: records.read_record(path, demo_seed=7), input_name="record.file", path=path)
    assert list((tmp_path / "outside").iterdir()) == []


def test_a_dangling_link_in_the_test_pair_is_not_written_through(prototype, tmp_path):
    in_path, out_path, seed = _paths(prototype)
    in_path.parent.mkdir(parents=True, exist_ok=True)
    target = tmp_path / "outside" / "out.csv"
    target.parent.mkdir()
    os.symlink(target, out_path)
    _refused(lambda: synthetic.ensure_demo_test(in_path, out_path, seed=seed, duration=SHORT),
             input_name="test.output_file", path=out_path)
    assert not os.path.lexists(in_path) and not os.path.lexists(target)


def test_an_existing_record_is_read_not_replaced(survey):
    path = survey / "records" / "site-demo.csv"
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text(REAL_INPUT.replace("input", "z"))
    rec = records.read_record(path, demo_seed=7)
    assert rec.n_samples == 3 and path.read_text() == REAL_INPUT.replace("input", "z")
