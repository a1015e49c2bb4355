"""ISO 2631-2:1989 / BS 6472:1992 building base curve and the generic vibration criteria.

References (from memory; the standards and papers could not be opened here, and every value below is
in the register of values to confirm, lib/latticecalc/data/to_confirm.toml):
- ISO 2631-2:1989, z-axis base curve of RMS acceleration: 1–4 Hz a = 10⁻² f^(−1/2) m/s²;
  4–8 Hz 5 × 10⁻³ m/s²; 8–80 Hz 6.25 × 10⁻⁴ f m/s².  BS 6472:1992 Table 5 multiplying factors:
  critical areas 1, residential night 1.4, residential day 2 to 4, office 4, workshop 8.
  [criteria.iso-2631-2-1989, criteria.bs-6472-1992]
- ISO 2631-2:2003 (the current edition) gives the W_m weighting and no base curve, and BS 6472:1992
  is replaced by BS 6472-1:2008 (vibration dose values, tests/validation/test_bs_6472_1_2008.py): the
  iso-* criteria keep the 1989 curve and name that edition.  [criteria.iso-2631-2-2003]
- Gordon, C. G., "Generic criteria for vibration-sensitive equipment", Proc. SPIE 1619 (1991),
  Table 1: operating theatre 100, residential day 200, office 400, workshop 800 µm/s (the ISO curves
  between 8 and 80 Hz, rounded); VC-A 50, VC-B 25, VC-C 12.5, VC-D 6.25, VC-E 3.12 µm/s;
  Amick, H., Gendreau, M., Busch, T. & Gordon, C., "Evolving criteria for research facilities:
  vibration", Proc. SPIE 5933 (2005): VC curves constant from 1 to 80 Hz.
  [criteria.gordon-1991, criteria.amick-2005]
"""

import math

import numpy as np
import pytest
from tests.helpers import assert_quantity_close

from latticecalc import Q_
from latticecalc.signals import criteria as C

#: Gordon's table rounds 6.25e-4/(2π) m/s = 99.47 µm/s to 100 µm/s: 0.53 %
GORDON_ROUNDING_RTOL = 6e-3


def test_base_curve_points_and_continuity():
    f = Q_([1.0, 2.0, 4.0, 5.0, 8.0, 16.0, 80.0], "Hz")
    a = C.base_curve(frequency=f).value
    expected = [1e-2, 1e-2 / math.sqrt(2), 5e-3, 5e-3, 5e-3, 6.25e-4 * 16, 6.25e-4 * 80]
    assert_quantity_close(a, expected, unit="m/s^2", rtol=1e-12)
    # the three segments meet at 4 Hz and 8 Hz (1e-2/√4 = 5e-3 = 6.25e-4 × 8)
    near = C.base_curve(frequency=Q_([3.999999, 7.999999], "Hz")).value.m
    np.testing.assert_allclose(near, [5e-3, 5e-3], rtol=1e-6)
    assert np.isnan(C.base_curve(frequency=Q_([0.5, 100.0], "Hz")).value.m).all()


@pytest.mark.parametrize("cid, factor, gordon_um_s", [
    ("iso-critical", 1.0, 100.0), ("iso-residential-day", 2.0, 200.0),
    ("iso-office", 4.0, 400.0), ("iso-workshop", 8.0, 800.0)])
def test_iso_curves_in_velocity_match_gordon_table(cid, factor, gordon_um_s):
    centre = Q_(1000 * 10 ** (np.arange(-20, -10) / 10), "Hz")     # 10 Hz to 80 Hz bands (8 Hz band: f_m = 7.94 Hz < 8)
    v = C.criterion_curve(criterion=cid, centre=centre).value["velocity_rms"]
    exact = factor * 6.25e-4 / (2 * math.pi)                        # a/(2πf) with a = 6.25e-4 f
    assert_quantity_close(v, np.full(10, exact), unit="m/s", rtol=1e-12)
    assert_quantity_close(v, np.full(10, gordon_um_s), unit="um/s", rtol=GORDON_ROUNDING_RTOL)


def test_iso_curve_below_8_hz_rises_in_velocity():
    v = C.criterion_curve(criterion="iso-critical", centre=Q_([1.0, 4.0], "Hz")).value["velocity_rms"]
    assert_quantity_close(v, [1e-2 / (2 * math.pi), 5e-3 / (2 * math.pi * 4)], unit="m/s", rtol=1e-12)


@pytest.mark.parametrize("cid, um_s", [("vc-a", 50.0), ("vc-b", 25.0), ("vc-c", 12.5), ("vc-d", 6.25),
                                      ("vc-e", 3.12)])
def test_vc_curves_flat_1_to_80_hz(cid, um_s):
    centre = Q_(1000 * 10 ** (np.arange(-30, -7) / 10), "Hz")     # 1 Hz to 200 Hz
    v = C.criterion_curve(criterion=cid, centre=centre).value["velocity_rms"].to("um/s").m
    inside = centre.m <= 80.0 * 1.01
    np.testing.assert_allclose(v[inside], um_s, rtol=1e-12)
    assert np.isnan(v[~inside]).all()     # undefined above 80 Hz (Amick et al. 2005)


def test_exceedance_and_required_loss():
    # a band at 2 × VC-A exceeds it by 20 log10 2 = 6.02 dB; with a 3 dB margin 9.02 dB is required
    levels = {"centre": Q_([16.0, 31.6], "Hz"), "nominal": ["16", "31.5"],
              "velocity_rms": Q_([100.0, 10.0], "um/s")}
    a = C.assess(levels=levels, criterion="vc-a", margin=Q_(3, "dB"))
    assert_quantity_close(a.value["exceedance"], [20 * math.log10(2), 20 * math.log10(0.2)], unit="dB", rtol=1e-12)
    assert_quantity_close(a.value["required_loss"], [20 * math.log10(2) + 3, 0.0], unit="dB", rtol=1e-12)
    assert a.worst_band == "16"
    assert not a.step("criterion.worst-band").ok


def test_unknown_criterion_is_named():
    with pytest.raises(ValueError, match="criterion"):
        C.criterion_curve(criterion="vc-z", centre=Q_([10.0], "Hz"))


@pytest.mark.parametrize("cid", ["iso-critical", "iso-residential-night", "iso-residential-day", "iso-office",
                                 "iso-workshop"])
def test_iso_criteria_name_the_1989_edition(cid):
    # the current ISO 2631-2:2003 has no base curve: the criterion says which edition it keeps
    c = C.get_criterion(cid)
    assert c.title.startswith("ISO 2631-2:1989 base curve") and "BS 6472:1992" in c.title
    assert "2003" in c.note and c.source.from_memory
    base = C.base_curve(frequency=Q_([10.0], "Hz"))
    assert all("1989" in s.description and s.source.year == 1989 for s in base.steps)


def test_vc_criteria_name_their_source():
    for cid in ("vc-a", "vc-b", "vc-c", "vc-d", "vc-e"):
        assert "Amick et al. 2005" in C.get_criterion(cid).title


def test_a_dose_value_criterion_is_not_a_band_curve():
    with pytest.raises(ValueError, match="vdv_assessment"):
        C.criterion_curve(criterion="bs6472-1-2008-day-low", centre=Q_([10.0], "Hz"))
