"""Evaluations per second of each study stage, serial and on a local Dask cluster, and a study's total time.

Prints measurements side by side in one run; asserts nothing.

Run: python benchmarks/bench_study.py [--hand N] [--bloch N] [--coupled N] [--workers N] [--full]
Goal (2-core machine): a study of 2,000 hand evaluations, 200 Bloch evaluations and 20 coupled
evaluations in under 5 minutes. By default each stage is timed on a sample of designs (fresh stores, so
every evaluation computes) and the goal study's time is projected from the measured rates; ``--full``
runs that study for real on the local cluster and prints its total time.
The designs are an invented demo-like space: bcc or octet cells of 250-400 mm, 15-35 mm struts, 0-500 g
added per strut, on the column-panel template's column made 400 × 400 mm, one targeted peak at 39 Hz.
"""

from __future__ import annotations

import argparse
import dataclasses
import os
import tempfile
import time

os.environ.setdefault("OMP_NUM_THREADS", "1")

from latticecalc.project.templates import templates_root  # noqa: E402
from latticecalc.study.engine import (  # noqa: E402
    Constraint,
    DaskExecutor,
    SerialExecutor,
    StudySettings,
    run_study,
)
from latticecalc.study.requirement import Requirement, context_from_project  # noqa: E402
from latticecalc.study.space import space_from_table  # noqa: E402

SPACE = {"cell.kind": {"choices": ["bcc", "octet"]}, "cell.width": {"low": "250 mm", "high": "400 mm"},
         "lattice.strut_diameter": {"low": "15 mm", "high": "35 mm"},
         "lattice.added_mass": {"low": "0 g", "high": "500 g"}}


def context():
    ctx = context_from_project(templates_root() / "column-panel", limits={"max_panel_mass_kg": 200.0})
    base = dict(ctx.base, **{"cell.kind": "bcc", "cell.width": 350.0, "frame.strut_diameter": 8.0})
    return dataclasses.replace(ctx, base=base, column=dict(ctx.column, width_m=0.4, depth_m=0.4),
                               requirement=Requirement(peaks=(39.0,), required=(10.0,), spread=0.02,
                                                       direction="normal", source="benchmark (invented)"))


def designs(n: int, seed: int):
    from scipy.stats import qmc

    space = space_from_table(SPACE)
    return [space.decode(u) for u in qmc.Sobol(d=space.dimension, scramble=True, seed=seed).random(n)]


def rate(executor, stage: str, items, ctx) -> tuple[float, float]:
    """(evaluations per second, seconds) of ``items`` at ``stage`` in a fresh store."""
    with tempfile.TemporaryDirectory() as store:
        if stage != "hand":     # the Bloch stage reads the hand outputs from the store: put them there first
            executor.map([("hand", d, ctx, store) for d in items])
        t0 = time.perf_counter()
        out = executor.map([(stage, d, ctx, store) for d in items])
        dt = time.perf_counter() - t0
    assert all(computed for _, computed in out)
    return len(items) / dt, dt


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--hand", type=int, default=40)
    ap.add_argument("--bloch", type=int, default=8)
    ap.add_argument("--coupled", type=int, default=4)
    ap.add_argument("--workers", type=int, default=2)
    ap.add_argument("--full", action="store_true", help="run the 2,000/200/20 study on the local cluster")
    args = ap.parse_args()
    ctx = context()
    samples = {"hand": designs(args.hand, 1), "bloch": designs(args.bloch, 2), "coupled": designs(args.coupled, 3)}
    goal = {"hand": 2000, "bloch": 200, "coupled": 20}
    rates: dict[str, dict[str, float]] = {}
    serial = SerialExecutor()
    t0 = time.perf_counter()
    dask = DaskExecutor(workers=args.workers)
    print(f"local Dask cluster of {dask.workers} workers started in {time.perf_counter() - t0:.1f} s")
    try:
        for name, ex in (("serial", serial), (f"dask x{dask.workers}", dask)):
            rates[name] = {}
            for stage, items in samples.items():
                # each worker process pays its imports and formula set-up once: warm it on other designs
                ex.map([("hand", d, ctx, None) for d in designs(2 * getattr(ex, "workers", 1), 9)])
                r, dt = rate(ex, stage, items, ctx)
                rates[name][stage] = r
                print(f"{name:<10} {stage:<8} {len(items):>4} evaluations in {dt:7.1f} s: {r:7.2f} per second")
        print()
        print(f"{'stage':<8} {'serial /s':>10} {'dask /s':>10} {'speed-up':>9}")
        dname = f"dask x{dask.workers}"
        for stage in goal:
            s, d = rates["serial"][stage], rates[dname][stage]
            print(f"{stage:<8} {s:10.2f} {d:10.2f} {d / s:9.2f}")
        for name in rates:
            total = sum(goal[s] / rates[name][s] for s in goal)
            print(f"projected 2,000 hand + 200 Bloch + 20 coupled, {name}: {total:.0f} s "
                  f"({total / 60:.1f} min; goal 5 min)")
        if args.full:
            with tempfile.TemporaryDirectory() as store:
                # throughput, not a design: the coverage and floor constraints are left out so that every stage
                # gets its full count (with them, no design of this space passes the hand stage)
                relaxed = tuple(Constraint(output=o) for o in ("fits", "buckling_margin", "shortening_margin"))
                settings = StudySettings(screen=400, population=100, generations=16, bloch=200, coupled=20, seed=7,
                                         constraints=relaxed, bloch_constraints=(Constraint(output="has_gap"),),
                                         coupled_constraints=())
                t0 = time.perf_counter()
                res = run_study(space_from_table(SPACE), ctx, settings=settings, store=store, executor=dask)
                total = time.perf_counter() - t0
            print(f"full study on {dname}: {dict(res.counts)} computed in {total:.0f} s ({total / 60:.1f} min); "
                  f"per stage {', '.join(f'{k} {v:.0f} s' for k, v in res.seconds.items())}")
    finally:
        dask.close()
    print(f"load average while measuring: {os.getloadavg()[0]:.2f} (the machine's 2 cores are shared)")


if __name__ == "__main__":
    main()
