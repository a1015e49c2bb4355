"""Graded panels: zones of cell rows with their own lattice struts, through mass, the panel and the column.

Sources: the panel mass is the kit's own formula (:func:`latticecalc.physics.density.panel_mass`: cell
mass ρ ρ̄ a³, each strut counted as often as it occurs in the panel, derived); the band edges are the
kit's locally resonant band-gap estimate (:func:`latticecalc.physics.bands.band_estimate_for_cell`: the
clamped–clamped strut mode for the lower edge, the mass-in-mass upper edge, Sugino et al. 2017 and
Huang, Sun & Huang 2009 as that module cites them); an identical zoning must reproduce the uniform
model (common practice: the same physics, only the strut groups renamed).
"""

from __future__ import annotations

import numpy as np
import pytest

from latticecalc import Q_, materials
from latticecalc.errors import InputError
from latticecalc.physics import bands, density, panel, receiver
from latticecalc.physics import zoning as zn
from latticecalc.physics.cells import build_cell
from latticecalc.physics.column import Column

#: identical zones against the uniform panel: machine precision (dB and relative)
ATOL_SAME_DB = 1e-9
RTOL_SAME = 1e-12
#: a band attenuates when the panel's mean level in it is at least this far below the base motion
#: (dB; common practice for a stop band seen in a finite panel), and does not when above NOT_BELOW_DB
ATTENUATES_DB = -6.0
NOT_BELOW_DB = -3.0

TPU = materials.get("tpu-90a-printed")
CFRP = materials.get("cfrp-tube-qi")
CELL = build_cell("bcc", cell_width=Q_(200, "mm"), strut_diameter=Q_(12, "mm"), frame_diameter=Q_(6, "mm"))
MATS = {"lattice": TPU, "frame": CFRP}
D = CELL.diameters["lattice"]
CONCRETE = materials.Material(name="concrete (test)", youngs_modulus=Q_(33, "GPa"), poissons_ratio=0.2,
                              density=Q_(2400, "kg/m^3"), loss_factor=0.02)
COLUMN = Column(shape="rectangular", width=Q_(300, "mm"), depth=Q_(300, "mm"), height=Q_(1.2, "m"),
                material=CONCRETE, head_mass=Q_(400, "kg"), head="guided")
FIX = receiver.Fixings(levels=(0, 2, 4), normal=Q_(2, "MN/m"), along=Q_(2, "MN/m"), vertical=Q_(2, "MN/m"),
                       loss_factor=0.05)


def same_zones(*heights):
    return zn.Zoning(zones=tuple(zn.Zone(cells_high=h, strut_diameter=D) for h in heights))


# --- (a) identical zones are the uniform panel -----------------------------------------------------------
@pytest.mark.parametrize("node_zones", ["none", "rigid"])
def test_identical_zones_give_the_uniform_transmissibility(node_zones):
    kw = dict(materials=MATS, nx=1, ny=4, f_min=Q_(10, "Hz"), f_max=Q_(120, "Hz"), n_frequencies=30,
              direction="normal", check_points=0, node_zones=node_zones)
    uniform = panel.transmissibility(CELL, **kw)
    graded = panel.transmissibility(CELL, zoning=same_zones(1, 3), **kw)
    # the same panel, its lattice struts only renamed per zone (common practice)
    assert np.abs(graded["level"] - uniform["level"]).max() <= ATOL_SAME_DB


def test_identical_zones_with_added_mass_give_the_uniform_insertion_loss_and_settlement():
    cell = CELL.with_point_mass("lattice", mass=Q_(20, "g"), rotary_inertia=Q_(1e-6, "kg*m^2"))
    z = zn.Zoning(zones=tuple(zn.Zone(cells_high=h, strut_diameter=D, added_mass=Q_(20, "g"),
                                      rotary_inertia=Q_(1e-6, "kg*m^2")) for h in (3, 1)))
    f = Q_(np.linspace(15, 70, 12), "Hz")
    kw = dict(materials=MATS, nx=1, ny=4, column=COLUMN, fixings=FIX, frequencies=f, directions=("normal",))
    uniform = receiver.coupled_response(cell, **kw)
    graded = receiver.coupled_response(CELL, zoning=z, **kw)
    il_u, il_g = uniform.value["insertion_loss"]["normal"], graded.value["insertion_loss"]["normal"]
    assert np.abs(il_u).max() > 0.01                     # the panel does act (else the comparison is empty)
    assert np.abs(il_g - il_u).max() <= ATOL_SAME_DB     # common practice: same model, groups renamed
    su = panel.self_weight_deflection(cell, materials=MATS, nx=1, ny=4)
    sg = panel.self_weight_deflection(CELL, materials=MATS, nx=1, ny=4, zoning=z)
    assert sg.value.to("mm").m == pytest.approx(su.value.to("mm").m, rel=RTOL_SAME)
    assert sg.mass.to("kg").m == pytest.approx(su.mass.to("kg").m, rel=RTOL_SAME)


def test_identical_zones_give_the_uniform_mass():
    uniform = density.panel_mass(CELL, materials=MATS, cells_wide=2, cells_high=5, cells_deep=1)
    graded = density.graded_panel_mass(CELL, zoning=same_zones(2, 3), materials=MATS, cells_wide=2, cells_high=5,
                                       cells_deep=1)
    # kit's mass formula (density.panel_mass): every strut counted once, the planes between zones in the
    # zone below; measured: equal to the last bit for this panel
    assert graded.value.to("kg").m == pytest.approx(uniform.value.to("kg").m, rel=RTOL_SAME)


def test_zone_strut_counts_add_up_to_the_panel_for_a_cell_with_struts_in_the_planes():
    # fcc: face diagonals lie in the horizontal planes, so the boundary rule matters (derived count)
    fcc = build_cell("fcc", cell_width=Q_(100, "mm"), strut_diameter=Q_(5, "mm"), frame_diameter=Q_(6, "mm"))
    whole = density.panel_strut_counts(fcc, cells_wide=2, cells_high=7, cells_deep=1)
    parts = (density.panel_strut_counts(fcc, cells_wide=2, cells_high=3, cells_deep=1)
             + density.panel_strut_counts(fcc, cells_wide=2, cells_high=4, cells_deep=1, bottom_plane=False))
    np.testing.assert_allclose(parts, whole, rtol=0, atol=1e-12)
    # and the FE panel gives each strut in a boundary plane to the zone below
    pan = panel.panel_frame(fcc, nx=1, ny=2)
    rows = zn.strut_rows(pan.nodes, pan.struts, cell_width=0.1, cells_high=2)
    z = 0.5 * (pan.nodes[pan.struts[:, 0], 2] + pan.nodes[pan.struts[:, 1], 2])
    assert set(rows[np.isclose(z, 0.1)]) == {0}          # the plane between the rows: the row below
    assert set(rows[np.isclose(z, 0.2)]) == {1}          # the top plane: the top row
    assert set(rows[np.isclose(z, 0.0)]) == {0}


# --- (b) two different zones: mass by zone ---------------------------------------------------------------
def test_two_zone_mass_is_the_sum_of_its_zones():
    z = zn.Zoning(zones=(zn.Zone(cells_high=2, strut_diameter=Q_(8, "mm")),
                         zn.Zone(cells_high=3, strut_diameter=Q_(14, "mm"), added_mass=Q_(50, "g"))))
    g = density.graded_panel_mass(CELL, zoning=z, materials=MATS, cells_wide=2, cells_high=5, cells_deep=1)
    assert g.value.to("kg").m == pytest.approx(sum(p.value.to("kg").m for p in g.zones), rel=RTOL_SAME)
    # the same formula zone by zone (kit's density.panel_mass): a bcc cell has no lattice strut in a
    # horizontal plane, so each zone's lattice is a uniform panel of the zone's cell over its rows
    for k, (pz, rows) in enumerate(zip(g.zones, (2, 3))):
        own = density.panel_mass(z.zone_cell(CELL, k), materials=MATS, cells_wide=2, cells_high=rows, cells_deep=1)
        assert pz.panel_mass_by_group["lattice"].to("kg").m == pytest.approx(
            own.panel_mass_by_group["lattice"].to("kg").m, rel=RTOL_SAME)
    # 2 × 3 cells of 8 bcc struts carry a 50 g sphere each: 48 × 0.05 kg (kit's ADDED_MASS, N M_a)
    assert g.zones[1].step("mass.zone2.added.lattice").result.to("kg").m == pytest.approx(48 * 0.05, rel=RTOL_SAME)
    # the bottom zone holds its bottom plane, so its frame is that of a uniform panel of its cell over its
    # rows (kit's panel_mass; the frame's node overlap follows the zone's lattice diameter: the zone-2
    # cell's frame is 0.012 % heavier per cell, measured)
    own = density.panel_mass(z.zone_cell(CELL, 0), materials=MATS, cells_wide=2, cells_high=2, cells_deep=1)
    assert g.zones[0].panel_mass_by_group["frame"].to("kg").m == pytest.approx(
        own.panel_mass_by_group["frame"].to("kg").m, rel=RTOL_SAME)
    # weight per zone, W = m g (common practice)
    assert g.zone_weights[1].to("N").m == pytest.approx(g.zones[1].value.to("kg").m * 9.80665, rel=RTOL_SAME)


# --- (c) two zones tuned apart: attenuation near both bands ------------------------------------------------
def test_two_zones_attenuate_near_both_hand_bands():
    da, db = Q_(8, "mm"), Q_(14, "mm")
    z = zn.Zoning(zones=(zn.Zone(cells_high=3, strut_diameter=da), zn.Zone(cells_high=3, strut_diameter=db)))
    # band edges per zone: the kit's locally resonant band-gap estimate (clamped strut mode, mass-in-mass)
    est = bands.zone_band_estimates(cell=CELL, zoning=z, lattice_material=TPU, frame_material=CFRP)
    edges = [(e.value["f_low"].to("Hz").m, e.value["f_high"].to("Hz").m) for e in est]
    assert edges[0][1] < edges[1][0]                      # two separate bands (measured 34.7–43.0, 60.6–79.5 Hz)
    kw = dict(materials=MATS, nx=1, ny=6, f_min=Q_(5, "Hz"), f_max=Q_(90, "Hz"), n_frequencies=35,
              check_points=0, direction="normal")
    graded = panel.transmissibility(CELL, zoning=z, **kw)
    only_a = panel.transmissibility(CELL.with_diameters(lattice=da), **kw)
    only_b = panel.transmissibility(CELL.with_diameters(lattice=db), **kw)
    f = graded["frequency"].to("Hz").m

    def mean_level(result, band):
        sel = (f >= band[0]) & (f <= band[1])
        return float(np.mean(result["level"][sel]))

    # measured: graded −9.9 and −16.4 dB; zone-A panel −14.7 and +4.7 dB; zone-B panel +0.1 and −31.7 dB
    assert mean_level(graded, edges[0]) <= ATTENUATES_DB
    assert mean_level(graded, edges[1]) <= ATTENUATES_DB
    assert mean_level(only_a, edges[0]) <= ATTENUATES_DB < NOT_BELOW_DB < mean_level(only_a, edges[1])
    assert mean_level(only_b, edges[1]) <= ATTENUATES_DB < NOT_BELOW_DB < mean_level(only_b, edges[0])


# --- (d) bad input ---------------------------------------------------------------------------------------
def test_zone_heights_must_add_up_to_the_panel(tmp_path):
    cache = tmp_path / "cache"
    with pytest.raises(InputError) as err:
        panel.transmissibility(CELL, materials=MATS, nx=1, ny=4, n_frequencies=5, zoning=same_zones(1, 2),
                               cache=cache)
    e = err.value
    assert e.input_name == "zoning" and "4" in e.expected and "1 + 2 = 3" in e.got
    assert not cache.exists() or not any(cache.iterdir())       # nothing written
    with pytest.raises(InputError, match="do not add up"):
        receiver.place_panels(CELL, nx=1, ny=4, column=COLUMN, placement=receiver.Placement(), fixings=FIX,
                              zoning=same_zones(2, 3))


def test_a_zone_with_a_negative_diameter_or_no_zones_is_refused():
    with pytest.raises(InputError) as err:
        zn.Zoning(zones=(zn.Zone(cells_high=2, strut_diameter=Q_(-3, "mm")),), input_name="panel.zones")
    assert err.value.input_name == "panel.zones zone 1 strut_diameter"
    assert err.value.expected == "> 0 mm" and "-3" in err.value.got
    with pytest.raises(InputError) as err:
        zn.Zoning(zones=(), input_name="panel.zones")
    assert err.value.input_name == "panel.zones" and err.value.got == "no zones"
    with pytest.raises(InputError, match="cannot be negative"):
        zn.Zoning(zones=(zn.Zone(cells_high=1, strut_diameter=D, added_mass=Q_(-1, "g")),))
    with pytest.raises(InputError, match="whole number"):
        zn.Zoning(zones=(zn.Zone(cells_high=0, strut_diameter=D),))
