"""Strut bending: scaling laws, Timoshenko flag, mode table, inverse sizing, modal mass, bad inputs."""

import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from tests.helpers import assert_quantity_close

from latticecalc import Q_
from latticecalc.errors import DimensionError, InputError
from latticecalc.physics import beams

SCALING_RTOL = 1e-10
BASE = {"length": Q_(40, "mm"), "diameter": Q_(3, "mm"), "youngs_modulus": Q_(20, "MPa"),
        "density": Q_(1150, "kg/m^3")}

factor = st.floats(min_value=0.2, max_value=5.0, allow_nan=False)


def _f(**over):
    return beams.bending_frequency(**{**BASE, **over}).value


@settings(max_examples=40, deadline=None)
@given(kd=factor, kl=factor, supports=st.sampled_from(beams.SUPPORTS), mode=st.integers(1, 3))
def test_frequency_scales_with_d_over_L_squared(kd, kl, supports, mode):
    # Rao 2017, eq. 8.82: f ∝ √(I/A)/L² = d/(4L²) for a solid circle
    f0 = _f(supports=supports, mode=mode)
    f1 = _f(diameter=BASE["diameter"] * kd, length=BASE["length"] * kl, supports=supports, mode=mode)
    assert_quantity_close(f1, f0 * kd / kl**2, rtol=SCALING_RTOL)


@settings(max_examples=40, deadline=None)
@given(ke=factor, kr=factor)
def test_frequency_scales_with_root_E_over_rho(ke, kr):
    # Rao 2017, eq. 8.82: f ∝ √(E/ρ)
    f0 = _f()
    f1 = _f(youngs_modulus=BASE["youngs_modulus"] * ke, density=BASE["density"] * kr)
    assert_quantity_close(f1, f0 * math.sqrt(ke / kr), rtol=SCALING_RTOL)


def test_units_are_converted():
    # the same strut in other units gives the same frequency
    f_si = _f()
    f_other = beams.bending_frequency(length=Q_(4, "cm"), diameter=Q_(0.003, "m"),
                                      youngs_modulus=Q_(20e6, "Pa"), density=Q_(1.15, "g/cm^3")).value
    assert_quantity_close(f_other, f_si, rtol=1e-12)


def test_timoshenko_flag_on_stocky_strut_and_not_on_slender():
    stocky = beams.bending_frequency(**{**BASE, "diameter": Q_(8, "mm")}, theory="timoshenko",
                                     poissons_ratio=0.49)
    slender = beams.bending_frequency(**{**BASE, "diameter": Q_(0.5, "mm")}, theory="timoshenko",
                                      poissons_ratio=0.49)
    assert stocky.flagged and "FLAG" in stocky.step("strut.f1-cc-shear-effect").note
    assert not slender.flagged and slender.step("strut.f1-cc-shear-effect").note == ""
    # the difference step is (f_EB - f_T) / f_EB, shown in percent
    diff = stocky.step("strut.f1-cc-shear-effect").result
    assert_quantity_close(diff, (1 - stocky.value / stocky.euler_bernoulli).to("percent"), rtol=1e-12)
    # the sheet can render every step
    for step in stocky.steps:
        assert step.to_dict()["result_text"]


def test_mode_table_matches_single_calls():
    table = beams.strut_mode_table(**BASE)
    assert set(table.value) == set(beams.SUPPORTS)
    for s in beams.SUPPORTS:
        for m in (1, 2, 3):
            assert_quantity_close(table.value[s][m - 1], _f(supports=s, mode=m), rtol=1e-14)
    ids = [st.id for st in table.steps]
    assert len(ids) == len(set(ids)) == 2 + 12
    assert len(table.rows()) == 4 and table.columns[1] == "f1 (Hz)"


def test_inverse_sizing_round_trip():
    target = Q_(55, "Hz")
    d = beams.diameter_for_frequency(target=target, length=BASE["length"],
                                     youngs_modulus=BASE["youngs_modulus"], density=BASE["density"])
    assert_quantity_close(_f(diameter=d.value), target, rtol=1e-12)
    assert_quantity_close(d.check_frequency, target, rtol=1e-12)
    L = beams.length_for_frequency(target=target, diameter=BASE["diameter"], supports="pinned-pinned",
                                   youngs_modulus=BASE["youngs_modulus"], density=BASE["density"])
    assert_quantity_close(_f(length=L.value, supports="pinned-pinned"), target, rtol=1e-12)
    assert d.steps[0].formula is beams.DIAMETER_FOR_FREQUENCY


@pytest.mark.parametrize("supports", ["clamped-clamped", "clamped-pinned", "clamped-free", "pinned-pinned"])
def test_modal_mass_fraction_quadrature_matches_adaptive_quadrature(supports):
    """The Gauss–Legendre rule against scipy.integrate.quad (general-purpose reference library), modes 1-60."""
    from scipy.integrate import quad

    for n in range(1, 61):
        def phi(x, n=n):
            return float(beams.mode_shape(x, supports=supports, mode=n))
        first = quad(phi, 0.0, 1.0, epsabs=1e-13, epsrel=1e-12, limit=800)[0]
        second = quad(lambda x: phi(x) ** 2, 0.0, 1.0, epsabs=1e-13, epsrel=1e-12, limit=800)[0]
        reference = first**2 / second
        assert float(beams.modal_mass_fraction(supports=supports, mode=n).value) == pytest.approx(
            reference, rel=1e-9, abs=1e-12), (supports, n)


def test_modal_mass_fractions():
    # pinned-pinned: (∫sin πξ)² / ∫sin² πξ = (2/π)² / (1/2) = 8/π² exactly [derived]
    assert float(beams.modal_mass_fraction(supports="pinned-pinned").value) == pytest.approx(
        8 / math.pi**2, rel=1e-12)
    # clamped-clamped 0.690 and cantilever 0.613 of the beam mass for mode 1 (from memory;
    # commonly tabulated effective modal masses, e.g. Irvine's notes on modal participation)
    mu_cc = float(beams.modal_mass_fraction(supports="clamped-clamped").value)
    assert mu_cc == pytest.approx(0.690, abs=5e-4)
    assert float(beams.modal_mass_fraction(supports="clamped-free").value) == pytest.approx(0.613, abs=5e-4)
    # symmetric supports: even modes are antisymmetric and carry no translational mass [derived]
    assert float(beams.modal_mass_fraction(supports="clamped-clamped", mode=2).value) < 1e-12


@pytest.mark.parametrize("name,value", [("length", Q_(0, "mm")), ("length", Q_(-5, "mm")),
                                        ("diameter", Q_(-1, "mm")), ("youngs_modulus", Q_(0, "MPa")),
                                        ("density", Q_(-1, "kg/m^3"))])
def test_non_positive_sizes_rejected(name, value):
    with pytest.raises(InputError, match=name):
        beams.bending_frequency(**{**BASE, name: value})


@pytest.mark.parametrize("name,value", [("length", Q_(40, "MPa")), ("density", Q_(1150, "kg")),
                                        ("youngs_modulus", Q_(20, "kg/m^3")), ("diameter", 3.0)])
def test_wrong_units_rejected(name, value):
    with pytest.raises(DimensionError, match=name) as exc:
        beams.bending_frequency(**{**BASE, name: value})
    assert "expected" in str(exc.value) and "got" in str(exc.value)


@pytest.mark.parametrize("nu", [-1.0, 0.5, 0.7, -2, float("nan")])
def test_poissons_ratio_out_of_range(nu):
    with pytest.raises(InputError, match="poissons_ratio"):
        beams.bending_frequency(**BASE, theory="timoshenko", poissons_ratio=nu)


def test_timoshenko_needs_poissons_ratio_and_known_names():
    with pytest.raises(InputError, match="poissons_ratio"):
        beams.bending_frequency(**BASE, theory="timoshenko")
    with pytest.raises(InputError, match="supports"):
        beams.bending_frequency(**BASE, supports="fixed-fixed")
    with pytest.raises(InputError, match="theory"):
        beams.bending_frequency(**BASE, theory="rayleigh")
    with pytest.raises(InputError, match="mode"):
        beams.bending_frequency(**BASE, mode=0)
    with pytest.raises(DimensionError, match="target"):
        beams.diameter_for_frequency(target=Q_(50, "mm"), length=BASE["length"],
                                     youngs_modulus=BASE["youngs_modulus"], density=BASE["density"])


def test_cell_width_for_frequency_round_trip():
    from latticecalc.physics.cells import build_cell

    cell = build_cell("octet", cell_width=Q_(60, "mm"), strut_diameter=Q_(3, "mm"))
    target = Q_(40, "Hz")
    r = beams.cell_width_for_frequency(target=target, cell=cell, youngs_modulus=BASE["youngs_modulus"],
                                       density=BASE["density"])
    wider = cell.with_cell_width(r.value)
    longest = wider.strut_lengths[wider.group_mask("lattice")].max()
    assert_quantity_close(longest, r.value / math.sqrt(2), rtol=1e-12)  # octet strut a/√2
    assert_quantity_close(_f(length=longest), target, rtol=1e-10)


def test_timoshenko_table_compares_with_euler_bernoulli():
    stocky = {**BASE, "diameter": Q_(8, "mm")}
    t = beams.strut_mode_table(**stocky, theory="timoshenko", poissons_ratio=0.49)
    e = beams.strut_mode_table(**stocky)
    rows = t.comparison_rows()
    assert len(rows) == 12 and rows[0][0] == "clamped-clamped" and rows[0][5] == "FLAG"
    for s in beams.SUPPORTS:
        assert_quantity_close(t.euler_bernoulli[s], e.value[s], rtol=1e-14)
        assert (t.value[s] < e.value[s]).all()
    with pytest.raises(InputError, match="theory"):
        e.comparison_rows()


@pytest.mark.parametrize("supports", beams.SUPPORTS)
def test_effective_modal_masses_sum_to_the_total_mass(supports):
    # sum rule: the effective masses of all modes add up to the total mass (ECSS glossary,
    # "effective modal mass", note 2); the tail after N modes falls as 1/N (μ_n ~ 1/λ_n²) [derived]
    import warnings

    with warnings.catch_warnings():
        warnings.simplefilter("error")
        mu = [float(beams.modal_mass_fraction(supports=supports, mode=n).value) for n in range(1, 61)]
    tail30, tail60 = 1 - sum(mu[:30]), 1 - sum(mu)
    assert 0 < tail60 < tail30 < 0.03
    assert tail30 / tail60 == pytest.approx(2.0, rel=0.03)
