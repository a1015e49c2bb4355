"""Hand estimates of a graded panel on its column: each zone's struts over its share of the rows.

Sources: the resonating mass of a clamped strut with a central mass by Rayleigh's static-deflection shape,
N w (M_a + m_s/2)² / (M_a + 13 m_s/35) (Rao, S. S., Mechanical Vibrations, 6th ed., 2017, §8.7; the factors
derived from that shape, as physics/beams.py states); the insertion loss of an absorber tuned to the
frequency on a host moving as a mass, 10 log10((1 + μ)² + (μ/η_a)²), and the single-absorber bound
20 log10(1 + μ √(1 + η_a²) √(1 + η_h²) / (η_a η_h)) (Den Hartog, J. P., Mechanical Vibrations, 4th ed., 1956,
§3.2–3.3, the two-mass absorber with hysteretic damping, as physics/receiver.py cites it). The graded sum
itself is derived: the Rayleigh resonating mass is a sum over the struts and every cell row holds the same
struts, so a zone of n_k of the n rows brings n_k/n of its cell's value over the full height. Identical zones
must give the uniform panel (common practice: the same physics, the panel only cut into zones).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from latticecalc import Q_, materials
from latticecalc.errors import InputError
from latticecalc.physics import receiver
from latticecalc.physics.cells import build_cell
from latticecalc.physics.column import Column
from latticecalc.physics.zoning import Zone, Zoning

#: identical zones against the uniform panel: the same sums in another order
RTOL_SAME = 1e-12
#: plain-float closed forms against the sheet (the same arithmetic; strut lengths kept to 1 nm by the families)
RTOL_HAND = 1e-7

CONCRETE = materials.Material(name="concrete (test)", youngs_modulus=Q_(33, "GPa"), poissons_ratio=0.2,
                              density=Q_(2400, "kg/m^3"), loss_factor=0.02)
TPU = materials.get("tpu-90a-printed")
A = 0.2                                   # m, cell width
CELL = build_cell("bcc", cell_width=Q_(A, "m"), strut_diameter=Q_(12, "mm"), frame_diameter=Q_(6, "mm"))
COLUMN = Column(shape="rectangular", width=Q_(300, "mm"), depth=Q_(300, "mm"), height=Q_(1.2, "m"),
                material=CONCRETE, head_mass=Q_(400, "kg"), head="guided")
NY = 4
KW = dict(material=TPU, nx=1, ny=NY, column=COLUMN, faces=("front",), direction="normal",
          required=Q_([8.0, 12.0], "dB"))


def bcc_mass_ratio(d_m: float, added_kg: float) -> float:
    """μ of a uniform 1 × 4 bcc panel on the 300 × 300 mm column, by hand (plain floats).

    Every bcc lattice strut lies along a body diagonal, length √3/2 a, direction weight 1 − (d·e)² = 2/3 for any
    axis (geometry); 8 struts a cell, 32 in the panel's 4 cells (tests/physics/test_receiver.py counts them);
    Rayleigh's resonating mass (Rao 2017 §8.7) over the column's mass along the panel, ρ_c b h × 4 a.
    """
    length = math.sqrt(3) / 2 * A
    m_s = float(TPU.density.to("kg/m^3").m) * math.pi * d_m**2 / 4 * length
    m_res = 32 * (2 / 3) * (added_kg + m_s / 2) ** 2 / (added_kg + 13 * m_s / 35)
    host = 2400 * 0.3 * 0.3 * NY * A
    return m_res / host


def il_mass_host(mu: float, eta_a: float) -> float:
    """Den Hartog 1956 §3.3: absorber tuned to the frequency, host moving as a mass there [dB]."""
    return 10 * math.log10((1 + mu) ** 2 + (mu / eta_a) ** 2)


def il_bound(mu: float, eta_a: float, eta_h: float) -> float:
    """The single-absorber bound (Den Hartog 1956 §3.2 model, |Z_h + Z_a| ≤ |Z_h| + |Z_a|) [dB]."""
    return 20 * math.log10(1 + mu * math.sqrt(1 + eta_a**2) * math.sqrt(1 + eta_h**2) / (eta_a * eta_h))


@pytest.mark.parametrize("node_zones", ["none", "rigid"])
@pytest.mark.parametrize("rows", [(1, 3), (2, 1, 1)])
def test_identical_zones_give_the_uniform_estimates(node_zones, rows):
    # common practice: a uniform panel cut into identical zones is the same panel
    mass = Q_(30, "g")
    cell = CELL.with_point_mass("lattice", mass=mass, rotary_inertia=Q_(1e-6, "kg*m^2"))
    zoning = Zoning(tuple(Zone(n, Q_(12, "mm"), mass, Q_(1e-6, "kg*m^2")) for n in rows))
    uni = receiver.receiver_estimates(cell, node_zones=node_zones, **KW)
    zon = receiver.zoned_receiver_estimates(cell, zoning=zoning, node_zones=node_zones, **KW)
    assert zon.mass_ratio == pytest.approx(uni.mass_ratio, rel=RTOL_SAME)
    for key in ("mass_ratio", "bound", "mass_host_il", "mass_ratio_needed", "mass_ratio_min"):
        assert zon.value[key] == pytest.approx(uni.value[key], rel=RTOL_SAME), key
    for key in ("tuning", "resonating_mass_needed"):
        assert zon.value[key].m == pytest.approx(uni.value[key].m, rel=RTOL_SAME), key
    assert zon.value["band"][1].to("Hz").m == pytest.approx(uni.value["band"][1].to("Hz").m, rel=RTOL_SAME)
    assert zon.resonating_mass.to("kg").m == pytest.approx(uni.resonating_mass.to("kg").m, rel=RTOL_SAME)
    assert zon.host_mass == uni.host_mass
    # each zone's own steps are on the sheet, and the downstream steps keep the uniform panel's ids
    ids = {s.id for s in zon.steps}
    for k in range(1, len(rows) + 1):
        assert {f"receiver.zone{k}.resonating-mass", f"receiver.zone{k}.f-tuning"} <= ids
    tail = [s.id for s in uni.steps]
    tail = tail[tail.index("receiver.resonating-mass"):]
    assert [s.id for s in zon.steps][-len(tail):] == tail


def test_two_zones_sum_each_zones_mass_ratio_over_its_rows():
    # derived (module docstring): μ = Σ μ_k n_k / n, each μ_k the zone's cell over the full height, by hand here
    zoning = Zoning((Zone(1, Q_(12, "mm")), Zone(3, Q_(16, "mm"), Q_(40, "g"))))
    est = receiver.zoned_receiver_estimates(CELL, zoning=zoning, **KW)
    mu1, mu2 = bcc_mass_ratio(0.012, 0.0), bcc_mass_ratio(0.016, 0.040)
    mu = (mu1 * 1 + mu2 * 3) / NY
    assert est.mass_ratio == pytest.approx(mu, rel=RTOL_HAND)
    assert est.value["mass_ratio"] == est.mass_ratio
    # the library's own uniform estimates of each zone's cell agree with the hand values
    for k, mu_k in enumerate((mu1, mu2)):
        own = receiver.receiver_estimates(zoning.zone_cell(CELL, k), **KW)
        assert own.mass_ratio == pytest.approx(mu_k, rel=RTOL_HAND)
        assert est.zone_resonating_masses[k].to("kg").m == pytest.approx(own.resonating_mass.to("kg").m,
                                                                         rel=RTOL_SAME)
        assert est.zone_tunings[k].to("Hz").m == pytest.approx(own.value["tuning"].to("Hz").m, rel=RTOL_SAME)
    # Den Hartog 1956 §3.3 on a mass-like host, and the single-absorber bound, at the summed μ
    eta_a, eta_h = float(TPU.loss_factor), 0.02
    assert est.value["mass_host_il"] == pytest.approx(il_mass_host(mu, eta_a), rel=RTOL_HAND)
    assert est.value["bound"] == pytest.approx(il_bound(mu, eta_a, eta_h), rel=RTOL_HAND)
    # the band starts at the lowest zone tuning (the step says so)
    low = min(f.to("Hz").m for f in est.zone_tunings)
    assert est.value["tuning"].to("Hz").m == low
    assert est.value["band"][1].to("Hz").m == pytest.approx(low * math.sqrt(1 + mu), rel=RTOL_HAND)
    assert "lowest" in est.step("receiver.f-tuning").description
    # the needed resonating mass is the needed ratio times the same host
    assert est.value["resonating_mass_needed"].to("kg").m == pytest.approx(
        est.value["mass_ratio_needed"] * est.host_mass.to("kg").m, rel=1e-12)
    # the shown sum is the formula evaluated, with each zone's rows
    step = est.step("receiver.resonating-mass")
    assert step.formula is not None and step.source is receiver.ZONED_SUM and step.source.tag == "derived"
    assert step.values["n_1"].m == 1 and step.values["n_2"].m == 3 and step.values["n"].m == NY
    assert step.result.to("kg").m == pytest.approx(est.resonating_mass.to("kg").m, rel=1e-12)


def test_a_heavy_zone_above_a_light_one_raises_the_mass_ratio():
    # the case zone 1's cell over the full height missed: mass at mid-span raises the Rayleigh resonating mass
    # (Rao 2017 §8.7; (M_a + m_s/2)² / (M_a + 13 m_s/35) grows with M_a), so a heavy upper zone adds to μ
    zoning = Zoning((Zone(2, Q_(12, "mm")), Zone(2, Q_(12, "mm"), Q_(60, "g"))))
    zone1 = receiver.receiver_estimates(zoning.zone_cell(CELL, 0), **KW)
    est = receiver.zoned_receiver_estimates(CELL, zoning=zoning, **KW)
    mu_light, mu_heavy = bcc_mass_ratio(0.012, 0.0), bcc_mass_ratio(0.012, 0.060)
    assert mu_heavy > 2 * mu_light                         # the added mass dominates: the case is not marginal
    assert est.mass_ratio == pytest.approx((mu_light + mu_heavy) / 2, rel=RTOL_HAND)
    assert est.mass_ratio > 1.5 * zone1.mass_ratio
    assert est.value["mass_host_il"] > zone1.value["mass_host_il"]
    # the needed ratio depends on the requirement and the loss factors only, not on the zones
    assert est.value["mass_ratio_needed"] == zone1.value["mass_ratio_needed"]


def test_a_zone_of_its_own_material_brings_its_own_mass_and_the_least_loss_factor():
    # a zone of another material (cast PU: its own density and loss factor): its struts resonate with their own
    # density (Rayleigh, Rao 2017 §8.7) and the losses use the least loss factor of the zones (the most
    # favourable, so the estimates stay upper bounds)
    pu = materials.get("pu-elastomer-cast")
    assert float(pu.loss_factor) != float(TPU.loss_factor)
    zoning = Zoning((Zone(2, Q_(12, "mm")), Zone(2, Q_(12, "mm"), material=pu)))
    est = receiver.zoned_receiver_estimates(CELL, zoning=zoning, **KW)
    own = receiver.receiver_estimates(zoning.zone_cell(CELL, 1), **{**KW, "material": pu})
    assert est.zone_resonating_masses[1].to("kg").m == pytest.approx(own.resonating_mass.to("kg").m, rel=RTOL_SAME)
    eta_a = min(float(TPU.loss_factor), float(pu.loss_factor))
    assert est.value["mass_host_il"] == pytest.approx(il_mass_host(est.mass_ratio, eta_a), rel=RTOL_HAND)
    assert "least" in est.step("receiver.il-mass-host").note


def test_bad_zoning_is_named():
    with pytest.raises(InputError) as info:
        receiver.zoned_receiver_estimates(CELL, zoning=Zoning((Zone(1, Q_(12, "mm")), Zone(2, Q_(12, "mm")))), **KW)
    assert info.value.input_name == "zoning"
    with pytest.raises(InputError) as info:
        receiver.zoned_receiver_estimates(CELL, zoning=None, **KW)
    assert info.value.input_name == "zoning"
    with pytest.raises(InputError) as info:
        receiver.zoned_receiver_estimates(CELL, zoning=Zoning((Zone(4, Q_(12, "mm")),)),
                                          **{**KW, "direction": "up"})
    assert info.value.input_name == "receiver.direction"


def test_zoned_formula_is_the_row_weighted_sum():
    # derived: m_res = Σ m_res,k n_k / n, shown and evaluated from the same expression
    f = receiver.zoned_resonating_mass(3)
    vals = {"m_res_1": Q_(1.0, "kg"), "m_res_2": Q_(2.0, "kg"), "m_res_3": Q_(4.0, "kg"),
            "n_1": 1, "n_2": 2, "n_3": 3, "n": 6}
    assert float(f.evaluate(vals).to("kg").m) == pytest.approx((1 * 1 + 2 * 2 + 4 * 3) / 6, rel=1e-15)
    assert r"m_{\mathrm{res},3}" in f.latex()
    assert np.isclose(float(receiver.zoned_resonating_mass(1).evaluate(
        {"m_res_1": Q_(3.0, "kg"), "n_1": 5, "n": 5}).to("kg").m), 3.0, rtol=1e-15)
    with pytest.raises(InputError):
        receiver.zoned_resonating_mass(0)


def test_receiver_estimates_with_a_zoning_are_the_zoned_estimates():
    # common practice (one entry point, as coupled_response takes its zoning): the sheet, the study and its
    # nearest-design sheet call receiver_estimates with the design's zoning and must meet the zoned estimates
    zoning = Zoning((Zone(1, Q_(12, "mm")), Zone(3, Q_(16, "mm"), Q_(40, "g"))))
    via = receiver.receiver_estimates(CELL, zoning=zoning, **KW)
    zon = receiver.zoned_receiver_estimates(CELL, zoning=zoning, **KW)
    assert [s.id for s in via.steps] == [s.id for s in zon.steps]
    assert via.value["mass_ratio"] == zon.value["mass_ratio"]
    assert via.value["mass_ratio_needed"] == zon.value["mass_ratio_needed"]
    # a zoning carries each zone's added mass: a panel-wide one beside it is refused
    with pytest.raises(InputError) as info:
        receiver.receiver_estimates(CELL, zoning=zoning, added_mass=Q_(5, "g"), **KW)
    assert info.value.input_name == "added_mass"
