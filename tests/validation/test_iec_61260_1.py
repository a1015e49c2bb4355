"""One-third-octave band frequencies and band levels.

Reference: IEC 61260-1:2014, *Electroacoustics – Octave-band and fractional-octave-band filters –
Part 1: Specifications*, clause 5 (base-10 system): G = 10^(3/10), f_m = 1000 Hz · G^(x/3),
f_1,2 = f_m · G^(∓1/6); the same in ANSI S1.11-2004.  Printed examples (5 significant figures):
x = −12: 63.096 Hz, edges 56.234 and 70.795 Hz; x = −11: 79.433 Hz, edges 70.795 and 89.125 Hz.
Nominal labels: ISO 266:1997 R10 preferred numbers (from memory).

A sinusoid's band level is worked analytically: a = A sin(2π f t) has velocity amplitude
A / (2π f), RMS A / (2π f √2), level 20 log10(v_rms / 1e-9 m/s).
"""

import math

import numpy as np
import pytest
from tests.helpers import assert_quantity_close

from latticecalc import Q_
from latticecalc.signals.bands import nominal_label, third_octave_bands
from latticecalc.signals.spectra import third_octave_levels

#: printed values carry 5 significant figures
PRINTED_RTOL = 1e-4
#: the kit states "a tone at a midband frequency within 0.5 % of its RMS"
TONE_RTOL = 5e-3
#: dB equivalent of TONE_RTOL: 20 log10(1.005)
TONE_ATOL_DB = 20 * math.log10(1 + TONE_RTOL)


@pytest.fixture(scope="module")
def bands():
    return third_octave_bands(lowest=Q_(1, "Hz"), highest=Q_(250, "Hz"))


def test_printed_examples(bands):
    x = list(bands.value["index"])
    for n, fm, f1, f2 in [(-12, 63.096, 56.234, 70.795), (-11, 79.433, 70.795, 89.125)]:  # IEC 61260-1:2014 printed
        i = x.index(n)
        assert_quantity_close(bands.centre[i], fm, unit="Hz", rtol=PRINTED_RTOL)
        assert_quantity_close(bands.lower[i], f1, unit="Hz", rtol=PRINTED_RTOL)
        assert_quantity_close(bands.upper[i], f2, unit="Hz", rtol=PRINTED_RTOL)


def test_exact_base_10_formula(bands):
    # IEC 61260-1:2014 eqs. for b = 3, written out independently
    x = bands.value["index"].astype(float)
    fm = 1000.0 * 10 ** (3 * x / 30)
    assert_quantity_close(bands.centre, fm, unit="Hz", rtol=1e-13)
    assert_quantity_close(bands.lower, fm * 10 ** (-3 / 60), unit="Hz", rtol=1e-13)
    assert_quantity_close(bands.upper, fm * 10 ** (3 / 60), unit="Hz", rtol=1e-13)
    # adjacent bands share their edges (IEC 61260-1 clause 5.4)
    assert_quantity_close(bands.upper[:-1], bands.lower[1:], rtol=1e-13)
    # 1 Hz band: midband exactly 1 Hz, edges 10^(∓1/20) Hz
    assert_quantity_close(bands.centre[0], 1.0, unit="Hz", rtol=1e-14)
    assert_quantity_close(bands.lower[0], 10 ** (-1 / 20), unit="Hz", rtol=1e-14)


def test_nominal_labels_iso_266(bands):
    # ISO 266:1997 R10 series (from memory); 25 Hz and up as printed in the IEC 61260-1:2014 tables
    expected = ["1", "1.25", "1.6", "2", "2.5", "3.15", "4", "5", "6.3", "8", "10", "12.5", "16", "20",
                "25", "31.5", "40", "50", "63", "80", "100", "125", "160", "200", "250"]
    assert list(bands.value["nominal"]) == expected
    assert nominal_label(0) == "1000"
    assert len(bands) == 25


@pytest.mark.parametrize("n", [-30, -25, -18, -12, -6])
def test_sinusoid_band_rms_and_level(n):
    # worked analytically (module docstring); acceleration amplitude A at the exact midband frequency
    fs, duration, amp = 1000.0, 120.0, 0.01
    f = 1000.0 * 10 ** (n / 10)
    t = np.arange(int(fs * duration)) / fs
    res = third_octave_levels(Q_(amp * np.sin(2 * np.pi * f * t), "m/s^2"), sample_rate=Q_(fs, "Hz"),
                              quantity="acceleration", lowest=Q_(1, "Hz"), highest=Q_(250, "Hz"))
    i = list(res.value["centre"].m).index(min(res.value["centre"].m, key=lambda c: abs(c - f)))
    v_rms = amp / (2 * math.pi * f * math.sqrt(2))
    assert_quantity_close(res.value["velocity_rms"][i], v_rms, unit="m/s", rtol=TONE_RTOL)
    level = 20 * math.log10(v_rms / 1e-9)
    assert_quantity_close(res.value["level"][i], level, unit="dB", atol=TONE_ATOL_DB, rtol=0)
    # the neighbouring bands hold (almost) nothing: at least 40 dB down
    others = np.delete(res.value["level"].m, i)
    assert others.max() < level - 40


def test_velocity_input_gives_same_levels():
    # the same tone given as velocity v = -A/(2πf) cos(2πft) (analytic integral of the acceleration)
    fs, amp, f = 1000.0, 0.01, 10.0
    t = np.arange(int(fs * 60)) / fs
    acc = third_octave_levels(Q_(amp * np.sin(2 * np.pi * f * t), "m/s^2"), sample_rate=Q_(fs, "Hz"))
    vel = third_octave_levels(Q_(-amp / (2 * np.pi * f) * np.cos(2 * np.pi * f * t), "mm/s") * 1000,
                              sample_rate=Q_(fs, "Hz"), quantity="velocity")
    k = list(acc.value["nominal"]).index("10")
    assert_quantity_close(vel.value["velocity_rms"][k], acc.value["velocity_rms"][k], rtol=1e-3)
