"""Self-weight of a graded panel: its zones stacked bottom first.

Sources: the stacking is a bar in prismatic segments under a varying axial force, δ = Σ ∫ N(z) dz / (E_i A_i)
with N(z) the weight above z (Gere, J. M. & Goodno, B. J., Mechanics of Materials, 8th ed., 2013, §2.3,
changes in lengths under nonuniform conditions) [from memory]; a uniform column under its own weight
gives δ = ρ g H² / (2 E) (the same integral, derived). The octet strut force is the affine statics of
tests/physics/test_selfweight.py (N = σ a³ / (8 l), derived). Greenhill's height of a uniform heavy
column fixed at its base, L = (7.8373 E I / q)^(1/3) (Greenhill, A. G., Proc. Camb. Phil. Soc. 4, 1881,
pp. 65-73). Identical zones must reproduce the uniform panel (common practice: the same physics, the
panel only cut into zones).
"""

from __future__ import annotations

import math

import pytest
from tests.helpers import assert_quantity_close

from latticecalc import Q_, materials
from latticecalc.errors import InputError
from latticecalc.physics.cells import build_cell
from latticecalc.physics.density import graded_panel_mass, relative_density
from latticecalc.physics.selfweight import graded_panel_self_weight, panel_self_weight
from latticecalc.physics.zoning import Zone, Zoning

#: identical zones against the uniform panel (the same sums in another order)
RTOL_SAME = 1e-9
#: plain-float closed forms against the sheet (the same arithmetic)
RTOL_EXACT = 1e-10
G = 9.80665
A = Q_(40, "mm")
PU = materials.get("pu-elastomer-cast")
TPU = materials.get("tpu-90a-printed")
AL = materials.get("al-6061-t6")
LIMITS = dict(deflection_limit=Q_(2, "mm"), buckling_safety_factor=3.0)
FRAME_D = Q_(4, "mm")
NO_MASS = Q_(0, "g")


def _cell(kind="octet", frame=FRAME_D, mass=NO_MASS):
    cell = build_cell(kind, cell_width=A, strut_diameter=Q_(3, "mm"), frame_diameter=frame)
    if mass.m:
        cell = cell.with_point_mass("lattice", mass=mass, rotary_inertia=Q_(0, "kg*m^2"))
    return cell


def _mats(cell):
    return {"lattice": PU, "frame": AL} if "frame" in cell.group_names else {"lattice": PU}


# --- identical zones are the uniform panel ------------------------------------------------------------------
@pytest.mark.parametrize("heights", [(10, 15), (8, 10, 7)])
@pytest.mark.parametrize("kind, frame, mass", [("octet", Q_(4, "mm"), Q_(0, "g")), ("octet", None, Q_(3, "g")),
                                               ("simple-cubic", None, Q_(2, "g")), ("bcc", Q_(4, "mm"), Q_(4, "g"))])
def test_identical_zones_give_the_uniform_panel(heights, kind, frame, mass):
    # common practice: cutting a uniform panel into zones changes nothing; with a frame (or simple-cubic posts)
    # the panel's bottom plane of struts is spread over the height in both
    cell = _cell(kind, frame, mass)
    kw = dict(materials=_mats(cell), cells_wide=10, cells_high=sum(heights), cells_deep=3, **LIMITS)
    uniform = panel_self_weight(cell, **kw)
    zoning = Zoning(zones=tuple(Zone(cells_high=h, strut_diameter=Q_(3, "mm"), added_mass=mass) for h in heights))
    graded = graded_panel_self_weight(cell, zoning=zoning, **kw)
    assert set(graded.shortening) == set(uniform.shortening)
    for case in uniform.shortening:
        assert_quantity_close(graded.shortening[case], uniform.shortening[case], rtol=RTOL_SAME)
        assert_quantity_close(graded.step(f"selfweight.{case}.zone1.bottom-stress").result,
                              uniform.step(f"selfweight.{case}.base-stress").result, rtol=RTOL_SAME)
        assert_quantity_close(graded.strut_safety_factor[case], uniform.strut_safety_factor[case], rtol=RTOL_SAME)
        assert_quantity_close(graded.greenhill_height[case], uniform.greenhill_height[case], rtol=RTOL_SAME)
        assert_quantity_close(graded.effective_modulus[case], uniform.effective_modulus[case], rtol=RTOL_SAME)
        assert graded.governing_zone[case] == 1      # the most loaded strut is at the base
    if frame is None:
        assert graded.frame_stress is None and graded.frame_safety_factor is None
    else:
        assert_quantity_close(graded.frame_stress, uniform.frame_stress, rtol=RTOL_SAME)
        assert_quantity_close(graded.frame_safety_factor, uniform.frame_safety_factor, rtol=RTOL_SAME)
    # the same checks (only the stacked ones: no zone's own check), with the same verdicts
    assert [(c.id, c.ok) for c in graded.checks] == [(c.id, c.ok) for c in uniform.checks]
    assert graded.all_ok == uniform.all_ok


# --- a two-zone panel against the segment sums ---------------------------------------------------------------
def test_two_zones_against_the_segment_sums():
    # Gere & Goodno 2013, §2.3 [from memory]: N(z) is the weight above z; each prismatic segment shortens by
    # ∫ N / (E A) over its length. Octet, no frame: zone densities ρ_s ρ̄, moduli ρ̄ E_s / 9 (Deshpande, Fleck &
    # Ashby 2001, ⟨100⟩, as tests/physics/test_selfweight.py checks them) [from memory].
    cell = _cell(frame=None)
    zoning = Zoning(zones=(Zone(cells_high=12, strut_diameter=Q_(2.5, "mm")),
                           Zone(cells_high=8, strut_diameter=Q_(3.5, "mm"), material=TPU)))
    res = graded_panel_self_weight(cell, zoning=zoning, materials={"lattice": PU}, cells_wide=6, cells_high=20,
                                   cells_deep=2, **LIMITS)
    a = 0.04
    rho, e, h = [], [], []
    for k, mat in enumerate((PU, TPU)):
        rbar = float(relative_density(zoning.zone_cell(cell, k), "closed-form").value.to("").m)
        rho.append(float(mat.density.to("kg/m^3").m) * rbar)
        e.append(rbar * float(mat.long_term_modulus().to("Pa").m) / 9)
        h.append(zoning.zones[k].cells_high * a)
    assert rho[1] > rho[0]                     # the heavier zone stands on the lighter one
    sigma_top = [rho[1] * G * h[1], 0.0]
    sigma_bot = [sigma_top[0] + rho[0] * G * h[0], rho[1] * G * h[1]]
    delta = sum((sigma_top[k] * h[k] + rho[k] * G * h[k] ** 2 / 2) / e[k] for k in range(2))
    assert_quantity_close(res.shortening["lattice-alone"], delta, unit="m", rtol=RTOL_EXACT)
    assert_quantity_close(res.step("selfweight.lattice-alone.zone1.bottom-stress").result,
                          G * (rho[0] * h[0] + rho[1] * h[1]), unit="Pa", rtol=RTOL_EXACT)
    # octet affine statics: N = σ a³ / (8 l), l = a / √2, at the bottom of each zone (derived)
    forces = [sigma_bot[k] * a**3 / (8 * a / math.sqrt(2)) for k in range(2)]
    for k in range(2):
        assert_quantity_close(res.strut_force["lattice-alone"][k], forces[k], unit="N", rtol=RTOL_EXACT)
        assert_quantity_close(res.step(f"selfweight.lattice-alone.zone{k + 1}.strut-force").result, forces[k],
                              unit="N", rtol=RTOL_EXACT)
    # Greenhill 1881: the bounding column, softest modulus and heaviest weight per metre over the full height
    w, d = 6 * a, 2 * a
    i = w * d**3 / 12
    bound = (7.8373 * min(e) * i / (max(rho) * G * w * d)) ** (1 / 3)
    assert_quantity_close(res.greenhill_height["lattice-alone"], bound, unit="m", rtol=2e-5)
    assert "lower bound" in res.step("selfweight.lattice-alone.greenhill").note


def test_stacked_weight_is_the_graded_panels_weight():
    # derived: the base stress times the plan is the panel's weight; the mass module counts each strut of the
    # graded panel once, zone by zone (latticecalc.physics.density.graded_panel_mass)
    cell = _cell()
    zoning = Zoning(zones=(Zone(cells_high=5, strut_diameter=Q_(2.5, "mm")),
                           Zone(cells_high=7, strut_diameter=Q_(3.5, "mm"), added_mass=Q_(5, "g"))))
    kw = dict(materials=_mats(cell), cells_wide=4, cells_high=12, cells_deep=2)
    res = graded_panel_self_weight(cell, zoning=zoning, **kw, **LIMITS)
    mass = graded_panel_mass(cell, zoning=zoning, method="closed-form", **kw)
    plan = (4 * A) * (2 * A)
    assert_quantity_close(res.step("selfweight.with-frame.zone1.bottom-stress").result * plan,
                          mass.value * Q_(G, "m/s^2"), rtol=RTOL_EXACT)


# --- the case zone 1's cell over the full height missed ---------------------------------------------------
@pytest.mark.parametrize("frame", [None, Q_(4, "mm")])
def test_a_heavy_zone_on_a_light_one_loads_the_lower_struts_more(frame):
    # Gere & Goodno 2013, §2.3 [from memory]: the lower zone carries the upper zone's weight, so its struts
    # carry more than zone 1's cell over the whole height would give them
    cell = _cell(frame=frame)
    zoning = Zoning(zones=(Zone(cells_high=10, strut_diameter=Q_(2.5, "mm")),
                           Zone(cells_high=15, strut_diameter=Q_(3.5, "mm"), added_mass=Q_(6, "g"))))
    kw = dict(materials=_mats(cell), cells_wide=10, cells_high=25, cells_deep=3, **LIMITS)
    graded = graded_panel_self_weight(cell, zoning=zoning, **kw)
    zone1_only = panel_self_weight(zoning.zone_cell(cell, 0), **kw)
    old = zone1_only.step("selfweight.lattice-alone.strut-force").result
    assert graded.strut_force["lattice-alone"][0] > 1.5 * old
    assert graded.zone_strut_safety_factor["lattice-alone"][0] < zone1_only.strut_safety_factor["lattice-alone"]
    assert graded.shortening["lattice-alone"] > zone1_only.shortening["lattice-alone"]
    if frame is not None:
        assert graded.frame_stress > zone1_only.frame_stress
        assert graded.strut_safety_factor["with-frame"] <= zone1_only.strut_safety_factor["with-frame"]
    # each zone's own steps are shown, its own checks are not
    modulus = [graded.step(f"selfweight.zone{k}.lattice-modulus").result for k in (1, 2)]
    assert modulus[1] > modulus[0]
    assert all(".zone" not in c.id for c in graded.checks)


# --- bad input ---------------------------------------------------------------------------------------------------
def test_zones_must_add_up_to_the_panel_height():
    cell = _cell(frame=None)
    zoning = Zoning(zones=(Zone(cells_high=3, strut_diameter=Q_(3, "mm")),
                           Zone(cells_high=4, strut_diameter=Q_(3, "mm"))))
    with pytest.raises(InputError) as err:
        graded_panel_self_weight(cell, zoning=zoning, materials=PU, cells_wide=2, cells_high=8, cells_deep=1,
                                 **LIMITS)
    assert err.value.input_name == "zoning" and "8" in err.value.expected and "3 + 4 = 7" in err.value.got
    with pytest.raises(InputError, match="needs its zoning"):
        graded_panel_self_weight(cell, zoning=None, materials=PU, cells_wide=2, cells_high=7, cells_deep=1, **LIMITS)
