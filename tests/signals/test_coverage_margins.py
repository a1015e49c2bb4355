"""Coverage margins: each uncertainty alone, combined worst case, the governing one named.

Every uncertainty moves the whole band by a frequency factor: f ∝ √E, f ∝ d/L², f ∝ 1/√ρ and f ∝ λ₁²
(Euler–Bernoulli strut, Rao 2017, Mechanical Vibrations, 6th ed., eq. 8.82 and Table 8.1).  The
worked example below is done by hand from these.
"""

import json
import math

import numpy as np
import pytest
from tests.helpers import assert_quantity_close

from latticecalc import Q_
from latticecalc.errors import InputError, RecordError
from latticecalc.materials import Material
from latticecalc.physics.beams import eigenvalue
from latticecalc.sheet import Source
from latticecalc.signals import coverage as V
from latticecalc.signals.frf import ExportedCalibration

#: the same closed forms on both sides: only rounding differs
RTOL = 1e-9
#: Rao 2017 Table 8.1 prints λ₁ to four decimals (4.7300 clamped–clamped, 3.9266 clamped–pinned)
TABLE_RTOL = 2e-5

BAND = {"lower": Q_(30, "Hz"), "upper": Q_(50, "Hz")}
PEAK = Q_([40.0], "Hz")


def _material():
    # modulus × 0.81 … × 1.21 over temperature: frequency factors √0.81 = 0.9, √1.21 = 1.1 (f ∝ √E)
    return Material(name="test elastomer", youngs_modulus=Q_(10, "MPa"), poissons_ratio=0.45,
                    density=Q_(1200, "kg/m^3"), loss_factor=0.1, dynamic_to_static=1.0, category="elastomer",
                    modulus_low_factor=0.81, modulus_high_factor=1.21, service_temperature="0 to 30 °C")


def _uncertainties(bracket="clamped-pinned"):
    return [V.modulus_scatter(nominal_modulus=Q_(10, "MPa"), tolerance=0.10, basis="batch"),
            V.temperature_range(material=_material()),
            V.strut_geometry(length=Q_(100, "mm"), diameter=Q_(3, "mm"), length_tolerance=Q_(0.5, "mm"),
                             diameter_tolerance=Q_(0.15, "mm")),
            V.end_fixity(bracket=bracket),
            V.peak_spread(peaks=PEAK, fraction=0.02)]


def _by_hand():
    """(low, high) factors of each uncertainty, worked by hand."""
    fix = (eigenvalue(supports="clamped-pinned", mode=1) / eigenvalue(supports="clamped-clamped", mode=1)) ** 2
    return {
        "Modulus scatter": (math.sqrt(0.9), math.sqrt(1.1)),                          # f ∝ √E, E ± 10 %
        "Temperature range": (0.9, 1.1),                                              # √0.81, √1.21
        "Strut geometry": (2.85 / 3 * (100 / 100.5) ** 2, 3.15 / 3 * (100 / 99.5) ** 2),   # f ∝ d/L²
        "End fixity": (fix, 1.0),                                                     # f ∝ λ₁²
        "Measured peak spread": (1 / 1.02, 1 / 0.98),                                 # f ± 2 % inside the band
    }


def test_fixity_bracket_factor_is_the_eigenvalue_ratio_squared():
    u = V.end_fixity()
    # Rao 2017 Table 8.1: λ₁ = 3.9266 clamped–pinned, 4.7300 clamped–clamped; f ∝ λ₁² (eq. 8.82)
    assert u.low == pytest.approx((3.9266 / 4.7300) ** 2, rel=TABLE_RTOL)
    assert u.low == pytest.approx((eigenvalue(supports="clamped-pinned", mode=1)
                                   / eigenvalue(supports="clamped-clamped", mode=1)) ** 2, rel=1e-12)
    assert u.high == 1.0 and u.low == pytest.approx(0.6891, abs=1e-4)
    assert V.end_fixity(bracket="pinned-pinned").low == pytest.approx((math.pi / 4.7300) ** 2, rel=TABLE_RTOL)
    assert V.end_fixity(bracket="clamped-clamped").value == (1.0, 1.0)
    with pytest.raises(InputError, match="fixity"):
        V.end_fixity(bracket="free-free")


def test_each_uncertainty_alone_and_combined_by_hand():
    res = V.band_margins(**BAND, peaks=PEAK, uncertainties=_uncertainties())
    hand = _by_hand()
    f, lo_e, hi_e = 40.0, 30.0, 50.0
    rows = {r[0]: r for r in res.rows(0)}
    for i, (label, (lo, hi)) in enumerate(hand.items()):
        assert res.low[i, 0] == pytest.approx(lo, rel=RTOL), label
        assert res.high[i, 0] == pytest.approx(hi, rel=RTOL), label
        # held band with this uncertainty alone: lower edge × high, upper edge × low
        assert float(rows[label][4]) == pytest.approx(lo_e * hi, rel=5e-4), label
        assert float(rows[label][5]) == pytest.approx(hi_e * lo, rel=5e-4), label
        assert res.alone[i, 0] == pytest.approx(max(lo_e * hi / f, f / (hi_e * lo)), rel=RTOL), label
    # worst case: every factor at its limit together, the product (common practice)
    s_lo = math.prod(lo for lo, _ in hand.values())
    s_hi = math.prod(hi for _, hi in hand.values())
    assert_quantity_close(res.value["lower_worst"], [lo_e * s_hi], unit="Hz", rtol=RTOL)
    assert_quantity_close(res.value["upper_worst"], [hi_e * s_lo], unit="Hz", rtol=RTOL)
    # 50 × 0.689 × … = 30.1 Hz lies below 30 × 1.135 = 34.1 Hz: nothing is held, the 40 Hz peak is only
    # nominally covered
    assert res.value["status"] == ("nominal only",)
    assert not res.all_covered
    assert not res.step("coverage.peak1-upper").ok
    # root-sum-square, for information: 1 ∓ √(Σ (s − 1)²)
    r_lo = 1 - math.sqrt(sum((1 - lo) ** 2 for lo, _ in hand.values()))
    r_hi = 1 + math.sqrt(sum((hi - 1) ** 2 for _, hi in hand.values()))
    assert res.rss[0][0] == pytest.approx(r_lo, rel=RTOL) and res.rss[1][0] == pytest.approx(r_hi, rel=RTOL)
    assert res.value["covered_rss"] == (lo_e * r_hi <= f <= hi_e * r_lo,)
    assert rows["Combined, worst case (the verdict)"][1] == "nominal only"


def test_the_governing_uncertainty_is_named():
    res = V.band_margins(**BAND, peaks=PEAK, uncertainties=_uncertainties())
    # by hand: fixity alone lowers the upper edge to 50 × 0.689 = 34.5 Hz, utilisation 40/34.5 = 1.16,
    # the largest of the five (modulus 0.843, temperature 0.909, geometry 0.851, peak spread 0.816)
    assert res.value["governing"] == ("End fixity",)
    assert [r[-1] for r in res.rows(0)].count("governs") == 1
    assert next(r for r in res.rows(0) if r[-1] == "governs")[0] == "End fixity"
    assert "End fixity" in res.step("coverage.peak1-upper").note
    # without a fixity bracket the temperature range governs: 40 / (50 × 0.9) = 0.889 alone (by hand)
    res2 = V.band_margins(**BAND, peaks=PEAK, uncertainties=_uncertainties(bracket="clamped-clamped"))
    assert res2.value["governing"] == ("Temperature range",)
    assert res2.alone[1, 0] == pytest.approx(40 / 45, rel=RTOL)
    # still, all four together lower the upper edge to 50 × 0.9487 × 0.9 × 0.9406 × 0.9804 = 39.4 Hz
    hand = _by_hand()
    s_lo = math.prod(lo for k, (lo, _) in hand.items() if k != "End fixity")
    s_hi = math.prod(hi for k, (_, hi) in hand.items() if k != "End fixity")
    assert 50 * s_lo == pytest.approx(39.37, abs=0.01)
    assert res2.value["status"] == ("nominal only",)
    # a peak at 38.5 Hz lies inside the held band 30 × 1.2486 = 37.46 … 39.37 Hz: covered
    u3 = _uncertainties(bracket="clamped-clamped")[:-1] + [V.peak_spread(peaks=Q_([38.5], "Hz"), fraction=0.02)]
    res3 = V.band_margins(**BAND, peaks=Q_([38.5], "Hz"), uncertainties=u3)
    assert 30 * s_hi <= 38.5 <= 50 * s_lo
    assert res3.value["status"] == ("covered",) and res3.all_covered
    assert res3.step("coverage.peak1-lower").ok and res3.step("coverage.peak1-upper").ok


def test_checks_keep_their_ids_and_prefix():
    res = V.band_margins(**BAND, peaks=Q_([40.0, 45.0], "Hz"),
                         uncertainties=[V.end_fixity(bracket="clamped-clamped"),
                                        V.peak_spread(peaks=Q_([40.0, 45.0], "Hz"), spread=Q_(0.5, "Hz"))])
    checks = [s for s in res.steps if s.kind == "check"]
    assert [c.id for c in checks] == ["coverage.peak1-lower", "coverage.peak1-upper", "coverage.peak2-lower",
                                      "coverage.peak2-upper"]
    assert all(c.description.startswith("Panel's own stop band:") for c in checks)
    # ± 0.5 Hz: peak 2 must have 45.5 Hz below 50 Hz, i.e. 45 Hz below 50 × 45/45.5 (by hand)
    assert_quantity_close(res.value["upper_worst"][1], 50 * 45 / 45.5, unit="Hz", rtol=RTOL)


def test_peak_spread_is_at_least_the_survey_resolution():
    u = V.peak_spread(peaks=Q_([10.0, 40.0], "Hz"), fraction=0.02, resolution=Q_(0.5, "Hz"))
    # 2 % of 10 Hz is 0.2 Hz, below one 0.5 Hz bin: 0.5 Hz is used; 2 % of 40 Hz is 0.8 Hz (common practice)
    assert_quantity_close(u.steps[0].result, [0.5, 0.8], unit="Hz", rtol=RTOL)
    np.testing.assert_allclose(u.low, [10 / 10.5, 40 / 40.8], rtol=RTOL)
    np.testing.assert_allclose(u.high, [10 / 9.5, 40 / 39.2], rtol=RTOL)


def test_calibrated_modulus_scatter_uses_the_calibration_bound():
    src = Source(author="T. Tester, prototype test PT-1 rev A", title="coupon")
    cal = ExportedCalibration(modulus=Q_(30, "MPa"), uncertainty=Q_(1.2, "MPa"), source=src, bound=Q_(4.5, "MPa"))
    u = V.calibration_scatter(cal, nominal_modulus=Q_(30, "MPa"))
    # f ∝ √E (Rao 2017 eq. 8.82): √(25.5/30), √(34.5/30)
    assert u.value == pytest.approx((math.sqrt(25.5 / 30), math.sqrt(34.5 / 30)), rel=RTOL)
    assert "PT-1" in u.basis
    with pytest.raises(RecordError, match="bound"):
        V.calibration_scatter(ExportedCalibration(modulus=Q_(30, "MPa"), uncertainty=None, source=src),
                              nominal_modulus=Q_(30, "MPa"))


def test_survey_resolution_read_from_the_export(tmp_path):
    p = tmp_path / "survey.json"
    p.write_text(json.dumps({"inputs": [{"id": "spectra.resolution", "value": 0.25, "unit": "Hz"}],
                             "results": [{"id": "narrowband.resolution", "value": 0.2441, "unit": "Hz"}]}))
    assert_quantity_close(V.survey_resolution(p), 0.2441, unit="Hz", rtol=0)
    p.write_text(json.dumps({"inputs": [], "results": []}))
    assert V.survey_resolution(p) is None


def test_bad_uncertainty_lists_are_refused():
    with pytest.raises(InputError, match="twice"):
        V.band_margins(**BAND, peaks=PEAK, uncertainties=[V.end_fixity(), V.end_fixity()])
    with pytest.raises(InputError, match="uncertainties"):
        V.band_margins(**BAND, peaks=PEAK, uncertainties=[])
