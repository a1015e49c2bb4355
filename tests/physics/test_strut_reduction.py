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
        np.testing.assert_allclose(phi.T @ Mii @ phi, np.eye(6), rtol=0, atol=1e-9)
        np.testing.assert_allclose(phi.T @ Kii @ phi, np.diag(w2), rtol=0, atol=1e-9 * w2.max())
        np.testing.assert_allclose(np.sort(w2), np.sort(np.linalg.eigvals(np.linalg.solve(Mii, Kii)).real)[:6],
                                   rtol=1e-9, atol=0)
