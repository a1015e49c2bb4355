"""Peaks of spectra and band coverage."""

import numpy as np
import pytest
from scipy import signal as ssig
from tests.helpers import assert_quantity_close

from latticecalc import Q_
from latticecalc.signals import coverage as V
from latticecalc.signals import criteria as C
from latticecalc.signals import peaks as P
from latticecalc.signals import spectra as S

#: half-power bandwidth of a lightly damped resonance is 2 ζ f_n (Rao 2017 §3.4, from memory);
#: random error per bin ~6 % and interpolation between bins: 10 %
WIDTH_RTOL = 0.10


def test_tones_found_at_their_frequencies():
    fs = 500.0
    t = np.arange(int(fs * 200)) / fs
    v = 1e-4 * np.sin(2 * np.pi * 12.5 * t) + 3e-4 * np.sin(2 * np.pi * 40.0 * t)
    v += 1e-6 * np.random.default_rng(0).standard_normal(t.size)
    nb = S.narrowband_spectrum(Q_(v, "m/s"), sample_rate=Q_(fs, "Hz"), resolution=Q_(0.25, "Hz"),
                               quantity="velocity")
    pk = P.find_peaks(frequency=nb.value["frequency"], velocity_rms=nb.value["rms"], prominence=20)
    assert len(pk) == 2
    assert_quantity_close(pk.value["frequency"], [40.0, 12.5], unit="Hz", atol=0.25, rtol=0)
    # the bin holds the tone's RMS to within the Hann window's scalloping, sqrt(ENBW): √1.5
    ratio = pk.value["velocity_rms"].m / (np.array([3e-4, 1e-4]) / np.sqrt(2))
    assert np.all((ratio > 0.7) & (ratio < 1.0))


def test_resonance_width_is_half_power_bandwidth():
    fs, fn, zeta = 1000.0, 20.0, 0.02   # fs >> fn: the bilinear map shifts 20 Hz by 0.1 %
    wn = 2 * np.pi * fn
    b, a = ssig.bilinear([wn ** 2], [1, 2 * zeta * wn, wn ** 2], fs=fs)
    x = np.random.default_rng(4).standard_normal(int(fs * 1800))
    v = ssig.lfilter(b, a, x) * 1e-4
    nb = S.narrowband_spectrum(Q_(v, "m/s"), sample_rate=Q_(fs, "Hz"), resolution=Q_(0.05, "Hz"),
                               quantity="velocity")
    pk = P.find_peaks(frequency=nb.value["frequency"], velocity_rms=nb.value["rms"], prominence=10,
                      lowest=Q_(5, "Hz"), highest=Q_(60, "Hz"), max_peaks=1)
    assert_quantity_close(pk.value["frequency"][0], fn, unit="Hz", atol=0.2, rtol=0)
    assert_quantity_close(pk.value["width"][0], 2 * zeta * fn, unit="Hz", rtol=WIDTH_RTOL)


def test_rank_targets_by_exceedance():
    levels = {"centre": Q_([12.589, 15.849, 31.623], "Hz"), "nominal": ["12.5", "16", "31.5"],
              "velocity_rms": Q_([30.0, 200.0, 100.0], "um/s")}
    a = C.assess(levels=levels, criterion="vc-a")
    pk = P.Peaks(value={"frequency": Q_([31.0, 16.2, 12.4], "Hz")}, steps=())
    tg = P.rank_targets(peaks=pk, assessment=a)
    assert tg.value["band"] == ["16", "31.5", "12.5"]
    # 200 µm/s over 50 µm/s is 20 log10 4 = 12.04 dB; 100 over 50 is 6.02 dB
    assert_quantity_close(tg.value["exceedance"][:2], [20 * np.log10(4), 20 * np.log10(2)], unit="dB", rtol=1e-9)
    assert list(tg.value["target"]) == [True, True, False]


def test_band_coverage_with_scatter():
    # band 20-40 Hz moved by 0.9..1.1: held everywhere only from 22 to 36 Hz (worked by hand)
    cov = V.band_coverage(lower=Q_(20, "Hz"), upper=Q_(40, "Hz"), peaks=Q_([25.0, 21.0, 38.0, 45.0], "Hz"),
                          scatter_low=0.9, scatter_high=1.1)
    assert cov.value["status"] == ("covered", "nominal only", "nominal only", "not covered")
    assert_quantity_close(cov.value["lower_worst"], 22.0, unit="Hz", rtol=1e-12)
    assert_quantity_close(cov.value["upper_worst"], 36.0, unit="Hz", rtol=1e-12)
    assert_quantity_close(cov.value["margin_lower"], [3.0, -1.0, 16.0, 23.0], unit="Hz", rtol=1e-12)
    assert_quantity_close(cov.value["margin_upper_pct"][0], 100 * 11 / 25, unit="percent", rtol=1e-12)
    assert not cov.all_covered
    assert cov.step("coverage.peak1-lower").ok and cov.step("coverage.peak1-upper").ok
    assert not cov.step("coverage.peak2-lower").ok
    assert not cov.step("coverage.peak4-upper").ok


def test_frequency_factors_from_modulus_range():
    # f ∝ √E (Rao 2017 eq. 8.82): E from 0.81 to 1.21 × nominal moves the band by 0.9 to 1.1
    res = V.frequency_factors(nominal_modulus=Q_(10, "MPa"), low_modulus=Q_(8.1, "MPa"),
                              high_modulus=Q_(12.1, "MPa"))
    assert res.value == pytest.approx((0.9, 1.1), rel=1e-12)


def test_scaled_band_moves_with_root_modulus():
    res = V.scaled_band(lower=Q_(40, "Hz"), upper=Q_(60, "Hz"), nominal_modulus=Q_(10, "MPa"),
                        modulus=Q_(12.1, "MPa"))
    assert_quantity_close(res.value["lower"], 44.0, unit="Hz", rtol=1e-12)   # 40 × √1.21
    assert_quantity_close(res.value["upper"], 66.0, unit="Hz", rtol=1e-12)


def test_survey_targets_read_back_from_an_export(tmp_path):
    import json

    doc = {"results": [{"id": "peaks.target-frequencies", "value": [15.75, 30.5], "unit": "Hz"},
                       {"id": "bands.midband", "value": [16.0, 31.6], "unit": "Hz"},
                       {"id": "maxhold.velocity-rms", "value": [0.131, 0.06], "unit": "mm/s"}]}
    p = tmp_path / "survey.json"
    p.write_text(json.dumps(doc))
    got = V.survey_from_export(p)
    assert_quantity_close(got["targets"], [15.75, 30.5], unit="Hz", rtol=0)
    assert_quantity_close(got["velocity_rms"], [131.0, 60.0], unit="um/s", rtol=1e-12)
    with pytest.raises(ValueError, match="not found"):
        V.survey_from_export(tmp_path / "missing.json")
