"""Mass-in-mass lattice: dispersion and band-gap edges.

Reference: Huang, H. H., Sun, C. T. & Huang, G. L., "On the negative effective mass density in
acoustic metamaterials", *Int. J. Eng. Sci.* 47 (2009) 610–617: effective mass
m_eff = m₁ + m₂ ω₀² / (ω₀² − ω²), ω₀ = √(k₂/m₂), dispersion m_eff ω² = 2 k₁ (1 − cos qa).
Derived from these: the gap's upper edge is ω₀ √(1 + m₂/m₁) (where m_eff = 0), the lower edge is
the acoustic branch at qa = π, below ω₀; the long-wave speed is a √(k₁/(m₁ + m₂)).
Independent oracle: the 2 × 2 Bloch eigenproblem solved with scipy.linalg.eigh (SciPy).
"""

import math

import numpy as np
import pytest
from scipy.linalg import eigh
from tests.helpers import assert_quantity_close

from latticecalc import Q_
from latticecalc.physics import bands, beams

#: both sides are exact; only rounding separates them
EXACT_RTOL = 1e-9
#: finite-difference slope at q a = 1e-4
SLOPE_RTOL = 1e-6

M1, M2, K1, K2, A = 0.8, 0.5, 3.0e4, 1.2e4, 0.05  # kg, kg, N/m, N/m, m


def _chain(points=41):
    return bands.mass_in_mass_dispersion(outer_mass=Q_(M1, "kg"), inner_mass=Q_(M2, "kg"),
                                         outer_stiffness=Q_(K1, "N/m"), inner_stiffness=Q_(K2, "N/m"),
                                         cell_length=Q_(A, "m"), points=points)


def test_branches_match_the_bloch_eigenproblem():
    r = _chain()
    for q, fa, fo in zip(r.wavenumber.to("1/m").magnitude, r.acoustic.magnitude, r.optical.magnitude):
        s = 2 * K1 * (1 - math.cos(q * A))
        K = np.array([[s + K2, -K2], [-K2, K2]])
        w2 = eigh(K, np.diag([M1, M2]), eigvals_only=True)
        f = np.sqrt(np.clip(w2, 0, None)) / (2 * math.pi)
        assert fa == pytest.approx(f[0], rel=EXACT_RTOL, abs=1e-9)
        assert fo == pytest.approx(f[1], rel=EXACT_RTOL)


def test_branches_satisfy_the_published_dispersion_relation():
    r = _chain()
    w0sq = K2 / M2
    q = r.wavenumber.to("1/m").magnitude[1:]
    for f in (r.acoustic.magnitude[1:], r.optical.magnitude[1:]):
        w2 = (2 * math.pi * f) ** 2
        m_eff = M1 + M2 * w0sq / (w0sq - w2)  # Huang, Sun & Huang 2009
        np.testing.assert_allclose(m_eff * w2, 2 * K1 * (1 - np.cos(q * A)), rtol=1e-8)


def test_gap_edges():
    r = _chain()
    f0 = math.sqrt(K2 / M2) / (2 * math.pi)
    assert_quantity_close(r.value["gap_high"], Q_(f0 * math.sqrt(1 + M2 / M1), "Hz"), rtol=EXACT_RTOL)
    assert r.value["gap_low"].to("Hz").magnitude < f0
    assert_quantity_close(r.value["gap_low"], r.acoustic[-1], rtol=EXACT_RTOL)
    # no propagating frequency inside the gap
    assert r.acoustic.magnitude.max() <= r.value["gap_low"].magnitude * (1 + 1e-12)
    assert r.optical.magnitude.min() >= r.value["gap_high"].magnitude * (1 - 1e-12)


def test_long_wave_speed():
    r = bands.mass_in_mass_dispersion(outer_mass=Q_(M1, "kg"), inner_mass=Q_(M2, "kg"),
                                      outer_stiffness=Q_(K1, "N/m"), inner_stiffness=Q_(K2, "N/m"),
                                      cell_length=Q_(A, "m"), points=100001)
    q1 = r.wavenumber.to("1/m").magnitude[1]
    c_num = 2 * math.pi * r.acoustic.magnitude[1] / q1
    assert c_num == pytest.approx(A * math.sqrt(K1 / (M1 + M2)), rel=SLOPE_RTOL)


def test_band_estimate_upper_edge_is_the_chain_gap_edge():
    # the band estimate's upper edge is the chain's optical branch at q = 0 for its own m1, m2 and ω0
    est = bands.band_estimate(strut_lengths=Q_(40, "mm"), strut_diameter=Q_(3, "mm"),
                              youngs_modulus=Q_(12, "MPa"), density=Q_(1150, "kg/m^3"),
                              cell_width=Q_(60, "mm"), host_mass=Q_(8, "g"), effective_modulus=Q_(20, "MPa"))
    f0 = est.value["f_low"]
    m2 = est.step("band.m2-cc").result
    m1 = est.step("band.m1-cc").result
    k2 = (m2 * (2 * math.pi * f0) ** 2).to("N/m")
    chain = bands.mass_in_mass_dispersion(outer_mass=m1, inner_mass=m2, outer_stiffness=Q_(1e3, "N/m"),
                                          inner_stiffness=k2, cell_length=Q_(60, "mm"))
    assert_quantity_close(est.value["f_high"], chain.value["gap_high"], rtol=EXACT_RTOL)
    # m2 is the clamped-clamped effective modal mass of the struts, computed from the mode shape, times
    # the share driven across the struts: 2/3 for any strut set over three axes (derived: Σ_d (d·e)² = 1)
    mu = float(beams.modal_mass_fraction(supports="clamped-clamped").value)
    assert_quantity_close(m2, est.step("band.strut-mass").result * mu * 2 / 3, rtol=1e-12)
