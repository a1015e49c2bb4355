"""The bare FE column against closed forms: axial bar with an end mass, cantilever roots, Rayleigh.

References:
* Rao, S. S., *Mechanical Vibrations*, 6th ed. (2017), §8.3: a bar fixed at one end with a mass M at
  the other vibrates axially at the roots of βL tan βL = m/M (m the bar's mass), f = β √(E/ρ)/2π;
* Rao 2017, §8.5, Table 8.1: clamped–free beam, λ₁ = 1.875104069, f = λ²/(2π L²) √(EI/(ρA));
* Rao 2017, §8.7: Rayleigh's method, here with the static end-load deflection shape, which bounds
  the lowest frequency from above (the FE value must lie just below the estimate).
Units: SI, frequencies in Hz.
"""

import numpy as np
import pytest

from latticecalc import Q_, materials
from latticecalc.physics import beams
from latticecalc.physics.column import Column, column_frequencies, column_properties
from latticecalc.physics.receiver import column_modes

#: the FE mesh (elements of 0.1 m on a 3.5 m column) converges to 4 digits for the lowest modes
FE_RTOL = 2e-4
#: Rayleigh's estimate is an upper bound, within a few per cent for these shapes (common practice)
RAYLEIGH_RTOL = 0.03

CONCRETE = materials.Material(name="concrete (test)", youngs_modulus=Q_(33, "GPa"), poissons_ratio=0.2,
                              density=Q_(2400, "kg/m^3"), loss_factor=0.02)


def column(head="free", head_mass=0.0, depth=300.0):
    return Column(shape="rectangular", width=Q_(400, "mm"), depth=Q_(depth, "mm"), height=Q_(3.5, "m"),
                  material=CONCRETE, head_mass=Q_(head_mass, "kg"), head=head)


def fe_frequency(col, kind):
    r = column_modes(col, theory="euler-bernoulli", column_spacing=Q_(0.1, "m"), n_modes=10)
    f = r.value["frequency"].m
    return f[[k == kind for k in r.value["kind"]]][0]


@pytest.mark.parametrize("head_mass", [0.0, 2000.0, 20000.0])
def test_axial_frequency_with_head_mass(head_mass):
    col = column(head_mass=head_mass)
    closed = column_frequencies(col).value["axial"].to("Hz").m
    # Rao 2017 §8.3 recomputed here: root of βL tan βL = m/M
    m = 2400 * 0.4 * 0.3 * 3.5
    if head_mass:
        from scipy.optimize import brentq
        bl = brentq(lambda x: x * np.tan(x) - m / head_mass, 1e-9, np.pi / 2 - 1e-9)
    else:
        bl = np.pi / 2
    expected = bl / 3.5 * np.sqrt(33e9 / 2400) / (2 * np.pi)
    assert closed == pytest.approx(expected, rel=1e-10)
    assert fe_frequency(col, "vertical") == pytest.approx(expected, rel=FE_RTOL)


def test_cantilever_bending_matches_the_root_table():
    col = column()
    props = column_properties(col)
    lam = beams.eigenvalue(supports="clamped-free", mode=1)
    assert lam == pytest.approx(1.875104069, rel=5e-10)           # Rao 2017, Table 8.1
    for kind, inertia in (("normal", props.second_moment_normal), ("along", props.second_moment_along)):
        EI = 33e9 * inertia.to("m^4").m
        expected = lam**2 / (2 * np.pi * 3.5**2) * np.sqrt(EI / (2400 * 0.12))
        assert fe_frequency(col, kind) == pytest.approx(expected, rel=FE_RTOL)


@pytest.mark.parametrize(("head", "head_mass"), [("free", 2000.0), ("free", 20000.0), ("guided", 20000.0),
                                                 ("guided", 500.0)])
def test_rayleigh_estimate_bounds_the_fe_bending_frequency(head, head_mass):
    col = column(head=head, head_mass=head_mass)
    est = column_frequencies(col).value
    for kind in ("normal", "along"):
        fe_f = fe_frequency(col, kind)
        ray = est[f"bending_{kind}"].to("Hz").m
        assert ray >= fe_f * (1 - 1e-3)                           # Rayleigh: an upper bound (Rao 2017 §8.7)
        assert ray == pytest.approx(fe_f, rel=RAYLEIGH_RTOL)
