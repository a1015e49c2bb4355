"""Spectra: Parseval, integration, Welch against scipy, running RMS, velocity levels, events."""

import math

import numpy as np
import pytest
from scipy import signal as ssig
from tests.helpers import assert_quantity_close

from latticecalc import Q_
from latticecalc.errors import DimensionError, RecordError
from latticecalc.signals import spectra as S
from latticecalc.signals import synthetic

#: Parseval within 1 % (issue 4, "Must show")
PARSEVAL_RTOL = 0.01
#: frequency-domain integration of a periodic tone is exact up to round-off
INTEGRATION_ATOL = 1e-9
#: scipy.signal.welch and the kit's batched Welch compute the same sums
WELCH_RTOL = 1e-9
FS = 1000.0


def _tone(f, amp, seconds, fs=FS):
    t = np.arange(int(seconds * fs)) / fs
    return t, amp * np.sin(2 * np.pi * f * t)


def test_parseval_welch_integrates_to_variance():
    # Parseval's theorem (density scaling): ∫ G(f) df = variance; Welch 1967
    x = np.random.default_rng(7).normal(0.0, 0.02, size=600_000)
    res = S.welch_psd(Q_(x, "m/s^2"), sample_rate=Q_(FS, "Hz"), resolution=Q_(0.25, "Hz"))
    integral = float(np.sum(res.value["psd"].m) * res.resolution.m)
    assert integral == pytest.approx(float(np.var(x)), rel=PARSEVAL_RTOL)


def test_parseval_tone_plus_noise():
    _, x = _tone(12.3, 0.05, 200)
    x = x + np.random.default_rng(3).normal(0, 0.01, x.size)
    res = S.welch_psd(Q_(x, "m/s^2"), sample_rate=Q_(FS, "Hz"), resolution=Q_(0.1, "Hz"))
    integral = float(np.sum(res.value["psd"].m) * res.resolution.m)
    assert integral == pytest.approx(float(np.var(x)), rel=PARSEVAL_RTOL)


def test_welch_matches_scipy_reference():
    # general-purpose reference library: scipy.signal.welch, Hann, 50 % overlap, density scaling
    x = np.random.default_rng(11).normal(size=50_000)
    res = S.welch_psd(Q_(x, "mm/s"), sample_rate=Q_(FS, "Hz"), resolution=Q_(FS / 4096, "Hz"))
    f, p = ssig.welch(x * 1e-3, fs=FS, window="hann", nperseg=4096, noverlap=2048, detrend="constant")
    assert_quantity_close(res.value["frequency"], f, unit="Hz", rtol=1e-12)
    assert_quantity_close(res.value["psd"], p, unit="(m/s)^2/Hz", rtol=WELCH_RTOL, atol=1e-30)


def test_acceleration_integrates_to_analytic_velocity():
    # a = A sin(ωt)  ->  v = -A/ω cos(ωt)  (integer number of cycles: the FFT method is exact)
    f, amp = 7.5, 0.2
    t, a = _tone(f, amp, 40)
    res = S.to_velocity(Q_(a, "m/s^2"), sample_rate=Q_(FS, "Hz"), highpass=Q_(0.5, "Hz"))
    expected = -amp / (2 * np.pi * f) * np.cos(2 * np.pi * f * t)
    assert_quantity_close(res.value, expected, unit="m/s", atol=INTEGRATION_ATOL, rtol=0)
    back = S.to_acceleration(res.value, sample_rate=Q_(FS, "Hz"))
    assert_quantity_close(back.value, a, unit="m/s^2", atol=1e-9, rtol=0)


def test_highpass_removes_low_frequencies():
    t, a = _tone(0.1, 1.0, 100)   # below highpass / 2 = 0.25 Hz
    res = S.to_velocity(Q_(a, "m/s^2"), sample_rate=Q_(FS, "Hz"), highpass=Q_(0.5, "Hz"))
    assert float(np.max(np.abs(res.value.m))) < 1e-9


def test_running_rms_step_response_and_sine():
    # exponential averaging of x² = 1 from t = 0: y(t) = 1 − exp(−t/τ)  (IEC 61672-1 time weighting)
    tau = 0.125
    x = np.ones(int(FS * 2))
    res = S.running_rms(Q_(x, "m/s"), sample_rate=Q_(FS, "Hz"), time_constant=Q_(tau, "s"),
                        output_rate=Q_(FS, "Hz"))
    t = res.value["time"].m
    k = int(round(tau * FS))
    assert res.value["rms"].m[k] == pytest.approx(math.sqrt(1 - math.exp(-(t[k] + 1 / FS) / tau)), rel=1e-3)
    # a sine settles at A/√2 (ripple of the S weighting at 10 Hz below 1 %)
    _, s = _tone(10.0, 3.0, 20)
    res = S.running_rms(Q_(s, "mm/s"), sample_rate=Q_(FS, "Hz"), time_constant=Q_(1.0, "s"))
    tail = res.value["rms"].to("mm/s").m[res.value["time"].m > 12]
    assert np.all(np.abs(tail / (3.0 / math.sqrt(2)) - 1) < 0.01)


def test_running_rms_blocks_do_not_change_the_result():
    x = np.random.default_rng(5).normal(size=30_000)
    one = S.running_rms(Q_(x, "m/s"), sample_rate=Q_(FS, "Hz"), output_rate=Q_(FS, "Hz"))
    many = S.running_rms(Q_(x, "m/s"), sample_rate=Q_(FS, "Hz"), output_rate=Q_(FS, "Hz"), block=777)
    np.testing.assert_allclose(many.value["rms"].m, one.value["rms"].m, rtol=1e-12)


def test_velocity_level_references():
    # L = 20 log10(v / 1e-9 m/s): 1 mm/s -> 120 dB exactly (ISO 1683 reference)
    assert_quantity_close(S.velocity_level(Q_(1, "mm/s")).value, 120.0, unit="dB", rtol=1e-12)
    # VdB = 20 log10(v / 1 µin/s) (FTA 2018 §5.1); 1 µin/s = 2.54e-8 m/s -> 0 VdB
    assert_quantity_close(S.velocity_level(Q_(2.54e-8, "m/s"), reference="1 microinch/s").value, 0.0,
                          unit="dB", atol=1e-9, rtol=0)
    # 65 VdB = 2.54e-8 m/s x 10^(65/20) = 45.2 µm/s (derived from the VdB definition of FTA 2018 §5.1,
    # rounded to 3 figures)
    v65 = S.velocity_from_level(Q_(65, "dB"), reference="1 microinch/s").value
    assert_quantity_close(v65, 45.2, unit="um/s", atol=0.05, rtol=0)  # half a unit in the 3rd figure
    # L re 1e-9 m/s = VdB + 20 log10(25.4) = VdB + 28.10 dB
    v = Q_(0.1, "mm/s")
    diff = S.velocity_level(v).value.m - S.velocity_level(v, reference="1 microinch/s").value.m
    assert diff == pytest.approx(20 * math.log10(25.4), rel=1e-12)


def test_bad_inputs_are_named():
    with pytest.raises(DimensionError, match="signal"):
        S.third_octave_levels(Q_(np.ones(100), "m"), sample_rate=Q_(FS, "Hz"))
    with pytest.raises(RecordError, match="sample rate too low"):
        S.third_octave_levels(Q_(np.zeros(20000), "m/s^2"), sample_rate=Q_(400, "Hz"))
    with pytest.raises(RecordError, match="too short"):
        S.third_octave_levels(Q_(np.zeros(2000), "m/s^2"), sample_rate=Q_(FS, "Hz"))
    with pytest.raises(DimensionError, match="v_rms"):
        S.velocity_level(Q_(1.0, "m/s^2"))


def test_events_and_max_hold_on_synthetic_site():
    rec = synthetic.site_record(duration=Q_(240, "s"), passbys=4, seed=2, channels=("z",))
    z = rec.channel("z")
    rms = S.running_rms(z, sample_rate=rec.sample_rate)
    ev = S.find_events(rms)
    assert len(ev) == 4
    durations = (ev.value["end"] - ev.value["start"]).to("s").m
    assert np.all((durations > 6) & (durations < 20))   # pass-bys last 8 to 14 s (generator)
    spec = S.event_spectra(z, sample_rate=rec.sample_rate, events=ev)
    per = spec.value["per_event"].m
    np.testing.assert_allclose(spec.value["velocity_rms"].m, per.max(axis=0), rtol=0)
    # the strongest demo tone (40 Hz, ±3 % with train speed) dominates the max-hold spectrum
    k = int(np.argmax(spec.value["velocity_rms"].m))
    assert spec.value["nominal"][k] == "40"


RTOL_SAME_KERNEL = 1e-12     # the same Welch and band integration, with or without the sheet steps


def test_event_band_levels_equal_one_band_level_call_per_event():
    # common practice: the per-event numbers come from one kernel; each must equal third_octave_levels on
    # that event's samples (the Welch PSD of Welch 1967 integrated over IEC 61260-1 bands)
    rec = synthetic.site_record(duration=Q_(240, "s"), passbys=4, seed=2, channels=("z",))
    z = rec.channel("z")
    ev = S.find_events(S.running_rms(z, sample_rate=rec.sample_rate))
    spec = S.event_spectra(z, sample_rate=rec.sample_rate, events=ev)
    fs = rec.sample_rate.to("Hz").m
    for k, (a, b) in enumerate(zip(ev.value["start"].to("s").m, ev.value["end"].to("s").m)):
        one = S.third_octave_levels(z[int(a * fs):int(math.ceil(b * fs)) + 1], sample_rate=rec.sample_rate)
        np.testing.assert_allclose(spec.value["per_event"].m[k], one.value["velocity_rms"].to("m/s").m,
                                   rtol=RTOL_SAME_KERNEL, atol=0)
    # an event too short for the lowest band is refused as a single call would be
    short = S.Events(value={"start": Q_([10.0, 100.0], "s"), "end": Q_([10.5, 110.0], "s"),
                            "peak": Q_([1.0, 1.0], "m/s^2")}, steps=(), threshold=Q_(1.0, "m/s^2"))
    with pytest.raises(RecordError, match="too short"):
        S.event_spectra(z, sample_rate=rec.sample_rate, events=short)


def test_velocity_chunks_do_not_change_the_result(monkeypatch):
    # common practice: the integration is bin by bin (Brandt 2011, V = A / (j 2π f)), so the chunking of
    # the spectrum must not change a single sample, also where a chunk starts inside the high-pass taper
    rng = np.random.default_rng(5)
    a = Q_(rng.standard_normal(20_001), "m/s^2")
    whole = S.to_velocity(a, sample_rate=Q_(FS, "Hz")).value.m
    monkeypatch.setattr(S, "FFT_CHUNK", 7)
    chunked = S.to_velocity(a, sample_rate=Q_(FS, "Hz")).value.m
    np.testing.assert_array_equal(chunked, whole)
    assert np.abs(whole).max() > 0
