"""Speed and accuracy of the numerical check: Bloch dispersion of a framed octet cell and the
transmissibility of a 4 × 16 panel.  Prints measurements side by side; asserts nothing.

Run: python benchmarks/bench_dispersion_panel.py [--quick]
Goals (2-core machine):
- Bloch path, 100 wave vectors × 30 bands: < 0.5 s, band edges within 0.1 % of the full mesh; the speed-up is
  measured against the tuned full path (shift-invert Lanczos with one symmetric-ordering factorisation).
- Panel 4 × 16 cells, 500 frequencies: < 5 s, within 0.5 dB of the full model; against the old
  frequency-by-frequency sweep (``solver="direct"``), measured in the same run.
The machine is shared: read the ratios, which are measured side by side, before the absolute times.
"""

from __future__ import annotations

import argparse
import resource
import time
from types import SimpleNamespace

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from latticecalc import Q_
from latticecalc.physics import bloch, panel
from latticecalc.physics import frame_fe as fe
from latticecalc.physics.cells import build_cell
from latticecalc.physics.threads import single_thread

# an invented demo design: soft printed elastomer lattice in a stiff printed frame
TPU = SimpleNamespace(youngs_modulus=Q_(20, "MPa"), poissons_ratio=0.48, density=Q_(1200, "kg/m^3"),
                      loss_factor=0.1)
PLA = SimpleNamespace(youngs_modulus=Q_(3.3, "GPa"), poissons_ratio=0.36, density=Q_(1240, "kg/m^3"),
                      loss_factor=0.03)
MATS = {"lattice": TPU, "frame": PLA}
GOAL_PATH_S, GOAL_EDGE = 0.5, 1e-3
GOAL_PANEL_S, GOAL_PANEL_DB = 5.0, 0.5


def band_edges(f: np.ndarray) -> np.ndarray:
    return np.stack([np.nanmin(f, axis=0), np.nanmax(f, axis=0)], axis=1)


def untuned_full_solve(op: bloch.BlochOperator, k: np.ndarray, nb: int) -> np.ndarray:
    """The full path as it was: ARPACK on the real double with its default factorisation."""
    K, M = op.matrices(k)
    Kr = sp.bmat([[K.real, -K.imag], [K.imag, K.real]]).tocsc()
    Mr = sp.bmat([[M.real, -M.imag], [M.imag, M.real]]).tocsc()
    w = spla.eigsh(Kr, k=2 * nb, M=Mr, sigma=op._shift(), which="LM", return_eigenvectors=False)
    return np.sort(w)[::2][:nb]


def timed(fn, *args, **kwargs):
    t0 = time.perf_counter()
    out = fn(*args, **kwargs)
    return out, time.perf_counter() - t0


def bench_bloch(cell, *, quick: bool) -> None:
    n_el, n_bands, points = 8, 30, 100
    print(f"== Bloch dispersion: framed octet cell, {n_el} elements per strut, {n_bands} bands, {points} wave "
          "vectors ==")
    pf = bloch.periodic_frame(cell)
    sec = fe.sections_for(cell, MATS)
    common = dict(materials=MATS, n_elements=n_el, n_bands=n_bands, points=points, zone_points=0,
                  convergence_check=False)
    bloch.dispersion(cell, **{**common, "points": 4}, edge_check=False)      # imports, sympy steps: warm
    r, t_cut = timed(bloch.dispersion, cell, **common, edge_check=False)
    r8, t_fixed = timed(bloch.dispersion, cell, **common, mode_cutoff=None, edge_check=False)
    nk = len(r["k"])
    full = bloch.full_operator(pf, sec, n_elements=n_el, theory="timoshenko")
    print(f"DOFs: full mesh {full.n_reduced} after the Bloch condensation; reduced eigenproblem "
          f"{r.n_dofs_reduced} with the cutoff, {r8.n_dofs_reduced} with 8 modes on every strut")
    print("  " + r.step("bloch.dofs").method)
    print(f"reduced path, cutoff 3 x top band:  {t_cut:.2f} s for {nk} wave vectors ({1e3 * t_cut / nk:.1f} ms each)"
          f"   goal < {GOAL_PATH_S} s")
    print(f"reduced path, 8 modes every strut:  {t_fixed:.2f} s  -> cutoff / fixed time ratio {t_cut / t_fixed:.2f}")

    step = 20 if quick else 5
    ks = r["wave_vectors"].magnitude[::step]
    with single_thread():
        f_full, t_full = timed(lambda: np.array([np.sqrt(full.solve(k, n_bands)) / (2 * np.pi) for k in ks]))
        kk = ks[len(ks) // 2]
        _, t_old = timed(untuned_full_solve, full, kk, n_bands)
    t_full /= len(ks)
    print(f"full mesh, tuned (Hermitian shift-invert, symmetric-ordering OPinv): {1e3 * t_full:.0f} ms per wave "
          f"vector ({len(ks)} samples); untuned (real double, default factorisation): {1e3 * t_old:.0f} ms "
          f"(one wave vector) -> tuning {t_old / t_full:.1f}x")
    print(f"speed-up of the reduced path over the TUNED full path: {t_full / (t_cut / nk):.0f}x per wave vector")
    e_full = band_edges(f_full[:, 3:])
    for name, res in (("cutoff 3 x top band", r), ("8 modes every strut", r8)):
        e = band_edges(res["frequencies"].magnitude[::step, 3:])
        err = np.abs(e - e_full) / e_full
        print(f"band-edge error vs full mesh ({name}; bands 4-{n_bands}, same {len(ks)} wave vectors): "
              f"max {100 * err.max():.3f} %, mean {100 * err.mean():.4f} %   goal < {100 * GOAL_EDGE:g} %")
    checked = bloch.dispersion(cell, **common, edge_check=True)
    s = checked.step("bloch.reduction-error")
    print(f"the sheet's own check ({s.method.split(';')[0]}): {float(s.result.magnitude):.3f} %")
    if r["gaps"]:
        print("complete gaps along the path:", r["gaps"])


def bench_panel(cell, *, quick: bool) -> None:
    nf = 500
    print()
    print(f"== Panel transmissibility: 4 x 16 cells, {nf} frequencies, 1-600 Hz, vertical base motion ==")
    kw = dict(materials=MATS, nx=4, ny=16, n_elements=8, f_min=Q_(1, "Hz"), f_max=Q_(600, "Hz"), check_points=0)
    panel.transmissibility(cell, **{**kw, "nx": 1, "ny": 1, "n_frequencies": 5})     # warm: imports, sympy steps
    tr, t_new = timed(panel.transmissibility, cell, **kw, n_frequencies=nf)
    print(f"DOFs: full mesh {tr.n_dofs_full} free; joint-level solve {tr.n_dofs_reduced}")
    print("  " + tr.step("panel.dofs").method.split("; ", 4)[-1])
    print(f"projected sweep: {t_new:.2f} s for {nf} frequencies   goal < {GOAL_PANEL_S} s")
    if quick:
        # the old sweep on every 10th frequency of the same list: per-frequency cost and the error there
        f = tr["frequency"].magnitude
        sub = np.arange(0, nf, 10)
        pan = panel.panel_frame(cell, nx=4, ny=16)
        sec = fe.sections_for(cell, MATS)
        rp = panel._ReducedPanel(pan, sec, n_elements=8, strut_modes=8, theory="timoshenko", direction=2)
        with single_thread():
            T, t_sub = timed(lambda: np.array([np.sqrt(np.mean(np.abs(rp.response(2 * np.pi * x)[rp.top_dofs]) ** 2))
                                               for x in f[sub]]))
        t_old = t_sub / sub.size * nf
        diff = np.abs(tr["level"][sub] - 20 * np.log10(T))
        print(f"old frequency-by-frequency sweep: {1e3 * t_sub / sub.size:.0f} ms per frequency, "
              f"{t_old:.1f} s for {nf} (extrapolated from {sub.size})")
    else:
        old, t_old = timed(panel.transmissibility, cell, **kw, n_frequencies=nf, solver="direct")
        diff = np.abs(tr["level"] - old["level"])
        print(f"old frequency-by-frequency sweep (solver='direct'): {t_old:.2f} s")
    print(f"speed-up new / old: {t_old / t_new:.1f}x; largest level difference projected vs direct: "
          f"{diff.max():.2e} dB over {diff.size} frequencies")
    chk, t_chk = timed(panel.transmissibility, cell, **{**kw, "check_points": 3}, n_frequencies=nf)
    c = chk["check"]
    for f, a, b, e in zip(c["frequency"].magnitude, c["reduced_db"], c["full_db"], c["error_db"]):
        print(f"  {f:7.1f} Hz  projected {a:8.3f} dB  full mesh {b:8.3f} dB  difference {e:.4f} dB")
    print(f"error against the full mesh: {c['error_db'].max():.4f} dB   goal < {GOAL_PANEL_DB} dB "
          f"(that run, with 3 full-mesh solves: {t_chk:.1f} s)")
    s = chk.step("panel.sweep-error")
    print(f"the sheet's own sweep check: {float(s.result.magnitude):.1e} dB ({s.note})")


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true", help="fewer full-model wave vectors; old panel sweep sampled")
    args = ap.parse_args()
    cell = build_cell("octet", cell_width=Q_(40, "mm"), strut_diameter=Q_(2.5, "mm"), frame_diameter=Q_(6, "mm"))
    bench_bloch(cell, quick=args.quick)
    bench_panel(cell, quick=args.quick)
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print()
    print(f"peak memory (max resident set): {peak:.0f} MB")


if __name__ == "__main__":
    main()
