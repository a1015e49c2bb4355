"""Time `latticecalc run` + `export` of the demo against stock `jupyter nbconvert --execute --to html`.

Both paths execute the same notebooks of the same demo project, one after the other in this run.
One untimed warm-up run fills the project's result cache first, so both timed paths meet the same
warm cache (the cache is what a rerun in practice meets; the cold first run is printed too).
Goals (2-core machine): cold run + export under 15 s; warm, under 0.2 x the stock path's time.
Prints figures and the ratio; asserts nothing.
Last, a design-loop run of only some sections (``run_project(only=...)``, ``latticecalc run --only``)
is timed against the full run on the same warm cache.

    python benchmarks/bench_run_export.py [--repeat N] [--only SECTION ...]
"""

from __future__ import annotations

import argparse
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from latticecalc.project.demo import _overlay, demo_projects
from latticecalc.project.export import export_project
from latticecalc.project.runner import run_project
from latticecalc.project.templates import demo_root, new_project


def _fresh_demo(root: Path) -> Path:
    main = next(d for d in demo_projects() if d.main)
    folder = new_project(root / main.folder, template=main.template)
    _overlay(demo_root() / main.folder, folder)
    # the main demo may read the packages of demo projects listed before it: build those first (not timed);
    # those listed after it (the design study) read the main one and are not needed here
    for other in demo_projects():
        if other.folder == main.folder:
            break
        f = new_project(root / other.folder, template=other.template)
        _overlay(demo_root() / other.folder, f)
        export_project(f, run=True, progress=None)
    return folder


def time_ours(folder: Path) -> float:
    t0 = time.perf_counter()
    run_project(folder, progress=None)
    export_project(folder)
    return time.perf_counter() - t0


def time_stock(folder: Path) -> float:
    notebooks = sorted(p.name for p in folder.glob("*.ipynb"))
    out = folder / "stock-html"
    t0 = time.perf_counter()
    subprocess.run([sys.executable, "-m", "jupyter", "nbconvert", "--execute", "--to", "html",
                    "--output-dir", str(out), *notebooks], cwd=folder, check=True, capture_output=True)
    return time.perf_counter() - t0


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=2)
    parser.add_argument("--only", nargs="+", default=["20", "30"], metavar="SECTION",
                        help="sections of the partial run timed last (default: 20 30)")
    args = parser.parse_args()
    if shutil.which("jupyter") is None and subprocess.run([sys.executable, "-m", "jupyter", "--version"],
                                                          capture_output=True).returncode != 0:
        sys.exit("jupyter nbconvert is not installed (pip install -e '.[test]')")
    with tempfile.TemporaryDirectory() as tmp:
        folder = _fresh_demo(Path(tmp))
        n = len(list(folder.glob("*.ipynb")))
        print(f"cold first run (fills the result cache, not compared): {time_ours(folder):.2f} s (goal < 15 s)",
              flush=True)
        ours, stock = [], []
        for i in range(args.repeat):
            ours.append(time_ours(folder))
            stock.append(time_stock(folder))
            print(f"round {i + 1}: latticecalc run+export {ours[-1]:.2f} s | nbconvert --execute --to html "
                  f"{stock[-1]:.2f} s", flush=True)
        best_ours, best_stock = min(ours), min(stock)
        print(f"notebooks: {n}")
        print(f"latticecalc run + export (best of {args.repeat}): {best_ours:.2f} s")
        print(f"jupyter nbconvert --execute --to html (best of {args.repeat}): {best_stock:.2f} s")
        print(f"ratio ours / stock: {best_ours / best_stock:.2f} (goal: < 0.2)")
        t0 = time.perf_counter()
        partial = run_project(folder, progress=None, only=args.only)
        t_partial = time.perf_counter() - t0
        print(f"latticecalc run --only {' '.join(args.only)} ({len(partial.notebooks)} of {n} notebooks): "
              f"{t_partial:.2f} s; ratio to the full run + export: {t_partial / best_ours:.2f}")


if __name__ == "__main__":
    main()
