"""Start-up cost of the command line, of ``import latticecalc`` and of a section's first cell.

Each line is a fresh Python process, timed from outside (median of --repeat runs), printed beside
``python -c pass`` measured in the same run, with the extra time over that baseline. The rows
"what ... paid before" time what those commands used to load (the pint registry through
``latticecalc.units``; nbformat with jsonschema's IRI grammar; scipy.signal, which every column-panel
section loaded through ``signals.frf``), so the saving reads side by side.
Asserts nothing.

    python benchmarks/bench_imports.py [--repeat N]

Goal: ``latticecalc --help`` and ``import latticecalc`` within 0.2 s of a bare interpreter.
"""

from __future__ import annotations

import argparse
import json
import shutil
import statistics
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
PY = sys.executable


def _first_cell_imports() -> str:
    """The import lines of the column-panel strut section's first code cell."""
    nb = json.loads((ROOT / "project_templates" / "column-panel" / "10_strut_resonance.ipynb").read_text())
    code = "".join(next(c for c in nb["cells"] if c["cell_type"] == "code")["source"])
    lines, keep = [], False
    for line in code.splitlines():
        keep = line.startswith(("from ", "import ")) or (keep and line.startswith(" "))
        if keep:
            lines.append(line)
    return "\n".join(lines)


def _cli() -> list[str]:
    exe = shutil.which("latticecalc", path=str(Path(PY).parent))
    return [exe] if exe else [PY, "-m", "latticecalc.cli"]


def _time(cmd: list[str], repeat: int) -> float:
    runs = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        subprocess.run(cmd, check=True, capture_output=True)
        runs.append(time.perf_counter() - t0)
    return statistics.median(runs)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=5)
    args = parser.parse_args()
    no_iri = "import sys; sys.modules['rfc3987_syntax'] = None; import nbformat"
    rows = [
        ("python -c pass (baseline)", [PY, "-c", "pass"]),
        ("import latticecalc", [PY, "-c", "import latticecalc"]),
        ("  what it paid before: import latticecalc.units", [PY, "-c", "import latticecalc.units"]),
        ("latticecalc --help", [*_cli(), "--help"]),
        ("latticecalc run --help", [*_cli(), "run", "--help"]),
        ("import nbformat, as latticecalc run does", [PY, "-c", no_iri]),
        ("  what it paid before: import nbformat", [PY, "-c", "import nbformat"]),
        ("from latticecalc.project import open_project", [PY, "-c", "from latticecalc.project import open_project"]),
        ("first cell of 10_strut_resonance (imports)", [PY, "-c", _first_cell_imports()]),
        ("  what it paid before: the same + scipy.signal", [PY, "-c", _first_cell_imports() + "\nimport scipy.signal"]),
    ]
    base = None
    print(f"{'command':<48} {'median (s)':>10} {'over baseline (s)':>18}")
    for label, cmd in rows:
        t = _time(cmd, args.repeat)
        base = t if base is None else base
        print(f"{label:<48} {t:>10.3f} {t - base:>18.3f}", flush=True)


if __name__ == "__main__":
    main()
