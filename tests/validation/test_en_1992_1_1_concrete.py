"""Concrete classes of the catalogue against EN 1992-1-1:2004 Table 3.1.

Reference: EN 1992-1-1:2004, Table 3.1: mean secant modulus Ecm = 22 (fcm/10)^0.3 GPa with fcm in MPa
(fcm = fck + 8 MPa), printed rounded to whole GPa: C25/30 31, C30/37 33, C35/45 34, C40/50 35, C50/60 37;
ν = 0.2 for uncracked concrete (3.1.3(4)).  Units: GPa, MPa.
"""

import pytest

from latticecalc import materials

#: Table 3.1 prints Ecm to whole GPa
TABLE_ATOL_GPA = 0.5

TABLE_3_1 = {"c25-30": (25, 31), "c30-37": (30, 33), "c35-45": (35, 34), "c40-50": (40, 35), "c50-60": (50, 37)}


@pytest.mark.parametrize("key", list(TABLE_3_1))
def test_catalogue_ecm_is_table_3_1(key):
    fck, ecm_table = TABLE_3_1[key]
    m = materials.get(f"concrete-{key}")
    assert m.youngs_modulus.to("GPa").m == pytest.approx(ecm_table, abs=1e-12)     # EN 1992-1-1 Table 3.1
    formula = 22.0 * ((fck + 8) / 10) ** 0.3                                         # the Table's own formula
    assert formula == pytest.approx(ecm_table, abs=TABLE_ATOL_GPA)
    assert m.poissons_ratio == pytest.approx(0.2, abs=1e-12)                         # 3.1.3(4)
    assert m.loss_factor > 0 and m.dynamic_to_static >= 1.0
