"""Rigid node zones against the frequency equation of a beam carrying rigid bodies at its ends.

Reference: Laura, P. A. A., Pombo, J. L. & Susemihl, E. A., "A note on the vibrations of a
clamped-free beam with a mass at the free end", J. Sound Vib. 37 (1974) 161–168 [from memory: the
citation].  An Euler–Bernoulli beam (flexible length l, EI, ρA) carries at an end a rigid body of
mass m, first moment S and rotary inertia J about the point where it is attached; with
w = Σ cₖ {cos, sin, cosh, sinh}(β x), β⁴ = ρA ω²/EI, the natural boundary conditions at a free
end x = l are (Hamilton's principle)

    EI w''(l) = ω² (S w(l) + J w'(l)),       −EI w'''(l) = ω² (m w(l) + S w'(l)),

(at x = 0 the signs of the EI terms change), and the frequencies are the roots of the 4 × 4
determinant.  Laura et al. give the case S = 0 (a mass and rotary inertia at the free end); the
published check here is a tip mass equal to the beam's mass, J = 0: (β l)² = 1.557298,
16.25009, 50.89584, printed in Table 1 (column computed with the classical equation) of
"Frequency equation of flexural vibrating cantilever beam considering the rotary inertial moment
of an attached mass", Mathematical Problems in Engineering (2017), article 1568019 [secondary:
seen there].  The determinant below is first held to those figures.

A rigid node zone of length a at a free joint is such a body, offset from the beam's end:
m = ρA a, S = ±m a/2 (the zone lies beyond the end), J = m a²/3 (Euler–Bernoulli: no rotary
inertia of the section) [derived].  A joint pinned at the far end of its zone, x = −a, adds the
constraint w(0) − a w'(0) = 0 and leaves the moment about the pin,
−EI w''(0) − ω²(S w + J w') + a (EI w'''(0) − ω²(m w + S w')) = 0 [derived].  The frame model's
rigid offsets and zone masses (:mod:`latticecalc.physics.frame_fe`) are checked against these
equations for a cantilever, a free–free and a pinned–pinned strut with rigid end zones; the
clamped–clamped strut must give the clamped–clamped frequencies of its flexible length exactly.

Static check: the bending stiffness of a member with rigid end zones a, b and flexible length l,
k₁₁ = (4EI/l)(1 + 3a/l + 3a²/l²), k₁₂ = (2EI/l)(1 + 3(a + b)/l + 6ab/l²), is Hᵀ K H of the
flexible member's stiffness with the rigid offsets (derived; the same as the member with rigid
end zones in Weaver, W. & Gere, J. M., Matrix Analysis of Framed Structures, 3rd ed. (1990)
[from memory]).
"""

from __future__ import annotations

import math
from types import SimpleNamespace

import numpy as np
import pytest
import scipy.linalg as sla
from scipy.optimize import brentq

from latticecalc import Q_
from latticecalc.physics import frame_fe as fe

#: Published (β l)² of a cantilever with a tip mass equal to the beam's mass (MPE 2017, Table 1).
PUBLISHED_TIP_MASS = (1.557298, 16.25009, 50.89584)
RTOL_PUBLISHED = 2e-6          # the figures are printed to 7 significant digits
RTOL_FE = 2e-5                 # 32 Euler-Bernoulli elements against the exact roots
RTOL_STATIC = 1e-9             # static condensation is exact

E, RHO, D = 20e6, 1150.0, 0.02            # a soft polymer strut, SI
A_SEC, I_SEC = math.pi * D**2 / 4, math.pi * D**4 / 64
L_NODE = 0.6                              # node-to-node length, m


# --- the frequency equation -------------------------------------------------------------------------
def _basis(lam: float, x: float):
    c, s, ch, sh = math.cos(lam * x), math.sin(lam * x), math.cosh(lam * x), math.sinh(lam * x)
    w = np.array([c, s, ch, sh])
    d1 = lam * np.array([-s, c, sh, ch])
    d2 = lam**2 * np.array([-c, -s, ch, sh])
    d3 = lam**3 * np.array([s, -c, sh, ch])
    return w, d1, d2, d3


def _rows(end: str, joint: str, lam: float, body=(0.0, 0.0, 0.0), arm: float = 0.0):
    """Boundary rows at ``end`` (l = 1, EI = 1, ρA = 1, so ω² = λ⁴); body (m, S, J), pin arm a."""
    w, d1, d2, d3 = _basis(lam, 0.0 if end == "left" else 1.0)
    om2 = lam**4
    m, S, J = body
    if joint == "clamped":
        return [w, d1]
    sign = -1.0 if end == "left" else 1.0
    moment = sign * d2 - om2 * (S * w + J * d1)
    shear = -sign * d3 - om2 * (m * w + S * d1)
    if joint == "free":
        return [moment, shear]
    # pinned at the far end of the zone: w ∓ a w' = 0, and the moment about the pin
    return [w + sign * arm * d1, moment + sign * arm * shear * -1.0]


def _det(lam: float, left: tuple, right: tuple) -> float:
    A = np.array(_rows("left", left[0], lam, *left[1:]) + _rows("right", right[0], lam, *right[1:]))
    return float(np.linalg.det(A / np.abs(A).max(axis=1, keepdims=True)))


def roots(left: tuple, right: tuple, n: int = 3, hi: float = 16.0) -> np.ndarray:
    """First ``n`` positive roots λ = β l of the determinant (scanned, then refined by Brent)."""
    grid = np.linspace(0.05, hi, 8000)
    vals = np.array([_det(x, left, right) for x in grid])
    out = []
    for i in np.flatnonzero(np.sign(vals[:-1]) != np.sign(vals[1:])):
        out.append(brentq(lambda x: _det(x, left, right), grid[i], grid[i + 1], xtol=1e-14))
        if len(out) == n:
            break
    return np.array(out)


def zone_body(a: float, l_flex: float, side: str) -> tuple[float, float, float]:
    """(m, S, J) of a rigid zone of length a, over ρA l, ρA l², ρA l³ (EB: no section rotary inertia)."""
    r = a / l_flex
    return (r, (-1.0 if side == "left" else 1.0) * r**2 / 2.0, r**3 / 3.0)


def to_hz(lam: np.ndarray, l_flex: float) -> np.ndarray:
    return lam**2 / (2 * math.pi * l_flex**2) * math.sqrt(E * I_SEC / (RHO * A_SEC))


# --- the frame model ----------------------------------------------------------------------------------
def _section():
    cell = SimpleNamespace(groups=("lattice",), diameters={"lattice": Q_(D, "m")})
    mat = SimpleNamespace(youngs_modulus=Q_(E, "Pa"), poissons_ratio=0.45, density=Q_(RHO, "kg/m^3"))
    return fe.sections_for(cell, {"lattice": mat})["lattice"]


def fe_planar_frequencies(zones: tuple[float, float], joints: tuple[str, str], *, n_elements: int = 32) -> np.ndarray:
    """Bending frequencies (Hz) in the x–y plane of a strut along x with rigid end zones (EB elements).

    Only the in-plane DOFs (v, θz) are kept: with the strut along x they are uncoupled from the rest,
    zone masses included.  A joint is clamped (v, θz held), pinned (v held) or free.
    """
    model = fe.build_frame(nodes=np.array([[0.0, 0, 0], [L_NODE, 0, 0]]), struts=np.array([[0, 1]]),
                           groups=("lattice",), sections={"lattice": _section()}, n_elements=n_elements,
                           theory="euler-bernoulli", end_zones=np.array([zones]))
    n_nodes = model.mesh.nodes.shape[0]
    planar = np.sort(np.r_[6 * np.arange(n_nodes) + 1, 6 * np.arange(n_nodes) + 5])
    held = []
    for joint, node in zip(joints, (0, 1)):
        if joint in ("clamped", "pinned"):
            held.append(6 * node + 1)
        if joint == "clamped":
            held.append(6 * node + 5)
    keep = np.setdiff1d(planar, held)
    K = model.matrices.K[keep][:, keep].toarray()
    M = model.matrices.M[keep][:, keep].toarray()
    w2 = sla.eigh(K, M, eigvals_only=True)
    f = np.sqrt(np.clip(w2, 0.0, None)) / (2 * math.pi)
    rigid = 2 if joints == ("free", "free") else 0          # in-plane translation and rotation
    return f[rigid:]


# --- tests -------------------------------------------------------------------------------------------
def test_determinant_reproduces_the_published_tip_mass_frequencies():
    # Laura, Pombo & Susemihl (1974) [from memory]; figures: MPE (2017) Table 1 [secondary]
    lam = roots(("clamped",), ("free", (1.0, 0.0, 0.0)))
    np.testing.assert_allclose(lam**2, PUBLISHED_TIP_MASS, rtol=RTOL_PUBLISHED)


def test_determinant_without_bodies_gives_the_textbook_eigenvalues():
    # Rao (2017) Table 8.1: clamped-free 1.875104, free-free 4.730041, pinned-pinned π
    np.testing.assert_allclose(roots(("clamped",), ("free",), n=1), [1.875104], rtol=1e-6)
    np.testing.assert_allclose(roots(("free",), ("free",), n=1), [4.730041], rtol=1e-6)
    np.testing.assert_allclose(roots(("pinned", (0.0, 0.0, 0.0), 0.0), ("pinned", (0.0, 0.0, 0.0), 0.0), n=1),
                               [math.pi], rtol=1e-9)


@pytest.mark.parametrize("a", [0.03, 0.09])
def test_cantilever_with_a_rigid_zone_at_its_free_end(a):
    # the frame model against the frequency equation with the zone as a tip body [derived]
    l_flex = L_NODE - a
    lam = roots(("clamped",), ("free", zone_body(a, l_flex, "right")))
    f_fe = fe_planar_frequencies((0.0, a), ("clamped", "free"))[:3]
    np.testing.assert_allclose(f_fe, to_hz(lam, l_flex), rtol=RTOL_FE)
    # the zone's offset first moment matters: a point mass at the flexible end gives other values
    lam_point = roots(("clamped",), ("free", (a / l_flex, 0.0, 0.0)))
    assert abs(lam_point[0] / lam[0] - 1) > 1e-3


@pytest.mark.parametrize("zones", [(0.04, 0.04), (0.02, 0.07)])
def test_free_free_strut_with_rigid_end_zones(zones):
    a, b = zones
    l_flex = L_NODE - a - b
    lam = roots(("free", zone_body(a, l_flex, "left")), ("free", zone_body(b, l_flex, "right")))
    f_fe = fe_planar_frequencies(zones, ("free", "free"))[:3]
    np.testing.assert_allclose(f_fe, to_hz(lam, l_flex), rtol=RTOL_FE)
    # and the zones raise the frequency against the uniform free-free strut of the node-to-node length
    assert f_fe[0] > to_hz(np.array([4.730041]), L_NODE)[0]


@pytest.mark.parametrize("zones", [(0.04, 0.04), (0.02, 0.07)])
def test_pinned_pinned_strut_with_rigid_end_zones(zones):
    a, b = zones
    l_flex = L_NODE - a - b
    lam = roots(("pinned", zone_body(a, l_flex, "left"), a / l_flex),
                ("pinned", zone_body(b, l_flex, "right"), b / l_flex))
    f_fe = fe_planar_frequencies(zones, ("pinned", "pinned"))[:3]
    np.testing.assert_allclose(f_fe, to_hz(lam, l_flex), rtol=RTOL_FE)
    # between pinned over the node-to-node length and pinned over the flexible length
    assert to_hz(np.array([math.pi]), L_NODE)[0] < f_fe[0] < to_hz(np.array([math.pi]), l_flex)[0]


def test_clamped_clamped_strut_is_clamped_over_its_flexible_length():
    # the clamps hold the zones: exactly the clamped-clamped roots of the flexible length (Rao 2017 Table 8.1)
    a, b = 0.05, 0.03
    f_fe = fe_planar_frequencies((a, b), ("clamped", "clamped"))[:3]
    lam = np.array([4.730041, 7.853205, 10.995608])
    np.testing.assert_allclose(f_fe, to_hz(lam, L_NODE - a - b), rtol=RTOL_FE)


@pytest.mark.parametrize("zones", [(0.0, 0.0), (0.05, 0.0), (0.04, 0.09)])
def test_static_stiffness_of_a_member_with_rigid_end_zones(zones):
    # k11, k12, k22 of the member with rigid end zones (derived; Weaver & Gere 1990 [from memory])
    a, b = zones
    lf = L_NODE - a - b
    red = fe.reduce_struts(nodes=np.array([[0.0, 0, 0], [L_NODE, 0, 0]]), struts=np.array([[0, 1]]),
                           groups=("lattice",), sections={"lattice": _section()}, n_elements=4, n_modes=0,
                           theory="euler-bernoulli", end_zones=np.array([zones]))
    K = red.K_bb[0]
    ei = E * I_SEC
    k11 = 4 * ei / lf * (1 + 3 * a / lf + 3 * a**2 / lf**2)
    k22 = 4 * ei / lf * (1 + 3 * b / lf + 3 * b**2 / lf**2)
    k12 = 2 * ei / lf * (1 + 3 * (a + b) / lf + 6 * a * b / lf**2)
    np.testing.assert_allclose([K[5, 5], K[11, 11], K[5, 11]], [k11, k22, k12], rtol=RTOL_STATIC)
    # transverse: 12 EI / l³ unchanged by the offsets; axial EA / l over the flexible length
    np.testing.assert_allclose(K[1, 1], 12 * ei / lf**3, rtol=RTOL_STATIC)
    np.testing.assert_allclose(K[0, 0], E * A_SEC / lf, rtol=RTOL_STATIC)
