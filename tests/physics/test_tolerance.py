"""Strut frequency under tolerances: worst case, Monte Carlo, reproducibility, bad inputs."""

import math

import pytest
from scipy.stats import truncnorm
from tests.helpers import assert_quantity_close

from latticecalc import Q_
from latticecalc.errors import DimensionError, InputError
from latticecalc.physics import beams
from latticecalc.physics.tolerance import frequency_tolerance

#: sampling error of a 5 % / 95 % quantile with 20000 samples is ~0.3 % of the tolerance band
QUANTILE_RTOL = 2e-3

BASE = {"length": Q_(40, "mm"), "diameter": Q_(3, "mm"), "youngs_modulus": Q_(20, "MPa"),
        "density": Q_(1150, "kg/m^3")}


def _nominal(**over):
    return beams.bending_frequency(**{**BASE, **over}).value


def test_worst_case_is_the_corner_of_the_scaling_law():
    # f ∝ d/L² √(E/ρ) (Rao 2017, eq. 8.82): lowest at d-, L+, E-, ρ+ and highest at the opposite corner
    r = frequency_tolerance(**BASE, diameter_tolerance=Q_(0.1, "mm"), length_tolerance=Q_(0.5, "mm"),
                            modulus_tolerance=0.2, density_tolerance=Q_(3, "percent"))
    f0 = _nominal()
    low = f0 * (2.9 / 3) * (40 / 40.5) ** 2 * math.sqrt(0.8 / 1.03)
    high = f0 * (3.1 / 3) * (40 / 39.5) ** 2 * math.sqrt(1.2 / 0.97)
    assert_quantity_close(r.value["worst_low"], low, rtol=1e-12)
    assert_quantity_close(r.value["worst_high"], high, rtol=1e-12)
    v = {k: float(q.to("Hz").magnitude) for k, q in r.value.items()}
    assert v["worst_low"] < v["p05"] < v["p50"] < v["p95"] < v["worst_high"]
    assert abs(v["p50"] / v["nominal"] - 1) < 0.01


def test_uniform_quantiles_of_a_linear_case():
    # only the diameter varies and f is linear in d: the 5 % point is f(d - 0.9 δ) exactly
    # (quantile of a uniform distribution) [derived]
    r = frequency_tolerance(**BASE, diameter_tolerance=Q_(0.3, "mm"))
    assert_quantity_close(r.value["p05"], _nominal(diameter=Q_(3 - 0.9 * 0.3, "mm")), rtol=QUANTILE_RTOL)
    assert_quantity_close(r.value["p95"], _nominal(diameter=Q_(3 + 0.9 * 0.3, "mm")), rtol=QUANTILE_RTOL)


def test_normal_quantiles_of_a_linear_case():
    # σ = δ/3 truncated at ±3σ: the 95 % point from scipy.stats.truncnorm.ppf (reference library)
    z = truncnorm.ppf(0.95, -3, 3)
    r = frequency_tolerance(**BASE, diameter_tolerance=Q_(0.3, "mm"), distribution="normal")
    assert_quantity_close(r.value["p95"], _nominal(diameter=Q_(3 + z * 0.1, "mm")), rtol=QUANTILE_RTOL)


def test_seeded_and_reproducible():
    kw = dict(**BASE, modulus_tolerance=0.1, length_tolerance=Q_(0.3, "mm"))
    a, b = frequency_tolerance(**kw), frequency_tolerance(**kw)
    c = frequency_tolerance(**kw, seed=7)
    assert a.value["p05"] == b.value["p05"] and a.value["p95"] == b.value["p95"]
    assert c.value["p05"] != a.value["p05"]
    method = a.step("strut.tolerance.p05").method
    assert "seed" in method and "uniform" in method


def test_no_tolerance_collapses_to_nominal():
    r = frequency_tolerance(**BASE)
    for key in ("worst_low", "worst_high", "p05", "p95"):
        assert_quantity_close(r.value[key], _nominal(), rtol=1e-12)


def test_figure_marks_limits():
    import matplotlib

    matplotlib.use("Agg")
    from latticecalc.plots.strut import tolerance_figure

    r = frequency_tolerance(**BASE, modulus_tolerance=0.1)
    fig = tolerance_figure(r)
    ax = fig.axes[0]
    assert len(ax.lines) == 5 and ax.get_xlabel().startswith("bending frequency")


@pytest.mark.parametrize("kw", [{"diameter_tolerance": Q_(3, "mm")}, {"diameter_tolerance": Q_(5, "mm")},
                                {"modulus_tolerance": 1.0}, {"density_tolerance": Q_(150, "percent")},
                                {"length_tolerance": Q_(-0.1, "mm")}])
def test_tolerance_larger_than_value_or_negative(kw):
    name = next(iter(kw))
    with pytest.raises(InputError, match=name):
        frequency_tolerance(**BASE, **kw)


def test_wrong_units_and_options():
    with pytest.raises(DimensionError, match="modulus_tolerance"):
        frequency_tolerance(**BASE, modulus_tolerance=Q_(1, "mm"))
    with pytest.raises(InputError, match="distribution"):
        frequency_tolerance(**BASE, distribution="triangular")
    with pytest.raises(InputError, match="samples"):
        frequency_tolerance(**BASE, samples=10)
