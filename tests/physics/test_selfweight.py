"""Self-weight: shortening, load sharing, strut and frame buckling, checks and bad input."""

from __future__ import annotations

import math

import pytest
from scipy.integrate import quad
from tests.helpers import assert_quantity_close

from latticecalc import Q_, materials
from latticecalc.errors import DimensionError, InputError
from latticecalc.physics.cells import build_cell
from latticecalc.physics.density import relative_density
from latticecalc.physics.selfweight import GRAVITY, panel_self_weight, self_weight_shortening

RTOL_EXACT = 1e-10
RTOL_QUAD = 1e-9
A = Q_(40, "mm")
FRAME_D = Q_(4, "mm")
PU = materials.get("pu-elastomer-cast")
AL = materials.get("al-6061-t6")


def test_shortening_against_integrated_strain():
    # derived: sigma(z) = rho g (H - z), delta = integral of sigma / E dz = rho g H^2 / (2 E)
    rho, h, e = 1150.0, 2.5, 8e6
    numeric, _ = quad(lambda z: rho * 9.80665 * (h - z) / e, 0.0, h, epsabs=0, epsrel=1e-12)
    res = self_weight_shortening(density=Q_(rho, "kg/m^3"), height=Q_(h, "m"), youngs_modulus=Q_(e, "Pa"))
    assert_quantity_close(res.value, Q_(numeric, "m"), rtol=RTOL_QUAD)


def _panel(kind="octet", frame=FRAME_D, **kw):
    cell = build_cell(kind, cell_width=A, strut_diameter=Q_(3, "mm"), frame_diameter=frame)
    mats = {"lattice": PU, "frame": AL} if frame is not None else {"lattice": PU}
    args = dict(materials=mats, cells_wide=10, cells_high=25, cells_deep=3, deflection_limit=Q_(2, "mm"))
    args.update(kw)
    return cell, panel_self_weight(cell, **args)


def test_octet_lattice_alone_uses_stretch_scaling():
    # octet <100>: E* = rho E_s / 9 (pin-jointed affine struts, derived in
    # tests/validation/test_deshpande_fleck_ashby_2001.py; Deshpande, Fleck & Ashby, J. Mech. Phys. Solids 49
    # (2001) 1747-1769 [from memory])
    cell, res = _panel(frame=None)
    rbar = relative_density(cell).value
    e_star = rbar * PU.long_term_modulus() / 9
    assert_quantity_close(res.effective_modulus["lattice-alone"], e_star, rtol=RTOL_EXACT)
    rho = PU.density * rbar
    h = 25 * 0.04
    expected = rho.to("kg/m^3").magnitude * 9.80665 * h**2 / (2 * e_star.to("Pa").magnitude)
    assert_quantity_close(res.shortening["lattice-alone"], Q_(expected, "m"), rtol=RTOL_EXACT)
    assert res.value == res.shortening["lattice-alone"]


def test_bending_dominated_scaling():
    # bending-dominated open cells: E*/E_s ~ rho^2 (Gibson & Ashby 1997) [from memory]
    cell, res = _panel(kind="bcc", frame=None)
    rbar = relative_density(cell).value
    assert_quantity_close(res.effective_modulus["lattice-alone"], rbar**2 * PU.long_term_modulus(),
                          rtol=RTOL_EXACT)


def test_long_term_modulus_and_creep_caution():
    _, long = _panel(frame=None)
    _, short = _panel(frame=None, long_term=False)
    ratio = (short.shortening["lattice-alone"] / long.shortening["lattice-alone"]).to("").magnitude
    assert ratio == pytest.approx(PU.long_term_factor, rel=RTOL_EXACT)
    assert "creep" in long.step("selfweight.lattice-modulus-solid").note.lower()


def test_frame_and_lattice_share_the_base_stress():
    cell, res = _panel()
    sigma = res.step("selfweight.with-frame.base-stress").result
    n_f = res.step("selfweight.with-frame.frame-force").result
    sigma_l = res.step("selfweight.with-frame.lattice-stress").result
    # equilibrium at the base: one vertical frame member per cell in plan
    assert_quantity_close(n_f / A**2 + sigma_l, sigma, rtol=RTOL_EXACT)
    assert_quantity_close(res.frame_stress, n_f / (math.pi * Q_(4, "mm") ** 2 / 4), rtol=RTOL_EXACT)
    assert res.shortening["with-frame"] < res.shortening["lattice-alone"]
    assert res.value == res.shortening["with-frame"]
    # the strut force never falls below one cell's own lattice weight hung on the frame nodes
    local = res.step("selfweight.with-frame.lattice-local-stress").result
    assert_quantity_close(local, relative_density(cell).by_group["lattice"] * PU.density * GRAVITY * A, rtol=RTOL_EXACT)
    used = res.step("selfweight.with-frame.lattice-stress-used").result
    assert_quantity_close(used, max(local, sigma_l), rtol=RTOL_EXACT)


def test_octet_strut_force_by_statics():
    # octet under vertical stress sigma, affine: the 16 inclined struts per cell share the load equally,
    # N = sigma a^3 / (8 l) (derived from sum of w A l t_z^4 = 4 A l and t_z^2 = 1/2)
    cell, res = _panel(frame=None)
    sigma = res.step("selfweight.lattice-alone.base-stress").result
    l_strut = A / math.sqrt(2)
    assert_quantity_close(res.step("selfweight.lattice-alone.strut-force").result,
                          sigma * A**3 / (8 * l_strut), rtol=RTOL_EXACT)


def test_checks_flip_with_limits():
    _, loose = _panel(deflection_limit=Q_(10, "mm"), buckling_safety_factor=1.0)
    assert loose.all_ok
    ids = {c.id for c in loose.checks}
    assert {"selfweight.with-frame.shortening-check", "selfweight.with-frame.frame-buckling-check",
            "selfweight.with-frame.strut-buckling-check", "selfweight.with-frame.greenhill-check"} == ids
    _, tight = _panel(deflection_limit=Q_(1, "nm"))
    assert not tight.step("selfweight.with-frame.shortening-check").ok
    assert not tight.all_ok
    _, tall = _panel(frame=None, cells_high=200, deflection_limit=Q_(1, "m"), buckling_safety_factor=2.0)
    assert not tall.step("selfweight.lattice-alone.greenhill-check").ok


def test_euler_strut_load_in_sheet():
    # P_cr = pi^2 E I / (K L)^2, K = 1.0 pinned-pinned (AISC 360-22 Commentary Table C-A-7.1, case d)
    _, res = _panel(frame=None)
    e = PU.long_term_modulus()
    i = math.pi * Q_(3, "mm") ** 4 / 64
    expected = math.pi**2 * e * i / (A / math.sqrt(2)) ** 2
    assert_quantity_close(res.step("selfweight.strut-p-cr").result, expected, rtol=RTOL_EXACT)
    assert GRAVITY.magnitude == 9.80665  # standard gravity (CGPM 1901)


def test_bad_inputs():
    cell = build_cell("octet", cell_width=A, strut_diameter=Q_(3, "mm"))
    with pytest.raises(DimensionError, match="deflection_limit"):
        panel_self_weight(cell, materials=PU, cells_wide=2, cells_high=2, cells_deep=1,
                          deflection_limit=Q_(2, "MPa"))
    with pytest.raises(InputError, match="buckling_safety_factor"):
        panel_self_weight(cell, materials=PU, cells_wide=2, cells_high=2, cells_deep=1,
                          deflection_limit=Q_(2, "mm"), buckling_safety_factor=0.5)
    with pytest.raises(InputError, match="frame_end_condition"):
        panel_self_weight(cell, materials=PU, cells_wide=2, cells_high=2, cells_deep=1,
                          deflection_limit=Q_(2, "mm"), frame_end_condition="welded")
    with pytest.raises(InputError, match="height"):
        self_weight_shortening(density=Q_(1000, "kg/m^3"), height=Q_(0, "m"), youngs_modulus=Q_(1, "MPa"))
    with pytest.raises(DimensionError, match="density"):
        self_weight_shortening(density=Q_(1000, "kg"), height=Q_(1, "m"), youngs_modulus=Q_(1, "MPa"))
