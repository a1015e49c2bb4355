"""Rigid node zones: the zone length rule, the hand formula, the frame model, Bloch and panel options.

The published checks of the rigid offsets and zone masses are in
tests/validation/test_laura_pombo_susemihl_1974.py; here the rule for the zone length (derived from
the geometry of two cylinders), the agreement of the frame model with the hand formula
f = λ²/(2π L_f²) √(EI/(ρA)), L_f = L − l₁ − l₂ (Rao 2017, eq. 8.82, over the flexible length), and
that every model accepts the option and keeps today's results without it.
"""

from __future__ import annotations

import math
import re
import shutil
from types import SimpleNamespace

import numpy as np
import pytest
import scipy.linalg as sla
from tests.helpers import assert_quantity_close

from latticecalc import Q_, materials
from latticecalc.errors import InputError, ModelError
from latticecalc.physics import frame_fe as fe
from latticecalc.physics.bands import band_estimate_for_cell
from latticecalc.physics.beams import (
    bending_frequency,
    circular_section,
    section_bending_frequency,
    zoned_bending_frequency,
)
from latticecalc.physics.bloch import dispersion
from latticecalc.physics.cells import build_cell
from latticecalc.physics.panel import transmissibility
from latticecalc.project import open_project
from latticecalc.project.column_panel import bloch_options, design_from_inputs
from latticecalc.project.inputs import set_values
from latticecalc.project.templates import templates_root

RTOL_EXACT = 1e-10         # the same arithmetic, or an exact relation
RTOL_FE_CC = 1e-5          # 16 elements against the closed form, clamped-clamped
RTOL_TIMO_FE = 1e-3        # 16 Timoshenko elements against the Timoshenko determinant (Han et al. 1999)
RTOL_REDUCED = 1e-6        # reduced against full mesh with every interior mode kept

TPU = materials.get("tpu-90a-printed")
CFRP = materials.get("cfrp-tube-qi")
MATS = {"lattice": TPU, "frame": CFRP}


def _demo_cell(d_mm: float = 24.6, a_mm: float = 350.0):
    return build_cell("bcc", cell_width=Q_(a_mm, "mm"), strut_diameter=Q_(d_mm, "mm"), frame_diameter=Q_(8, "mm"))


def _section(d: float):
    cell = SimpleNamespace(groups=("lattice",), diameters={"lattice": Q_(d, "m")})
    return fe.sections_for(cell, {"lattice": TPU})["lattice"]


def _two_struts(theta_deg: float, d: float):
    """Two equal struts of one group leaving node 0 at ``theta_deg`` to each other."""
    t = math.radians(theta_deg)
    nodes = np.array([[0.0, 0, 0], [1.0, 0, 0], [math.cos(t), math.sin(t), 0.0]])
    return nodes, np.array([[0, 1], [0, 2]]), ("lattice", "lattice"), {"lattice": _section(d)}


# --- the zone length rule (derived from the geometry) ----------------------------------------------
def test_crossing_struts_hold_each_other_over_the_other_radius():
    # θ = 90°: (r_j + r_i cos θ)/sin θ = r_j [derived]
    nodes, struts, groups, secs = _two_struts(90.0, 0.02)
    z = fe.node_zone_lengths(nodes=nodes, struts=struts, groups=groups, sections=secs)
    np.testing.assert_allclose(z[:, 0], [0.01, 0.01], rtol=RTOL_EXACT)
    np.testing.assert_allclose(z[:, 1], [0.0, 0.0], atol=0.0)       # the far ends meet nothing


def test_struts_in_line_do_not_hold_each_other():
    nodes = np.array([[0.0, 0, 0], [1.0, 0, 0], [-1.0, 0, 0]])
    z = fe.node_zone_lengths(nodes=nodes, struts=np.array([[0, 1], [0, 2]]), groups=("lattice", "lattice"),
                             sections={"lattice": _section(0.02)})
    np.testing.assert_allclose(z, 0.0, atol=1e-15)


@pytest.mark.parametrize("theta", [40.0, 70.5287794, 90.0, 120.0, 150.0])
def test_zone_ends_where_the_other_strut_stops_standing_out(theta):
    # sampled geometry [derived]: just inside the zone the other strut (a half-infinite cylinder from the
    # node) stands out of this strut's surface in its cross-section, so the section is enlarged there;
    # just beyond it, it does not
    d = 0.02
    nodes, struts, groups, secs = _two_struts(theta, d)
    lz = fe.node_zone_lengths(nodes=nodes, struts=struts, groups=groups, sections=secs)[0, 0]
    t = math.radians(theta)
    e2 = np.array([math.cos(t), math.sin(t), 0.0])
    ang = np.linspace(0, 2 * math.pi, 1441)
    rad = d / 2 * np.linspace(1.0001, 1.002, 5)          # just outside this strut's surface
    yz = np.array([[r * math.cos(a), r * math.sin(a)] for r in rad for a in ang])

    def stands_out(x):
        p = np.c_[np.full(len(yz), x), yz[:, 0], yz[:, 1]]
        s_ = p @ e2
        dist = np.linalg.norm(p - s_[:, None] * e2, axis=1)
        return bool(np.any((s_ >= 0) & (dist <= d / 2)))

    assert stands_out(lz * (1 - 2e-2))
    assert not stands_out(lz * (1 + 2e-3))


def test_bcc_node_zone_is_root_two_radii_at_both_ends():
    # equal struts at 70.53° (the bcc node): r (1 + 1/3) / sin 70.53° = √2 r [derived]
    cell = _demo_cell()
    z = fe.cell_node_zones(cell)
    r = 24.6 / 2
    assert_quantity_close(z.value, Q_([math.sqrt(2) * r] * 2, "mm"), rtol=1e-9)
    assert_quantity_close(z.length, Q_(350 * math.sqrt(3) / 2, "mm"), rtol=1e-12)
    (step,) = z.steps                                  # both ends alike: one step, the evaluated rule
    assert step.id == "strut.node-zone.length"
    assert_quantity_close(step.result, z.value[0], rtol=RTOL_EXACT)
    # the frame members get no zones
    frame = cell.group_mask("frame")
    assert np.all(z.lengths.magnitude[frame] == 0)


def test_periodic_images_count_at_the_cell_corners():
    # the corner of a bcc cell meets 8 lattice struts in the lattice, one in the cell alone
    cell = _demo_cell()
    periodic = fe.cell_node_zones(cell, periodic=True).lengths.to("mm").magnitude
    alone = fe.cell_node_zones(cell, periodic=False).lengths.to("mm").magnitude
    lat = cell.group_mask("lattice")
    np.testing.assert_allclose(periodic[lat], math.sqrt(2) * 12.3, rtol=1e-9)
    # alone: the corner end is held only by the 8 mm frame members at 54.7°, (4 + 12.3/√3)/√(2/3)
    corner = alone[lat].min(axis=1)
    np.testing.assert_allclose(corner, (4 + 12.3 / math.sqrt(3)) / math.sqrt(2 / 3), rtol=1e-9)


def test_zones_covering_most_of_a_strut_are_refused():
    nodes, struts, groups, secs = _two_struts(10.0, 0.02)
    with pytest.raises(ModelError, match="no longer a beam"):
        fe.end_zones_for("rigid", nodes=nodes * 0.1, struts=struts, groups=groups, sections=secs)


def test_unknown_node_zone_model_is_refused():
    with pytest.raises(InputError, match="node region"):
        fe.check_node_zones("stiff")


# --- hand formula --------------------------------------------------------------------------------------
def test_zoned_frequency_is_the_clamped_frequency_of_the_flexible_length():
    # f = λ²/(2π L_f²) √(EI/ρA), L_f = L − l1 − l2 (Rao 2017 eq. 8.82 over L_f); ratio (L/L_f)² for EB
    E, rho = TPU.dynamic_modulus(), TPU.density
    L, d = Q_(303.1, "mm"), Q_(24.6, "mm")
    z = zoned_bending_frequency(length=L, zone_lengths=Q_([17.4, 12.0], "mm"), diameter=d, youngs_modulus=E,
                                density=rho)
    ref = bending_frequency(length=L - Q_(29.4, "mm"), diameter=d, youngs_modulus=E, density=rho)
    assert_quantity_close(z.value, ref.value, rtol=RTOL_EXACT)
    assert_quantity_close(z.step("strut.zones.ratio").result, Q_((303.1 / (303.1 - 29.4)) ** 2, ""), rtol=1e-9)
    zero = zoned_bending_frequency(length=L, zone_lengths=Q_(0, "mm"), diameter=d, youngs_modulus=E, density=rho)
    assert_quantity_close(zero.value, bending_frequency(length=L, diameter=d, youngs_modulus=E, density=rho).value,
                          rtol=RTOL_EXACT)
    with pytest.raises(InputError):
        zoned_bending_frequency(length=L, zone_lengths=Q_(160, "mm"), diameter=d, youngs_modulus=E, density=rho)


def test_demo_strut_frequency_rises_by_the_zones():
    # the demo's bcc strut (d/L ≈ 0.08): zones √2 r = 17.4 mm, frequency × (303.1/268.3)² = 1.276
    cell = _demo_cell()
    z = fe.cell_node_zones(cell)
    E, rho = TPU.dynamic_modulus(), TPU.density
    f = zoned_bending_frequency(length=z.length, zone_lengths=z.value, diameter=Q_(24.6, "mm"),
                                youngs_modulus=E, density=rho)
    ratio = float(f.step("strut.zones.ratio").result.magnitude)
    assert ratio == pytest.approx((z.length.m / (z.length.m - 2 * z.value.m[0])) ** 2, rel=1e-9)
    assert 1.18 < ratio < 1.30


# --- the frame model against the hand formula ---------------------------------------------------------------
@pytest.mark.parametrize("theory", ["euler-bernoulli", "timoshenko"])
def test_clamped_strut_with_zones_matches_the_hand_formula(theory):
    L, d, z1, z2 = 0.3031, 0.0246, 0.0174, 0.0120
    sec = _section(d)
    direction = np.array([1.0, 2.0, -0.5]) / np.linalg.norm([1.0, 2.0, -0.5])   # any orientation
    nodes = np.array([[0.0, 0, 0], L * direction])
    red = fe.reduce_struts(nodes=nodes, struts=np.array([[0, 1]]), groups=("lattice",), sections={"lattice": sec},
                           n_elements=16, n_modes=4, theory=theory, end_zones=np.array([[z1, z2]]))
    f_fe = np.sqrt(red.omega2[0, 0]) / (2 * np.pi)             # fixed-interface = clamped joints
    kw = dict(youngs_modulus=Q_(sec.E, "Pa"), density=Q_(sec.rho, "kg/m^3"))
    if theory == "euler-bernoulli":
        hand = zoned_bending_frequency(length=Q_(L, "m"), zone_lengths=Q_([z1, z2], "m"), diameter=Q_(d, "m"), **kw)
        assert_quantity_close(Q_(f_fe, "Hz"), hand.value, rtol=RTOL_FE_CC)
    else:
        hand = section_bending_frequency(length=Q_(L - z1 - z2, "m"), section=circular_section(diameter=Q_(d, "m")),
                                         theory="timoshenko", poissons_ratio=Q_(sec.nu, ""), **kw)
        assert_quantity_close(Q_(f_fe, "Hz"), hand.value, rtol=RTOL_TIMO_FE)
        # the full mesh gives the same
    model = fe.build_frame(nodes=nodes, struts=np.array([[0, 1]]), groups=("lattice",), sections={"lattice": sec},
                           n_elements=16, theory=theory, end_zones=np.array([[z1, z2]]))
    free = np.setdiff1d(fe.used_dofs(model.mesh), np.arange(12))
    w2, _ = fe.lowest_modes(model.matrices.K[free][:, free], model.matrices.M[free][:, free], 2)
    np.testing.assert_allclose(np.sqrt(w2[0]) / (2 * np.pi), f_fe, rtol=1e-9)


def test_reduced_strut_with_zones_equals_the_full_mesh():
    # all interior modes kept: the Craig-Bampton reduction with rigid offsets is exact (free-free strut)
    L, d = 0.3, 0.02
    nodes = np.array([[0.0, 0, 0], [0.0, L, L]])
    zones = np.array([[0.02, 0.035]])
    sec = {"lattice": _section(d)}
    model = fe.build_frame(nodes=nodes, struts=np.array([[0, 1]]), groups=("lattice",), sections=sec, n_elements=4,
                           end_zones=zones)
    red = fe.reduce_struts(nodes=nodes, struts=np.array([[0, 1]]), groups=("lattice",), sections=sec, n_elements=4,
                           n_modes=100, end_zones=zones)
    Kr, Mr = fe.reduced_matrices(red, n_joints=2)
    wf = sla.eigh(model.matrices.K.toarray(), model.matrices.M.toarray(), eigvals_only=True)[6:16]
    wr = sla.eigh(Kr, Mr, eigvals_only=True)[6:16]
    np.testing.assert_allclose(wr, wf, rtol=RTOL_REDUCED)
    # the strut's mass is unchanged by the zones (the zones' mass rides on the joints)
    total = model.matrices.M.toarray()[0::6, 0::6].sum()
    assert total == pytest.approx(sec["lattice"].rho * sec["lattice"].A * L * math.sqrt(2), rel=1e-12)


def test_no_zones_keeps_todays_matrices():
    cell = _demo_cell()
    nodes, struts, groups = fe.cell_geometry(cell)
    sections = fe.sections_for(cell, MATS)
    a = fe.reduce_struts(nodes=nodes, struts=struts, groups=groups, sections=sections, n_elements=4, n_modes=3)
    b = fe.reduce_struts(nodes=nodes, struts=struts, groups=groups, sections=sections, n_elements=4, n_modes=3,
                         end_zones=np.zeros((len(struts), 2)))
    np.testing.assert_array_equal(a.K_bb, b.K_bb)
    np.testing.assert_array_equal(a.M_bb, b.M_bb)
    m0 = fe.frame_model(cell, materials=MATS, n_elements=2)
    m1 = fe.frame_model(cell, materials=MATS, n_elements=2, node_zones="none")
    assert (m0.matrices.K != m1.matrices.K).nnz == 0


def test_frame_modes_accept_the_option():
    cell = _demo_cell()
    base = fe.frame_modes(cell, materials=MATS, n_elements=4, n_modes=8)
    zoned = fe.frame_modes(cell, materials=MATS, n_elements=4, n_modes=8, node_zones="rigid")
    assert zoned.value[6] > base.value[6]
    assert "rigid node zones" in zoned.step("frame.dofs").method


# --- the hand band estimate ---------------------------------------------------------------------------------
def test_band_estimate_lower_edge_uses_the_flexible_length():
    cell = _demo_cell()
    none = band_estimate_for_cell(cell=cell, lattice_material=TPU, frame_material=CFRP)
    rigid = band_estimate_for_cell(cell=cell, lattice_material=TPU, frame_material=CFRP, node_zones="rigid")
    z = fe.cell_node_zones(cell)
    hand = zoned_bending_frequency(length=z.length, zone_lengths=z.value, diameter=Q_(24.6, "mm"),
                                   youngs_modulus=TPU.dynamic_modulus(), density=TPU.density)
    assert_quantity_close(rigid.value["f_low"], hand.value, rtol=1e-9)
    assert_quantity_close(rigid.step("band.f1-cc-node-to-node").result, none.value["f_low"], rtol=1e-9)
    # the pinned bound keeps the node-to-node length; the scatter range moves with the nominal edge
    assert_quantity_close(rigid.value["f_low_pinned"], none.value["f_low_pinned"], rtol=1e-12)
    ratio = float((rigid.value["f_low"] / none.value["f_low"]).to("").magnitude)
    ratio_min = float((rigid.value["f_low_min"] / none.value["f_low_min"]).to("").magnitude)
    assert ratio_min == pytest.approx(ratio, rel=0.02)
    assert rigid.step("band.node-zone.length") is not None
    with pytest.raises(InputError):
        band_estimate_for_cell(cell=cell, lattice_material=TPU, frame_material=CFRP, node_zones="yes")


# --- Bloch and panel ---------------------------------------------------------------------------------------
BLOCH = dict(n_elements=4, n_bands=24, points=12, zone_points=0, strut_modes=6, convergence_check=False)


def test_bloch_dispersion_accepts_node_zones(tmp_path):
    cell = _demo_cell()
    none = dispersion(cell, materials=MATS, cache=tmp_path, **BLOCH)
    rigid = dispersion(cell, materials=MATS, cache=tmp_path, node_zones="rigid", **BLOCH)   # not the cached one
    assert rigid.node_zones == "rigid" and none.node_zones == "none"
    assert none["gaps"] and rigid["gaps"]
    ratio = float((rigid["gaps"][0].low / none["gaps"][0].low).to("").magnitude)
    # the gap's lower edge (the struts' clamped-clamped cluster) rises about as the hand ratio, 1.276
    assert 1.18 < ratio < 1.32
    assert "rigid node zones" in rigid.step("bloch.dofs").method
    again = dispersion(cell, materials=MATS, cache=tmp_path, **BLOCH)
    np.testing.assert_array_equal(again["frequencies"].magnitude, none["frequencies"].magnitude)
    full = dispersion(cell, materials=MATS, method="full", node_zones="rigid", **{**BLOCH, "n_bands": 18})
    assert_quantity_close(full["gaps"][0].low, rigid["gaps"][0].low, rtol=2e-3)   # reduction with 6 modes
    with pytest.raises(InputError):
        dispersion(cell, materials=MATS, node_zones="stiff", **BLOCH)


def test_panel_transmissibility_accepts_node_zones():
    cell = _demo_cell()
    kw = dict(materials=MATS, nx=1, ny=2, n_elements=4, f_min=Q_(20, "Hz"), f_max=Q_(70, "Hz"), n_frequencies=26,
              strut_modes=6, check_points=2)
    none = transmissibility(cell, **kw)
    rigid = transmissibility(cell, node_zones="rigid", **kw)
    assert not np.allclose(none["level"], rigid["level"])
    # reduced against full mesh, both with the zones
    assert float(rigid.step("panel.reduction-error").result.magnitude) < 0.05
    assert "rigid node zones" in rigid.step("panel.dofs").method


def test_project_option_reaches_the_bloch_options(tmp_path):
    # lattice.node_zones: the template's default (rigid) when a project leaves it out, else its value
    dest = tmp_path / "panel"
    shutil.copytree(templates_root() / "column-panel", dest)
    proj = open_project(dest)
    assert bloch_options(proj, design_from_inputs(proj.inputs, folder=dest))["node_zones"] == "rigid"
    set_values(dest / "inputs.toml", proj.template, {"lattice.node_zones": "none"})
    proj = open_project(dest)
    assert bloch_options(proj, design_from_inputs(proj.inputs, folder=dest))["node_zones"] == "none"
    text = (dest / "inputs.toml").read_text(encoding="utf-8")
    (dest / "inputs.toml").write_text(re.sub(r"(?m)^node_zones = .*\n", "", text), encoding="utf-8")
    proj = open_project(dest)
    assert proj.inputs.get("lattice.node_zones") is None
    assert bloch_options(proj, design_from_inputs(proj.inputs, folder=dest))["node_zones"] == "rigid"
