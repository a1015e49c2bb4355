"""Hollow circular sections (tubes): properties, Cowper's shear coefficient, the cell, mass and FE.

Tube of outer diameter D and inner diameter d_i: A = π(D² − d_i²)/4, I = π(D⁴ − d_i⁴)/64, J = 2I
(Young & Budynas, Roark's Formulas for Stress and Strain, 7th ed. (2002), Table A.1 [from memory]);
Cowper's shear coefficient of the hollow circle, m = d_i / D,
κ = 6(1 + ν)(1 + m²)² / ((7 + 6ν)(1 + m²)² + (20 + 12ν) m²) (Cowper, G. R., J. Appl. Mech. 33
(1966) 335–340, Table 1 [from memory]).
"""

from __future__ import annotations

import math
import warnings
from types import SimpleNamespace

import numpy as np
import pytest
import sympy as sp
from scipy.integrate import dblquad
from scipy.stats import qmc
from tests.helpers import assert_quantity_close

from latticecalc import Q_, materials
from latticecalc.errors import InputError
from latticecalc.physics import frame_fe as fe
from latticecalc.physics import panel
from latticecalc.physics.beams import (
    AREA_CIRCLE,
    AREA_TUBE,
    COWPER_CIRCLE,
    COWPER_TUBE,
    POLAR_MOMENT_TUBE,
    SECOND_MOMENT_CIRCLE,
    SECOND_MOMENT_TUBE,
    bending_frequency,
    circular_section,
    section_bending_frequency,
    tube_section,
)
from latticecalc.physics.cells import SlendernessWarning, build_cell, describe_cell
from latticecalc.physics.density import _point_segment_distance, panel_mass, relative_density
from latticecalc.physics.selfweight import euler_buckling_load, panel_self_weight

RTOL_EXACT = 1e-12
RTOL_QUAD = 1e-9
RTOL_FE_STATIC = 1e-9       # tip loads on a cantilever: the interdependent Timoshenko element is exact
RTOL_SAMPLED = 3e-3         # geometric density of tubes against plain quasi-Monte Carlo (2^17 points;
                            # measured 1e-3 at 2^16, 6e-5 at 2^18)

D, T = Q_(8, "mm"), Q_(1, "mm")           # the 8 × 6 mm tube of the verdict
AL = materials.get("al-6061-t6")
PU = materials.get("pu-elastomer-cast")


# --- section properties ---------------------------------------------------------------------------
def test_tube_is_a_solid_circle_less_its_bore():
    # Roark Table A.1 [from memory]: the hollow circle is the outer solid circle minus the inner one
    d_i = Q_(6, "mm")
    assert_quantity_close(AREA_TUBE.evaluate({"D": D, "d_i": d_i}),
                          AREA_CIRCLE.evaluate({"d": D}) - AREA_CIRCLE.evaluate({"d": d_i}), rtol=RTOL_EXACT)
    assert_quantity_close(SECOND_MOMENT_TUBE.evaluate({"D": D, "d_i": d_i}),
                          SECOND_MOMENT_CIRCLE.evaluate({"d": D}) - SECOND_MOMENT_CIRCLE.evaluate({"d": d_i}),
                          rtol=RTOL_EXACT)


def test_tube_properties_by_integration():
    # A = ∫∫ dA, I = ∫∫ y² dA, J = ∫∫ r² dA over the annulus in polar coordinates (definitions;
    # J = I_y + I_z = 2I by the perpendicular-axis theorem, Roark Table A.1 [from memory])
    ro, ri = 4.0, 3.0
    area, _ = dblquad(lambda r, t: r, 0, 2 * math.pi, ri, ro, epsabs=0, epsrel=1e-12)
    second, _ = dblquad(lambda r, t: (r * math.sin(t)) ** 2 * r, 0, 2 * math.pi, ri, ro, epsabs=0, epsrel=1e-12)
    polar, _ = dblquad(lambda r, t: r**3, 0, 2 * math.pi, ri, ro, epsabs=0, epsrel=1e-12)
    vals = {"D": Q_(2 * ro, "mm"), "d_i": Q_(2 * ri, "mm")}
    assert_quantity_close(AREA_TUBE.evaluate(vals), Q_(area, "mm^2"), rtol=RTOL_QUAD)
    assert_quantity_close(SECOND_MOMENT_TUBE.evaluate(vals), Q_(second, "mm^4"), rtol=RTOL_QUAD)
    assert_quantity_close(POLAR_MOMENT_TUBE.evaluate(vals), Q_(polar, "mm^4"), rtol=RTOL_QUAD)
    assert_quantity_close(POLAR_MOMENT_TUBE.evaluate(vals), 2 * SECOND_MOMENT_TUBE.evaluate(vals), rtol=RTOL_EXACT)


def test_eight_by_six_tube_against_the_solid_rod():
    # the verdict's figures: an 8 × 6 mm tube has 0.4375 × the area and 0.68 × the second moment of a
    # solid 8 mm rod (1 − (6/8)² = 0.4375, 1 − (6/8)⁴ = 0.68359) [derived from Roark Table A.1]
    tube = circular_section(diameter=D, wall_thickness=T, id_prefix="t")
    rod = circular_section(diameter=D, id_prefix="r")
    assert tube.shape == "tube" and rod.shape == "circle"
    assert (tube.area / rod.area).to("").magnitude == pytest.approx(0.4375, rel=RTOL_EXACT)
    assert (tube.second_moment / rod.second_moment).to("").magnitude == pytest.approx(0.68359375, rel=RTOL_EXACT)
    assert round(float((tube.second_moment / rod.second_moment).to("").magnitude), 2) == 0.68
    assert [s.id for s in tube.steps] == ["t.inner-diameter", "t.area", "t.second-moment", "t.diameter-ratio"]
    assert_quantity_close(tube.step("t.inner-diameter").result, Q_(6, "mm"), rtol=RTOL_EXACT)
    assert tube.diameter_ratio.to("").magnitude == pytest.approx(0.75, rel=RTOL_EXACT)


@pytest.mark.parametrize("nu", [0.0, 0.25, 0.3, 0.33, 0.48])
def test_cowper_tube_at_m_zero_is_the_solid_circle(nu):
    # Cowper (1966) Table 1: the hollow-circle entry with m = 0 is the solid circle 6(1 + ν)/(7 + 6ν)
    assert_quantity_close(COWPER_TUBE.evaluate({"nu": Q_(nu, ""), "m": Q_(0.0, "")}),
                          COWPER_CIRCLE.evaluate({"nu": Q_(nu, "")}), rtol=RTOL_EXACT)


def test_cowper_tube_thin_wall_limit():
    # Cowper (1966) Table 1, thin-walled round tube: κ = 2(1 + ν)/(4 + 3ν) [from memory], the m → 1 limit
    nu, m = sp.symbols("nu m")
    expr = COWPER_TUBE.expr.subs({sp.Symbol("nu"): nu, sp.Symbol("m"): m})
    assert sp.simplify(sp.limit(expr, m, 1) - 2 * (1 + nu) / (4 + 3 * nu)) == 0
    for v in (0.0, 0.3, 0.5):
        assert float(COWPER_TUBE.evaluate({"nu": Q_(v, ""), "m": Q_(1.0, "")}).magnitude) == pytest.approx(
            2 * (1 + v) / (4 + 3 * v), rel=RTOL_EXACT)
    # ν = 0.3: the thin tube 0.5306 against the solid circle 0.8864 (Cowper 1966 Table 1 [from memory])
    assert float(COWPER_TUBE.evaluate({"nu": Q_(0.3, ""), "m": Q_(1.0, "")}).magnitude) == pytest.approx(0.5306,
                                                                                                      abs=5e-5)


def test_cowper_tube_falls_from_solid_to_thin_wall():
    # κ decreases monotonically with m (more of the shear taken near the neutral axis) [derived]
    m = np.linspace(0.0, 1.0, 101)
    k = COWPER_TUBE.evaluate({"nu": Q_(0.3, ""), "m": Q_(m, "")}).magnitude
    assert np.all(np.diff(k) < 0)


def test_tube_bending_frequency_uses_the_tube_section():
    # f = λ²/(2π L²) √(EI/(ρA)) (Rao 2017 eq. 8.82) with the tube's I and A; Timoshenko with Cowper's tube κ
    tube = tube_section(outer_diameter=D, wall_thickness=T)
    f = section_bending_frequency(length=Q_(200, "mm"), section=tube, youngs_modulus=AL.youngs_modulus,
                                  density=AL.density, supports="pinned-pinned")
    i, a = math.pi * (8**4 - 6**4) / 64, math.pi * (8**2 - 6**2) / 4
    expected = math.pi / (2 * 0.2**2) * math.sqrt(AL.youngs_modulus.to("Pa").m * i * 1e-12
                                                  / (AL.density.to("kg/m^3").m * a * 1e-6))
    assert_quantity_close(f.value, Q_(expected, "Hz"), rtol=RTOL_EXACT)
    ft = section_bending_frequency(length=Q_(200, "mm"), section=tube, youngs_modulus=AL.youngs_modulus,
                                   density=AL.density, supports="pinned-pinned", theory="timoshenko",
                                   poissons_ratio=AL.poissons_ratio)
    kappa = ft.step("strut.shear-coefficient")
    assert kappa.source.locator.startswith("Table 1, hollow circle")
    assert float(kappa.result.magnitude) == pytest.approx(
        float(COWPER_TUBE.evaluate({"nu": AL.poissons_ratio, "m": Q_(0.75, "")}).magnitude), rel=RTOL_EXACT)
    # against the solid 8 mm rod: f ∝ √(I/A), and I/A of the tube is (D² + d_i²)/16, so 1.25 × [derived]
    rod = bending_frequency(length=Q_(200, "mm"), diameter=D, youngs_modulus=AL.youngs_modulus,
                            density=AL.density, supports="pinned-pinned")
    assert (f.value / rod.value).to("").magnitude == pytest.approx(1.25, rel=RTOL_EXACT)


# --- the cell ----------------------------------------------------------------------------------------
def _framed(d=D):
    return build_cell("octet", cell_width=Q_(40, "mm"), strut_diameter=Q_(3, "mm"), frame_diameter=d)


def test_cell_carries_wall_thickness_per_group():
    cell = _framed()
    assert not cell.is_hollow("frame") and cell.wall_thickness("frame") is None
    assert cell.inner_diameter("frame").to("m").magnitude == 0.0
    tube = cell.with_wall_thicknesses(frame=T)
    assert tube.is_hollow("frame") and not tube.is_hollow("lattice")
    assert_quantity_close(tube.inner_diameter("frame"), Q_(6, "mm"), rtol=RTOL_EXACT)
    assert "tube, wall 1 mm" in tube.summary()
    assert "cell.frame.wall-thickness" in {s.id for s in describe_cell(tube).steps}
    # zero makes it solid again; copies keep the walls
    assert not tube.with_wall_thicknesses(frame=Q_(0, "mm")).is_hollow("frame")
    assert tube.with_cell_width(Q_(50, "mm")).is_hollow("frame")


def test_bad_wall_thicknesses():
    cell = _framed()
    with pytest.raises(InputError, match="thinner than its outer radius"):
        cell.with_wall_thicknesses(frame=Q_(4, "mm"))
    with pytest.raises(InputError, match="zero .solid. or positive"):
        cell.with_wall_thicknesses(frame=Q_(-1, "mm"))
    with pytest.raises(InputError, match="no such strut group"):
        cell.with_wall_thicknesses(struts=T)
    with pytest.raises(InputError, match="thinner than its outer radius"):
        cell.with_wall_thicknesses(frame=T).with_diameters(frame=Q_(2, "mm"))


# --- FE sections and stiffness ---------------------------------------------------------------------
def test_fe_sections_of_a_tube_group():
    cell = _framed().with_wall_thicknesses(frame=T)
    sections, steps = fe.sections_for(cell, {"lattice": PU, "frame": AL}, modulus="static", with_steps=True)
    s = sections["frame"]
    ro, ri = 4e-3, 3e-3
    assert s.A == pytest.approx(math.pi * (ro**2 - ri**2), rel=RTOL_EXACT)            # Roark Table A.1
    assert s.I == pytest.approx(math.pi * (ro**4 - ri**4) / 4, rel=RTOL_EXACT)
    assert s.J == pytest.approx(2 * s.I, rel=RTOL_EXACT)
    nu, m = float(AL.poissons_ratio), 0.75
    kappa = 6 * (1 + nu) * (1 + m**2) ** 2 / ((7 + 6 * nu) * (1 + m**2) ** 2 + (20 + 12 * nu) * m**2)  # Cowper
    assert s.kappa == pytest.approx(kappa, rel=RTOL_EXACT)
    assert s.d == pytest.approx(8e-3)
    ids = [st.id for st in steps]
    assert "section.frame.inner-diameter" in ids and "section.frame.diameter-ratio" in ids
    assert "section.lattice.inner-diameter" not in ids
    solid = fe.sections_for(_framed(), {"lattice": PU, "frame": AL}, modulus="static")["frame"]
    assert s.A / solid.A == pytest.approx(0.4375, rel=RTOL_EXACT)
    assert s.I / solid.I == pytest.approx(0.68359375, rel=RTOL_EXACT)


def test_fe_tube_cantilever_matches_hand_stiffness():
    # tip loads on a cantilever tube: axial PL/(EA), bending PL³/(3EI) + PL/(κGA) (Timoshenko beam,
    # Timoshenko & Gere, Mechanics of Materials (1972) [from memory]), torsion TL/(GJ)
    length = 0.3
    cell = SimpleNamespace(groups=("frame",), diameters={"frame": D}, wall_thicknesses={"frame": T})
    sections = fe.sections_for(cell, {"frame": AL}, modulus="static")
    model = fe.build_frame(nodes=np.array([[0.0, 0, 0], [length, 0, 0]]), struts=np.array([[0, 1]]),
                           groups=("frame",), sections=sections, n_elements=3)
    s = sections["frame"]
    p, torque = 10.0, 0.5
    loads = np.zeros(model.n_dofs)
    loads[6 + 0], loads[6 + 1], loads[6 + 3] = p, p, torque
    u = fe.static_solve(model, fixed_dofs=np.arange(6), loads=loads)
    assert u[6] == pytest.approx(p * length / (s.E * s.A), rel=RTOL_FE_STATIC)
    assert u[7] == pytest.approx(p * length**3 / (3 * s.E * s.I) + p * length / (s.kappa * s.G * s.A),
                                 rel=RTOL_FE_STATIC)
    assert u[9] == pytest.approx(torque * length / (s.G * s.J), rel=RTOL_FE_STATIC)


# --- mass -----------------------------------------------------------------------------------------------
def test_tube_panel_mass_by_counting_members():
    # a framed panel of wide × high × deep cells has (w+1)(d+1)h vertical, w(d+1)(h+1) and d(w+1)(h+1)
    # horizontal frame members, each of mass ρ A a with the annulus A [derived; Roark Table A.1]
    cell = _framed().with_wall_thicknesses(frame=T)
    w, h, d = 3, 5, 2
    pm = panel_mass(cell, materials={"lattice": PU, "frame": AL}, cells_wide=w, cells_high=h, cells_deep=d,
                    method="closed-form")
    members = (w + 1) * (d + 1) * h + w * (d + 1) * (h + 1) + d * (w + 1) * (h + 1)
    expected = members * AL.density * math.pi * (D**2 - Q_(6, "mm") ** 2) / 4 * Q_(40, "mm")
    assert_quantity_close(pm.panel_mass_by_group["frame"], expected, rtol=RTOL_EXACT)
    # closed-form ρ̄ of the frame: 3 members per cell of the infinite lattice [derived]
    rd = relative_density(cell)
    assert_quantity_close(rd.by_group["frame"], 3 * math.pi * (D**2 - Q_(6, "mm") ** 2) / 4 * Q_(40, "mm")
                          / Q_(40, "mm") ** 3, rtol=RTOL_EXACT)


def test_fe_mass_of_a_tube_panel_is_the_counted_mass():
    # the FE consistent mass of the panel equals the counted slender mass (Przemieniecki 1968 §11)
    cell = _framed().with_wall_thicknesses(frame=T)
    mats = {"lattice": PU, "frame": AL}
    fe_res = panel.self_weight_deflection(cell, materials=mats, nx=2, ny=3, modulus="long-term")
    pm = panel_mass(cell, materials=mats, cells_wide=2, cells_high=3, cells_deep=1, method="closed-form")
    assert_quantity_close(fe_res.mass, pm.value, rtol=1e-10)


def test_geometric_density_of_tubes_against_plain_sampling():
    # the union of tube walls (annuli with hollow hemispherical ends) of a simple-cubic lattice of thick
    # tubes, against plain quasi-random points in the cell tested against every tube of the 27 cells
    # around it (common practice: Monte Carlo volume)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", SlendernessWarning)
        cell = build_cell("simple-cubic", cell_width=Q_(20, "mm"), strut_diameter=Q_(6, "mm")) \
            .with_wall_thicknesses(lattice=Q_(1.5, "mm"))
        rd = relative_density(cell, "geometric")
    a, ro, ri = 0.02, 0.003, 0.0015
    x = cell.nodes.to("m").magnitude
    ends = [(x[i] + (np.array(s) - 1) * a, x[j] + (np.array(s) - 1) * a)
            for i, j in cell.struts for s in np.ndindex(3, 3, 3)]
    near = [(p, q) for p, q in ends if np.all(np.maximum(p, q) + ro > 0) and np.all(np.minimum(p, q) - ro < a)]
    p0, p1 = np.array([e[0] for e in near]), np.array([e[1] for e in near])
    pts = qmc.Sobol(d=3, scramble=True, seed=7).random(2**17) * a
    inside = np.zeros(len(pts), bool)
    for k in range(0, len(pts), 8192):
        dist = _point_segment_distance(pts[k:k + 8192], p0, p1)
        inside[k:k + 8192] = ((dist <= ro) & (dist >= ri)).any(axis=1)
    sampled = inside.mean()
    assert rd.by_group["lattice"].to("").magnitude == pytest.approx(sampled, rel=RTOL_SAMPLED)
    # the overlap of the walls at the nodes is counted once: below the slender closed form
    assert rd.by_group["lattice"] < rd.closed_form["lattice"]


# --- buckling ----------------------------------------------------------------------------------------------
def test_euler_load_of_a_tube():
    # P_cr = π² E I / (K L)² with the tube's I (Timoshenko & Gere 1961 §2.1 [from memory])
    res = euler_buckling_load(youngs_modulus=AL.youngs_modulus, diameter=D, wall_thickness=T, length=Q_(0.5, "m"))
    i = math.pi * (Q_(8, "mm") ** 4 - Q_(6, "mm") ** 4) / 64
    assert_quantity_close(res.value, math.pi**2 * AL.youngs_modulus * i / Q_(0.5, "m") ** 2, rtol=RTOL_EXACT)
    assert "buckling.inner-diameter" in {s.id for s in res.steps}


def test_self_weight_uses_the_tube_section():
    # frame area, second moment and stress of a tube frame in the self-weight sheet (Roark Table A.1)
    cell = _framed().with_wall_thicknesses(frame=T)
    res = panel_self_weight(cell, materials={"lattice": PU, "frame": AL}, cells_wide=2, cells_high=4, cells_deep=1,
                            deflection_limit=Q_(2, "mm"))
    area = math.pi * (Q_(8, "mm") ** 2 - Q_(6, "mm") ** 2) / 4
    assert_quantity_close(res.step("selfweight.frame-area").result, area, rtol=RTOL_EXACT)
    assert_quantity_close(res.step("selfweight.with-frame.frame-second-moment").result,
                          math.pi * (Q_(8, "mm") ** 4 - Q_(6, "mm") ** 4) / 64, rtol=RTOL_EXACT)
    assert_quantity_close(res.frame_stress, res.step("selfweight.with-frame.frame-force").result / area,
                          rtol=RTOL_EXACT)
    assert_quantity_close(res.step("selfweight.frame-inner-diameter").result, Q_(6, "mm"), rtol=RTOL_EXACT)


@pytest.mark.parametrize("wide", [1, 2])
def test_tube_posts_panel_settles_as_the_hand_value(wide):
    # simple-cubic panel of aluminium tubes: its vertical tubes are the posts, (n_x + 1) · 2 per level,
    # and the hand mean settlement m g H / (2 n_p E A) is the FE's exactly (axial equilibrium of the
    # posts, Timoshenko & Gere, Mechanics of Materials (1972) §1.4 [from memory]) with the annulus
    # in both the weight and the stiffness
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", SlendernessWarning)
        cell = build_cell("simple-cubic", cell_width=Q_(40, "mm"), strut_diameter=D).with_wall_thicknesses(lattice=T)
    hand = panel_self_weight(cell, materials={"lattice": AL}, cells_wide=wide, cells_high=5, cells_deep=1,
                             deflection_limit=Q_(2, "mm"))
    fe_res = panel.self_weight_deflection(cell, materials={"lattice": AL}, nx=wide, ny=5, modulus="long-term")
    assert_quantity_close(hand.shortening["lattice-alone"], fe_res.value, rtol=1e-8)
    assert_quantity_close(hand.step("selfweight.lattice-area").result, math.pi * (D**2 - Q_(6, "mm") ** 2) / 4,
                          rtol=RTOL_EXACT)
