"""Materials: the dataclass, the catalogue, project overrides and bad input."""

from __future__ import annotations

import pytest

from latticecalc import Q_, materials
from latticecalc.errors import DimensionError, InputError
from latticecalc.materials import Material
from tests.helpers import assert_quantity_close

RTOL_EXACT = 1e-12
REQUIRED_KEYS = ("pu-elastomer-cast", "tpu-90a-printed", "pla-printed", "pa12-sls", "cfrp-tube-qi",
                 "al-6061-t6", "steel-s355")


def _pu(**changes):
    args = {"name": "test PU", "youngs_modulus": Q_(10, "MPa"), "poissons_ratio": 0.49,
            "density": Q_(1150, "kg/m^3"), "loss_factor": 0.15}
    args.update(changes)
    return Material(**args)


def test_catalogue_has_required_keys_and_every_value_has_a_source():
    assert set(REQUIRED_KEYS) <= set(materials.names())
    for key in REQUIRED_KEYS:
        mat = materials.get(key)
        for fname in ("youngs_modulus", "poissons_ratio", "density", "loss_factor"):
            src = mat.sources[fname]
            assert src.title, (key, fname)
            assert src.tag in ("", "from memory"), (key, fname)


def test_confirmed_metal_values():
    # Aluminium 6061-T6 data sheet (Aluminum Association typical values as reproduced in MatWeb-derived
    # data sheets): E = 68.9 GPa, nu = 0.33, rho = 2.70 g/cm^3, G = 26.0 GPa.
    al = materials.get("al-6061-t6")
    assert_quantity_close(al.youngs_modulus, Q_(68.9, "GPa"), rtol=RTOL_EXACT)
    assert_quantity_close(al.density, Q_(2.70, "g/cm^3"), rtol=RTOL_EXACT)
    assert al.poissons_ratio == 0.33
    assert_quantity_close(al.shear_modulus, Q_(26.0, "GPa"), rtol=5e-3)  # data sheet rounds to 3 figures
    # EN 1993-1-1:2005, 3.2.6(1): E = 210 000 N/mm^2, nu = 0.3, G = E / 2(1 + nu) ~ 81 000 N/mm^2
    steel = materials.get("steel-s355")
    assert_quantity_close(steel.youngs_modulus, Q_(210000, "N/mm^2"), rtol=RTOL_EXACT)
    assert_quantity_close(steel.shear_modulus, Q_(81000, "N/mm^2"), rtol=5e-3)


def test_shear_modulus_formula():
    # isotropic elasticity, G = E / 2(1 + nu) (Timoshenko & Goodier 1970) [from memory]
    mat = _pu(youngs_modulus=Q_(12, "MPa"), poissons_ratio=0.2)
    assert_quantity_close(mat.shear_modulus, Q_(12 / 2.4, "MPa"), rtol=RTOL_EXACT)


def test_elastomer_moduli():
    mat = _pu(dynamic_to_static=1.5, modulus_low_factor=0.8, modulus_high_factor=2.0, long_term_factor=0.6)
    assert_quantity_close(mat.dynamic_modulus(), Q_(15, "MPa"), rtol=RTOL_EXACT)
    low, high = mat.modulus_range()
    assert_quantity_close(low, Q_(12, "MPa"), rtol=RTOL_EXACT)
    assert_quantity_close(high, Q_(30, "MPa"), rtol=RTOL_EXACT)
    low_s, high_s = mat.modulus_range(dynamic=False)
    assert_quantity_close(low_s, Q_(8, "MPa"), rtol=RTOL_EXACT)
    assert_quantity_close(mat.long_term_modulus(), Q_(6, "MPa"), rtol=RTOL_EXACT)
    ids = [s.id for s in mat.properties(id_prefix="lattice-material").steps]
    assert "lattice-material.long-term-modulus" in ids and "lattice-material.modulus-high" in ids


def test_catalogue_elastomers_carry_factors():
    for key in ("pu-elastomer-cast", "tpu-90a-printed"):
        mat = materials.get(key)
        assert mat.is_elastomer
        assert mat.dynamic_to_static > 1
        assert mat.modulus_low_factor < 1 < mat.modulus_high_factor
        assert 0 < mat.long_term_factor < 1


def test_overrides_and_additions():
    cat = materials.catalogue(overrides={
        "pu-elastomer-cast": {"youngs_modulus": {"value": "12 MPa", "source": "supplier sheet DS-7"}},
        "my-foam": {"name": "Project foam", "youngs_modulus": "2 MPa", "poissons_ratio": 0.3,
                    "density": "300 kg/m^3"}})
    pu = cat["pu-elastomer-cast"]
    assert_quantity_close(pu.youngs_modulus, Q_(12, "MPa"), rtol=RTOL_EXACT)
    assert pu.sources["youngs_modulus"].title == "supplier sheet DS-7"
    assert pu.dynamic_to_static == materials.get("pu-elastomer-cast").dynamic_to_static
    assert_quantity_close(cat["my-foam"].density, Q_(300, "kg/m^3"), rtol=RTOL_EXACT)
    assert materials.get("my-foam", overrides={"my-foam": {"name": "x", "youngs_modulus": "2 MPa",
                                                           "poissons_ratio": 0.3,
                                                           "density": "300 kg/m^3"}}).name == "x"


# --- bad input -----------------------------------------------------------------------------------------
def test_unknown_material_lists_names():
    with pytest.raises(InputError) as err:
        materials.get("unobtainium")
    for key in REQUIRED_KEYS:
        assert key in str(err.value)


@pytest.mark.parametrize("nu", [0.5, 0.6, -1.0, -1.5])
def test_poissons_ratio_outside_range(nu):
    with pytest.raises(InputError, match="poissons_ratio"):
        _pu(poissons_ratio=nu)


def test_wrong_units():
    with pytest.raises(DimensionError, match="youngs_modulus"):
        _pu(youngs_modulus=Q_(10, "kg/m^3"))
    with pytest.raises(DimensionError, match="density"):
        _pu(density=Q_(1150, "MPa"))
    with pytest.raises(DimensionError, match="my-foam.density"):
        materials.catalogue(overrides={"my-foam": {"name": "f", "youngs_modulus": "2 MPa",
                                                   "poissons_ratio": 0.3, "density": "300 mm"}})


def test_other_bad_values():
    with pytest.raises(InputError, match="youngs_modulus"):
        _pu(youngs_modulus=Q_(-1, "MPa"))
    with pytest.raises(InputError, match="long_term_factor"):
        _pu(long_term_factor=1.5)
    with pytest.raises(InputError, match="loss_factor"):
        _pu(loss_factor=-0.1)
    with pytest.raises(InputError, match="unknown material field"):
        materials.catalogue(overrides={"pla-printed": {"stiffness": "3 GPa"}})
    with pytest.raises(InputError, match="needs a name"):
        materials.catalogue(overrides={"new": {"youngs_modulus": "3 GPa"}})
