"""Huang, H. H., Sun, C. T. & Huang, G. L., "On the negative effective mass density in acoustic
metamaterials", Int. J. Eng. Sci. 47 (2009) 610–617: the mass-in-mass chain (outer masses m₁
joined by springs k₁, inner masses m₂ on springs k₂) has the dispersion relation

    m₁ m₂ ω⁴ − [(m₁ + m₂) k₂ + 2 k₁ (1 − cos qL) m₂] ω² + 2 k₁ k₂ (1 − cos qL) = 0,

(equivalently m_eff ω² = 2k₁(1 − cos qL), m_eff = m₁ + m₂ω₀²/(ω₀² − ω²), ω₀² = k₂/m₂).  The gap
runs from the acoustic branch at qL = π to the optical branch at q = 0, ω₀ √(1 + m₂/m₁)
[derived from the relation].

The kit's Bloch operator (the same code that reduces the lattice cells) is applied to one cell
of the chain with the image of the outer mass explicit, as in a lattice cell.
"""

from __future__ import annotations

import math

import numpy as np

from latticecalc.physics import bloch

RTOL_EXACT = 1e-10        # the discrete chain is solved exactly: round-off only

M1, M2, K1, K2, L = 1.0, 0.5, 1.0e4, 2.0e3, 0.1


def chain_operator() -> bloch.BlochOperator:
    # full DOFs: outer mass at x = 0, its image at x = L, inner mass; masters: outer, inner
    K = np.array([[K1 + K2, -K1, -K2], [-K1, K1, 0.0], [-K2, 0.0, K2]])
    M = np.diag([M1, 0.0, M2])
    offsets = np.array([[0.0, 0, 0], [L, 0, 0], [0.0, 0, 0]])
    return bloch.BlochOperator(K=K, M=M, dof_master=np.array([0, 0, 1]), dof_offset=offsets, n_reduced=2)


def exact_w2(qL: float) -> np.ndarray:
    c = 2 * K1 * (1 - math.cos(qL))
    a, b, cc = M1 * M2, -((M1 + M2) * K2 + c * M2), c * K2
    disc = math.sqrt(b * b - 4 * a * cc)
    return np.array([(-b - disc) / (2 * a), (-b + disc) / (2 * a)])


def test_branches_match_the_dispersion_relation():
    op = chain_operator()
    for qL in (0.3, 1.0, 2.2, math.pi):
        w2 = op.solve(np.array([qL / L, 0, 0]), 2)
        np.testing.assert_allclose(w2, exact_w2(qL), rtol=RTOL_EXACT, atol=1e-9)


def test_gap_edges():
    op = chain_operator()
    f = np.array([np.sqrt(op.solve(np.array([q / L, 0, 0]), 2)) / (2 * math.pi)
                  for q in np.linspace(0, math.pi, 61)])
    lo, hi, below = bloch.find_gaps(f)[0]
    w0 = math.sqrt(K2 / M2)
    np.testing.assert_allclose(hi * 2 * math.pi, w0 * math.sqrt(1 + M2 / M1), rtol=RTOL_EXACT)
    np.testing.assert_allclose(lo * 2 * math.pi, math.sqrt(exact_w2(math.pi)[0]), rtol=RTOL_EXACT)
    assert lo * 2 * math.pi < w0      # lower edge just below the inner resonance (Huang et al. 2009)
