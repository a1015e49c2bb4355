"""Prototype tests: H1 of a known linear filter, the attenuation band, modulus calibration."""

import math

import numpy as np
import pytest
from scipy import signal as ssig
from tests.helpers import assert_quantity_close

from latticecalc import Q_
from latticecalc.physics import beams
from latticecalc.signals import frf as F
from latticecalc.signals import synthetic

FS = 1000.0
#: random error of |H1| at γ² >= 0.9 with ~200 averages is ~2 % (Bendat & Piersol 2010,
#: Table 9.6, sqrt(1-γ²)/(|γ| sqrt(2 n_d)), from memory); 5 % leaves room
H1_RTOL = 0.05
#: phase tolerance (rad) matching H1_RTOL
H1_PHASE_ATOL = 0.05


def test_h1_recovers_known_filter_where_coherence_is_high():
    rng = np.random.default_rng(21)
    x = rng.standard_normal(int(FS * 240))
    b, a = ssig.butter(2, 40.0, fs=FS)            # known linear filter: 2nd-order low-pass, 40 Hz
    y = ssig.lfilter(b, a, x) + 0.05 * rng.standard_normal(x.size)   # noise on the output only
    res = F.transmissibility(input=Q_(x, "m/s^2"), output=Q_(y, "m/s^2"), sample_rate=Q_(FS, "Hz"),
                             resolution=Q_(1.0, "Hz"))
    f = res.value["frequency"].m
    _, h_true = ssig.freqz(b, a, worN=f, fs=FS)   # scipy reference response
    good = (res.value["coherence"].m > 0.9) & (f > 0)
    assert good.sum() > 50
    h = res.value["h1"].m
    np.testing.assert_allclose(np.abs(h[good]), np.abs(h_true[good]), rtol=H1_RTOL)
    np.testing.assert_allclose(np.angle(h[good] / h_true[good]), 0.0, atol=H1_PHASE_ATOL)
    # coherence falls where the filter attenuates the signal into the noise
    assert res.value["coherence"].m[np.argmin(np.abs(f - 400))] < 0.5


def test_attenuation_band_of_synthetic_prototype_matches_its_model():
    test = synthetic.prototype_test(duration=Q_(120, "s"), seed=3)
    res = F.transmissibility(input=test["input"].channel("input"), output=test["output"].channel("output"),
                             sample_rate=test["input"].sample_rate, resolution=Q_(0.5, "Hz"))
    band = F.attenuation_band(res, level=-10.0, lowest=Q_(20, "Hz"), highest=Q_(100, "Hz"))
    # the model's own band at -10 dB, found on a fine grid (independent of the estimator)
    fine = np.linspace(20, 100, 80001)
    lev = 20 * np.log10(np.abs(test.model.transmissibility(fine)))
    below = lev < -10
    runs = np.flatnonzero(np.diff(np.concatenate(([0], below.astype(int), [0]))))
    spans = list(zip(fine[runs[0::2]], fine[runs[1::2] - 1]))
    lo, hi = max(spans, key=lambda s: s[1] - s[0])
    assert_quantity_close(band.value["lower"], lo, unit="Hz", atol=1.0, rtol=0)   # two bins
    assert_quantity_close(band.value["upper"], hi, unit="Hz", atol=1.0, rtol=0)
    # the band sits at the local resonance (40 Hz) of the synthetic model (Huang et al. 2009)
    assert lo < 40.0 + 2.0 and hi > 40.0


def test_attenuation_band_refuses_an_unreached_level():
    test = synthetic.prototype_test(duration=Q_(60, "s"), seed=1)
    res = F.transmissibility(input=test["input"].channel("input"), output=test["output"].channel("output"),
                             sample_rate=test["input"].sample_rate)
    with pytest.raises(ValueError, match="never falls below"):
        F.attenuation_band(res, level=-200.0, lowest=Q_(5, "Hz"), highest=Q_(30, "Hz"))


def test_calibration_scales_with_frequency_squared():
    # E ∝ f² at fixed geometry (Rao 2017 eq. 8.82): a 10 % higher frequency means 1.21 × E
    cal = F.calibrate_modulus(nominal_modulus=Q_(20, "MPa"), measured_frequency=Q_(44, "Hz"),
                              predicted_frequency=Q_(40, "Hz"), frequency_uncertainty=Q_(0.44, "Hz"))
    assert_quantity_close(cal.value, 20 * 1.1 ** 2, unit="MPa", rtol=1e-12)
    # GUM first-order propagation: u_E / E = 2 u_f / f = 2 %
    assert_quantity_close(cal.uncertainty, 0.02 * 20 * 1.21, unit="MPa", rtol=1e-12)


def test_calibration_from_strut_reproduces_the_measured_frequency():
    geom = {"length": Q_(12, "mm"), "diameter": Q_(2.5, "mm"), "density": Q_(1150, "kg/m^3")}
    cal = F.calibrate_from_strut(measured_frequency=Q_(900, "Hz"), nominal_modulus=Q_(15, "MPa"), **geom)
    again = beams.bending_frequency(youngs_modulus=cal.value, **geom)
    assert_quantity_close(again.value, 900.0, unit="Hz", rtol=1e-10)
    ratio = (900.0 / cal.predicted_frequency.to("Hz").m) ** 2
    assert_quantity_close(cal.value, 15 * ratio, unit="MPa", rtol=1e-12)
    assert math.isclose(cal.step("calibration.recomputed.f1-cc").result.to("Hz").m, 900.0, rel_tol=1e-10)


def test_antiresonance_of_synthetic_chain_is_the_local_resonance():
    # at the resonators' frequency their effective mass is unbounded and the chain stops moving
    # (Huang, Sun & Huang 2009); with light damping the minimum stays within one bin of it
    test = synthetic.prototype_test(resonance=Q_(38, "Hz"), duration=Q_(60, "s"), seed=5)
    res = F.transmissibility(input=test["input"].channel("input"), output=test["output"].channel("output"),
                             sample_rate=test["input"].sample_rate, resolution=Q_(0.5, "Hz"))
    dip = F.resonance(res, lowest=Q_(20, "Hz"), highest=Q_(100, "Hz"), extremum="min")
    assert_quantity_close(dip.value["frequency"], 38.0, unit="Hz", atol=0.5, rtol=0)
    assert_quantity_close(dip.value["uncertainty"], 0.5 / math.sqrt(12), unit="Hz", rtol=1e-3)
