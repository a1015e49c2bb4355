"""Self-weight: the hand estimate counts the load paths of the finite panel and agrees with the FE.

A panel n_x × n_y cells in plan (wide × deep) has (n_x + 1)(n_y + 1) vertical frame posts per
level [derived]; the hand shortening δ = ρ_p g H² / (2 E*) with the panel's own weight and its
posts is the mean settlement of the posts' tops (axial equilibrium of the posts, δ = ∫ N/(EA) dz,
Timoshenko & Gere, Mechanics of Materials (1972), §1.4 [from memory]), which the kit's static FE
(``physics.panel.self_weight_deflection``) computes from the full strut frame.

The kit's FE panel is one cell deep; panels deeper than one cell are tiled here the same way
(shared nodes and struts merged) and passed to the kit's FE solve in place of its one-deep tiling.
"""

from __future__ import annotations

import warnings

import numpy as np
import pytest
from tests.helpers import assert_quantity_close

from latticecalc import Q_, materials
from latticecalc.physics import frame_fe as fe
from latticecalc.physics import panel
from latticecalc.physics.bloch import periodic_frame
from latticecalc.physics.cells import SlendernessWarning, build_cell
from latticecalc.physics.selfweight import GRAVITY, panel_self_weight

#: Hand shortening against the FE mean settlement of the frame's top joints, framed octet panels
#: 4 cells high.  Measured: template materials 0.20 %, 0.27 %, 0.52 % (1 × 1, 2 × 1, 4 × 3);
#: aluminium 8 × 6 mm tubes with PU 0.34 %, 0.45 %, 0.83 %.  The rest is the lattice's weight at
#: mid-level nodes and its stiffness beyond the infinite-lattice value; it falls as 1 / cells high.
RTOL_HAND_FE = 0.01
#: Simple-cubic posts: the hand value is the FE's exactly (both are the posts' axial equilibrium).
RTOL_EXACT = 1e-8
#: The hand frame force (tributary plan area, smeared weight) bounds the FE's largest base post
#: force from above; measured FE / hand 0.86, 0.69, 0.63 for 1 × 1, 2 × 1, 4 × 3.
FE_OVER_HAND_FORCE_MIN = 0.55

SIZES = [(1, 1), (2, 1), (4, 3)]       # cells wide × deep
HIGH = 4
TPU = materials.get("tpu-90a-printed")
CFRP = materials.get("cfrp-tube-qi")
PU = materials.get("pu-elastomer-cast")
AL = materials.get("al-6061-t6")


def _template_cell():
    return build_cell("octet", cell_width=Q_(120, "mm"), strut_diameter=Q_(3, "mm"), frame_diameter=Q_(10, "mm"))


def _tube_cell():
    return build_cell("octet", cell_width=Q_(40, "mm"), strut_diameter=Q_(3, "mm"),
                      frame_diameter=Q_(8, "mm")).with_wall_thicknesses(frame=Q_(1, "mm"))


CASES = {"template": (_template_cell, {"lattice": TPU, "frame": CFRP}),
         "al-tube": (_tube_cell, {"lattice": PU, "frame": AL})}


def deep_panel_frame(cell, *, nx: int, ny: int, nd: int) -> panel.PanelFrame:
    """``panel.panel_frame`` tiled ``nd`` cells deep as well (y), shared nodes and struts merged."""
    pf = periodic_frame(cell, periodic="xyz")
    nodes, struts, groups = fe.cell_geometry(cell)
    a = float(pf.periods[0])
    rel = nodes - nodes.min(axis=0)
    shifts = np.array([(ix * a, iy * a, iz * a) for iz in range(ny) for iy in range(nd) for ix in range(nx)])
    every = (rel[None] + shifts[:, None]).reshape(-1, 3)
    _, first, inverse = np.unique(np.round(every / a * 1e6).astype(np.int64), axis=0, return_index=True,
                                  return_inverse=True)
    order = np.argsort(first)
    rank = np.empty_like(order)
    rank[order] = np.arange(order.size)
    idx = rank[inverse.ravel()]
    tiled = np.concatenate([idx[c * len(nodes) + struts] for c in range(len(shifts))])
    _, keep = np.unique(np.sort(tiled, axis=1), axis=0, return_index=True)
    keep = np.sort(keep)
    merged = every[first[order]]
    z = merged[:, 2]
    every_group = list(groups) * len(shifts)
    return panel.PanelFrame(nodes=merged, struts=tiled[keep], groups=tuple(every_group[i] for i in keep),
                            base=np.flatnonzero(np.abs(z - z.min()) < 1e-9 * a),
                            top=np.flatnonzero(np.abs(z - z.max()) < 1e-9 * a), nx=nx, ny=ny, cell_width=a)


def fe_self_weight(cell, mats, *, wide: int, deep: int, high: int, monkeypatch):
    """The kit's FE self-weight settlement of a wide × high × deep panel (long-term moduli)."""
    if deep > 1:
        monkeypatch.setattr(panel, "panel_frame", lambda c, *, nx, ny: deep_panel_frame(c, nx=nx, ny=ny, nd=deep))
    return panel.self_weight_deflection(cell, materials=mats, nx=wide, ny=high, modulus="long-term")


def hand(cell, mats, *, wide: int, deep: int, high: int = HIGH):
    return panel_self_weight(cell, materials=mats, cells_wide=wide, cells_high=high, cells_deep=deep,
                             deflection_limit=Q_(2, "mm"))


def test_deep_tiling_matches_the_kits_one_deep_tiling():
    # sanity of the test's own tiling: one cell deep it is the kit's panel_frame (common practice)
    cell = _template_cell()
    ours, kits = deep_panel_frame(cell, nx=3, ny=2, nd=1), panel.panel_frame(cell, nx=3, ny=2)
    assert len(ours.nodes) == len(kits.nodes) and len(ours.struts) == len(kits.struts)
    assert sorted(ours.groups) == sorted(kits.groups)
    assert len(ours.base) == len(kits.base) and len(ours.top) == len(kits.top)


@pytest.mark.parametrize(("wide", "deep"), [(1, 1), (2, 1), (4, 3), (3, 5), (10, 1)])
def test_post_count_is_shown_as_a_step(wide, deep):
    # (n_x + 1)(n_y + 1) vertical posts per level: one on every cube-edge line, shared once [derived]
    res = hand(_template_cell(), CASES["template"][1], wide=wide, deep=deep)
    step = res.step("selfweight.frame-posts")
    assert step.result.to("").magnitude == (wide + 1) * (deep + 1)
    assert step.formula is not None and "n_x" in step.formula.latex()


@pytest.mark.parametrize(("wide", "deep"), SIZES)
def test_frame_modulus_counts_every_post(wide, deep):
    # E*_f = n_p E_f A_f / (W D) [derived]: a 1 × 1 panel has four corner posts, 4× the per-cell value
    cell, mats = _template_cell(), CASES["template"][1]
    res = hand(cell, mats, wide=wide, deep=deep)
    a = cell.cell_width
    area = np.pi * cell.diameters["frame"] ** 2 / 4           # solid rod, Roark Table A.1 [from memory]
    per_cell = CFRP.youngs_modulus * area / a**2
    expected = (wide + 1) * (deep + 1) * CFRP.youngs_modulus * area / (wide * a * deep * a)
    assert_quantity_close(res.step("selfweight.frame-modulus").result, expected, rtol=1e-12)
    if (wide, deep) == (1, 1):
        assert_quantity_close(res.step("selfweight.frame-modulus").result, 4 * per_cell, rtol=1e-12)


@pytest.mark.parametrize("case", list(CASES))
@pytest.mark.parametrize(("wide", "deep"), SIZES)
def test_hand_shortening_agrees_with_fe(case, wide, deep, monkeypatch):
    make, mats = CASES[case]
    cell = make()
    res = hand(cell, mats, wide=wide, deep=deep)
    fe_res = fe_self_weight(cell, mats, wide=wide, deep=deep, high=HIGH, monkeypatch=monkeypatch)
    # same weight: the hand counts every strut of the panel as the FE consistent mass does [derived]
    assert_quantity_close(res.step("selfweight.panel-mass").result, fe_res.mass, rtol=1e-10)
    assert_quantity_close(res.shortening["with-frame"], fe_res.value, rtol=RTOL_HAND_FE)


@pytest.mark.parametrize(("wide", "deep"), SIZES)
def test_simple_cubic_posts_are_exact(wide, deep, monkeypatch):
    # simple-cubic lattice alone: its vertical struts are posts, (n_x + 1)(n_y + 1) per level; the
    # mean settlement of the tops is (a / (n_p E A)) Σ (weight above each level), exactly the FE's
    # (axial equilibrium across every horizontal cut, Timoshenko & Gere 1972 §1.4 [from memory])
    cell = build_cell("simple-cubic", cell_width=Q_(40, "mm"), strut_diameter=Q_(4, "mm"))
    mats = {"lattice": AL}
    res = hand(cell, mats, wide=wide, deep=deep, high=6)
    assert res.step("selfweight.lattice-posts").result.to("").magnitude == (wide + 1) * (deep + 1)
    fe_res = fe_self_weight(cell, mats, wide=wide, deep=deep, high=6, monkeypatch=monkeypatch)
    assert_quantity_close(res.shortening["lattice-alone"], fe_res.value, rtol=RTOL_EXACT)


def test_simple_cubic_column_closed_form():
    # four corner columns, one ring strut per level: δ = g ρ a² [n² + n (n + 1)] / (2E) [derived,
    # as in tests/physics/test_panel.py]
    cell = build_cell("simple-cubic", cell_width=Q_(40, "mm"), strut_diameter=Q_(4, "mm"))
    n = 6
    res = hand(cell, {"lattice": AL}, wide=1, deep=1, high=n)
    expected = GRAVITY * AL.density * Q_(40, "mm") ** 2 * (n**2 + n * (n + 1)) / (2 * AL.youngs_modulus)
    assert_quantity_close(res.shortening["lattice-alone"], expected, rtol=1e-12)


@pytest.mark.parametrize(("wide", "deep", "share"), [(1, 1, 0.25), (2, 1, 0.5), (1, 3, 0.5), (4, 3, 1.0)])
def test_tributary_area_of_the_most_loaded_post(wide, deep, share):
    # interior post a × a, long-side post a × a/2, corner post of a 1 × 1 panel a/2 × a/2 [derived];
    # the tributary areas of all posts add up to the plan (equilibrium)
    cell = _template_cell()
    res = hand(cell, CASES["template"][1], wide=wide, deep=deep)
    a = cell.cell_width
    assert_quantity_close(res.step("selfweight.frame-tributary-area").result, share * a**2, rtol=1e-12)
    sigma = res.step("selfweight.with-frame.base-stress").result
    e_fs, e_c = res.step("selfweight.frame-modulus").result, res.step("selfweight.combined-modulus").result
    assert_quantity_close(res.step("selfweight.with-frame.frame-force").result,
                          sigma * share * a**2 * e_fs / e_c, rtol=1e-12)


@pytest.mark.parametrize(("wide", "deep"), SIZES)
def test_frame_force_bounds_the_fe_post_forces(wide, deep):
    # the hand demand on the most loaded post (tributary plan area × smeared base stress) is at or above
    # the FE's largest axial force in a base post, and not wildly above it [derived; measured ratios]
    cell, mats = _template_cell(), CASES["template"][1]
    res = hand(cell, mats, wide=wide, deep=deep)
    pan = deep_panel_frame(cell, nx=wide, ny=HIGH, nd=deep)
    sections = fe.sections_for(cell, mats, modulus="long-term")
    model = fe.build_frame(nodes=pan.nodes, struts=pan.struts, groups=pan.groups, sections=sections, n_elements=2)
    rz = np.zeros(model.n_dofs)
    rz[2::6] = 1.0
    fixed = (6 * pan.base[:, None] + np.arange(6)).ravel()
    u = fe.static_solve(model, fixed_dofs=fixed, loads=-GRAVITY.to("m/s^2").magnitude * (model.matrices.M @ rz))
    mesh, sec = model.mesh, sections["frame"]
    forces = []
    for s, (i, j) in enumerate(pan.struts):
        p, q = pan.nodes[i], pan.nodes[j]
        if pan.groups[s] != "frame" or not np.allclose(p[:2], q[:2]) or min(p[2], q[2]) > 1e-12:
            continue
        for e0, e1 in mesh.elements[mesh.element_strut == s]:
            if min(mesh.nodes[e0][2], mesh.nodes[e1][2]) < 1e-12:       # the element at the base
                lo, hi = (e0, e1) if mesh.nodes[e0][2] < mesh.nodes[e1][2] else (e1, e0)
                strain = (u[6 * hi + 2] - u[6 * lo + 2]) / (mesh.nodes[hi][2] - mesh.nodes[lo][2])
                forces.append(-sec.E * sec.A * strain)
    assert len(forces) == (wide + 1) * (deep + 1)
    n_hand = res.step("selfweight.with-frame.frame-force").result.to("N").magnitude
    assert max(forces) <= n_hand
    assert max(forces) >= FE_OVER_HAND_FORCE_MIN * n_hand


def test_buckling_demand_uses_the_post_force():
    # safety factor = P_cr / N_f of the most loaded post (Timoshenko & Gere 1961 §2.1 [from memory])
    res = hand(_template_cell(), CASES["template"][1], wide=1, deep=1)
    p_cr = res.step("selfweight.with-frame.frame-p-cr").result
    n_f = res.step("selfweight.with-frame.frame-force").result
    assert_quantity_close(res.step("selfweight.with-frame.frame-safety").result, (p_cr / n_f).to(""), rtol=1e-12)


def test_added_masses_load_the_panel(monkeypatch):
    # masses at mid-span of the lattice struts: the hand weight counts one per strut of the panel, as
    # the FE lumps them [derived]; shortening still agrees with the FE (8 cells high: the masses sit
    # between the levels, an error falling as 1 / cells high; measured 1.35 % at 4 high, 0.34 % at 8)
    cell = _template_cell().with_point_mass("lattice", mass=Q_(20, "g"))
    mats = CASES["template"][1]
    res = hand(cell, mats, wide=2, deep=1, high=8)
    fe_res = fe_self_weight(cell, mats, wide=2, deep=1, high=8, monkeypatch=monkeypatch)
    assert_quantity_close(res.step("selfweight.panel-mass").result, fe_res.mass, rtol=1e-10)
    assert_quantity_close(res.shortening["with-frame"], fe_res.value, rtol=RTOL_HAND_FE)


def test_lattice_alone_keeps_per_cell_values_for_lattices_without_posts():
    # octet lattice: no vertical struts, so the per-cell values of the infinite lattice are kept
    # (outer-face struts add weight and stiffness alike) [derived]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", SlendernessWarning)
        cell = build_cell("octet", cell_width=Q_(40, "mm"), strut_diameter=Q_(3, "mm"))
    res = hand(cell, {"lattice": PU}, wide=1, deep=1)
    ids = {s.id for s in res.steps}
    assert "selfweight.lattice-posts" not in ids and "selfweight.panel-mass" not in ids
