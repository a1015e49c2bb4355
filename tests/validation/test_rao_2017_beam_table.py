"""Euler–Bernoulli beam eigenvalues and a worked example.

Reference: Rao, S. S., *Mechanical Vibrations*, 6th ed. (2017), §8.5, Table 8.1 (λ_n = β_n L for
the common support cases, to 10 significant figures); the same values appear in Thomson,
*Theory of Vibration with Applications*, Appendix D.  Worked example: clamped–clamped steel beam,
L = 1 m, 50 mm × 50 mm section, E = 200 GPa, ρ = 7850 kg/m³ → 259.42, 715.11, 1401.90 Hz
(Rao 2017, as reproduced in a published verification note).  Units: SI, frequencies in Hz.
"""

import pytest
from tests.helpers import assert_quantity_close

from latticecalc import Q_
from latticecalc.physics import beams

#: 10 significant figures as printed in the table
TABLE_RTOL = 5e-10
#: the worked example prints two decimals on ~10² Hz
EXAMPLE_RTOL = 2e-5

# Rao 2017, Table 8.1 (λ1, λ2, λ3), printed to 10 significant figures.
RAO_TABLE_8_1 = {
    "clamped-clamped": (4.730040745, 7.853204624, 10.99560784),
    "pinned-pinned": (3.141592654, 6.283185307, 9.424777961),
    "clamped-free": (1.875104069, 4.694091133, 7.854757438),
    "clamped-pinned": (3.926602312, 7.068582746, 10.21017612),
}


@pytest.mark.parametrize("supports", list(RAO_TABLE_8_1))
@pytest.mark.parametrize("mode", [1, 2, 3])
def test_eigenvalues_match_rao_table_8_1(supports, mode):
    expected = RAO_TABLE_8_1[supports][mode - 1]  # Rao 2017, Table 8.1
    got = beams.eigenvalue(supports=supports, mode=mode)
    assert got == pytest.approx(expected, rel=TABLE_RTOL)


def test_worked_example_clamped_steel_beam_50_by_50():
    section = beams.rectangular_section(width=Q_(50, "mm"), depth=Q_(50, "mm"))
    assert_quantity_close(section.second_moment, Q_(50 * 50**3 / 12, "mm^4"), rtol=1e-12)
    # Rao 2017 worked example (printed to 0.01 Hz): 259.42, 715.11, 1401.90 Hz
    for mode, printed in ((1, 259.42), (2, 715.11), (3, 1401.90)):
        r = beams.section_bending_frequency(length=Q_(1, "m"), section=section,
                                            youngs_modulus=Q_(200, "GPa"), density=Q_(7850, "kg/m^3"),
                                            supports="clamped-clamped", mode=mode)
        assert_quantity_close(r.value, Q_(printed, "Hz"), rtol=EXAMPLE_RTOL)
