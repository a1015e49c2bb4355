"""DIN 4150-3 structural damage guideline values (short-term vibration at the foundation).

Reference: DIN 4150-3:2016, Vibrations in buildings – Part 3: Effects on structures, Table 1
(from memory: the values were seen in a secondary source that is not named, and the standard itself
was not opened here; in the register of values to confirm as criteria.din-4150-3): peak particle
velocity in mm/s at 1–10 / 10–50 / 50–100 Hz: commercial 20 / 20–40 / 40–50; dwellings 5 / 5–15 /
15–20; sensitive 3 / 3–8 / 8–10.  Between corner values the kit interpolates linearly in frequency
(the straight lines of the standard's Figure 1, from memory).
"""

import math

import numpy as np
import pytest
from tests.helpers import assert_quantity_close

from latticecalc import Q_
from latticecalc.signals import criteria as C
from latticecalc.signals import spectra as S


@pytest.mark.parametrize("building, corners", [
    ("commercial", [(5, 20), (10, 20), (50, 40), (100, 50)]),
    ("dwelling", [(5, 5), (10, 5), (50, 15), (100, 20)]),
    ("sensitive", [(5, 3), (10, 3), (50, 8), (100, 10)]),
])
def test_table_corner_values(building, corners):
    for f, v in corners:
        assert_quantity_close(C.din_4150_3_limit(building=building, frequency=Q_(f, "Hz")).value, v,
                              unit="mm/s", rtol=1e-12)


def test_interpolation_between_corners():
    # dwellings at 30 Hz: halfway from 5 mm/s (10 Hz) to 15 mm/s (50 Hz) -> 10 mm/s
    assert_quantity_close(C.din_4150_3_limit(building="dwelling", frequency=Q_(30, "Hz")).value, 10.0,
                          unit="mm/s", rtol=1e-12)
    # above 100 Hz the 100 Hz value is kept
    assert_quantity_close(C.din_4150_3_limit(building="sensitive", frequency=Q_(200, "Hz")).value, 10.0,
                          unit="mm/s", rtol=1e-12)


def test_ppv_and_dominant_frequency_of_a_tone():
    # a = A sin(2π f t) -> v amplitude A / (2π f) (analytic), dominant frequency f
    fs, f, amp = 1000.0, 25.0, 0.5
    t = np.arange(int(fs * 40)) / fs
    res = S.peak_particle_velocity(Q_(amp * np.sin(2 * np.pi * f * t), "m/s^2"), sample_rate=Q_(fs, "Hz"))
    assert_quantity_close(res.value["ppv"], amp / (2 * math.pi * f), unit="m/s", rtol=1e-6)
    assert_quantity_close(res.value["frequency"], f, unit="Hz", atol=0.25, rtol=0)


def test_assessment_verdicts():
    ok = C.din_4150_3_assessment(ppv=Q_(4, "mm/s"), frequency=Q_(30, "Hz"), building="dwelling")
    assert ok.step("criterion.din-4150-3-check").ok                 # 4 <= 10 mm/s
    bad = C.din_4150_3_assessment(ppv=Q_(4, "mm/s"), frequency=Q_(8, "Hz"), building="sensitive")
    assert not bad.step("criterion.din-4150-3-check").ok            # 4 > 3 mm/s


def test_the_guideline_is_marked_for_confirmation():
    # recalled values: the source says so, and a check on them is named by the approval rule
    from latticecalc.sources_register import blocks_approval, register_entries

    assert C.DIN_4150_3.from_memory
    assert [e.id for e in register_entries(C.DIN_4150_3)] == ["criteria.din-4150-3"]
    res = C.din_4150_3_assessment(ppv=Q_(4, "mm/s"), frequency=Q_(30, "Hz"), building="dwelling")
    assert blocks_approval(res) == [C.DIN_4150_3]
