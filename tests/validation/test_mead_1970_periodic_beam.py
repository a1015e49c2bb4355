"""Mead, D. J., "Free wave propagation in periodically supported, infinite beams", J. Sound Vib. 11
(1970) 181–197: on equally spaced rigid simple supports, the first flexural pass band of an
Euler–Bernoulli beam runs from the pinned–pinned to the clamped–clamped frequency of one span,
and the first stop band from the clamped–clamped frequency to the second pinned–pinned one.

Span frequencies from the eigenvalue table of Rao, Mechanical Vibrations (2017), Table 8.1
(λ₁ = π, 4.7300; λ₂ = 2π), computed here by :func:`latticecalc.physics.beams.eigenvalue`.
"""

from __future__ import annotations

import math
from types import SimpleNamespace

import numpy as np
import pytest
from tests.helpers import assert_quantity_close

from latticecalc import Q_
from latticecalc.physics import bloch
from latticecalc.physics.beams import eigenvalue

RTOL_BAND_EDGE = 2e-3      # slender Timoshenko span (L/d = 200), 8 elements

E, RHO, L, D = 200e9, 7850.0, 1.0, 0.005


def span_frequency(supports: str, mode: int) -> float:
    lam = eigenvalue(supports=supports, mode=mode)
    return lam**2 / (2 * math.pi * L**2) * math.sqrt(E * (math.pi * D**4 / 64) / (RHO * math.pi * D**2 / 4))


@pytest.fixture(scope="module")
def bands():
    cell = SimpleNamespace(nodes=Q_(np.array([[0.0, 0, 0], [L, 0, 0]]), "m"), struts=np.array([[0, 1]]),
                           groups=("lattice",), diameters={"lattice": Q_(D, "m")})
    steel = SimpleNamespace(youngs_modulus=Q_(E, "Pa"), poissons_ratio=0.3, density=Q_(RHO, "kg/m^3"))
    # each support holds the three translations and the twist; bending rotations are free
    r = bloch.dispersion(cell, materials={"lattice": steel}, n_elements=8, n_bands=6, path="G-X", points=41,
                         periodic="x", supports={0: ["ux", "uy", "uz", "rx"]}, zone_points=0,
                         convergence_check=False)
    return r["frequencies"].magnitude


def test_first_pass_band_edges(bands):
    # bands 1-2 are the first pass band in the two bending planes
    assert_quantity_close(Q_(bands[:, 0].min(), "Hz"), Q_(span_frequency("pinned-pinned", 1), "Hz"),
                          rtol=RTOL_BAND_EDGE)
    assert_quantity_close(Q_(bands[:, 1].max(), "Hz"), Q_(span_frequency("clamped-clamped", 1), "Hz"),
                          rtol=RTOL_BAND_EDGE)


def test_first_stop_band_upper_edge(bands):
    assert_quantity_close(Q_(bands[:, 2].min(), "Hz"), Q_(span_frequency("pinned-pinned", 2), "Hz"),
                          rtol=RTOL_BAND_EDGE)


def test_stop_band_is_found_as_a_gap(bands):
    gaps = bloch.find_gaps(bands)
    assert gaps, "a stop band between the first two pass bands"
    lo, hi, below = gaps[0]
    assert below == 1
    assert_quantity_close(Q_(lo, "Hz"), Q_(span_frequency("clamped-clamped", 1), "Hz"), rtol=RTOL_BAND_EDGE)
    assert_quantity_close(Q_(hi, "Hz"), Q_(span_frequency("pinned-pinned", 2), "Hz"), rtol=RTOL_BAND_EDGE)
