"""Band estimate: edges, fixity bracket, scatter, mechanism, cluster, monotonic trends, bad inputs."""

import math
import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from tests.helpers import assert_quantity_close

from latticecalc import Q_, materials
from latticecalc.errors import DimensionError, InputError
from latticecalc.physics import bands, beams
from latticecalc.physics.cells import build_cell

PU = materials.get("pu-elastomer-cast")
PLA = materials.get("pla-printed")
PLAIN = {"strut_lengths": Q_(40, "mm"), "strut_diameter": Q_(3, "mm"), "youngs_modulus": Q_(12, "MPa"),
         "density": Q_(1150, "kg/m^3"), "cell_width": Q_(60, "mm"), "host_mass": Q_(8, "g"),
         "effective_modulus": Q_(20, "MPa")}


def _f(r, key):
    return float(r.value[key].to("Hz").magnitude)


def test_lower_edges_are_the_strut_modes():
    r = bands.band_estimate(**PLAIN)
    common = {"length": Q_(40, "mm"), "diameter": Q_(3, "mm"), "youngs_modulus": Q_(12, "MPa"),
              "density": Q_(1150, "kg/m^3")}
    assert_quantity_close(r.value["f_low"], beams.bending_frequency(**common).value, rtol=1e-12)
    assert_quantity_close(r.value["f_low_pinned"],
                          beams.bending_frequency(**common, supports="pinned-pinned").value, rtol=1e-12)
    assert _f(r, "f_low_pinned") < _f(r, "f_low") < _f(r, "f_high")
    # mass-in-mass upper edge f0 √(1 + m2/m1) with m2/m1 reported [Huang, Sun & Huang 2009]
    assert _f(r, "f_high") == pytest.approx(_f(r, "f_low") * math.sqrt(1 + r.mass_ratio), rel=1e-12)


def test_no_scatter_collapses_the_ranges():
    r = bands.band_estimate(**PLAIN)
    for key, ref in (("f_low_min", "f_low"), ("f_low_max", "f_low"), ("f_high_min", "f_high"),
                     ("f_high_max", "f_high")):
        assert _f(r, key) == pytest.approx(_f(r, ref), rel=1e-12)
    assert _f(r, "envelope_low") == pytest.approx(_f(r, "f_low_pinned"), rel=1e-12)


def test_scatter_brackets_the_nominal_band():
    r = bands.band_estimate(**PLAIN, modulus_range=(Q_(9, "MPa"), Q_(20, "MPa")),
                            diameter_tolerance=Q_(0.1, "mm"), length_tolerance=0.01, density_tolerance=0.02)
    assert _f(r, "f_low_min") < _f(r, "f_low") < _f(r, "f_low_max")
    assert _f(r, "f_high_min") < _f(r, "f_high") < _f(r, "f_high_max")
    # the lowest lower edge is at the soft end of the modulus range, thin, long, dense struts
    # (f ∝ d/L² √(E/ρ), Rao 2017 eq. 8.82)
    expected = _f(r, "f_low") * (2.9 / 3) / 1.01**2 * math.sqrt(9 / 12 / 1.02)
    assert _f(r, "f_low_min") == pytest.approx(expected, rel=1e-12)
    assert _f(r, "envelope_low") <= _f(r, "f_low_min") and _f(r, "envelope_high") >= _f(r, "f_high_max")


def test_bragg_frequency_and_mechanism():
    r = bands.band_estimate(**PLAIN)
    m_cell = (r.step("band.m1-cc").result + r.step("band.m2-cc").result).to("kg").magnitude
    c = math.sqrt(20e6 / (m_cell / 0.06**3))  # c = √(E*/ρ*), f_B = c/(2a) (Brillouin 1946, from memory)
    assert _f(r, "f_bragg") == pytest.approx(c / (2 * 0.06), rel=1e-12)
    assert r.mechanism == "local resonance" and r.step("band.mechanism").ok
    soft = bands.band_estimate(**{**PLAIN, "effective_modulus": Q_(1, "kPa")})
    assert soft.mechanism == "Bragg scattering" and not soft.step("band.mechanism").ok
    assert soft.step("band.mechanism").note


def test_several_lengths_longest_sets_the_edge_and_cluster_lists_all():
    r = bands.band_estimate(**{**PLAIN, "strut_lengths": Q_([40, 40, 30], "mm")}, strut_weights=[1, 0.5, 1])
    one = bands.band_estimate(**PLAIN)
    assert _f(r, "f_low") == pytest.approx(_f(one, "f_low"), rel=1e-12)
    assert len(r.cluster) == 2 * 3 * 3        # two lengths × (cc, cp, pp) × three modes
    rows = r.cluster_rows()
    assert {row[4] for row in rows} >= {"below the band", "in the band", "above"}
    assert_quantity_close(r.step("band.strut-mass").result,
                          Q_(1150 * math.pi * 3e-3**2 / 4 * (0.04 + 0.02 + 0.03), "kg"), rtol=1e-12)


def _cell_band(width_mm, diameter_mm):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        cell = build_cell("octet", cell_width=Q_(width_mm, "mm"), strut_diameter=Q_(diameter_mm, "mm"),
                          frame_diameter=Q_(5, "mm"))
    return bands.band_estimate_for_cell(cell=cell, lattice_material=PU, frame_material=PLA)


@settings(max_examples=15, deadline=None)
@given(width=st.floats(40, 120), grow=st.floats(1.05, 1.6), d=st.floats(2.0, 4.0))
def test_band_moves_down_as_the_cell_widens(width, grow, d):
    a, b = _cell_band(width, d), _cell_band(width * grow, d)
    assert _f(b, "f_low") < _f(a, "f_low") and _f(b, "f_high") < _f(a, "f_high")


@settings(max_examples=15, deadline=None)
@given(width=st.floats(60, 120), d=st.floats(2.0, 3.5), grow=st.floats(1.05, 1.5))
def test_band_moves_up_as_struts_thicken(width, d, grow):
    a, b = _cell_band(width, d), _cell_band(width, d * grow)
    assert _f(b, "f_low") > _f(a, "f_low") and _f(b, "f_high") > _f(a, "f_high")


def test_cell_inputs_use_the_lattice_group_and_the_material_range():
    cell = build_cell("octet", cell_width=Q_(60, "mm"), strut_diameter=Q_(4, "mm"), frame_diameter=Q_(6, "mm"))
    inp = bands.cell_band_inputs(cell=cell, lattice_material=PU, frame_material=PLA)
    args = inp.arguments
    l_octet = 60 / math.sqrt(2)  # octet strut length a/√2 (Deshpande, Fleck & Ashby 2001)
    np.testing.assert_allclose(args["strut_lengths"].to("mm").magnitude, l_octet, rtol=1e-12)
    assert float((args["strut_weights"]).sum()) == pytest.approx(24.0)  # 24 struts per octet cell
    assert_quantity_close(args["youngs_modulus"], PU.dynamic_modulus(), rtol=1e-12)
    # host mass = 12 cube edges × 1/4 share = 3 edges of length a per cell
    assert_quantity_close(args["host_mass"], Q_(3 * 0.06 * math.pi * 0.006**2 / 4, "m^3") * PLA.density,
                          rtol=1e-9)
    r = bands.band_estimate_for_cell(cell=cell, lattice_material=PU, frame_material=PLA)
    lo, hi = PU.modulus_range()
    assert _f(r, "f_low_min") == pytest.approx(_f(r, "f_low") * math.sqrt(lo / PU.dynamic_modulus()), rel=1e-9)
    assert _f(r, "f_low_max") == pytest.approx(_f(r, "f_low") * math.sqrt(hi / PU.dynamic_modulus()), rel=1e-9)
    with pytest.raises(InputError, match="frame_material"):
        bands.band_estimate_for_cell(cell=cell, lattice_material=PU)
    bare = build_cell("bcc", cell_width=Q_(60, "mm"), strut_diameter=Q_(3, "mm"))
    rb = bands.band_estimate_for_cell(cell=bare, lattice_material=PU)
    assert rb.step("band.cell.lattice-modulus").source.author.startswith("Gibson")  # bending-dominated BCC


@pytest.mark.parametrize("over,name,exc", [
    ({"host_mass": Q_(-1, "g")}, "host_mass", InputError),
    ({"strut_lengths": Q_([40, -3], "mm")}, "strut_lengths", InputError),
    ({"strut_diameter": Q_(0, "mm")}, "strut_diameter", InputError),
    ({"effective_modulus": Q_(20, "kg")}, "effective_modulus", DimensionError),
    ({"density": Q_(1150, "kg/m^2")}, "density", DimensionError),
    ({"modulus_range": (Q_(20, "MPa"), Q_(9, "MPa"))}, "modulus_range", InputError),
    ({"diameter_tolerance": Q_(3, "mm")}, "diameter_tolerance", InputError),
    ({"strut_weights": [2.0]}, "strut_weights", InputError),
])
def test_bad_inputs(over, name, exc):
    with pytest.raises(exc, match=name):
        bands.band_estimate(**{**PLAIN, **over})


def test_modulus_tolerance_widens_the_range():
    base = bands.band_estimate(**PLAIN, modulus_range=(Q_(10, "MPa"), Q_(15, "MPa")))
    wide = bands.band_estimate(**PLAIN, modulus_range=(Q_(10, "MPa"), Q_(15, "MPa")), modulus_tolerance=0.1)
    # f ∝ √E (Rao 2017, eq. 8.82)
    assert _f(wide, "f_low_min") == pytest.approx(_f(base, "f_low_min") * math.sqrt(0.9), rel=1e-12)
    assert _f(wide, "f_low_max") == pytest.approx(_f(base, "f_low_max") * math.sqrt(1.1), rel=1e-12)


def test_equivalent_chain_gap_brackets_the_strut_mode():
    est = bands.band_estimate(**PLAIN)
    chain = bands.equivalent_chain(est)
    # exact chain (Huang, Sun & Huang 2009): upper edge equals the estimate, lower edge just below f0
    assert_quantity_close(chain.value["gap_high"], est.value["f_high"], rtol=1e-10)
    assert chain.value["gap_low"] < est.value["f_low"]
    assert chain.value["gap_low"] > 0.9 * est.value["f_low"]
