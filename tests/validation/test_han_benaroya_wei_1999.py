"""Timoshenko beam frequencies.

Reference: Han, S. M., Benaroya, H. & Wei, T., "Dynamics of transversely vibrating beams using four
engineering theories", *J. Sound Vib.* 225(5) (1999) 935–988.  Hinged–hinged Timoshenko beam,
k = nπ/L: EI k⁴ − [ρA + ρI k² (1 + E/(κG))] ω² + (ρ² I/(κG)) ω⁴ = 0, lower root = bending mode.
Other end conditions: roots of the frequency equation (the 4 × 4 boundary determinant), which
tend to the Euler–Bernoulli values (Rao 2017, Table 8.1) as the beam becomes slender.

The slender-beam correction ω_T/ω_EB ≈ 1 − ½ (nπ r_g/L)² (1 + E/(κG)), r_g² = I/A, is Rayleigh's
and Timoshenko's classical first-order result (Timoshenko, *Vibration Problems in Engineering*,
§ on shear and rotary inertia) [from memory].
"""

import math

import numpy as np
import pytest
from tests.helpers import assert_quantity_close

from latticecalc import Q_
from latticecalc.physics import beams

#: closed form against numpy's polynomial root finder
ROOT_RTOL = 1e-10
#: determinant root against the closed form (both converge to machine precision)
DET_RTOL = 1e-9
#: first-order slender correction: error is O((r/L)^4)
ASYMPTOTIC_RTOL = 2e-6

E, RHO, NU = 200e9, 7850.0, 0.3


def _quartic_lower_root(L, d, n):
    """Independent evaluation: numpy.roots on the quadratic in ω² (Han, Benaroya & Wei 1999)."""
    A, Iz = math.pi * d**2 / 4, math.pi * d**4 / 64
    G, kappa = E / (2 * (1 + NU)), 6 * (1 + NU) / (7 + 6 * NU)
    k = n * math.pi / L
    coeffs = [RHO**2 * Iz / (kappa * G), -(RHO * A + RHO * Iz * k**2 * (1 + E / (kappa * G))), E * Iz * k**4]
    return math.sqrt(min(np.roots(coeffs).real)) / (2 * math.pi)


def _timoshenko(L, d, supports, n):
    return beams.bending_frequency(length=Q_(L, "m"), diameter=Q_(d, "m"), youngs_modulus=Q_(E, "Pa"),
                                   density=Q_(RHO, "kg/m^3"), supports=supports, mode=n,
                                   theory="timoshenko", poissons_ratio=NU)


@pytest.mark.parametrize("slenderness", [3.0, 10.0, 40.0])
@pytest.mark.parametrize("n", [1, 2, 3])
def test_pinned_pinned_closed_form_reproduced(slenderness, n):
    L, d = 1.0, 1.0 / slenderness
    r = _timoshenko(L, d, "pinned-pinned", n)
    assert_quantity_close(r.value, Q_(_quartic_lower_root(L, d, n), "Hz"), rtol=ROOT_RTOL)


@pytest.mark.parametrize("slenderness", [5.0, 20.0])
@pytest.mark.parametrize("n", [1, 2, 3])
def test_determinant_solver_reproduces_pinned_pinned_closed_form(slenderness, n):
    # the numerical solver used for the other supports, applied to hinged-hinged ends
    L, d = 1.0, 1.0 / slenderness
    A, Iz = math.pi * d**2 / 4, math.pi * d**4 / 64
    G, kappa = E / (2 * (1 + NU)), 6 * (1 + NU) / (7 + 6 * NU)
    c = math.sqrt(E * Iz / (RHO * A)) / L**2
    omega = beams._timoshenko_root(supports="pinned-pinned", mode=n, L=L, E=E, G=G, kappa=kappa, rho=RHO,
                                   A=A, Iz=Iz, omega_eb=[(m * math.pi) ** 2 * c for m in range(1, n + 1)])
    assert omega / (2 * math.pi) == pytest.approx(_quartic_lower_root(L, d, n), rel=DET_RTOL)


@pytest.mark.parametrize("supports", beams.SUPPORTS)
@pytest.mark.parametrize("n", [1, 2, 3])
def test_slender_limit_tends_to_euler_bernoulli(supports, n):
    errors = []
    for slenderness in (100.0, 200.0, 400.0):
        r = _timoshenko(1.0, 1.0 / slenderness, supports, n)
        assert r.value < r.euler_bernoulli  # shear and rotary inertia only lower a frequency
        errors.append(float(r.difference))
    # Rao 2017 Table 8.1 is the limit; the gap falls as (d/L)^2 (first-order theory, from memory)
    rate = np.polyfit(np.log([1 / 100, 1 / 200, 1 / 400]), np.log(errors), 1)[0]
    assert rate == pytest.approx(2.0, abs=0.02)


@pytest.mark.parametrize("n", [1, 2])
def test_first_order_correction_pinned_pinned(n):
    L, d = 1.0, 1.0 / 300.0
    r = _timoshenko(L, d, "pinned-pinned", n)
    G, kappa = E / (2 * (1 + NU)), 6 * (1 + NU) / (7 + 6 * NU)
    rg2 = d**2 / 16
    ratio = 1 - 0.5 * (n * math.pi) ** 2 * rg2 / L**2 * (1 + E / (kappa * G))  # from memory
    assert float(r.value / r.euler_bernoulli) == pytest.approx(ratio, rel=ASYMPTOTIC_RTOL)
