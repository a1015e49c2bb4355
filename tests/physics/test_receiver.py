"""The column with its panels: reduction against the full model, limits, reciprocity, bad input.

Sources: Craig, R. R. & Bampton, M. C. C., *AIAA J.* 6 (1968) 1313–1319 (the strut reduction; the
issue's acceptance: within 0.5 dB of the full model over the band); Maxwell–Betti reciprocity and
passivity of structural damping (Cremer, Heckl & Petersson, *Structure-Borne Sound*, 3rd ed. 2005,
§3.7: K (1 + iη) with η ≥ 0 dissipates); the rest is common practice, said beside each check.
"""

from dataclasses import replace

import numpy as np
import pytest

from latticecalc import Q_, materials
from latticecalc.errors import InputError, LatticeCalcError
from latticecalc.physics import frame_fe as fe
from latticecalc.physics import receiver
from latticecalc.physics.cells import build_cell
from latticecalc.physics.column import Column

#: acceptance of the reduced model (issue requirement, Craig & Bampton 1968 reduction)
REDUCTION_DB = 0.5
#: a panel of negligible mass must leave the column as it is (common practice)
NEGLIGIBLE_DB = 0.1

CONCRETE = materials.Material(name="concrete (test)", youngs_modulus=Q_(33, "GPa"), poissons_ratio=0.2,
                              density=Q_(2400, "kg/m^3"), loss_factor=0.02)
TPU = materials.get("tpu-90a-printed")
CFRP = materials.get("cfrp-tube-qi")
CELL = build_cell("bcc", cell_width=Q_(200, "mm"), strut_diameter=Q_(12, "mm"), frame_diameter=Q_(6, "mm"))
MATS = {"lattice": TPU, "frame": CFRP}
COLUMN = Column(shape="rectangular", width=Q_(300, "mm"), depth=Q_(300, "mm"), height=Q_(1.2, "m"),
                material=CONCRETE, head_mass=Q_(400, "kg"), head="guided")
FIX = receiver.Fixings(levels=(0, 2, 4), normal=Q_(2, "MN/m"), along=Q_(2, "MN/m"), vertical=Q_(2, "MN/m"),
                       loss_factor=0.05)


def tuning():
    est = receiver.receiver_estimates(CELL, material=TPU, nx=1, ny=4, column=COLUMN, faces=("front",),
                                      direction="normal")
    return est.value["tuning"].to("Hz").m


def test_reduced_within_half_a_decibel_of_the_full_model_over_the_band():
    ft = tuning()
    chk = np.linspace(0.7 * ft, 1.4 * ft, 12)
    r = receiver.coupled_response(CELL, materials=MATS, nx=1, ny=4, column=COLUMN, fixings=FIX,
                                  frequencies=Q_(chk, "Hz"), check_frequencies=Q_(chk, "Hz"), strut_modes=8,
                                  mode_counts=(1, 2, 4), n_elements=8)
    c = r.value["check"]
    assert c["error_db"].shape == (12, 3)
    assert float(c["error_db"].max()) <= REDUCTION_DB
    conv = c["convergence"]
    assert conv[8] <= conv[2] <= conv[1] + 1e-12          # more strut modes, closer to the full model
    # the panel does act near the strut band (the check would be empty otherwise)
    assert max(np.abs(r.value["insertion_loss"][d]).max() for d in r.directions) > 0.01


def test_panel_of_negligible_mass_leaves_the_column_unchanged():
    light = {g: replace(m, density=m.density * 1e-6) for g, m in MATS.items()}
    f = receiver.frequencies_for(f_min=Q_(1, "Hz"), f_max=Q_(150, "Hz"), n=200)
    r = receiver.coupled_response(CELL, materials=light, nx=1, ny=4, column=COLUMN, fixings=FIX, frequencies=f,
                                  strut_modes=4)
    for d in r.directions:
        assert np.abs(r.value["insertion_loss"][d]).max() <= NEGLIGIBLE_DB


def test_dynamic_stiffness_is_reciprocal_and_passive():
    mdl = receiver._build(CELL, materials=MATS, nx=1, ny=4, column=COLUMN, placement=receiver.Placement(),
                          fixings=FIX, n_elements=4, strut_modes=2, theory="timoshenko", with_panels=True,
                          column_spacing=0.25, point_masses=None)
    s = mdl.system
    for f in (5.0, 40.0, 90.0):
        vals = s.values(2 * np.pi * f)
        import scipy.sparse as sp
        A = sp.csc_matrix((s.S_ff @ vals, s.indices, s.indptr), shape=(s.nf, s.nf)).toarray()
        assert np.abs(A - A.T).max() <= 1e-9 * np.abs(A).max()          # Maxwell–Betti reciprocity
        w = np.linalg.eigvalsh(0.5 * (A.imag + A.imag.T))
        assert w.min() >= -1e-9 * np.abs(w).max()                        # η >= 0 only dissipates


def test_bad_inputs_name_the_input():
    f = Q_([10.0, 20.0], "Hz")
    with pytest.raises(InputError, match="not on the column face") as e:
        receiver.coupled_response(CELL, materials=MATS, nx=1, ny=4, column=COLUMN, frequencies=f,
                                  fixings=replace(FIX, joints=(9999,)))
    assert e.value.input_name == "fixing.joints"
    pan = receiver.panel_frame(CELL, nx=1, ny=4)
    front = np.flatnonzero(np.abs(pan.nodes[:, 1] - pan.nodes[:, 1].max()) < 1e-9)
    with pytest.raises(InputError, match="not on the column face"):
        receiver.coupled_response(CELL, materials=MATS, nx=1, ny=4, column=COLUMN, frequencies=f,
                                  fixings=replace(FIX, joints=(int(front[0]),)))
    with pytest.raises(InputError, match="taller than the column") as e:
        receiver.coupled_response(CELL, materials=MATS, nx=1, ny=7, column=COLUMN, fixings=FIX, frequencies=f)
    assert e.value.input_name == "panel.cells_high"
    with pytest.raises(InputError, match="wider than the column face"):
        receiver.coupled_response(CELL, materials=MATS, nx=2, ny=4, column=COLUMN, fixings=FIX, frequencies=f)
    for bad in ("0 N/m", "-5 MN/m"):
        with pytest.raises(InputError, match="never rigid") as e:
            replace(FIX, normal=Q_(bad))
        assert e.value.input_name == "fixing.normal_stiffness"
    with pytest.raises(InputError, match="unknown column face"):
        receiver.Placement(faces=("top",))
    with pytest.raises(InputError, match="not a joint level"):
        receiver.coupled_response(CELL, materials=MATS, nx=1, ny=4, column=COLUMN, frequencies=f,
                                  fixings=replace(FIX, levels=(0, 5)))
    with pytest.raises(InputError, match="direction"):
        receiver.coupled_response(CELL, materials=MATS, nx=1, ny=4, column=COLUMN, fixings=FIX, frequencies=f,
                                  directions=("sideways",))
    with pytest.raises(LatticeCalcError, match="no targeted peaks"):
        receiver.peak_checks(frequency=f, insertion_loss=np.zeros(2), peaks=Q_([], "Hz"), required=[])


def test_resonating_mass_of_a_bcc_panel_by_hand():
    # every bcc lattice strut lies along a body diagonal: weight 1 − (d·e)² = 2/3 in any axis direction
    # (geometry); Rayleigh's static shape gives (1/2)² / (13/35) = 0.673 of the strut mass at M_a = 0
    # (derived), against 0.690 for the exact clamped–clamped mode (Chopra, Dynamics of Structures,
    # 4th ed. 2012, effective modal mass; the kit's beams.modal_mass_fraction): 2.5 % apart
    from latticecalc.physics import beams
    est = receiver.receiver_estimates(CELL, material=TPU, nx=1, ny=4, column=COLUMN, faces=("front",),
                                      direction="vertical")
    L = np.sqrt(3) / 2 * 0.2
    ms = 1220 * np.pi * 0.012**2 / 4 * L
    expected = 4 * 8 * (2 / 3) * (0.25 / (13 / 35)) * ms
    assert est.resonating_mass.to("kg").m == pytest.approx(expected, rel=1e-7)   # lengths kept to 1 nm
    exact = beams.modal_mass_fraction().value.m
    assert 0.25 / (13 / 35) == pytest.approx(exact, rel=0.03)
    # two faces carry twice the resonating mass
    two = receiver.receiver_estimates(CELL, material=TPU, nx=1, ny=4, column=COLUMN, faces=("front", "back"),
                                      direction="vertical")
    assert two.resonating_mass.to("kg").m == pytest.approx(2 * est.resonating_mass.to("kg").m, rel=1e-12)


def test_central_mass_frequency_against_the_fe_strut():
    # clamped–clamped strut with a central mass: with the strut's mass negligible f = √(192 EI / (M L³)) / 2π
    # (static stiffness of a clamped beam under a central load, Roark's Formulas, 7th ed. 2002, Table 8.1
    # case 1d, from memory); with the strut's own mass Rayleigh's estimate is an upper bound within 2 %
    L, d = 0.3, 0.01
    E = 40e6
    for rho, M in ((8.5, 0.2), (1220.0, 0.05), (1220.0, 0.0)):
        sec = fe.Section(E=E, G=E / 2.96, rho=rho, d=d, nu=0.48, A=np.pi * d**2 / 4, I=np.pi * d**4 / 64,
                         J=np.pi * d**4 / 32, kappa=0.89)
        red = fe.reduce_struts(nodes=np.array([[0, 0, 0], [L, 0, 0.0]]), struts=np.array([[0, 1]]),
                               groups=("lattice",), sections={"lattice": sec}, n_elements=16, n_modes=4,
                               theory="euler-bernoulli", point_masses={"lattice": (M, 0.0)} if M else None)
        f_fe = np.sqrt(red.omega2[0, 0]) / (2 * np.pi)
        ms = rho * sec.A * L
        f_ray = receiver.STRUT_TUNING.evaluate({"E": Q_(E, "Pa"), "I": Q_(sec.I, "m^4"), "L": Q_(L, "m"),
                                                "M_a": Q_(M, "kg"), "m_s": Q_(ms, "kg")}).to("Hz").m
        assert f_ray >= f_fe * (1 - 1e-6)
        assert f_ray == pytest.approx(f_fe, rel=0.02)
        if rho < 10:
            # strut mass 1e-3 of the central mass: the massless-beam formula holds to 2e-4
            assert f_fe == pytest.approx(np.sqrt(192 * E * sec.I / (M * L**3)) / (2 * np.pi), rel=1e-3)


def test_a_negative_insertion_loss_never_meets_a_requirement():
    # common practice: a panel that makes the floor louder (IL < 0) fails "predicted >= required"
    checks = receiver.peak_checks(frequency=Q_([30.0, 50.0], "Hz"), insertion_loss=np.array([-0.4, -0.4]),
                                  peaks=Q_([40.0], "Hz"), required=[3.0])
    chk = [s for s in checks.steps if s.id == "receiver.check-peak1"][0]
    assert not chk.ok and chk.utilisation == float("inf")
    assert not checks.all_ok
