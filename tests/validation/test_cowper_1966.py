"""Timoshenko shear coefficient.

Reference: Cowper, G. R., "The shear coefficient in Timoshenko's beam theory",
*J. Appl. Mech.* 33 (1966) 335–340, Table 1: solid circle κ = 6(1+ν)/(7+6ν),
solid rectangle κ = 10(1+ν)/(12+11ν).  κ(circle, ν = 0.3) = 7.8/8.8 = 0.886364 (Cowper's formula for the
circle evaluated at ν = 0.3, rounded to 6 figures).
"""

import pytest

from latticecalc import Q_
from latticecalc.physics import beams

#: the printed value has 6 significant figures
PRINTED_RTOL = 1e-6


def _kappa(shape, nu):
    d = Q_(2, "mm")
    section = (beams.circular_section(diameter=d) if shape == "circle"
               else beams.rectangular_section(width=d, depth=d))
    r = beams.section_bending_frequency(length=Q_(100, "mm"), section=section,
                                        youngs_modulus=Q_(200, "GPa"), density=Q_(7850, "kg/m^3"),
                                        theory="timoshenko", poissons_ratio=nu, supports="pinned-pinned")
    return float(r.step("strut.shear-coefficient").result.magnitude)


def test_circle_nu_0_3_printed_value():
    assert _kappa("circle", 0.3) == pytest.approx(0.886364, rel=PRINTED_RTOL)  # Cowper 1966, Table 1


@pytest.mark.parametrize("nu", [-0.5, 0.0, 0.3, 0.49])
def test_circle_and_rectangle_formulas(nu):
    # Cowper 1966, Table 1, written out independently of the kit's Formula objects
    assert _kappa("circle", nu) == pytest.approx(6 * (1 + nu) / (7 + 6 * nu), rel=1e-14)
    assert _kappa("rectangle", nu) == pytest.approx(10 * (1 + nu) / (12 + 11 * nu), rel=1e-14)


def test_limits_nu_zero():
    # Cowper 1966: ν = 0 gives 6/7 for the circle and 5/6 for the rectangle
    assert _kappa("circle", 0.0) == pytest.approx(6 / 7, rel=1e-14)
    assert _kappa("rectangle", 0.0) == pytest.approx(5 / 6, rel=1e-14)
