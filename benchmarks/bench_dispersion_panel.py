"""Speed and accuracy of the numerical check: Bloch dispersion of a framed octet cell and the
transmissibility of a 4 × 16 panel.  Prints measurements side by side; asserts nothing.

Run: python benchmarks/bench_dispersion_panel.py [--quick]
Goals (2-core machine): cell path (100 wave vectors, 30 bands) < 3 s; panel 4 × 16 with 500
frequencies < 20 s; band edges within 0.5 % of the full model.
"""

from __future__ import annotations

import argparse
import resource
import time
from types import SimpleNamespace

import numpy as np

from latticecalc import Q_
from latticecalc.physics import bloch, panel
from latticecalc.physics import frame_fe as fe
from latticecalc.physics.cells import build_cell

# an invented demo design: soft printed elastomer lattice in a stiff printed frame
TPU = SimpleNamespace(youngs_modulus=Q_(20, "MPa"), poissons_ratio=0.48, density=Q_(1200, "kg/m^3"),
                      loss_factor=0.1)
PLA = SimpleNamespace(youngs_modulus=Q_(3.3, "GPa"), poissons_ratio=0.36, density=Q_(1240, "kg/m^3"),
                      loss_factor=0.03)
MATS = {"lattice": TPU, "frame": PLA}


def band_edges(f: np.ndarray) -> np.ndarray:
    return np.stack([np.nanmin(f, axis=0), np.nanmax(f, axis=0)], axis=1)


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true", help="fewer full-model wave vectors and frequencies")
    args = ap.parse_args()
    cell = build_cell("octet", cell_width=Q_(40, "mm"), strut_diameter=Q_(2.5, "mm"), frame_diameter=Q_(6, "mm"))
    n_el, n_bands, points = 8, 30, 100
    print("== Bloch dispersion: framed octet cell, 8 elements per strut, 30 bands, 100 wave vectors ==")
    pf = bloch.periodic_frame(cell)
    sec = fe.sections_for(cell, MATS)

    t0 = time.perf_counter()
    r = bloch.dispersion(cell, materials=MATS, n_elements=n_el, n_bands=n_bands, points=points, zone_points=0,
                         convergence_check=False)
    t_red = time.perf_counter() - t0
    nk = len(r["k"])
    print(f"DOFs: full mesh {r.n_dofs_full} before the Bloch condensation, "
          f"{bloch.full_operator(pf, sec, n_elements=n_el, theory='timoshenko').n_reduced} after; "
          f"reduced eigenproblem {r.n_dofs_reduced}")
    print(f"reduced model, whole path: {t_red:.2f} s for {nk} wave vectors = {1e3 * t_red / nk:.1f} ms per wave vector"
          f"  (goal < 3 s)")

    full = bloch.full_operator(pf, sec, n_elements=n_el, theory="timoshenko")
    step = 10 if args.quick else 5
    ks = r["wave_vectors"].magnitude[::step]
    t0 = time.perf_counter()
    f_full = np.array([np.sqrt(full.solve(k, n_bands)) / (2 * np.pi) for k in ks])
    t_full = (time.perf_counter() - t0) / len(ks)
    kk = ks[len(ks) // 2]
    Kk, Mk = full.matrices(kk)
    t0 = time.perf_counter()
    bloch._sparse_hermitian_lowest(Kk, Mk, n_bands, shift=full._shift())
    t_bare = time.perf_counter() - t0
    print(f"full model: {1e3 * t_full:.0f} ms per wave vector (Bloch reduction + eigensolve, {len(ks)} samples); "
          f"bare sparse eigensolve of the same matrices: {1e3 * t_bare:.0f} ms")
    print(f"ratio, reduced per wave vector / bare sparse eigensolve: {t_red / nk / t_bare:.3f}")
    print(f"speed-up of the reduced model over the full model: {t_full / (t_red / nk):.0f}x")
    f_red = r["frequencies"].magnitude[::step]
    e_red, e_full = band_edges(f_red[:, 3:]), band_edges(f_full[:, 3:])
    err = np.abs(e_red - e_full) / e_full
    print(f"band-edge error, reduced vs full (bands 4-30, same wave vectors): max {100 * err.max():.3f} %, "
          f"mean {100 * err.mean():.3f} %  (goal < 0.5 %)")
    r16 = bloch.dispersion(cell, materials=MATS, n_elements=16, n_bands=n_bands, points=points, zone_points=0,
                           convergence_check=False)
    e16 = band_edges(r16["frequencies"].magnitude[:, 3:])
    e8 = band_edges(r["frequencies"].magnitude[:, 3:])
    print(f"mesh convergence, 8 vs 16 elements per strut (reduced): band edges differ by at most "
          f"{100 * np.max(np.abs(e8 - e16) / e16):.3f} %")
    if r["gaps"]:
        print("complete gaps along the path:", r["gaps"])

    print()
    print("== Panel transmissibility: 4 x 16 cells, 500 frequencies, 1-600 Hz, vertical base motion ==")
    nf = 200 if args.quick else 500
    t0 = time.perf_counter()
    tr = panel.transmissibility(cell, materials=MATS, nx=4, ny=16, n_elements=n_el, f_min=Q_(1, "Hz"),
                                f_max=Q_(600, "Hz"), n_frequencies=nf, check_points=0)
    t_pan = time.perf_counter() - t0
    print(f"DOFs: full mesh {tr.n_dofs_full} free; per-frequency solve {tr.n_dofs_reduced}")
    print(f"reduced model: {t_pan:.1f} s for {nf} frequencies = {1e3 * t_pan / nf:.1f} ms per frequency "
          f"(goal < 20 s for 500)")
    t0 = time.perf_counter()
    chk = panel.transmissibility(cell, materials=MATS, nx=4, ny=16, n_elements=n_el, f_min=Q_(1, "Hz"),
                                 f_max=Q_(600, "Hz"), n_frequencies=5, check_points=3)["check"]
    t_chk = time.perf_counter() - t0
    for f, a, b, e in zip(chk["frequency"].magnitude, chk["reduced_db"], chk["full_db"], chk["error_db"]):
        print(f"  {f:7.1f} Hz  reduced {a:8.3f} dB  full {b:8.3f} dB  difference {e:.4f} dB")
    print(f"full direct solve: about {t_chk / 3:.1f} s per frequency -> {t_chk / 3 / (t_pan / nf):.0f}x slower "
          f"than the reduced model")
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print()
    print(f"peak memory (max resident set): {peak:.0f} MB")


if __name__ == "__main__":
    main()
