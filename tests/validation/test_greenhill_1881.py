"""Greenhill's self-weight buckling height against its published coefficient and an independent solve.

Greenhill, A. G., "Determination of the greatest height consistent with stability that a vertical
pole or mast can be made", Proc. Camb. Phil. Soc. 4 (1881) 65-73: a uniform column fixed at the base,
free at the top, buckles under its own weight q per unit length when L > (7.8373 E I / q)^(1/3).
Coefficient 7.8373 seen in secondary copies of the "Self-buckling" encyclopedia article;
Timoshenko & Gere, Theory of Elastic Stability (1961), §2.13 [from memory].  Coefficient = (9/4) j^2,
j = 1.866350859 the first zero of J_(-1/3) (derived: the root of the Bessel function, computed to 10
figures; it reproduces Greenhill's printed coefficient).
"""

from __future__ import annotations

import math

import numpy as np
from scipy.integrate import solve_ivp
from scipy.optimize import brentq
from tests.helpers import assert_quantity_close

from latticecalc import Q_
from latticecalc.physics.selfweight import bessel_zero_minus_third, greenhill_coefficient, greenhill_height

PUBLISHED_COEFFICIENT = 7.8373      # Greenhill 1881, as printed (5 significant figures)
PUBLISHED_ZERO = 1.866350859        # first zero of J_(-1/3), computed to 10 figures (derived; see docstring)
RTOL_PRINTED_5 = 0.5e-4 / 7.8373    # half a unit in the last printed place
RTOL_PRINTED_10 = 1e-9
RTOL_ODE = 1e-6                     # independent shooting solution, solver tolerance 1e-11


def test_coefficient_matches_published():
    assert math.isclose(greenhill_coefficient(), PUBLISHED_COEFFICIENT, rel_tol=RTOL_PRINTED_5)
    assert math.isclose(bessel_zero_minus_third(), PUBLISHED_ZERO, rel_tol=RTOL_PRINTED_10)
    assert math.isclose(greenhill_coefficient(), 9 / 4 * PUBLISHED_ZERO**2, rel_tol=RTOL_PRINTED_10)


def _theta_at_base(length):
    # E I theta'' + q x theta = 0 with x down from the free top; E I = q = 1; theta'(0) = 0 (no moment at
    # the top), buckling when theta(L) = 0 (fixed base): Timoshenko & Gere §2.13 [from memory]
    sol = solve_ivp(lambda x, y: [y[1], -x * y[0]], (0.0, length), [1.0, 0.0], rtol=1e-11, atol=1e-13)
    return sol.y[0, -1]


def test_coefficient_from_independent_shooting():
    critical = brentq(_theta_at_base, 1.5, 2.5, xtol=1e-13)
    assert math.isclose(critical**3, greenhill_coefficient(), rel_tol=RTOL_ODE)


def test_height_of_a_steel_rod():
    # 10 mm solid steel rod, E = 210 GPa, rho = 7850 kg/m^3: L_cr = (7.8373 E I / (rho g A))^(1/3)
    d, e, rho, g = 0.010, 210e9, 7850.0, 9.80665
    i, area = math.pi * d**4 / 64, math.pi * d**2 / 4
    expected = (PUBLISHED_COEFFICIENT * e * i / (rho * g * area)) ** (1 / 3)
    result = greenhill_height(youngs_modulus=Q_(e, "Pa"), second_moment=Q_(i, "m^4"),
                              weight_per_length=Q_(rho * g * area, "N/m"))
    assert_quantity_close(result.value, Q_(expected, "m"), rtol=RTOL_PRINTED_5)
    assert np.isclose(result.steps[0].result.magnitude, greenhill_coefficient())
