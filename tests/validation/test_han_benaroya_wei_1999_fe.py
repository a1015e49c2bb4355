"""Han, S. M., Benaroya, H. & Wei, T., "Dynamics of transversely vibrating beams using four
engineering theories", J. Sound Vib. 225 (1999) 935–988: the Timoshenko pinned–pinned frequency
equation, with k = nπ/L,

    E I k⁴ − [ρ A + ρ I k² (1 + E/(κ G))] ω² + (ρ² I/(κ G)) ω⁴ = 0   (lower root),

and κ = 6(1 + ν)/(7 + 6ν) for a solid circle (Cowper, J. Appl. Mech. 33 (1966) 335–340).

A stocky strut (L/d = 4) meshed by the frame model (Timoshenko elements) is compared with the
closed form; the Euler–Bernoulli value is shown to be far off so the check has teeth.
"""

from __future__ import annotations

import math
from types import SimpleNamespace

import numpy as np
import pytest
from tests.helpers import assert_quantity_close

from latticecalc import Q_
from latticecalc.physics import frame_fe as fe

RTOL_FE_N8 = 2e-3         # 8 elements, stocky strut
RTOL_FE_N16 = 5e-4        # 16 elements
MIN_SHEAR_EFFECT = 0.05   # the Timoshenko value is at least 5 % below Euler-Bernoulli here

E, NU, RHO = 3.3e9, 0.36, 1240.0       # PLA-like, SI
L, D = 0.04, 0.01                      # L/d = 4


def closed_form(n: int) -> float:
    """Lower root of the Han, Benaroya & Wei (1999) pinned-pinned equation, Hz."""
    G = E / (2 * (1 + NU))
    kappa = 6 * (1 + NU) / (7 + 6 * NU)
    A, I2 = math.pi * D**2 / 4, math.pi * D**4 / 64
    k = n * math.pi / L
    a = RHO**2 * I2 / (kappa * G)
    b = -(RHO * A + RHO * I2 * k**2 * (1 + E / (kappa * G)))
    c = E * I2 * k**4
    w2 = (-b - math.sqrt(b * b - 4 * a * c)) / (2 * a)
    return math.sqrt(w2) / (2 * math.pi)


def pinned_pinned_fe(n_elements: int, mode: int) -> float:
    cell = SimpleNamespace(nodes=Q_(np.array([[0.0, 0, 0], [L, 0, 0]]), "m"), struts=np.array([[0, 1]]),
                           groups=("s",), diameters={"s": Q_(D, "m")})
    mat = SimpleNamespace(youngs_modulus=Q_(E, "Pa"), poissons_ratio=NU, density=Q_(RHO, "kg/m^3"))
    model = fe.frame_model(cell, materials={"s": mat}, n_elements=n_elements, theory="timoshenko")
    # node 0: all translations and the twist held; node 1 (end of the strut): the two transverse
    # translations held; bending rotations free at both ends (pinned-pinned)
    held = [0, 1, 2, 3, 6 + 1, 6 + 2]
    free = np.setdiff1d(fe.used_dofs(model.mesh), held)
    K = model.matrices.K[free][:, free]
    M = model.matrices.M[free][:, free]
    w2, _ = fe.lowest_modes(K, M, 8)
    f = np.sqrt(w2) / (2 * np.pi)
    bending = f[np.abs(f - closed_form(mode)) < 0.2 * closed_form(mode)]
    return float(bending[0])


@pytest.mark.parametrize(("n_elements", "rtol"), [(8, RTOL_FE_N8), (16, RTOL_FE_N16)])
def test_stocky_pinned_strut_first_mode(n_elements, rtol):
    assert_quantity_close(Q_(pinned_pinned_fe(n_elements, 1), "Hz"), Q_(closed_form(1), "Hz"), rtol=rtol)


def test_shear_effect_is_large_for_this_strut():
    # Euler-Bernoulli pinned-pinned: f = (π/L)² sqrt(EI/ρA)/(2π) (Rao 2017, Table 8.1)
    f_eb = (math.pi / L) ** 2 * math.sqrt(E * (math.pi * D**4 / 64) / (RHO * math.pi * D**2 / 4)) / (2 * math.pi)
    assert closed_form(1) < (1 - MIN_SHEAR_EFFECT) * f_eb
