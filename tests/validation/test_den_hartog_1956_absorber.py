"""A host with one damped absorber: Den Hartog's fixed points, optimum tuning, and the receiver bound.

Reference: Den Hartog, J. P., *Mechanical Vibrations*, 4th ed. (1956), §3.2 (the undamped absorber:
the main mass stands still at the absorber's own frequency) and §3.3 (the damped absorber: the
response curves of every damping pass through two fixed points; with the optimum tuning
f_a/f_h = 1/(1 + μ) both lie at the height √(1 + 2/μ) times the static deflection; the optimum
damping ratio is √(3μ / (8 (1 + μ)³))).  The fixed points are where the undamped (ζ = 0) and the
rigidly attached (ζ → ∞) responses meet; with the absorber's damping written as a loss factor,
k_a (1 + iη), the response is (a + iηb)/(c + iηd) and meets both limits at the same two frequencies
(derived), so the fixed points are Den Hartog's.

The host and the absorber are built with the receiver's own assembly (``Entries`` and
``DynamicSystem``), the host's spring tied to a ground that moves, so the host's response over the
ground motion equals its response over the static deflection under the equivalent force.
Units: SI (kg, N/m, rad/s).
"""

import numpy as np
import pytest

from latticecalc.physics import receiver

#: the assembly is exact algebra; only round-off separates it from the closed forms
RTOL = 1e-9

M_HOST = 1000.0          # kg
K_HOST = 4.0e6           # N/m  (f_h = 10.07 Hz)


def host_with_absorber(mu: float, tuning: float, eta: float) -> receiver.DynamicSystem:
    """DOF 0: ground (prescribed); DOF 1: host; DOF 2: absorber mass."""
    m_a = mu * M_HOST
    k_a = tuning**2 * K_HOST / M_HOST * m_a
    ent = receiver.Entries()
    spring = np.array([[1.0, -1.0], [-1.0, 1.0]])
    ent.blocks(np.array([[0, 1], [1, 2]]), np.array([K_HOST * spring, k_a * spring]), np.zeros((2, 2, 2)),
               np.array([0.0, eta]))
    ent.blocks(np.array([[1], [2]]), np.zeros((2, 1, 1)), np.array([[[M_HOST]], [[m_a]]]), np.zeros(2))
    return receiver.DynamicSystem(ent, 3, prescribed=np.array([0]))


def host_amplitude(system, omega):
    return abs(system.solve(omega, np.array([[1.0]]))[1, 0])


def closed_form(mu, tuning, eta, g):
    """(a + iηb)/(c + iηd) of the host (over the static deflection), g = ω/ω_h (derived from §3.3's model)."""
    a = tuning**2 - g**2
    b = tuning**2
    c = (1 - g**2) * (tuning**2 - g**2) - mu * tuning**2 * g**2
    d = tuning**2 * (1 - g**2 - mu * g**2)
    return abs((a + 1j * eta * b) / (c + 1j * eta * d))


OMEGA_H = np.sqrt(K_HOST / M_HOST)


@pytest.mark.parametrize("mu", [0.01, 0.05, 0.2])
@pytest.mark.parametrize("eta", [0.02, 0.1, 0.5])
def test_response_matches_the_two_mass_closed_form(mu, eta):
    tuning = 1 / (1 + mu)                                    # Den Hartog 1956, §3.3 optimum tuning
    system = host_with_absorber(mu, tuning, eta)
    for g in (0.5, 0.9, 0.97, 1.0, 1.05, 1.3, 2.0):
        assert host_amplitude(system, g * OMEGA_H) == pytest.approx(closed_form(mu, tuning, eta, g), rel=RTOL)


@pytest.mark.parametrize("mu", [0.01, 0.05, 0.2])
def test_fixed_points_at_den_hartog_height_for_every_damping(mu):
    # Den Hartog 1956, §3.3: with f = 1/(1 + μ) the fixed points lie at g² = (1 ± √(μ/(2 + μ)))/(1 + μ),
    # both at √(1 + 2/μ), whatever the damping
    tuning = 1 / (1 + mu)
    height = np.sqrt(1 + 2 / mu)
    for g2 in ((1 - np.sqrt(mu / (2 + mu))) / (1 + mu), (1 + np.sqrt(mu / (2 + mu))) / (1 + mu)):
        for eta in (0.01, 0.1, 0.3, 2.0):
            system = host_with_absorber(mu, tuning, eta)
            assert host_amplitude(system, np.sqrt(g2) * OMEGA_H) == pytest.approx(height, rel=1e-8)
    # the kit's shown formula gives the same height
    assert float(receiver.DH_AMPLITUDE.evaluate({"mu": mu}).m) == pytest.approx(height, rel=1e-12)
    assert float(receiver.DH_TUNING.evaluate({"mu": mu}).m) == pytest.approx(tuning, rel=1e-12)


def test_optimum_damping_flattens_the_peaks_near_the_fixed_point_height():
    # Den Hartog 1956, §3.3: with the optimum (viscous) damping the largest response is close to the
    # fixed-point height; here the damping is a loss factor η = 2ζ, equal to it only at the absorber's
    # resonance, so the peak is allowed 5 % above the height (common practice for that equivalence)
    mu = 0.05
    zeta = float(receiver.DH_DAMPING.evaluate({"mu": mu}).m)
    assert zeta == pytest.approx(np.sqrt(3 * mu / (8 * (1 + mu) ** 3)), rel=1e-12)
    system = host_with_absorber(mu, 1 / (1 + mu), 2 * zeta)       # loss factor ≈ 2ζ at resonance
    g = np.linspace(0.7, 1.3, 4001)
    peak = max(host_amplitude(system, x * OMEGA_H) for x in g)
    assert np.sqrt(1 + 2 / mu) <= peak <= 1.05 * np.sqrt(1 + 2 / mu)


def test_undamped_absorber_stops_the_host_at_its_own_frequency():
    # Den Hartog 1956, §3.2: the main mass stands still at the absorber's natural frequency
    mu, tuning = 0.05, 1.1
    system = host_with_absorber(mu, tuning, 0.0)
    assert host_amplitude(system, tuning * OMEGA_H) < 1e-9
    assert host_amplitude(system, 0.8 * tuning * OMEGA_H) > 0.1


@pytest.mark.parametrize("eta_a", [0.05, 0.1, 0.3])
@pytest.mark.parametrize("eta_h", [0.01, 0.02, 0.05])
def test_bound_holds_for_any_tuning_and_frequency(eta_a, eta_h):
    # the receiver's bound: IL <= 20 log10(1 + μ √(1+η_a²) √(1+η_h²) / (η_a η_h)) (derived from the
    # two-mass model of Den Hartog 1956, §3.2, by the triangle inequality); checked by brute force
    mu = 0.02
    bound = float(receiver.IL_BOUND.evaluate({"mu": mu, "eta_a": eta_a, "eta_h": eta_h}).m)
    g = np.concatenate([np.linspace(0.5, 1.6, 221), np.linspace(0.95, 1.05, 101)])
    worst = -np.inf
    for tuning in (0.8, 0.95, 1.0, 1.05, 1.2):
        a = receiver.Entries()
        spring = np.array([[1.0, -1.0], [-1.0, 1.0]])
        m_a = mu * M_HOST
        k_a = tuning**2 * K_HOST / M_HOST * m_a
        a.blocks(np.array([[0, 1], [1, 2]]), np.array([K_HOST * spring, k_a * spring]), np.zeros((2, 2, 2)),
                 np.array([eta_h, eta_a]))
        a.blocks(np.array([[1], [2]]), np.zeros((2, 1, 1)), np.array([[[M_HOST]], [[m_a]]]), np.zeros(2))
        with_abs = receiver.DynamicSystem(a, 3, prescribed=np.array([0]))
        b = receiver.Entries()
        b.blocks(np.array([[0, 1]]), np.array([K_HOST * spring]), np.zeros((1, 2, 2)), np.array([eta_h]))
        b.blocks(np.array([[1]]), np.zeros((1, 1, 1)), np.array([[[M_HOST]]]), np.zeros(1))
        bare = receiver.DynamicSystem(b, 2, prescribed=np.array([0]))
        for x in g:
            w = x * OMEGA_H
            il = 20 * np.log10(host_amplitude(bare, w) / host_amplitude(with_abs, w))
            worst = max(worst, il)
    assert worst <= bound + 1e-9
    # and it is not loose by much at the host's resonance with the absorber tuned there
    assert worst >= bound - 3.0


def test_doubling_the_resonating_mass_never_lowers_the_bound():
    # common practice (a property of the bound): more resonating mass can only allow more
    mus = np.geomspace(1e-4, 1.0, 60)
    for eta_a in (0.02, 0.1, 0.3):
        for eta_h in (0.01, 0.05):
            b1 = receiver.IL_BOUND.evaluate({"mu": mus, "eta_a": eta_a, "eta_h": eta_h}).m
            b2 = receiver.IL_BOUND.evaluate({"mu": 2 * mus, "eta_a": eta_a, "eta_h": eta_h}).m
            assert np.all(b2 > b1)


def test_mass_ratio_solved_from_the_same_formulas():
    # derived (algebra): the needed mass ratios are the shown IL formulas solved for mu; put them back in
    for il in (3.0, 11.3, 20.0):
        mu_min = float(receiver.MASS_RATIO_FOR_BOUND.evaluate({"IL": il, "eta_a": 0.1, "eta_h": 0.02}).m)
        assert float(receiver.IL_BOUND.evaluate({"mu": mu_min, "eta_a": 0.1, "eta_h": 0.02}).m) == \
            pytest.approx(il, rel=1e-10)
        mu_req = float(receiver.MASS_RATIO_FOR_MASS_HOST.evaluate({"IL": il, "eta_a": 0.1}).m)
        assert float(receiver.IL_MASS_HOST.evaluate({"mu": mu_req, "eta_a": 0.1}).m) == pytest.approx(il, rel=1e-10)
        assert mu_req > 0 and mu_min > 0


def test_written_out_mass_ratios_are_sympys_positive_roots():
    # general-purpose reference library (sympy.solve): each written-out inverse is the one positive root of its IL
    # formula solved for mu (all symbols positive), compared at several loss factors and required losses
    import sympy as sym

    for formula, inverse, points in ((receiver.IL_BOUND, receiver.MASS_RATIO_FOR_BOUND,
                                      ({"eta_a": 0.1, "eta_h": 0.02}, {"eta_a": 0.3, "eta_h": 0.05})),
                                     (receiver.IL_MASS_HOST, receiver.MASS_RATIO_FOR_MASS_HOST,
                                      ({"eta_a": 0.1}, {"eta_a": 0.25}))):
        pos = {s: sym.Symbol(s.name, positive=True) for s in formula.expr.free_symbols}
        mu = next(p for s, p in pos.items() if s.name == "mu")
        il = sym.Symbol("IL", positive=True)
        roots = sym.solve(sym.Eq(il, formula.expr.subs(pos)), mu)
        for point in points:
            for required in (3.0, 11.3, 20.0):
                at = {il: required, **{p: point[s.name] for s, p in pos.items() if s.name in point}}
                values = [complex(r.subs(at).evalf()) for r in roots]
                positive = [v.real for v in values if v.real > 0 and abs(v.imag) < 1e-12]
                assert len(positive) == 1
                ours = float(inverse.evaluate({"IL": required, **point}).m)
                assert ours == pytest.approx(positive[0], rel=1e-10)
