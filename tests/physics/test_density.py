"""Relative density (closed form and geometry) and panel mass."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from tests.helpers import assert_quantity_close

from latticecalc import Q_, materials
from latticecalc.errors import DimensionError, InputError
from latticecalc.physics import density as dens
from latticecalc.physics.cells import STRUT_LENGTH_FRACTION, build_cell
from latticecalc.physics.density import panel_mass, panel_strut_counts, relative_density

RTOL_CLOSED_FORM = 1e-12       # a formula evaluated exactly
RTOL_GEOMETRIC_EXACT = 2e-3    # quasi-Monte Carlo volume against the exact simple-cubic form
FAST_SAMPLES = 2**9            # Sobol' points per strut part in the property tests
#: bound on the closed form's relative excess, (rho_cf - rho_geo)/rho_cf <= SLOPE_BOUND * r/l: the node
#: overlap is O(r^3) against strut volume O(r^2) (derived); measured slopes are 1.2 (simple cubic),
#: 1.3 (diamond), about 3 (octet, BCC, FCC)
SLOPE_BOUND = 4.0

A = Q_(40, "mm")


def _cell(kind, r_over_l, frame=None):
    length = 40 * STRUT_LENGTH_FRACTION[kind]
    return build_cell(kind, cell_width=A, strut_diameter=Q_(2 * r_over_l * length, "mm"), frame_diameter=frame)


@pytest.mark.parametrize(("kind", "expected"), [
    # derived slender forms (struts per cell x pi r^2 l / a^3, no node overlap), evaluated at r/l = 0.05
    ("simple-cubic", 3 * math.pi * 0.05**2),
    ("bcc", 3 * math.sqrt(3) * math.pi * 0.05**2),          # 0.040810
    ("fcc", 3 * math.sqrt(2) * math.pi * 0.05**2),
    ("diamond", 0.75 * math.sqrt(3) * math.pi * 0.05**2),
])
def test_closed_forms(kind, expected):
    result = relative_density(_cell(kind, 0.05))
    assert_quantity_close(result.value, Q_(expected, ""), rtol=RTOL_CLOSED_FORM)
    # the general strut sum over the cell's actual struts agrees with the kind's formula
    cell = _cell(kind, 0.05)
    d = cell.diameters["lattice"].to("m").magnitude
    total = float((math.pi * d**2 / 4 * cell.strut_lengths.magnitude * cell.weights).sum())
    assert math.isclose(total / 0.04**3, expected, rel_tol=RTOL_CLOSED_FORM)


def test_bcc_reference_value():
    # derived (8 half-diagonal struts, slender, no node overlap): BCC 3 sqrt(3) pi (r/l)^2 = 0.040810 at
    # r/l = 0.05 (rounded figure)
    assert_quantity_close(relative_density(_cell("bcc", 0.05)).value, Q_(0.040810, ""), rtol=0.0,
                          atol=5e-7)  # half a unit in the last printed place


@pytest.mark.parametrize("r_over_l", [0.02, 0.05, 0.1])
def test_simple_cubic_geometric_matches_exact_overlap(r_over_l):
    # derived: inclusion-exclusion of three orthogonal cylinders (bicylinder 16 r^3/3, tricylinder
    # 8 (2 - sqrt 2) r^3; Steinmetz solids) gives 3 pi (r/l)^2 - 8 sqrt(2) (r/l)^3; 0.022148 at r/l = 0.05
    result = relative_density(_cell("simple-cubic", r_over_l), "geometric")
    exact = 3 * math.pi * r_over_l**2 - 8 * math.sqrt(2) * r_over_l**3
    assert_quantity_close(result.value, Q_(exact, ""), rtol=RTOL_GEOMETRIC_EXACT)
    assert_quantity_close(result.step("density.lattice.exact-overlap").result, Q_(exact, ""),
                          rtol=RTOL_CLOSED_FORM)
    assert result.sampling_error["lattice"] < RTOL_GEOMETRIC_EXACT * exact


def test_simple_cubic_reference_value():
    # derived (inclusion-exclusion of three orthogonal cylinders, Steinmetz solids):
    # 3 pi (r/l)^2 - 8 sqrt(2) (r/l)^3 = 0.022148 at r/l = 0.05 (rounded figure)
    result = relative_density(_cell("simple-cubic", 0.05), "geometric")
    assert_quantity_close(result.value, Q_(0.022148, ""), rtol=RTOL_GEOMETRIC_EXACT)


def test_frame_geometric_is_simple_cubic_exact():
    # the frame owns its overlaps with the lattice, so its share is the simple-cubic union of the cube edges
    cell = build_cell("bcc", cell_width=A, strut_diameter=Q_(3, "mm"), frame_diameter=Q_(4, "mm"))
    result = relative_density(cell, "geometric")
    x = 2 / 40
    assert_quantity_close(result.by_group["frame"], Q_(3 * math.pi * x**2 - 8 * math.sqrt(2) * x**3, ""),
                          rtol=RTOL_GEOMETRIC_EXACT)
    assert_quantity_close(result.value, result.by_group["frame"] + result.by_group["lattice"],
                          rtol=RTOL_CLOSED_FORM)
    # lattice share with a frame is less than without (the frame takes the overlap at the corners)
    bare = relative_density(build_cell("bcc", cell_width=A, strut_diameter=Q_(3, "mm")), "geometric")
    assert result.by_group["lattice"] < bare.value


@settings(max_examples=12, deadline=None)
@given(kind=st.sampled_from(["simple-cubic", "bcc", "diamond", "fcc"]),
       r_over_l=st.floats(min_value=0.004, max_value=0.1))
def test_geometric_tends_to_closed_form(kind, r_over_l):
    result = relative_density(_cell(kind, r_over_l), "geometric", samples=FAST_SAMPLES)
    cf = result.closed_form["lattice"].magnitude
    excess = (cf - result.value.magnitude) / cf
    assert -2e-3 <= excess <= SLOPE_BOUND * r_over_l


@pytest.mark.parametrize("kind", ["octet", "bcc"])
def test_closed_form_error_is_first_order_in_r_over_l(kind):
    # convergence: error of the slender form ~ (r/l)^1 (node overlap r^3 over strut volume r^2), derived
    h = np.array([0.01, 0.02, 0.04])
    err = []
    for x in h:
        res = relative_density(_cell(kind, x), "geometric", samples=2**10)
        err.append((res.closed_form["lattice"] - res.value).magnitude / res.value.magnitude)
    rate = np.polyfit(np.log(h), np.log(err), 1)[0]
    assert rate == pytest.approx(1.0, abs=0.15)


def test_error_step_shown_beside_closed_form():
    res = relative_density(_cell("octet", 0.05), "geometric", samples=2**10)
    ids = [s.id for s in res.steps]
    assert ids.index("density.lattice.closed-form") < ids.index("density.lattice.closed-form-error")
    err = res.step("density.lattice.closed-form-error").result.to("").magnitude
    assert err == pytest.approx((res.closed_form["lattice"] / res.value - 1).magnitude, rel=1e-9)
    assert err > 0


# --- panel mass -----------------------------------------------------------------------------------
@pytest.mark.parametrize("n", [1, 2, 5])
def test_panel_strut_counts_cube_grid(n):
    # an n x n x n grid of cubes has 3 n (n + 1)^2 edges (combinatorics, derived)
    cell = build_cell("simple-cubic", cell_width=A, strut_diameter=Q_(2, "mm"))
    counts = panel_strut_counts(cell, cells_wide=n, cells_high=n, cells_deep=n)
    assert counts.sum() == pytest.approx(3 * n * (n + 1) ** 2, rel=1e-12)


def test_panel_mass_by_hand():
    # simple cubic, slender closed form: 2 wide x 3 high x 1 deep; edges along x: 2*4*2, y: 3*3*1... by count
    pu = materials.get("pu-elastomer-cast")
    cell = build_cell("simple-cubic", cell_width=A, strut_diameter=Q_(4, "mm"))
    res = panel_mass(cell, materials={"lattice": pu}, cells_wide=2, cells_high=3, cells_deep=1,
                     column_mass_per_length=Q_(100, "kg/m"), method="closed-form")
    nx, ny, nz = 2, 1, 3
    edges = nx * (ny + 1) * (nz + 1) + ny * (nx + 1) * (nz + 1) + nz * (nx + 1) * (ny + 1)
    vol = edges * math.pi * 0.002**2 * 0.04
    assert_quantity_close(res.value, Q_(vol * 1150, "kg"), rtol=RTOL_CLOSED_FORM)
    per_cell = 3 * math.pi * 0.002**2 * 0.04 * 1150
    assert_quantity_close(res.cell_mass["lattice"], Q_(per_cell, "kg"), rtol=RTOL_CLOSED_FORM)
    area = (2 * 0.04) * (3 * 0.04)
    assert_quantity_close(res.mass_per_area, Q_(vol * 1150 / area, "kg/m^2"), rtol=RTOL_CLOSED_FORM)
    assert_quantity_close(res.mass_per_length, Q_(vol * 1150 / 0.12, "kg/m"), rtol=RTOL_CLOSED_FORM)
    assert_quantity_close(res.mass_ratio, Q_(vol * 1150 / 0.12 / 100, ""), rtol=RTOL_CLOSED_FORM)


def test_panel_mass_with_frame_groups():
    cell = build_cell("octet", cell_width=A, strut_diameter=Q_(3, "mm"), frame_diameter=Q_(4, "mm"))
    mats = {"lattice": materials.get("tpu-90a-printed"), "frame": materials.get("al-6061-t6")}
    res = panel_mass(cell, materials=mats, cells_wide=3, cells_high=4, cells_deep=2, faces_covered=2,
                     method="closed-form")
    assert set(res.panel_mass_by_group) == {"lattice", "frame"}
    assert_quantity_close(res.value, sum(res.panel_mass_by_group.values(), Q_(0, "kg")), rtol=RTOL_CLOSED_FORM)
    # the panel holds more than n cells' worth (outer face struts are whole), and less than n + outer layer
    n = 3 * 4 * 2
    cells_only = sum(res.cell_mass.values(), Q_(0, "kg")) * n
    assert cells_only < res.value < cells_only * (4 * 5 * 3) / n
    assert_quantity_close(res.mass_per_length, res.value * 2 / Q_(160, "mm"), rtol=RTOL_CLOSED_FORM)


def test_bad_inputs():
    cell = build_cell("bcc", cell_width=A, strut_diameter=Q_(3, "mm"))
    with pytest.raises(InputError, match="method"):
        relative_density(cell, "voxels")
    with pytest.raises(InputError, match="cell"):
        relative_density("octet")
    pu = materials.get("pu-elastomer-cast")
    with pytest.raises(InputError, match="cells_high"):
        panel_mass(cell, materials=pu, cells_wide=2, cells_high=0, cells_deep=1)
    with pytest.raises(DimensionError, match="column_mass_per_length"):
        panel_mass(cell, materials=pu, cells_wide=2, cells_high=2, cells_deep=1,
                   column_mass_per_length=Q_(100, "kg"))
    framed = build_cell("bcc", cell_width=A, strut_diameter=Q_(3, "mm"), frame_diameter=Q_(4, "mm"))
    with pytest.raises(InputError, match="frame"):
        panel_mass(framed, materials={"lattice": pu}, cells_wide=1, cells_high=1, cells_deep=1)


def test_geometric_density_is_computed_once_per_geometry():
    # common practice: a memo must return exactly what the computation returns, and only for the same inputs
    cell = build_cell("octet", cell_width=Q_(40, "mm"), strut_diameter=Q_(2.5, "mm"), frame_diameter=Q_(6, "mm"))
    dens._UNION_MEMO.clear()
    first = relative_density(cell, "geometric", samples=256)
    assert len(dens._UNION_MEMO) == 2                 # two seeds, one entry each
    again = relative_density(cell, "geometric", samples=256)
    assert len(dens._UNION_MEMO) == 2
    direct = dens._union_volumes_computed(cell, samples=256, seed=20240611)
    assert dens._union_volumes(cell, samples=256, seed=20240611) == direct
    for g in cell.group_names:
        assert again.by_group[g] == first.by_group[g]
    thicker = build_cell("octet", cell_width=Q_(40, "mm"), strut_diameter=Q_(2.6, "mm"), frame_diameter=Q_(6, "mm"))
    other = relative_density(thicker, "geometric", samples=256)
    assert len(dens._UNION_MEMO) == 4
    assert other.by_group["lattice"] > first.by_group["lattice"]


def test_union_volumes_are_kept_in_a_projects_cache_and_read_back_unchanged(tmp_path, monkeypatch):
    # common practice (a cache must not change a result): the geometric density read back from the project's
    # cache equals the one computed; outside a project nothing is written
    cell = build_cell("octet", cell_width=Q_(40, "mm"), strut_diameter=Q_(4, "mm"))
    outside = tmp_path / "elsewhere"
    outside.mkdir()
    monkeypatch.chdir(outside)
    dens._UNION_MEMO.clear()
    computed = relative_density(cell, "geometric").value
    assert not any(outside.rglob("*"))
    project = tmp_path / "project"
    project.mkdir()
    (project / "template.toml").write_text("", encoding="utf-8")
    monkeypatch.chdir(project)
    dens._UNION_MEMO.clear()
    first = relative_density(cell, "geometric").value
    kept = list((project / ".latticecalc-cache").glob("union-volumes-*.npz"))
    assert kept    # one entry per sample set (the sampling error takes a second)
    dens._UNION_MEMO.clear()
    monkeypatch.setattr(dens, "_union_volumes_computed", lambda *a, **k: pytest.fail("computed again"))
    again = relative_density(cell, "geometric").value
    assert float(first.m) == float(computed.m) == float(again.m)
