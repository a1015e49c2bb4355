"""Speed, accuracy and memory of the receiver sweep: a 1 × 10-cell panel on a 3.5 m column.

Prints measurements side by side in one run; asserts nothing.

Run: python benchmarks/bench_receiver.py
Goal (2-core machine): 500 frequencies × three ground directions, bare column and column with the
panel, in under 10 s; reduced against full model at a few frequencies; peak memory printed.
The swept model (struts reduced to end joints + strut modes, condensed per frequency, one sparse
solve per frequency for all three directions) is timed against a direct solve of the full strut mesh
at a sample of the same frequencies, scaled to 500.
"""

from __future__ import annotations

import resource
import time
import tracemalloc

import numpy as np

from latticecalc import Q_, materials
from latticecalc.physics import receiver as rc
from latticecalc.physics.cells import build_cell
from latticecalc.physics.column import Column

# an invented design: the kit's demo-like panel on a concrete column (no cache: every run computes)
CELL = build_cell("bcc", cell_width=Q_(350, "mm"), strut_diameter=Q_(24.6, "mm"), frame_diameter=Q_(8, "mm"))
MATS = {"lattice": materials.get("tpu-90a-printed"), "frame": materials.get("cfrp-tube-qi")}
COLUMN = Column(shape="rectangular", width=Q_(400, "mm"), depth=Q_(400, "mm"), height=Q_(3.5, "m"),
                material=materials.get("concrete-c30-37"), head_mass=Q_(38900, "kg"), head="guided")
FIX = rc.Fixings(levels=tuple(range(11)), normal=Q_(5, "MN/m"), along=Q_(3, "MN/m"), vertical=Q_(8, "MN/m"),
                 loss_factor=0.08)


def main() -> None:
    f = rc.frequencies_for(f_min=Q_(1, "Hz"), f_max=Q_(100, "Hz"), n=500, include=Q_([39.25], "Hz"))
    tracemalloc.start()
    t0 = time.perf_counter()
    r = rc.coupled_response(CELL, materials=MATS, nx=1, ny=10, column=COLUMN, fixings=FIX, frequencies=f,
                            strut_modes=8, n_elements=8)
    t_sweep = time.perf_counter() - t0
    _, peak_py = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    chk = Q_(np.geomspace(5, 95, 8), "Hz")
    t0 = time.perf_counter()
    rchk = rc.coupled_response(CELL, materials=MATS, nx=1, ny=10, column=COLUMN, fixings=FIX, frequencies=chk,
                               check_frequencies=chk, strut_modes=8, n_elements=8, mode_counts=())
    t_check = time.perf_counter() - t0
    # the full model alone, timed per frequency
    full = rc._build(CELL, materials=MATS, nx=1, ny=10, column=COLUMN, placement=rc.Placement(), fixings=FIX,
                     n_elements=8, strut_modes=None, theory="timoshenko", with_panels=True, column_spacing=0.25,
                     point_masses=None)
    t0 = time.perf_counter()
    rc._sweep(full, 2 * np.pi * chk.m[:4], rc.DIRECTIONS, progress=None, desc="")
    t_full_per_f = (time.perf_counter() - t0) / 4
    red = rc._build(CELL, materials=MATS, nx=1, ny=10, column=COLUMN, placement=rc.Placement(), fixings=FIX,
                    n_elements=8, strut_modes=8, theory="timoshenko", with_panels=True, column_spacing=0.25,
                    point_masses=None)
    t0 = time.perf_counter()
    rc._sweep(red, 2 * np.pi * chk.m, rc.DIRECTIONS, progress=None, desc="")
    t_red_per_f = (time.perf_counter() - t0) / chk.size
    err = rchk.value["check"]["error_db"]
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print("receiver sweep: 1 × 10-cell bcc panel on a 3.5 m column, 500 frequencies (+ the peak), 3 directions")
    print(f"  swept model: {r.n_dofs_reduced} DOF per solve; full model: {rchk.n_dofs_full} DOF")
    print(f"  sweep time (bare column + column with panel, 3 directions): {t_sweep:.2f} s   goal < 10 s")
    print(f"  per frequency: reduced {1e3 * t_red_per_f:.1f} ms, full mesh {1e3 * t_full_per_f:.1f} ms, "
          f"ratio {t_full_per_f / t_red_per_f:.1f}")
    print(f"  full model over 500 frequencies would take about {500 * t_full_per_f:.0f} s")
    print(f"  check run (8 frequencies, reduced and full): {t_check:.2f} s")
    print(f"  largest |IL reduced − IL full| over 8 frequencies and 3 directions: {err.max():.2e} dB   goal <= 0.5 dB")
    print(f"  peak Python allocations during the sweep: {peak_py / 2**20:.0f} MiB; process peak RSS {rss:.0f} MiB")
    print(f"  insertion loss at 39.25 Hz (normal): {np.interp(39.25, f.m, r.value['insertion_loss']['normal']):.4f} dB")


if __name__ == "__main__":
    main()
