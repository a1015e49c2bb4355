"""Band factors of the strut tolerances when the struts carry a mass at mid-span.

Sources: Rao, S. S., *Mechanical Vibrations*, 6th ed. (2017), §8.7, Rayleigh's method with the static
deflection shape of a clamped beam under a central load: f = √(192 EI / (L³ (M + 13 m_s/35))) / 2π (the
kit's ``beams.MIDSPAN_MASS_FREQUENCY_CC``, its factors checked by integration in test_midspan_mass.py);
Rao 2017 eq. 8.82 for the bare strut (f ∝ d/L²). The heavy-mass limit f ∝ d²/L^1.5 and the zero-mass limit
follow from that formula (derived here, `common practice` for a limit check).
"""

from __future__ import annotations

import math

import pytest

from latticecalc import Q_
from latticecalc.errors import InputError
from latticecalc.physics import beams
from latticecalc.physics import tolerance as tol

L, D, RHO, E = Q_(120, "mm"), Q_(6, "mm"), Q_(1220, "kg/m^3"), Q_(26, "MPa")


def _rayleigh(d, length, mass) -> float:
    """The beams module's Rayleigh formula evaluated directly, I and m_s of a solid circle put in by hand."""
    d_m, l_m = d.to("m").m, length.to("m").m
    values = {"E": E, "I": Q_(math.pi * d_m**4 / 64, "m^4"), "L": length,
              "M_a": mass, "m_s": Q_(RHO.to("kg/m^3").m * math.pi * d_m**2 / 4 * l_m, "kg")}
    return float(beams.MIDSPAN_MASS_FREQUENCY_CC.evaluate(values).to("Hz").m)


def test_no_mass_gives_the_bare_strut_factors_exactly():
    bare = tol.strut_frequency_factors(length=L, diameter=D, length_tolerance=Q_(0.5, "mm"),
                                       diameter_tolerance=Q_(0.2, "mm"))
    zero = tol.strut_frequency_factors(length=L, diameter=D, length_tolerance=Q_(0.5, "mm"),
                                       diameter_tolerance=Q_(0.2, "mm"), added_mass=Q_(0, "g"), density=RHO)
    assert zero.value == bare.value
    assert [s.formula for s in zero.steps] == [tol.GEOMETRY_FREQUENCY_RATIO] * 2


@pytest.mark.parametrize("grams", [0.5, 5.0, 50.0])
def test_the_factors_are_the_rayleigh_frequency_at_the_corners_over_the_nominal(grams):
    mass = Q_(grams, "g")
    res = tol.strut_frequency_factors(length=L, diameter=D, length_tolerance=Q_(0.5, "mm"),
                                      diameter_tolerance=Q_(0.2, "mm"), added_mass=mass, density=RHO)
    f0 = _rayleigh(D, L, mass)
    low = _rayleigh(D - Q_(0.2, "mm"), L + Q_(0.5, "mm"), mass) / f0
    high = _rayleigh(D + Q_(0.2, "mm"), L - Q_(0.5, "mm"), mass) / f0
    assert res.value[0] == pytest.approx(low, rel=1e-12)
    assert res.value[1] == pytest.approx(high, rel=1e-12)
    assert all(s.formula is tol.GEOMETRY_FREQUENCY_RATIO_MASS for s in res.steps)


def test_a_heavy_mass_makes_the_diameter_count_twice_as_much():
    """Heavy-mass limit of the Rayleigh formula: f ∝ √(d⁴/(L³ M)) = d²/L^1.5, so a 1 % thinner strut lowers the
    frequency about 2 %, against 1 % for the bare strut (f ∝ d/L²)."""
    bare = tol.strut_frequency_factors(length=L, diameter=D, diameter_tolerance=0.01)
    heavy = tol.strut_frequency_factors(length=L, diameter=D, diameter_tolerance=0.01, added_mass=Q_(10, "kg"),
                                        density=RHO)
    assert bare.value[0] == pytest.approx(0.99, rel=1e-9)
    assert heavy.value[0] == pytest.approx(0.99**2, rel=1e-5)
    longer = tol.strut_frequency_factors(length=L, diameter=D, length_tolerance=0.01, added_mass=Q_(10, "kg"),
                                         density=RHO)
    assert longer.value[0] == pytest.approx(1.01**-1.5, rel=1e-5)


def test_the_density_moves_a_strut_with_a_mass_less():
    bare = tol.density_frequency_factors(density=RHO, density_tolerance=0.05)
    light = tol.density_frequency_factors(density=RHO, density_tolerance=0.05, added_mass=Q_(0.5, "g"),
                                          length=L, diameter=D)
    heavy = tol.density_frequency_factors(density=RHO, density_tolerance=0.05, added_mass=Q_(50, "g"),
                                          length=L, diameter=D)
    assert bare.value[0] < light.value[0] < heavy.value[0] < 1.0 < heavy.value[1] < light.value[1] < bare.value[1]
    assert bare.value[0] == pytest.approx(1 / math.sqrt(1.05), rel=1e-12)


def test_a_mass_without_the_density_or_the_strut_size_is_refused_by_name():
    with pytest.raises(InputError) as err:
        tol.strut_frequency_factors(length=L, diameter=D, diameter_tolerance=0.01, added_mass=Q_(2, "g"))
    assert err.value.input_name == "density"
    with pytest.raises(InputError) as err:
        tol.density_frequency_factors(density=RHO, density_tolerance=0.05, added_mass=Q_(2, "g"))
    assert err.value.input_name == "length"
