"""A study resumed after an interruption evaluates nothing twice; Dask and serial give identical results.

Both are properties of the kit's own design (evaluations persisted by fingerprint; a seeded search whose
batches are gathered in submission order): common practice for reproducible distributed search.
"""

from __future__ import annotations

import pytest
from tests.study.helpers_study import bcc_context

from latticecalc.study import evaluate as ev
from latticecalc.study.engine import DaskExecutor, SerialExecutor, StudySettings, run_study
from latticecalc.study.space import space_from_table

SPACE = {"lattice.strut_diameter": {"low": "15 mm", "high": "35 mm"},
         "lattice.added_mass": {"low": "0 g", "high": "500 g"}}
SETTINGS = StudySettings(screen=8, population=6, generations=2, bloch=2, coupled=0, seed=11)


HAND = ev._STAGE_FUNCS["hand"]


class Interrupted(Exception):
    pass


def _spy(monkeypatch, calls, stop_after=None):
    """Record every hand evaluation actually computed (not served from the store); stop after some."""
    def spy(design, context):
        if stop_after is not None and len(calls) >= stop_after:
            raise Interrupted
        calls.append(ev.design_fingerprint("hand", design, context))
        return HAND(design, context)

    monkeypatch.setitem(ev._STAGE_FUNCS, "hand", spy)


def test_resumed_study_evaluates_nothing_twice(tmp_path, monkeypatch):
    ctx = bcc_context(39.0)
    space = space_from_table(SPACE)
    first: list[str] = []
    _spy(monkeypatch, first, stop_after=11)
    with pytest.raises(Interrupted):
        run_study(space, ctx, settings=SETTINGS, store=tmp_path / "evaluations")
    assert len(first) == 11

    second: list[str] = []
    _spy(monkeypatch, second)
    resumed = run_study(space, ctx, settings=SETTINGS, store=tmp_path / "evaluations")
    assert second, "the interrupted study had designs left to evaluate"
    assert not set(first) & set(second), "a design evaluated before the interruption was evaluated again"
    assert len(second) == len(set(second))

    # the same study run through without a break evaluates exactly the designs of both parts
    whole: list[str] = []
    _spy(monkeypatch, whole)
    fresh = run_study(space, ctx, settings=SETTINGS, store=tmp_path / "fresh")
    assert set(whole) == set(first) | set(second)
    assert [r.id for r in fresh.records] == [r.id for r in resumed.records]

    # a rerun computes nothing at all
    again: list[str] = []
    _spy(monkeypatch, again)
    rerun = run_study(space, ctx, settings=SETTINGS, store=tmp_path / "evaluations")
    assert again == [] and sum(rerun.counts.values()) == 0


def test_two_worker_dask_cluster_gives_the_serial_result(tmp_path):
    ctx = bcc_context(39.0)
    space = space_from_table(SPACE)
    serial = run_study(space, ctx, settings=SETTINGS, store=tmp_path / "serial", executor=SerialExecutor())
    dask = DaskExecutor(workers=2)
    try:
        assert dask.workers == 2
        parallel = run_study(space, ctx, settings=SETTINGS, store=tmp_path / "dask", executor=dask)
    finally:
        dask.close()
    assert parallel.executor == "dask" and serial.executor == "serial"
    assert sum(parallel.counts.values()) == sum(serial.counts.values()) > 0
    assert [r.id for r in parallel.records] == [r.id for r in serial.records]
    for a, b in zip(parallel.records, serial.records):
        assert a.design == b.design
        assert a.outputs == b.outputs          # identical, not merely close
    assert parallel.pareto == serial.pareto and parallel.nearest == serial.nearest


def test_scheduler_given_by_address_gives_the_serial_result(tmp_path):
    from distributed import LocalCluster

    ctx = bcc_context(39.0)
    space = space_from_table(SPACE)
    small = StudySettings(screen=6, population=0, generations=0, bloch=0, coupled=0, seed=2)
    serial = run_study(space, ctx, settings=small, store=tmp_path / "serial")
    # a scheduler the study did not start (as a firm's cluster would be), reached by its address
    with LocalCluster(n_workers=1, threads_per_worker=1, processes=True, dashboard_address=None) as cluster:
        remote = DaskExecutor(address=cluster.scheduler_address)
        try:
            assert remote.address == cluster.scheduler_address
            got = run_study(space, ctx, settings=small, store=tmp_path / "remote", executor=remote)
        finally:
            remote.close()
    assert [(r.id, r.outputs) for r in got.records] == [(r.id, r.outputs) for r in serial.records]
