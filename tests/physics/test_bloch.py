"""Bloch-wave dispersion: symmetry properties, zero modes, reduced against full, caching, bad input."""

from __future__ import annotations

import math
from types import SimpleNamespace

import numpy as np
import pytest
import scipy.linalg as sla
from tests.helpers import assert_quantity_close

from latticecalc import Q_
from latticecalc.errors import InputError, ModelError
from latticecalc.physics import bloch
from latticecalc.physics import frame_fe as fe
from latticecalc.physics.cells import build_cell

RTOL_HERMITIAN = 1e-12
RTOL_SYMMETRY = 1e-8         # ω(k) = ω(−k): same matrices conjugated, round-off only
RTOL_REDUCED = 5e-3          # issue 5: band edges within 0.5 % of the full model
RTOL_LONG_WAVE = 1e-2        # long-wave slope against the homogenised speed, 1 %

TPU = SimpleNamespace(youngs_modulus=Q_(20, "MPa"), poissons_ratio=0.48, density=Q_(1200, "kg/m^3"),
                      loss_factor=0.1)
PLA = SimpleNamespace(youngs_modulus=Q_(3.3, "GPa"), poissons_ratio=0.36, density=Q_(1240, "kg/m^3"),
                      loss_factor=0.03)
MATS = {"lattice": TPU, "frame": PLA}


@pytest.fixture(scope="module")
def framed_octet():
    return build_cell("octet", cell_width=Q_(40, "mm"), strut_diameter=Q_(2.5, "mm"), frame_diameter=Q_(6, "mm"))


@pytest.fixture(scope="module")
def operators(framed_octet):
    pf = bloch.periodic_frame(framed_octet)
    sec = fe.sections_for(framed_octet, MATS)
    red = bloch.reduced_operator(pf, sec, n_elements=4, strut_modes=8, theory="timoshenko")
    full = bloch.full_operator(pf, sec, n_elements=4, theory="timoshenko")
    return red, full


def test_one_strut_per_periodic_family(framed_octet):
    # octet: 12 face + 12 interior struts per cell (Deshpande, Fleck & Ashby 2001); frame: 3 edges
    pf = bloch.periodic_frame(framed_octet)
    groups = np.array(pf.groups)
    assert (groups == "lattice").sum() == 24
    assert (groups == "frame").sum() == 3


def test_bloch_matrices_are_hermitian(operators):
    red, _ = operators
    k = np.array([31.0, -57.0, 12.0])
    K, M = red.matrices(k)
    for A in (K, M):
        np.testing.assert_allclose(A, A.conj().T, rtol=0, atol=RTOL_HERMITIAN * np.abs(A).max())
    assert np.abs(K.imag).max() > 0      # the phases really enter


def test_frequencies_even_in_k_and_periodic_in_the_reciprocal_lattice(operators, framed_octet):
    red, _ = operators
    k = np.array([31.0, -57.0, 12.0])
    w_plus = red.solve(k, 12)
    w_minus = red.solve(-k, 12)
    np.testing.assert_allclose(w_minus, w_plus, rtol=RTOL_SYMMETRY)
    a = framed_octet.cell_width.to("m").magnitude
    w_shift = red.solve(k + np.array([2 * math.pi / a, 0, 0]), 12)
    np.testing.assert_allclose(w_shift, w_plus, rtol=RTOL_SYMMETRY)


def test_three_zero_modes_at_gamma(operators):
    # Setyawan & Curtarolo (2010) / any 3D lattice: three acoustic branches start at zero at Γ
    red, _ = operators
    w2 = red.solve(np.zeros(3), 6)
    assert np.all(w2[:3] < 1e-8 * w2[3])
    assert w2[3] > 0


def test_reduced_model_matches_full_model(operators):
    # Krattiger & Hussein (2014): Bloch mode synthesis converges to the full model
    red, full = operators
    for k in (np.array([0.0, 20.0, 0.0]), np.array([40.0, 40.0, 40.0])):
        f_red = np.sqrt(red.solve(k, 30))
        f_full = np.sqrt(full.solve(k, 30))
        np.testing.assert_allclose(f_red[3:], f_full[3:], rtol=RTOL_REDUCED)


def test_long_wave_slope_of_simple_cubic_matches_homogenised_speed():
    # simple cubic frame, wave along a strut axis: the longitudinal branch is carried by the struts
    # parallel to k (3 struts of area A per cell of face a²), c = sqrt(C11/ρ*) = sqrt(E/(3ρ)),
    # derived from the rule of mixtures for aligned struts (Gibson & Ashby, Cellular Solids,
    # 2nd ed. (1997), ch. 5) [derived]
    cell = build_cell("simple-cubic", cell_width=Q_(40, "mm"), strut_diameter=Q_(4, "mm"))
    r = bloch.dispersion(cell, materials={"lattice": PLA}, n_elements=4, n_bands=6, path="G-X", points=40,
                         zone_points=0, convergence_check=False)
    k = r["k"].magnitude[1]
    f = r["frequencies"].magnitude[1]
    c_fe = 2 * math.pi * f[2] / k        # third branch: longitudinal (two bending-dominated below)
    c_hom = math.sqrt(3.3e9 / (3 * 1240))
    assert_quantity_close(Q_(c_fe, "m/s"), Q_(c_hom, "m/s"), rtol=RTOL_LONG_WAVE)


def test_dispersion_interface_and_cache(framed_octet, tmp_path):
    kwargs = dict(materials=MATS, n_elements=2, n_bands=8, points=12, zone_points=2, convergence_check=False)
    r1 = bloch.dispersion(framed_octet, cache=tmp_path, **kwargs)
    assert r1["frequencies"].shape == (len(r1["k"]), 8)
    assert r1["frequencies"].units == Q_(1, "Hz").units
    assert len(list(tmp_path.glob("*.npz"))) == 1
    r2 = bloch.dispersion(framed_octet, cache=tmp_path, **kwargs)
    np.testing.assert_array_equal(r2["frequencies"].magnitude, r1["frequencies"].magnitude)
    for g in r1["gaps"]:
        assert g["high"] > g["low"]
    assert r1.tick_labels[0] == "Γ" and "M|R" not in r1.tick_labels[-1]


def test_path_coordinates():
    wp = bloch.wave_path("G-X-M-G-R-X|M-R", points=100, axes=(0, 1, 2), periods=np.full(3, 2.0))
    # Setyawan & Curtarolo (2010): X = (0, π/a, 0), M = (π/a, π/a, 0), R = (π/a, π/a, π/a)
    q = math.pi / 2.0
    legs = [q, q, q * math.sqrt(2), q * math.sqrt(3), q * math.sqrt(2), q]
    np.testing.assert_allclose(np.diff(wp.ticks), legs, rtol=1e-12)
    assert wp.tick_labels == ("Γ", "X", "M", "Γ", "R", "X|M", "R")
    np.testing.assert_allclose(wp.k[-1], [q, q, q], rtol=1e-12)


def test_not_periodic_cell_is_rejected():
    cell = SimpleNamespace(nodes=Q_(np.array([[0.0, 0, 0], [1, 0, 0], [0, 1, 0], [0.5, 0.5, 1.0]]), "m"),
                           struts=np.array([[0, 1], [0, 2], [0, 3]]), groups=("lattice",) * 3,
                           diameters={"lattice": Q_(0.05, "m")})
    with pytest.raises(ModelError, match="not periodic"):
        bloch.dispersion(cell, materials={"lattice": PLA}, n_bands=4, points=4)


def test_bad_inputs(framed_octet):
    with pytest.raises(InputError, match="path"):
        bloch.dispersion(framed_octet, materials=MATS, path="G-Q", points=10)
    with pytest.raises(InputError, match="n_elements"):
        bloch.dispersion(framed_octet, materials=MATS, n_elements=0)
    with pytest.raises(InputError, match="periodic"):
        bloch.dispersion(framed_octet, materials=MATS, periodic="xw")
    with pytest.raises(InputError, match="n_bands"):
        bloch.dispersion(framed_octet, materials=MATS, n_bands=0)


def test_panel_periodicity_has_three_zero_modes_and_even_bands(framed_octet):
    # a panel one cell thick, periodic in x and z only: three rigid translations at Γ, and
    # ω(k) = ω(−k) as for any real periodic structure (Brillouin 1946)
    pf = bloch.periodic_frame(framed_octet, periodic="xz")
    sec = fe.sections_for(framed_octet, MATS)
    op = bloch.reduced_operator(pf, sec, n_elements=4, strut_modes=6, theory="timoshenko")
    w2 = op.solve(np.zeros(3), 6)
    assert np.all(w2[:3] < 1e-8 * w2[3])
    k = np.array([25.0, 0.0, -40.0])
    np.testing.assert_allclose(op.solve(-k, 10), op.solve(k, 10), rtol=RTOL_SYMMETRY)
    # the faces y = 0 and y = a are both real in a panel: cube edges along x and along z keep one
    # per y face (2 + 2); the four edges along y are copies of one another across x and z (1)
    assert (np.array(pf.groups) == "frame").sum() == 5


def test_energy_shares_and_local_resonance(operators):
    # the flat bands of the strut-resonance cluster live in the soft lattice struts (local
    # resonance, Liu et al., Science 289 (2000) 1734); every share lies in [0, 1]
    red, _ = operators
    k = np.array([0.0, 30.0, 10.0])
    w2, x = red.solve(k, 60, vectors=True)
    share = red.energy_fraction(k, x)
    assert np.all((share >= 0) & (share <= 1))
    f = np.sqrt(w2) / (2 * np.pi)
    cluster = np.abs(f - np.median(f[20:50])) < 0.02 * np.median(f[20:50])
    assert cluster.sum() >= 10
    assert np.all(share[cluster] > 0.9)


def test_band_edge_mode_on_the_full_mesh_matches_the_band(framed_octet):
    r = bloch.dispersion(framed_octet, materials=MATS, n_elements=4, n_bands=60, points=20, zone_points=0,
                         convergence_check=False)
    kv = r["wave_vectors"].magnitude[7]
    f_band = r["frequencies"].magnitude[7, 40]
    shape = bloch.band_mode_shape(framed_octet, materials=MATS, wave_vector=kv, band=40, n_elements=4)
    assert_quantity_close(shape.frequency, Q_(f_band, "Hz"), rtol=RTOL_REDUCED)
    assert shape.lines.shape == shape.displacement.shape
    assert 0.0 <= shape.strut_energy <= 1.0


RTOL_CUTOFF = 1e-3           # strut modes up to 3 × the top band: band edges within 0.1 % of the full mesh
RTOL_EIGEN_SOLVERS = 1e-9    # two eigen-solvers on the same matrices: round-off and Lanczos tolerance


def test_mode_cutoff_keeps_band_edges_of_the_full_mesh(framed_octet):
    # Krattiger & Hussein (2014): Bloch mode synthesis converges to the full model as interior modes are added;
    # keeping those up to a multiple of the highest frequency of interest is common practice
    kw = dict(materials=MATS, n_elements=4, n_bands=16, points=12, zone_points=0, convergence_check=False)
    cut = bloch.dispersion(framed_octet, edge_check=True, **kw)
    full = bloch.dispersion(framed_octet, method="full", **kw)
    fc, ff = cut["frequencies"].magnitude[:, 3:], full["frequencies"].magnitude[:, 3:]
    np.testing.assert_allclose(np.nanmin(fc, axis=0), np.nanmin(ff, axis=0), rtol=RTOL_CUTOFF, atol=0)
    np.testing.assert_allclose(np.nanmax(fc, axis=0), np.nanmax(ff, axis=0), rtol=RTOL_CUTOFF, atol=0)
    # fewer strut modes than the fixed count, and the sheet says which and how far off the edges are
    fixed = bloch.dispersion(framed_octet, mode_cutoff=None, **kw)
    assert cut.n_dofs_reduced < fixed.n_dofs_reduced
    with pytest.raises(InputError, match="no such step"):
        fixed.step("bloch.reduction-error")          # no mesh check asked: no edge check either
    assert "3 × the top computed band" in cut.step("bloch.dofs").method
    err = cut.step("bloch.reduction-error")
    assert 0 < float(err.result.to("percent").magnitude) < 100 * RTOL_CUTOFF


def test_cutoff_follows_a_top_band_above_the_corner_estimate(framed_octet):
    # common practice: every strut mode below 3 × the top band of the whole path is kept
    r = bloch.dispersion(framed_octet, materials=MATS, n_elements=4, n_bands=16, points=12, zone_points=0,
                         convergence_check=False, edge_check=False)
    top = np.nanmax(r["frequencies"].magnitude[:, -1])
    pf = bloch.periodic_frame(framed_octet)
    modes = bloch.strut_mode_frequencies(pf, fe.sections_for(framed_octet, MATS), n_elements=4, strut_modes=8,
                                         theory="timoshenko")
    kept = int((modes <= 3 * top).sum())
    # 4 master joints × 6 DOFs plus the modes kept
    assert r.n_dofs_reduced >= 24 + kept


@pytest.mark.parametrize("where", ["general", "R"])
def test_tuned_sparse_eigensolver_matches_dense(operators, where):
    # scipy.linalg.eigh as an independent oracle (Virtanen et al. 2020) for the shift-invert Lanczos path;
    # at R (π/a, π/a, π/a) the bands are highly degenerate: repeated solves must not miss a repeated one
    _, full = operators
    k = np.array([31.0, -57.0, 12.0]) if where == "general" else np.full(3, np.pi / 0.04)
    K, M = full.matrices(k)
    ref = sla.eigh(K.toarray(), M.toarray(), eigvals_only=True)[:16]
    for _ in range(4 if where == "R" else 1):
        w2_16 = bloch._sparse_hermitian_lowest(K, M, 16, shift=full._shift())[0]
        np.testing.assert_allclose(w2_16, ref, rtol=RTOL_EIGEN_SOLVERS, atol=0)
    w2, x = bloch._sparse_hermitian_lowest(K, M, 12, shift=full._shift())
    np.testing.assert_allclose(w2, ref[:12], rtol=RTOL_EIGEN_SOLVERS, atol=0)
    # eigenvectors M-normalised and satisfying K x = ω² M x
    np.testing.assert_allclose(np.real(np.einsum("ij,ij->j", x.conj(), M @ x)), 1.0, rtol=1e-9, atol=0)
    res = K @ x - (M @ x) * w2[None, :]
    assert np.abs(res).max() <= 1e-7 * np.abs(K @ x).max()


def test_bad_mode_cutoff(framed_octet):
    with pytest.raises(InputError, match="mode_cutoff"):
        bloch.dispersion(framed_octet, materials=MATS, mode_cutoff=0.5)
