"""Timoshenko frequencies of the determinant solver against an independent finite-element solution.

The finite-element model is written here, apart from the kit: two-node Timoshenko beam elements
with linear interpolation of deflection and rotation, one-point (reduced) integration of the shear
energy against shear locking, consistent translational and rotary mass (Hughes, *The Finite
Element Method*, 1987, §5.3; reduced integration: Zienkiewicz, Taylor & Too 1971) [from memory].
The element converges at O(h²) in frequency; the test fits that rate on three meshes
(np.polyfit of log error against log h) and checks the extrapolated value.
"""

import math

import numpy as np
import pytest
from scipy.linalg import eigh

from latticecalc import Q_
from latticecalc.physics import beams

E, RHO, NU = 20e6, 1150.0, 0.48
L, D = 0.04, 0.006
A, IZ = math.pi * D**2 / 4, math.pi * D**4 / 64
G, KAPPA = E / (2 * (1 + NU)), 6 * (1 + NU) / (7 + 6 * NU)

#: observed convergence rate of the linear element with reduced shear integration
RATE_ATOL = 0.1
#: Richardson-extrapolated FE value against the determinant root
EXTRAPOLATED_RTOL = 2e-5


def _fe_frequencies(supports, n_el, modes=3):
    h = L / n_el
    ndof = 2 * (n_el + 1)
    K, M = np.zeros((ndof, ndof)), np.zeros((ndof, ndof))
    kb = E * IZ / h * np.array([[0, 0, 0, 0], [0, 1, 0, -1], [0, 0, 0, 0], [0, -1, 0, 1]])
    bs = np.array([-1 / h, -0.5, 1 / h, -0.5])
    ks = KAPPA * G * A * h * np.outer(bs, bs)
    m2 = h / 6 * np.array([[2, 1], [1, 2]])
    me = np.zeros((4, 4))
    me[np.ix_([0, 2], [0, 2])] = RHO * A * m2
    me[np.ix_([1, 3], [1, 3])] = RHO * IZ * m2
    for e in range(n_el):
        idx = np.arange(2 * e, 2 * e + 4)
        K[np.ix_(idx, idx)] += kb + ks
        M[np.ix_(idx, idx)] += me
    fixed = {"clamped": (0, 1), "pinned": (0,), "free": ()}
    left, right = supports.split("-")
    drop = [i for i in fixed[left]] + [ndof - 2 + i for i in fixed[right]]
    keep = [i for i in range(ndof) if i not in drop]
    w2 = eigh(K[np.ix_(keep, keep)], M[np.ix_(keep, keep)], eigvals_only=True, subset_by_index=[0, modes - 1])
    return np.sqrt(w2) / (2 * math.pi)


@pytest.mark.parametrize("supports", ["clamped-clamped", "clamped-pinned", "clamped-free", "pinned-pinned"])
def test_determinant_roots_match_converged_fe(supports):
    exact = np.array([beams.bending_frequency(length=Q_(L, "m"), diameter=Q_(D, "m"), youngs_modulus=Q_(E, "Pa"),
                                              density=Q_(RHO, "kg/m^3"), supports=supports, mode=m,
                                              theory="timoshenko", poissons_ratio=NU).value.to("Hz").magnitude
                      for m in (1, 2, 3)])
    meshes = (40, 80, 160)
    fe = [_fe_frequencies(supports, n) for n in meshes]
    h = np.array([L / n for n in meshes])
    for mode in range(3):
        err = np.array([abs(f[mode] - exact[mode]) / exact[mode] for f in fe])
        rate = np.polyfit(np.log(h), np.log(err), 1)[0]
        assert rate == pytest.approx(2.0, abs=RATE_ATOL)
        extrapolated = (4 * fe[2][mode] - fe[1][mode]) / 3  # Richardson, O(h²)
        assert extrapolated == pytest.approx(exact[mode], rel=EXTRAPOLATED_RTOL)
