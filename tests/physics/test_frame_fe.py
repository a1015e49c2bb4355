"""Frame FE model: element matrices, strut frequencies, convergence, statics, bad input."""

from __future__ import annotations

import math
from types import SimpleNamespace

import numpy as np
import pytest
from tests.helpers import assert_quantity_close

from latticecalc import Q_
from latticecalc.errors import DimensionError, InputError, ModelError
from latticecalc.physics import frame_fe as fe
from latticecalc.physics.beams import eigenvalue

RTOL_MATRIX = 1e-10          # quadrature is exact for these polynomials: round-off only
RTOL_EB_N8 = 1e-3            # brief / issue: Euler-Bernoulli table within 0.1 % at n = 8
RTOL_STATIC = 1e-9           # the element is exact for end loads

STEEL = SimpleNamespace(youngs_modulus=Q_(200, "GPa"), poissons_ratio=0.3, density=Q_(7850, "kg/m^3"),
                        loss_factor=0.0)


def strut_cell(length=1.0, diameter=0.01, direction=(1.0, 0.3, 0.2)):
    u = np.asarray(direction) / np.linalg.norm(direction)
    return SimpleNamespace(nodes=Q_(np.array([[0.0, 0, 0], length * u]), "m"), struts=np.array([[0, 1]]),
                           groups=("lattice",), diameters={"lattice": Q_(diameter, "m")})


def test_plane_stiffness_matches_closed_form_timoshenko_element():
    # Przemieniecki, Theory of Matrix Structural Analysis (1968), §5.6: bending stiffness with the
    # shear parameter Φ = 12EI/(κGAL²) [from memory: equation number]
    L, EI, kGA = 0.3, 2.0e3, 5.0e6
    phi = 12 * EI / (kGA * L**2)
    K, _ = fe.plane_bending_matrices(L=np.array([L]), EI=np.array([EI]), kGA=np.array([kGA]),
                                     rhoA=np.array([1.0]), rhoI=np.array([1e-6]))
    c = EI / (L**3 * (1 + phi))
    expected = c * np.array([[12, 6 * L, -12, 6 * L],
                             [6 * L, (4 + phi) * L**2, -6 * L, (2 - phi) * L**2],
                             [-12, -6 * L, 12, -6 * L],
                             [6 * L, (2 - phi) * L**2, -6 * L, (4 + phi) * L**2]])
    np.testing.assert_allclose(K[0], expected, rtol=RTOL_MATRIX, atol=1e-9 * np.abs(expected).max())


def test_euler_bernoulli_mass_is_the_classical_consistent_mass():
    # Przemieniecki (1968) §11: consistent mass of the Hermite-cubic beam, ρAL/420 [...]
    L, rhoA = 0.5, 3.0
    _, M = fe.plane_bending_matrices(L=np.array([L]), EI=np.array([1.0]), kGA=np.array([1.0]),
                                     rhoA=np.array([rhoA]), rhoI=np.array([0.0]), theory="euler-bernoulli")
    expected = rhoA * L / 420 * np.array([[156, 22 * L, 54, -13 * L], [22 * L, 4 * L**2, 13 * L, -3 * L**2],
                                          [54, 13 * L, 156, -22 * L], [-13 * L, -3 * L**2, -22 * L, 4 * L**2]])
    np.testing.assert_allclose(M[0], expected, rtol=RTOL_MATRIX, atol=1e-12)


def test_global_matrices_symmetric_and_rigid_modes_free():
    cell = strut_cell()
    model = fe.frame_model(cell, materials={"lattice": STEEL}, n_elements=3)
    K, M = model.matrices.K.toarray(), model.matrices.M.toarray()
    np.testing.assert_allclose(K, K.T, rtol=0, atol=1e-9 * np.abs(K).max())
    np.testing.assert_allclose(M, M.T, rtol=0, atol=1e-12 * np.abs(M).max())
    r = fe.frame_modes(cell, materials={"lattice": STEEL}, n_elements=3, n_modes=7)
    f = r.value.magnitude
    assert np.all(f[:6] < 1e-3 * f[6])   # six rigid-body modes of a free strut, then an elastic one


@pytest.mark.parametrize("mode", [1, 2])
def test_slender_clamped_strut_matches_euler_bernoulli_table_at_n8(mode):
    # Rao, Mechanical Vibrations (2017), Table 8.1: clamped-clamped, λ_n from cos λ cosh λ = 1
    L, d = 1.0, 0.002     # L/d = 500: shear and rotary inertia negligible (slender limit)
    r = fe.frame_modes(strut_cell(L, d), materials={"lattice": STEEL}, fixed=[0, 1], n_elements=8, n_modes=4)
    lam = eigenvalue(supports="clamped-clamped", mode=mode)
    second_moment, A = math.pi * d**4 / 64, math.pi * d**2 / 4
    f_table = lam**2 / (2 * math.pi * L**2) * math.sqrt(200e9 * second_moment / (7850 * A))
    # each mode appears twice (two bending planes of the round strut)
    assert_quantity_close(r.value[2 * (mode - 1)], Q_(f_table, "Hz"), rtol=RTOL_EB_N8)
    assert_quantity_close(r.value[2 * mode - 1], Q_(f_table, "Hz"), rtol=RTOL_EB_N8)


def test_convergence_rate_of_clamped_frequency_is_fourth_order():
    # consistent-mass cubic elements: eigenvalue error O(h^4) (Strang & Fix, An Analysis of the
    # Finite Element Method (1973), §6.3) [from memory]; reference λ₁ from Rao (2017) Table 8.1
    L, d = 1.0, 0.002
    lam = eigenvalue(supports="clamped-clamped", mode=1)
    f_ref = lam**2 / (2 * math.pi * L**2) * math.sqrt(200e9 * (math.pi * d**4 / 64) / (7850 * math.pi * d**2 / 4))
    ns = np.array([2, 3, 4, 6])
    err = []
    for n in ns:
        f = fe.frame_modes(strut_cell(L, d), materials={"lattice": STEEL}, fixed=[0, 1], n_elements=int(n),
                           n_modes=1, theory="euler-bernoulli").value.magnitude[0]
        err.append(abs(f - f_ref) / f_ref)
    slope = np.polyfit(np.log(1.0 / ns), np.log(err), 1)[0]
    assert 3.5 < slope < 4.5


def test_cantilever_tip_deflection_exact_with_shear():
    # Roark's Formulas for Stress and Strain, 7th ed. (2002), Table 8.1 case 1a: δ = PL³/(3EI)
    # [from memory], plus the Timoshenko shear deflection PL/(κGA) (Timoshenko & Gere, Mechanics
    # of Materials (1972), §5.8) [from memory]
    L, d, P = 0.5, 0.05, 1000.0
    cell = strut_cell(L, d, direction=(1.0, 0.0, 0.0))
    model = fe.frame_model(cell, materials={"lattice": STEEL}, n_elements=3)
    loads = np.zeros(model.n_dofs)
    loads[6 * 1 + 2] = P            # tip node, global z
    u = fe.static_solve(model, fixed_dofs=np.arange(6), loads=loads)
    E, nu = 200e9, 0.3
    G = E / (2 * (1 + nu))
    kappa = 6 * (1 + nu) / (7 + 6 * nu)       # Cowper (1966), solid circle
    second_moment, A = math.pi * d**4 / 64, math.pi * d**2 / 4
    expected = P * L**3 / (3 * E * second_moment) + P * L / (kappa * G * A)
    assert_quantity_close(Q_(u[6 + 2], "m"), Q_(expected, "m"), rtol=RTOL_STATIC)


def test_mechanism_is_reported():
    # two struts that do not touch: twelve rigid-body modes where a connected frame has six
    cell = SimpleNamespace(nodes=Q_(np.array([[0.0, 0, 0], [1, 0, 0], [0, 1, 0], [1, 1, 0.5]]), "m"),
                           struts=np.array([[0, 1], [2, 3]]), groups=("lattice", "lattice"),
                           diameters={"lattice": Q_(0.01, "m")})
    with pytest.raises(ModelError, match="mechanism"):
        fe.frame_modes(cell, materials={"lattice": STEEL}, n_elements=2, n_modes=14)
    model = fe.frame_model(cell, materials={"lattice": STEEL}, n_elements=2)
    with pytest.raises(ModelError, match="mechanism"):
        fe.static_solve(model, fixed_dofs=np.arange(6), loads=np.ones(model.n_dofs))


def test_bad_inputs_name_the_input():
    mats = {"lattice": STEEL}
    with pytest.raises(InputError, match="n_elements"):
        fe.frame_modes(strut_cell(), materials=mats, n_elements=0)
    zero = SimpleNamespace(nodes=Q_(np.array([[0.0, 0, 0], [0.0, 0, 0], [1, 0, 0]]), "m"),
                           struts=np.array([[0, 1], [1, 2]]), groups=("lattice", "lattice"),
                           diameters={"lattice": Q_(0.01, "m")})
    with pytest.raises(ModelError, match="zero length"):
        fe.frame_modes(zero, materials=mats)
    lossy = SimpleNamespace(**{**vars(STEEL), "loss_factor": 1.5})
    with pytest.raises(InputError, match="loss factor"):
        fe.frame_modes(strut_cell(), materials={"lattice": lossy})
    with pytest.raises(InputError, match="no material"):
        fe.frame_modes(strut_cell(), materials={"frame": STEEL})
    wrong = SimpleNamespace(**{**vars(strut_cell()), "diameters": {"lattice": Q_(3, "MPa")}})
    with pytest.raises(DimensionError, match="diameters"):
        fe.frame_modes(wrong, materials=mats)
    with pytest.raises(InputError, match="theory"):
        fe.frame_modes(strut_cell(), materials=mats, theory="rayleigh")


def test_reduced_strut_is_exact_with_all_modes():
    # Craig & Bampton (1968): keeping every interior mode reproduces the full model exactly
    cell = strut_cell(0.2, 0.01)
    nodes, struts, groups = fe.cell_geometry(cell)
    sec = fe.sections_for(cell, {"lattice": STEEL})
    n = 4
    red = fe.reduce_struts(nodes=nodes, struts=struts, groups=groups, sections=sec, n_elements=n, n_modes=99)
    K, M = fe.reduced_matrices(red, n_joints=2)
    keep = np.arange(6, K.shape[0])                       # clamp node 0
    import scipy.linalg as sla
    w_red = sla.eigh(K[np.ix_(keep, keep)], M[np.ix_(keep, keep)], eigvals_only=True)[:6]
    model = fe.frame_model(cell, materials={"lattice": STEEL}, n_elements=n)
    free = np.arange(6, model.n_dofs)
    w_full = sla.eigh(model.matrices.K.toarray()[np.ix_(free, free)], model.matrices.M.toarray()[np.ix_(free, free)],
                      eigvals_only=True)[:6]
    np.testing.assert_allclose(w_red, w_full, rtol=1e-8)
