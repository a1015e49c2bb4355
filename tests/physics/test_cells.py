"""Lattice cells: geometry, periodic conventions, Maxwell numbers, validation of bad input."""

from __future__ import annotations

import itertools
import math
import warnings

import numpy as np
import pytest
from tests.helpers import assert_quantity_close

from latticecalc import Q_
from latticecalc.errors import DimensionError, InputError
from latticecalc.physics.cells import (
    KINDS,
    STRUT_LENGTH_FRACTION,
    SlendernessWarning,
    build_cell,
    cell_from_lists,
    describe_cell,
    maxwell_number,
    periodic_pairs,
)

RTOL_GEOMETRY = 1e-12

A = Q_(40, "mm")
D = Q_(3, "mm")


def _octahedron_lists():
    fc = [(0, .5, .5), (1, .5, .5), (.5, 0, .5), (.5, 1, .5), (.5, .5, 0), (.5, .5, 1)]
    struts = [(i, j) for i, j in itertools.combinations(range(6), 2)
              if math.isclose(np.linalg.norm(np.subtract(fc[i], fc[j])), math.sqrt(0.5))]
    return fc, struts


def test_octet_counts():
    # Octet truss as an FCC cell: 14 nodes, 36 drawn struts (24 face half-diagonals shared by two cells
    # + 12 interior) = 24 struts per cell of the infinite lattice; Deshpande, Fleck & Ashby (2001), the
    # 24-strut cell behind rho = 6 sqrt(2) pi (r/l)^2.
    cell = build_cell("octet", cell_width=A, strut_diameter=D)
    assert cell.nodes.shape == (14, 3)
    assert cell.struts.shape == (36, 2)
    assert cell.struts_per_cell == 24
    assert cell.nodes_per_cell == 4  # FCC: 4 lattice points per cubic cell (any crystallography text)
    assert math.isclose(cell.connectivity, 12.0)  # octet Z = 12, Deshpande, Ashby & Fleck 2001 [from memory]
    assert cell.regime == "stretch-dominated"
    assert_quantity_close(cell.strut_lengths, np.full(36, 40 / math.sqrt(2)), unit="mm", rtol=RTOL_GEOMETRY)


@pytest.mark.parametrize(("kind", "per_cell", "z"), [
    ("simple-cubic", 3, 6), ("bcc", 8, 8), ("fcc", 12, 6), ("diamond", 16, 4)])
def test_struts_per_cell_and_connectivity(kind, per_cell, z):
    # Coordination numbers of the point lattices: simple cubic 6, BCC 8, diamond 4 (Kittel, Introduction to
    # Solid State Physics, ch. 1) [from memory]; FCC face diagonals only: 12 bonds at a corner node, 4 at a
    # face centre, mean 2 * 12 / 4 = 6 (derived).
    cell = build_cell(kind, cell_width=A, strut_diameter=D)
    assert cell.struts_per_cell == per_cell
    assert math.isclose(cell.connectivity, z)
    assert cell.regime == "bending-dominated"
    assert_quantity_close(cell.strut_lengths, np.full(len(cell.struts), 40 * STRUT_LENGTH_FRACTION[kind]),
                          unit="mm", rtol=RTOL_GEOMETRY)


@pytest.mark.parametrize("kind", KINDS)
def test_nodes_inside_cube_and_periodic_images(kind):
    cell = build_cell(kind, cell_width=A, strut_diameter=D)
    x = cell.nodes.to("mm").magnitude
    assert x.min() >= 0 and x.max() <= 40
    for axis in range(3):
        pairs = periodic_pairs(cell, axis)
        on_lo = np.flatnonzero(np.isclose(x[:, axis], 0))
        on_hi = np.flatnonzero(np.isclose(x[:, axis], 40))
        assert len(pairs) == len(on_lo) == len(on_hi) > 0
        shift = x[pairs[:, 1]] - x[pairs[:, 0]]
        expected = np.zeros(3)
        expected[axis] = 40
        np.testing.assert_allclose(shift, np.tile(expected, (len(pairs), 1)), atol=1e-9)


def test_weights_face_and_edge_struts():
    cell = build_cell("octet", cell_width=A, strut_diameter=D, frame_diameter=Q_(6, "mm"))
    frame = cell.group_mask("frame")
    assert frame.sum() == 12
    assert np.all(cell.weights[frame] == 0.25)  # a cube edge is shared by 4 cells
    lattice = cell.weights[~frame]
    assert sorted(set(lattice.tolist())) == [0.5, 1.0]
    assert (lattice == 0.5).sum() == 24 and (lattice == 1.0).sum() == 12
    assert cell.groups.count("frame") == 12
    assert_quantity_close(cell.diameters["frame"], Q_(6, "mm"), rtol=RTOL_GEOMETRY)


def test_frame_split_at_nodes_on_edges():
    # a custom cell with a node at the middle of a cube edge: the frame edge is split there
    nodes = [(0.5, 0, 0), (0.5, 1, 0), (0.5, 0, 1), (0.5, 1, 1), (0.5, 0.5, 0.5)]
    struts = [(4, 0), (4, 1), (4, 2), (4, 3)]
    cell = cell_from_lists(nodes=nodes, struts=struts, cell_width=A, diameters={"lattice": D},
                           frame_diameter=Q_(5, "mm"))
    frame = cell.group_mask("frame")
    assert frame.sum() == 16  # 8 edges whole + 4 edges along x split into 2
    # still 3 cube edges' worth of frame length per cell: 12 edges x 40 mm x 1/4
    per_cell = (cell.strut_lengths[frame] * cell.weights[frame]).sum()
    assert_quantity_close(per_cell, Q_(120, "mm"), rtol=RTOL_GEOMETRY)


def test_with_diameters_copies():
    cell = build_cell("bcc", cell_width=A, strut_diameter=D, frame_diameter=Q_(5, "mm"))
    thin = cell.with_diameters(lattice=Q_(2, "mm"))
    assert_quantity_close(thin.diameters["lattice"], Q_(2, "mm"), rtol=RTOL_GEOMETRY)
    assert_quantity_close(cell.diameters["lattice"], D, rtol=RTOL_GEOMETRY)
    wide = cell.with_cell_width(Q_(80, "mm"))
    longest = wide.strut_lengths[wide.group_mask("lattice")].max()
    assert_quantity_close(longest, Q_(80 * math.sqrt(3) / 2, "mm"), rtol=RTOL_GEOMETRY)
    with pytest.raises(InputError, match="frame, lattice|lattice, frame"):
        cell.with_diameters(strut=Q_(2, "mm"))


# --- Maxwell numbers: b - 3j + 6 (Maxwell 1864; Calladine 1978) [from memory] ----------------------
def test_maxwell_formula():
    assert maxwell_number(struts=6, joints=4) == 0     # tetrahedron
    assert maxwell_number(struts=12, joints=6) == 0    # octahedron
    assert maxwell_number(struts=12, joints=8) == -6   # cube frame
    assert maxwell_number(struts=3, joints=3, dimension=2) == 0  # triangle, b - 2j + 3


def test_maxwell_of_built_frames():
    tet = [(.2, .2, .2), (.8, .8, .2), (.8, .2, .8), (.2, .8, .8)]
    cell = cell_from_lists(nodes=tet, struts=list(itertools.combinations(range(4), 2)), cell_width=A,
                           diameters={"lattice": D})
    assert cell.maxwell_number == 0
    nodes, struts = _octahedron_lists()
    assert len(struts) == 12
    cell = cell_from_lists(nodes=nodes, struts=struts, cell_width=A, diameters={"lattice": D})
    assert cell.maxwell_number == 0
    cube = build_cell("simple-cubic", cell_width=A, strut_diameter=D)
    assert cube.maxwell_number == -6


# --- bad input ---------------------------------------------------------------------------------------
def test_unknown_kind_lists_valid_names():
    with pytest.raises(InputError) as err:
        build_cell("kagome", cell_width=A, strut_diameter=D)
    for name in KINDS:
        assert name in str(err.value)
    assert "kind" in str(err.value)


@pytest.mark.parametrize("name", ["cell_width", "strut_diameter", "frame_diameter"])
@pytest.mark.parametrize("bad", [Q_(0, "mm"), Q_(-3, "mm")])
def test_zero_or_negative_sizes(name, bad):
    args = {"cell_width": A, "strut_diameter": D, "frame_diameter": Q_(5, "mm")}
    args[name] = bad
    with pytest.raises(InputError, match=name):
        build_cell("octet", **args)


def test_wrong_unit():
    with pytest.raises(DimensionError, match="strut_diameter"):
        build_cell("octet", cell_width=A, strut_diameter=Q_(3, "MPa"))


def test_diameter_that_does_not_fit():
    # octet l = 40/sqrt(2) = 28.3 mm: d = 15 mm gives l/d = 1.9 < 2
    with pytest.raises(InputError, match="strut_diameter.*do not fit") as err:
        build_cell("octet", cell_width=A, strut_diameter=Q_(15, "mm"))
    assert "15 mm" in str(err.value)
    with pytest.raises(InputError, match="frame_diameter"):
        build_cell("octet", cell_width=A, strut_diameter=D, frame_diameter=Q_(25, "mm"))
    with pytest.warns(SlendernessWarning):
        build_cell("octet", cell_width=A, strut_diameter=Q_(8, "mm"))
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        build_cell("octet", cell_width=A, strut_diameter=Q_(4, "mm"))


def test_simple_cubic_refuses_frame():
    with pytest.raises(InputError, match="coincide"):
        build_cell("simple-cubic", cell_width=A, strut_diameter=D, frame_diameter=Q_(5, "mm"))


def test_custom_validation():
    ok_nodes = [(.2, .2, .2), (.8, .8, .8)]
    with pytest.raises(InputError, match=r"struts\[0\].*does not exist"):
        cell_from_lists(nodes=ok_nodes, struts=[(0, 2)], cell_width=A, diameters={"lattice": D})
    with pytest.raises(InputError, match=r"nodes\[1\].*outside"):
        cell_from_lists(nodes=[(.2, .2, .2), (1.2, .5, .5)], struts=[(0, 1)], cell_width=A,
                        diameters={"lattice": D})
    with pytest.raises(InputError, match="zero length"):
        cell_from_lists(nodes=[(.2, .2, .2), (.8, .8, .8)], struts=[(0, 0)], cell_width=A,
                        diameters={"lattice": D})
    with pytest.raises(InputError, match="not periodic"):
        cell_from_lists(nodes=[(0, .5, .5), (.5, .5, .5)], struts=[(0, 1)], cell_width=A,
                        diameters={"lattice": D})
    with pytest.raises(InputError, match="no diameter"):
        cell_from_lists(nodes=ok_nodes, struts=[(0, 1)], cell_width=A, diameters={"frame": D})
    cell = build_cell("custom", cell_width=A, strut_diameter=D, nodes=Q_(np.array(ok_nodes) * 40, "mm"),
                      struts=[(0, 1)])
    assert_quantity_close(cell.strut_lengths[0], Q_(0.6 * 40 * math.sqrt(3), "mm"), rtol=RTOL_GEOMETRY)


def test_describe_cell_steps():
    cell = build_cell("bcc", cell_width=A, strut_diameter=D, frame_diameter=Q_(5, "mm"))
    res = describe_cell(cell)
    assert_quantity_close(res.step("cell.lattice.strut-length").result, Q_(40 * math.sqrt(3) / 2, "mm"),
                          rtol=RTOL_GEOMETRY)
    assert res.step("cell.lattice.struts-per-cell").result.magnitude == 8
    assert res.step("cell.frame.struts-per-cell").result.magnitude == 3
    assert res.step("cell.connectivity").result.magnitude == pytest.approx(11.0, rel=RTOL_GEOMETRY)
    assert "bending-dominated" in res.step("cell.connectivity").note
