"""The per-strut reduction (Craig & Bampton 1968) against the same condensation done on the assembled mesh.

Craig, R. R. & Bampton, M. C. C., "Coupling of substructures for dynamic analyses", AIAA Journal 6(7),
1313–1319 (1968), eqs. 4–8: static constraint modes ψ = −K_ii⁻¹ K_ib and fixed-interface modes
K_ii φ = ω² M_ii φ; the reduced stiffness of the boundary is K_bb + K_bi ψ.  The rotation of each strut
to global axes is written as matrix products; here the reduction is recomputed on the globally
assembled mesh of a few inclined struts, so the two paths share no rotation code.
"""

from __future__ import annotations

import numpy as np
import pytest

from latticecalc.physics import frame_fe as fe

RTOL_SAME_ALGEBRA = 1e-12    # the same linear algebra in other axes: round-off only
RTOL_RECOVERY = 1e-9         # ψ solves with K_ii (condition ~1e8 at 16 elements): round-off of that solve


def _circle(d, E, nu, rho, eta):
    # solid circle: A = πd²/4, I = πd⁴/64, J = 2I; κ = 0.9 near Cowper (1966) for a circle [from memory]
    area, inertia = np.pi * d**2 / 4, np.pi * d**4 / 64
    return fe.Section(E=E, G=E / (2 * (1 + nu)), rho=rho, d=d, nu=nu, A=area, I=inertia, J=2 * inertia, kappa=0.9,
                      eta=eta)


def _frame():
    nodes = np.array([[0.0, 0.0, 0.0], [0.03, 0.01, 0.02], [0.0, 0.04, 0.01], [0.02, 0.0, 0.05]])
    struts = np.array([[0, 1], [1, 2], [2, 3], [3, 0]])
    groups = ("lattice", "lattice", "frame", "lattice")
    sections = {"lattice": _circle(2.5e-3, 20e6, 0.48, 1200.0, 0.1), "frame": _circle(6e-3, 3.3e9, 0.36, 1240.0, 0.03)}
    return nodes, struts, groups, sections


@pytest.mark.parametrize("n_elements", [4, 16])
def test_reduction_equals_condensation_of_the_assembled_strut(n_elements):
    nodes, struts, groups, sections = _frame()
    red = fe.reduce_struts(nodes=nodes, struts=struts, groups=groups, sections=sections, n_elements=n_elements,
                           n_modes=6)
    for s in range(len(struts)):
        # the strut alone, meshed and assembled in global axes
        one = fe.build_frame(nodes=nodes, struts=struts[s:s + 1], groups=groups[s:s + 1], sections=sections,
                             n_elements=n_elements)
        d = (6 * one.mesh.strut_nodes(0)[:, None] + np.arange(6)).ravel()
        Kss = one.matrices.K.toarray()[np.ix_(d, d)]
        Mss = one.matrices.M.toarray()[np.ix_(d, d)]
        b, i = np.r_[0:6, d.size - 6:d.size], np.arange(6, d.size - 6)
        Kii, Mii = Kss[np.ix_(i, i)], Mss[np.ix_(i, i)]
        psi = -np.linalg.solve(Kii, Kss[np.ix_(i, b)])
        K_bb = Kss[np.ix_(b, b)] + Kss[np.ix_(b, i)] @ psi
        np.testing.assert_allclose(red.K_bb[s], K_bb, rtol=0, atol=RTOL_SAME_ALGEBRA * np.abs(K_bb).max())
        np.testing.assert_allclose(red.psi[s], psi, rtol=0, atol=RTOL_RECOVERY * np.abs(psi).max())
        # fixed-interface modes: M_ii-orthonormal and K_ii-diagonal in global axes (eq. 5)
        phi, w2 = red.phi[s], red.omega2[s]
        k = red.n_modes   # 6 asked for; 7 where the 6th and 7th are one repeated frequency
        assert k >= 6 and w2.shape == (k,)
        np.testing.assert_allclose(phi.T @ Mii @ phi, np.eye(k), rtol=0, atol=1e-9)
        np.testing.assert_allclose(phi.T @ Kii @ phi, np.diag(w2), rtol=0, atol=1e-9 * w2.max())
        np.testing.assert_allclose(np.sort(w2), np.sort(np.linalg.eigvals(np.linalg.solve(Mii, Kii)).real)[:k],
                                   rtol=1e-9, atol=0)


def test_kept_modes_never_split_a_repeated_frequency():
    """A round strut bends alike in its two planes: its bending frequencies come in equal pairs, and an
    eigensolver returns any basis of each pair's plane.  Keeping one of a pair kept an arbitrary direction,
    and a coupled result moved in its third digit when a diameter moved by 1e-9 (the added-mass sweep).
    The reduction keeps whole pairs (common practice for repeated eigenvalues)."""
    nodes, struts, groups, sections = _frame()
    raised = []
    for asked in range(1, 13):
        red = fe.reduce_struts(nodes=nodes, struts=struts, groups=groups, sections=sections, n_elements=8,
                               n_modes=asked)
        w2 = red.omega2
        assert red.n_modes >= asked and w2.shape[1] == red.n_modes
        every = fe.reduce_struts(nodes=nodes, struts=struts, groups=groups, sections=sections, n_elements=8,
                                 n_modes=42).omega2
        if red.n_modes < every.shape[1]:   # the first mode left out is not the twin of the last one kept
            assert np.all(every[:, red.n_modes] - every[:, red.n_modes - 1]
                          > fe.REPEATED_MODE_RTOL * every[:, red.n_modes])
        if red.n_modes > asked:            # modes were added only to close a pair
            assert np.any(np.isclose(every[:, asked], every[:, asked - 1], rtol=fe.REPEATED_MODE_RTOL))
            raised.append(asked)
    assert raised   # the frame's struts have repeated frequencies, so some counts were raised


def test_closed_mode_count_by_hand():
    w = [np.array([1.0, 1.0, 2.0, 3.0, 3.0, 3.0, 4.0])]
    assert [fe.closed_mode_count(w, m) for m in range(0, 8)] == [0, 2, 2, 3, 6, 6, 6, 7]
    # two strut kinds: the count closes both
    assert fe.closed_mode_count([np.array([1.0, 2.0, 3.0]), np.array([1.0, 1.0, 5.0])], 1) == 2
