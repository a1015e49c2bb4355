"""``latticecalc study``: run a design study, or write one of its designs into a column-panel project.

``latticecalc study run DIR [--scheduler tcp://host:port | --workers N | --serial]`` runs the staged
study of the design-study project DIR (evaluations kept in DIR/evaluations, results in
DIR/out/study-results.json). ``latticecalc study apply DIR DESIGN_ID PROJECT`` writes that design into
the column-panel project PROJECT's inputs.toml, each value's source naming the study and the design.
Each action is one library call; everything is checked before anything is written.
"""

from __future__ import annotations

import argparse
import sys


def add_parser(sub: argparse._SubParsersAction) -> None:
    """Add the ``study`` command to the ``latticecalc`` sub-commands."""
    p = sub.add_parser("study", help="search a design space for panel designs that meet a column-panel requirement")
    acts = p.add_subparsers(dest="study_action", required=True, metavar="ACTION")
    r = acts.add_parser("run", help="run (or resume) the design study in DIR")
    r.add_argument("dir", help="design-study project folder")
    where = r.add_mutually_exclusive_group()
    where.add_argument("--scheduler", default=None, help="address of a running Dask scheduler (tcp://host:port)")
    where.add_argument("--serial", action="store_true", help="evaluate in this process, no Dask")
    r.add_argument("--workers", type=int, default=2, help="workers of the local Dask cluster (default 2)")
    r.add_argument("--quiet", action="store_true", help="no progress line")
    r.set_defaults(func=run)
    a = acts.add_parser("apply", help="write a design of the study into a column-panel project's inputs")
    a.add_argument("dir", help="design-study project folder (after 'study run')")
    a.add_argument("design", help="design id from the study's table (e.g. D1a2b3c4d)")
    a.add_argument("project", help="column-panel project folder whose inputs.toml receives the design")
    a.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """Carry out ``study run`` or ``study apply``."""
    if args.study_action == "apply":
        from latticecalc.study.workflow import apply_from_study

        changed = apply_from_study(args.dir, args.design, args.project)
        print(f"Wrote {len(changed)} inputs of {args.design} into {args.project}/inputs.toml: "
              + ", ".join(changed))
        return 0
    from latticecalc.study.engine import print_progress
    from latticecalc.study.workflow import run_study_project

    report = run_study_project(args.dir, scheduler=args.scheduler, serial=args.serial, workers=args.workers,
                               progress=None if args.quiet else print_progress)
    res = report.result
    print(f"Evaluated {sum(res.counts.values())} new designs ({', '.join(f'{k} {v}' for k, v in res.counts.items())})"
          f" on {res.executor}; results in {report.results}", file=sys.stderr)
    head = "Pareto set" if res.met else "No design meets every check; the nearest, and what each lacks"
    print(head + f" ({res.final_stage} stage):")
    for row in res.pareto_rows(report.space):     # the zone variables as one zones text
        print("  " + " | ".join(row))
    return 0
