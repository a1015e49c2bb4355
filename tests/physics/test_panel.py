"""Finite panel: self-weight and axial resonance against closed forms, reduced against full, input checks."""

from __future__ import annotations

import math
from types import SimpleNamespace

import numpy as np
import pytest
from scipy.optimize import brentq
from tests.helpers import assert_quantity_close

from latticecalc import Q_
from latticecalc.errors import InputError
from latticecalc.physics import panel
from latticecalc.physics.cells import build_cell

RTOL_STATIC_EXACT = 1e-8      # consistent loads, straight columns: the FE answer is exact
RTOL_QUARTER_WAVE = 6e-3      # discrete joints against the homogenised bar, 16 levels; 0.2 % grid
ATOL_REDUCTION_DB = 0.05      # reduced (8 strut modes) against the full mesh
ATOL_QUASI_STATIC = 1e-3      # far below resonance the panel moves as a rigid body

E, RHO = 3.3e9, 1240.0
PLA = SimpleNamespace(youngs_modulus=Q_(E, "Pa"), poissons_ratio=0.36, density=Q_(RHO, "kg/m^3"),
                      loss_factor=0.02)
TPU = SimpleNamespace(youngs_modulus=Q_(20, "MPa"), poissons_ratio=0.48, density=Q_(1200, "kg/m^3"),
                      loss_factor=0.1)
A_CELL = 0.04


@pytest.fixture(scope="module")
def cubic():
    return build_cell("simple-cubic", cell_width=Q_(A_CELL, "m"), strut_diameter=Q_(4, "mm"))


def test_tiling_merges_shared_struts(cubic):
    pan = panel.panel_frame(cubic, nx=2, ny=3)
    # simple cubic 2 × 3 × 1 cells: 3·4·2 joints; struts along x 2·4·2, along y 3·4, along z 3·3·2
    assert len(pan.nodes) == 3 * 4 * 2
    assert len(pan.struts) == 2 * 4 * 2 + 3 * 4 + 3 * 3 * 2
    assert len(pan.base) == 3 * 2 and len(pan.top) == 3 * 2


def test_self_weight_of_a_column_of_cubic_cells(cubic):
    # axial equilibrium of the four corner columns (δ = ∫ N/(EA) dz, Timoshenko & Gere, Mechanics
    # of Materials (1972), §1.4 [from memory]): each column carries its own weight and one ring strut
    # per level, so δ_top = g ρ a² [ny² + ny (ny + 1)] / (2E)  [derived]
    ny = 6
    r = panel.self_weight_deflection(cubic, materials={"lattice": PLA}, nx=1, ny=ny, n_elements=2)
    expected = 9.80665 * RHO * A_CELL**2 * (ny**2 + ny * (ny + 1)) / (2 * E)
    assert_quantity_close(r.value, Q_(expected, "m"), rtol=RTOL_STATIC_EXACT)


def test_axial_resonance_of_a_column_of_cubic_cells(cubic):
    # fixed-free bar with a tip mass: β tan β = M_bar / M_tip, f₁ = β c / (2π H) (Rao, Mechanical
    # Vibrations (2017), §8.4, bar carrying an end mass [from memory]).  Homogenised column [derived]:
    # mass per length = own strut + one ring strut per level, c = sqrt(E/(2ρ)); the top ring is
    # lumped at the top joints, half of it in excess of the smeared mass: M_bar/M_tip = 4 ny
    ny = 16
    c = math.sqrt(E / (2 * RHO))
    beta = brentq(lambda b: b * math.tan(b) - 4 * ny, 1e-6, math.pi / 2 - 1e-9)
    f1 = beta * c / (2 * math.pi * ny * A_CELL)
    r = panel.transmissibility(cubic, materials={"lattice": PLA}, nx=1, ny=ny, n_elements=2,
                               f_min=Q_(0.8 * f1, "Hz"), f_max=Q_(1.2 * f1, "Hz"), n_frequencies=201,
                               strut_modes=4, check_points=0)
    f = r["frequency"].magnitude
    f_peak = f[np.argmax(r["level"])]
    assert_quantity_close(Q_(f_peak, "Hz"), Q_(f1, "Hz"), rtol=RTOL_QUARTER_WAVE)


@pytest.fixture(scope="module")
def octet_run():
    cell = build_cell("octet", cell_width=Q_(40, "mm"), strut_diameter=Q_(2.5, "mm"), frame_diameter=Q_(6, "mm"))
    return panel.transmissibility(cell, materials={"lattice": TPU, "frame": PLA}, nx=1, ny=2, n_elements=4,
                                  f_min=Q_(1, "Hz"), f_max=Q_(800, "Hz"), n_frequencies=60, check_points=3)


def test_reduced_panel_matches_full_mesh(octet_run):
    # Craig & Bampton (1968): the reduction converges to the full model; measured at 3 frequencies
    chk = octet_run["check"]
    assert len(chk["error_db"]) == 3
    np.testing.assert_allclose(chk["reduced_db"], chk["full_db"], rtol=0, atol=ATOL_REDUCTION_DB)


def test_quasi_static_limit_is_rigid_body_motion(octet_run):
    # common practice: far below the first resonance, top and base move together (0 dB)
    np.testing.assert_allclose(octet_run["level"][0], 0.0, rtol=0, atol=ATOL_QUASI_STATIC)


def test_attenuation_band_is_the_widest_run_below_threshold():
    f = np.arange(10.0)
    level = np.array([0, -12, -15, 0, -11, -13, -14, -20, 3, 0])
    assert panel.attenuation_band(f, level, threshold_db=10) == (4.0, 7.0)
    assert panel.attenuation_band(f, level, threshold_db=30) is None


def test_attenuation_band_prefers_the_range_over_the_gap():
    # common practice: report the attenuation the lattice gap gives, not a wider range elsewhere
    f = np.arange(10.0)
    level = np.array([0, -12, -15, 0, -11, -13, -14, -20, 3, 0])
    assert panel.attenuation_band(f, level, threshold_db=10, near=(1.5, 2.5)) == (1.0, 2.0)
    assert panel.attenuation_band(f, level, threshold_db=10, near=(8.5, 9.5)) == (4.0, 7.0)


def test_bad_inputs(cubic):
    mats = {"lattice": PLA}
    with pytest.raises(InputError, match="nx"):
        panel.transmissibility(cubic, materials=mats, nx=0)
    with pytest.raises(InputError, match="direction"):
        panel.transmissibility(cubic, materials=mats, direction="sideways")
    with pytest.raises(InputError, match="f_max"):
        panel.transmissibility(cubic, materials=mats, f_min=Q_(50, "Hz"), f_max=Q_(10, "Hz"))
    lossy = SimpleNamespace(**{**vars(PLA), "loss_factor": -0.1})
    with pytest.raises(InputError, match="loss factor"):
        panel.transmissibility(cubic, materials={"lattice": lossy})


RTOL_PROJECTED_DB = 0.01     # projected sweep against one direct solve per frequency (tolerance 1e-3 dB + margin)


@pytest.mark.parametrize("direction", ["vertical", "normal"])
def test_projected_sweep_matches_direct_solves(direction):
    # Hetmaniuk, Tezaur & Farhat (2012) [from memory]: Galerkin projection on solutions at sampled frequencies
    # converges to the direct solution; here every one of the 120 frequencies is compared
    cell = build_cell("octet", cell_width=Q_(40, "mm"), strut_diameter=Q_(2.5, "mm"), frame_diameter=Q_(6, "mm"))
    kw = dict(materials={"lattice": TPU, "frame": PLA}, nx=2, ny=3, n_elements=4, f_min=Q_(1, "Hz"),
              f_max=Q_(900, "Hz"), n_frequencies=120, check_points=0, direction=direction)
    projected = panel.transmissibility(cell, **kw)
    direct = panel.transmissibility(cell, solver="direct", **kw)
    np.testing.assert_allclose(projected["level"], direct["level"], rtol=0, atol=RTOL_PROJECTED_DB)
    step = projected.step("panel.sweep-error")
    assert float(step.result.magnitude) < RTOL_PROJECTED_DB
    assert "solved exactly" in projected.step("panel.dofs").method
    with pytest.raises(InputError, match="no such step"):
        direct.step("panel.sweep-error")


def test_unknown_sweep_solver_is_refused(cubic):
    with pytest.raises(InputError, match="solver"):
        panel.transmissibility(cubic, materials={"lattice": PLA}, solver="modal")
