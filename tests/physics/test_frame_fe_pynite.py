"""A small 3D frame solved by the kit's FE model and by an independent general-purpose FE library.

Independent library: PyNiteFEA (``Pynite``), 3D frame static analysis with Euler–Bernoulli
members (tested with PyNiteFEA 3.2.0, on PyPI).  It is an optional test extra; this module skips
where it will not import.  The kit's model is run with ``theory="euler-bernoulli"`` so both use
the same beam theory.
"""

from __future__ import annotations

import importlib.metadata
import math
from types import SimpleNamespace

import numpy as np
import pytest

from latticecalc import Q_
from latticecalc.physics import frame_fe as fe

pynite = pytest.importorskip("Pynite", reason="PyNiteFEA is not installed (optional test extra)")

RTOL_LIBRARY = 1e-6          # two linear static solutions of the same model: round-off level
PYNITE_VERSION = importlib.metadata.version("PyNiteFEA")

E, NU, RHO, D = 3.3e9, 0.36, 1240.0, 0.004
NODES = np.array([[0.0, 0, 0], [0.04, 0, 0], [0.04, 0.04, 0], [0, 0.04, 0],
                  [0.0, 0, 0.04], [0.04, 0, 0.04], [0.04, 0.04, 0.04], [0, 0.04, 0.04], [0.02, 0.02, 0.06]])
STRUTS = np.array([[0, 4], [1, 5], [2, 6], [3, 7], [4, 5], [5, 6], [6, 7], [7, 4], [4, 6], [4, 8], [6, 8],
                   [5, 8], [0, 6]])
LOADS = {8: (30.0, -20.0, -50.0), 6: (0.0, 15.0, 0.0)}      # N at nodes


def kit_displacements() -> np.ndarray:
    cell = SimpleNamespace(nodes=Q_(NODES, "m"), struts=STRUTS, groups=("s",) * len(STRUTS),
                           diameters={"s": Q_(D, "m")})
    mat = SimpleNamespace(youngs_modulus=Q_(E, "Pa"), poissons_ratio=NU, density=Q_(RHO, "kg/m^3"))
    model = fe.frame_model(cell, materials={"s": mat}, n_elements=1, theory="euler-bernoulli")
    loads = np.zeros(model.n_dofs)
    for node, (fx, fy, fz) in LOADS.items():
        loads[6 * node:6 * node + 3] = (fx, fy, fz)
    fixed = np.arange(24)                       # nodes 0-3 fully fixed
    u = fe.static_solve(model, fixed_dofs=fixed, loads=loads)
    return u.reshape(-1, 6)[: len(NODES), :3]


def pynite_displacements() -> np.ndarray:
    m = pynite.FEModel3D()
    for i, (x, y, z) in enumerate(NODES):
        m.add_node(f"N{i}", float(x), float(y), float(z))
    m.add_material("pla", E, E / (2 * (1 + NU)), NU, RHO)
    area, second = math.pi * D**2 / 4, math.pi * D**4 / 64
    m.add_section("rod", area, second, second, 2 * second)
    for k, (i, j) in enumerate(STRUTS):
        m.add_member(f"M{k}", f"N{i}", f"N{j}", "pla", "rod")
    for i in range(4):
        m.def_support(f"N{i}", True, True, True, True, True, True)
    for node, (fx, fy, fz) in LOADS.items():
        for name, val in zip(("FX", "FY", "FZ"), (fx, fy, fz)):
            if val:
                m.add_node_load(f"N{node}", name, val)
    m.analyze_linear()
    out = np.zeros((len(NODES), 3))
    for i in range(len(NODES)):
        n = m.nodes[f"N{i}"]
        out[i] = (n.DX["Combo 1"], n.DY["Combo 1"], n.DZ["Combo 1"])
    return out


def test_small_frame_matches_pynite():
    ours = kit_displacements()
    theirs = pynite_displacements()
    scale = np.abs(theirs).max()
    assert scale > 0
    np.testing.assert_allclose(ours, theirs, rtol=0, atol=RTOL_LIBRARY * scale,
                               err_msg=f"against PyNiteFEA {PYNITE_VERSION}")
