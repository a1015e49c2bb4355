"""The calibrated modulus carries the coupon's geometry, density and frequency tolerances.

Hand calculations below use the Euler–Bernoulli strut frequency f = λ²/(2πL²) √(EI/(ρA)) (Rao 2017,
Mechanical Vibrations, 6th ed., eq. 8.82) with I/A = d²/16 for a solid circle, solved for the
modulus: E = 64 π² f² L⁴ ρ / (λ⁴ d²).  Its exponents give the first-order worst case
δ_E = 2 Δf/f + 4 ΔL/L + 2 Δd/d + Δρ/ρ, and the law of propagation of uncertainty (JCGM 100:2008
§5.1.2 eq. (10)) with each input uniform over ± Δ (u = Δ/√3, §4.3.7) gives
w_E = √(((2 Δf/f)² + (4 ΔL/L)² + (2 Δd/d)² + (Δρ/ρ)²) / 3).
"""

import json
import math

import pytest
from tests.helpers import assert_quantity_close

from latticecalc import Q_, materials
from latticecalc.physics import beams
from latticecalc.physics import tolerance as T
from latticecalc.sheet import Source
from latticecalc.signals import frf as F

#: both sides evaluate the same closed forms: only rounding differs
RTOL = 1e-9

COUPON = {"length": Q_(100, "mm"), "diameter": Q_(3, "mm"), "density": Q_(1200, "kg/m^3"),
          "nominal_modulus": Q_(20, "MPa")}
TOLERANCES = {"length_tolerance": Q_(0.5, "mm"), "diameter_tolerance": Q_(0.15, "mm"), "density_tolerance": 0.02}


def _calibrate(**extra):
    args = {**COUPON, **TOLERANCES, "measured_frequency": Q_(40, "Hz"), "frequency_half_width": Q_(0.25, "Hz")}
    args.update(extra)
    return F.calibrate_from_strut(**args)


def test_modulus_exponents_are_derived_from_the_strut_formula():
    # E = 64 π² f² L⁴ ρ / (λ⁴ d²) (Rao 2017 eq. 8.82 solved for E): exponents 2, 4, −2, 1
    sens = T.log_sensitivities(F.STRUT_MODULUS, F.CALIBRATION_INPUTS)
    assert {k: float(v) for k, v in sens.items()} == {"f_meas": 2.0, "L": 4.0, "d": -2.0, "rho": 1.0}


def test_known_coupon_worst_case_and_standard_uncertainty_by_hand():
    cal = _calibrate()
    f, df = 40.0, 0.25
    L, dL = 100.0, 0.5
    d, dd = 3.0, 0.15
    drho = 0.02
    # worst case, first order (Rao 2017 eq. 8.82 solved for E, exponents 2, 4, 2, 1)
    delta = 2 * df / f + 4 * dL / L + 2 * dd / d + drho          # 0.0125 + 0.02 + 0.10 + 0.02 = 0.1525
    assert delta == pytest.approx(0.1525, rel=1e-12)
    # JCGM 100:2008 §5.1.2 eq. (10), each input uniform over ± Δ (u = Δ/√3, §4.3.7)
    w = math.sqrt(((2 * df / f) ** 2 + (4 * dL / L) ** 2 + (2 * dd / d) ** 2 + drho ** 2) / 3)
    assert_quantity_close(cal.step("calibration.relative-bound").result, 100 * delta, unit="percent", rtol=RTOL)
    assert_quantity_close(cal.bound, delta * cal.value.to("MPa").m, unit="MPa", rtol=RTOL)
    assert_quantity_close(cal.step("calibration.relative-uncertainty").result, 100 * w, unit="percent", rtol=RTOL)
    assert_quantity_close(cal.uncertainty, w * cal.value.to("MPa").m, unit="MPa", rtol=RTOL)


def test_diameter_tolerance_alone_gives_ten_percent():
    # ±0.15 mm on a 3 mm strut: 2 × 0.15/3 = 10 % on the modulus (E ∝ 1/d², Rao 2017 eq. 8.82)
    cal = F.calibrate_from_strut(measured_frequency=Q_(40, "Hz"), diameter_tolerance=Q_(0.15, "mm"), **COUPON)
    assert_quantity_close(cal.step("calibration.relative-bound").result, 10.0, unit="percent", rtol=RTOL)
    # the exact change at the thin end, (3/2.85)² − 1 = 10.8 %, is 2x + 3x² + 4x³ + … with x = Δd/d = 0.05
    # (binomial series, from memory): the first-order bound leaves out only the 3x² and higher terms
    x = 0.05
    exact = (3.0 / 2.85) ** 2 - 1
    assert abs(exact - 2 * x - 3 * x ** 2) < 5 * x ** 3


def test_calibrated_modulus_equals_the_strut_formula_solved_for_e():
    cal = _calibrate()
    # E_nom (f/f_pred)² and 64 π² f² L⁴ ρ/(λ⁴ d²) are the same modulus (Rao 2017 eq. 8.82)
    lam = beams.eigenvalue(supports="clamped-clamped", mode=1)
    by_hand = 64 * math.pi ** 2 * 40.0 ** 2 * 0.1 ** 4 * 1200.0 / (lam ** 4 * 0.003 ** 2) / 1e6
    assert_quantity_close(cal.value, by_hand, unit="MPa", rtol=RTOL)
    assert_quantity_close(cal.step("calibration.strut-modulus").result, by_hand, unit="MPa", rtol=RTOL)
    assert_quantity_close(cal.step("calibration.recomputed.f1-cc").result, 40.0, unit="Hz", rtol=1e-10)


def test_frequency_half_width_from_a_bin_standard_uncertainty():
    # a bin of Δf: u = Δf/√12 (uniform), so the half-width √3 u = Δf/2 (JCGM 100:2008 §4.3.7)
    res = 0.5
    cal = F.calibrate_from_strut(measured_frequency=Q_(40, "Hz"), frequency_uncertainty=Q_(res / math.sqrt(12), "Hz"),
                                 **COUPON)
    assert_quantity_close(cal.step("calibration.frequency-half-width").result, res / 2, unit="Hz", rtol=RTOL)
    # frequency alone: worst case 2 Δf/f, standard 2 u/f (the one-input GUM result)
    assert_quantity_close(cal.step("calibration.relative-bound").result, 100 * 2 * 0.25 / 40, unit="percent",
                          rtol=RTOL)
    assert_quantity_close(cal.uncertainty, 2 * (res / math.sqrt(12)) / 40 * cal.value.to("MPa").m, unit="MPa",
                          rtol=RTOL)


def test_bound_shown_is_the_bound_evaluated():
    cal = _calibrate()
    step = cal.step("calibration.relative-bound")
    # the step's own formula on its own values (common practice: shown = evaluated)
    assert_quantity_close(step.formula.evaluate(step.values), step.result.to("").m, unit="", rtol=RTOL)
    assert r"\Delta_{d}" in step.formula_latex()


def test_export_carries_the_bound_to_the_column_panel(tmp_path):
    cal = _calibrate()
    rows = [{"id": s.id, "value": float(s.result.m), "unit": f"{s.result.units:~P}"} for s in cal.steps
            if s.id in ("calibration.modulus", "calibration.uncertainty", "calibration.bound",
                        "calibration.relative-bound")]
    p = tmp_path / "coupon.json"
    p.write_text(json.dumps({"generated": "2026-12-01", "results": rows,
                             "project": {"calc_id": "PT-1", "revision": "A", "title": "coupon", "prepared_by": "T"}}))
    got = F.calibration_from_export(p)
    assert_quantity_close(got.bound, cal.bound.to("MPa").m, unit="MPa", rtol=RTOL)
    assert_quantity_close(got.relative_bound, 0.1525, unit="", rtol=RTOL)


def test_dynamic_calibration_keeps_the_long_term_modulus_unless_asked():
    mat = materials.get("tpu-90a-printed")
    src = Source(author="test", title="coupon")
    e_lt = mat.long_term_modulus()
    new_dyn = mat.dynamic_modulus() * 1.2
    kept = materials.calibrated(mat, dynamic_modulus=new_dyn, source=src)
    # common practice: a dynamic test says nothing about creep; the long-term modulus stays
    assert_quantity_close(kept.material.dynamic_modulus(), new_dyn, rtol=RTOL)
    assert_quantity_close(kept.material.long_term_modulus(), e_lt, rtol=RTOL)
    assert "not rescaled" in kept.steps[-1].note
    moved = materials.calibrated(mat, dynamic_modulus=new_dyn, source=src, rescale_long_term=True)
    assert_quantity_close(moved.material.long_term_modulus(), e_lt * 1.2, rtol=RTOL)
    # a calibration far below the catalogue: the long-term modulus cannot exceed the static one
    low = materials.calibrated(mat, dynamic_modulus=mat.dynamic_modulus() * 0.3, source=src)
    assert low.material.long_term_factor == 1.0
    assert_quantity_close(low.material.long_term_modulus(), low.material.youngs_modulus, rtol=RTOL)
