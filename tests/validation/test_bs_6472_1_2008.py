"""Vibration dose value and the BS 6472-1:2008 ranges for residential buildings.

Reference: BSI, BS 6472-1:2008, Guide to evaluation of human exposure to vibration in buildings –
Part 1: Vibration sources other than blasting.  Vibration dose value VDV = (∫₀ᵀ a_w⁴ dt)^(1/4) in
m/s^1.75, over the 16 h day and the 8 h night, from the frequency-weighted acceleration a_w.
Table 1, "Vibration dose value ranges which might result in various probabilities of adverse comment
within residential buildings" (title as listed in the standard's contents): day 0.2–0.4 / 0.4–0.8 /
0.8–1.6, night 0.1–0.2 / 0.2–0.4 / 0.4–0.8 m/s^1.75 for low probability of adverse comment /
adverse comment possible / adverse comment probable.  The values and the fourth-power definition as
reproduced by NoiseNet, "Vibration > Environmental > Disturbance" (a UK guide); the standard itself
was not opened here.

Closed forms (derived here):
- a = A sin(2π f t) over T = k/f (whole periods): sin⁴ = 3/8 − cos(2ωt)/2 + cos(4ωt)/8, so
  ∫₀ᵀ a⁴ dt = 3 A⁴ T / 8 and VDV = A (3T/8)^(1/4).  Sampled N ≥ 5 times a period, the sum of sin⁴ over
  a period is exactly 3N/8, so the rectangle rule is exact up to rounding.
- a constant a₀ for T seconds: VDV = a₀ T^(1/4).
- doses add: n events of the same VDV_e give (n VDV_e⁴)^(1/4); sixteen events double the VDV.
"""

import math

import numpy as np
import pytest
from tests.helpers import assert_quantity_close

from latticecalc import Q_
from latticecalc.signals import criteria as C
from latticecalc.signals import vdv as V
from latticecalc.sources_register import blocks_approval

#: floating-point sums over 10^4 samples
RTOL_SUM = 1e-12

#: BS 6472-1:2008 Table 1, residential buildings (m/s^1.75), as reproduced by NoiseNet
TABLE_1 = {"day": {"low": (0.2, 0.4), "possible": (0.4, 0.8), "probable": (0.8, 1.6)},
           "night": {"low": (0.1, 0.2), "possible": (0.2, 0.4), "probable": (0.4, 0.8)}}


def _sine(amplitude, frequency, duration, fs):
    t = np.arange(int(round(fs * duration))) / fs
    return Q_(amplitude * np.sin(2 * np.pi * frequency * t), "m/s^2")


@pytest.mark.parametrize("amplitude, frequency, duration", [(0.3, 8.0, 10.0), (0.05, 12.5, 4.0), (1.0, 40.0, 60.0)])
def test_vdv_of_a_sinusoid_matches_the_closed_form(amplitude, frequency, duration):
    fs = 1000.0                         # 125, 80 and 25 samples a period
    res = V.vibration_dose_value(_sine(amplitude, frequency, duration, fs), sample_rate=Q_(fs, "Hz"))
    assert_quantity_close(res.value, amplitude * (3 * duration / 8) ** 0.25, unit="m/s^1.75", rtol=RTOL_SUM)
    assert_quantity_close(res.step("vdv.dose").result, 3 * amplitude**4 * duration / 8, unit="m^4/s^7",
                          rtol=RTOL_SUM)


def test_vdv_of_a_constant_and_the_fourth_power_weighting():
    fs = 500.0
    res = V.vibration_dose_value(Q_(np.full(2000, 0.2), "m/s^2"), sample_rate=Q_(fs, "Hz"))    # 4 s
    assert_quantity_close(res.value, 0.2 * 4.0 ** 0.25, unit="m/s^1.75", rtol=RTOL_SUM)
    # twice the magnitude counts as sixteen times the duration
    doubled = V.vibration_dose_value(Q_(np.full(2000, 0.4), "m/s^2"), sample_rate=Q_(fs, "Hz"))
    longer = V.vibration_dose_value(Q_(np.full(32000, 0.2), "m/s^2"), sample_rate=Q_(fs, "Hz"))
    assert_quantity_close(doubled.value, longer.value.to("m/s^1.75").m, unit="m/s^1.75", rtol=RTOL_SUM)


def test_doses_of_events_add():
    fs = 1000.0
    burst = _sine(0.1, 10.0, 2.0, fs)
    one = V.vibration_dose_value(burst, sample_rate=Q_(fs, "Hz")).value
    # sixteen identical pass-bys double the dose value: (16 VDV⁴)^(1/4) = 2 VDV
    assert_quantity_close(V.vdv_of_events(event_vdv=one, count=16).value, 2 * one.m, unit="m/s^1.75",
                          rtol=RTOL_SUM)
    # a record of two different bursts equals the fourth-power sum of the two
    other = _sine(0.25, 20.0, 1.0, fs)
    both = V.vibration_dose_value(Q_(np.concatenate([burst.m, other.m]), "m/s^2"), sample_rate=Q_(fs, "Hz"))
    two = V.vibration_dose_value(other, sample_rate=Q_(fs, "Hz")).value
    combined = V.combine_vdv(vdvs=Q_([one.m, two.m], "m/s^1.75"))
    assert_quantity_close(combined.value, both.value.m, unit="m/s^1.75", rtol=RTOL_SUM)
    assert_quantity_close(V.vdv_of_events(event_vdv=one, count=0).value, 0.0, unit="m/s^1.75", atol=0, rtol=0)


@pytest.mark.parametrize("period", ["day", "night"])
@pytest.mark.parametrize("which", ["low", "possible", "probable"])
def test_table_1_ranges(period, which):
    c = C.get_criterion(f"bs6472-1-2008-{period}-{which}")
    lo, hi = TABLE_1[period][which]
    assert (c.lower, c.value) == (lo, hi)
    assert c.kind == "vdv" and c.period == period and c.edition == "BS 6472-1:2008"
    assert c.title.startswith("BS 6472-1:2008 residential")
    res = C.vdv_assessment(vdv=Q_(hi, "m/s^1.75"), criterion=c.id)
    assert_quantity_close(res.value, hi, unit="m/s^1.75", rtol=0, atol=0)
    assert res.step("criterion.vdv").ok                                   # the upper end itself passes
    assert not C.vdv_assessment(vdv=Q_(hi * 1.001, "m/s^1.75"), criterion=c.id).step("criterion.vdv").ok


def test_ranges_follow_on_and_night_is_half_the_day():
    for period in ("day", "night"):
        rows = TABLE_1[period]
        assert rows["low"][1] == rows["possible"][0] and rows["possible"][1] == rows["probable"][0]
    for which in ("low", "possible", "probable"):
        assert all(math.isclose(n, d / 2) for n, d in zip(TABLE_1["night"][which], TABLE_1["day"][which], strict=True))


def test_assessment_of_a_night_of_pass_bys():
    # 40 pass-bys a night, each VDV 0.06 m/s^1.75: (40 × 0.06⁴)^(1/4) = 0.151 m/s^1.75, inside the night's
    # 'low probability of adverse comment' range (0.1–0.2) and above the day's lowest range's start
    night = V.vdv_of_events(event_vdv=Q_(0.06, "m/s^1.75"), count=40).value
    assert_quantity_close(night, 40 ** 0.25 * 0.06, unit="m/s^1.75", rtol=RTOL_SUM)
    assert C.vdv_assessment(vdv=night, criterion="bs6472-1-2008-night-low").step("criterion.vdv").ok
    res = C.vdv_assessment(vdv=Q_(0.3, "m/s^1.75"), criterion="bs6472-1-2008-night-low")
    assert not res.step("criterion.vdv").ok
    # the table was seen in a named secondary source, not recalled: no approval block
    assert blocks_approval(res) == [] and not C.BS_6472_1_2008.from_memory


def test_bad_input_is_named():
    with pytest.raises(ValueError, match="criterion.*vibration dose value"):
        C.vdv_assessment(vdv=Q_(0.3, "m/s^1.75"), criterion="vc-a")
    with pytest.raises(TypeError, match="vdv"):
        C.vdv_assessment(vdv=Q_(0.3, "m/s"), criterion="bs6472-1-2008-day-low")
    with pytest.raises(ValueError, match="count"):
        V.vdv_of_events(event_vdv=Q_(0.1, "m/s^1.75"), count=-1)
    with pytest.raises(TypeError, match="acceleration"):
        V.vibration_dose_value(Q_(np.ones(10), "m/s"), sample_rate=Q_(100, "Hz"))
    with pytest.raises(ValueError, match="sample_rate"):
        V.vibration_dose_value(Q_(np.ones(10), "m/s^2"), sample_rate=Q_(0, "Hz"))
