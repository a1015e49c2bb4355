"""Vibration dose value (VDV) of a frequency-weighted acceleration record, and of repeated events.

The vibration dose value is the fourth root of the time integral of the fourth power of the
frequency-weighted acceleration,

    VDV = (∫₀ᵀ a_w⁴(t) dt)^(1/4)     [m/s^1.75],

so a doubling of the magnitude counts as much as a sixteen-fold duration.  BS 6472-1:2008 assesses
intermittent vibration in buildings (train pass-bys, for instance) by the VDV over the 16 h day and
the 8 h night and compares it with the ranges of its Table 1 (see
:func:`latticecalc.signals.criteria.vdv_assessment`).

Doses add: the fourth-power integral of a period is the sum of those of its events, so n events of
the same dose VDV_e give VDV = (n VDV_e⁴)^(1/4) (derived from the definition), and events of
different kinds give (Σ VDV_i⁴)^(1/4).

The record passed in must already be frequency weighted (W_b for vertical and W_d for horizontal
vibration in BS 6472-1:2008); this module does not weight it.
"""

from __future__ import annotations

import numpy as np
import sympy as sp

from latticecalc.errors import InputError, RecordError
from latticecalc.sheet import CalcResult, Formula, Source, evaluate, quantity_step
from latticecalc.units import Q_, check_dimension, check_positive

BS_6472_1_2008_VDV = Source(author="BSI", title="BS 6472-1:2008 Guide to evaluation of human exposure to vibration "
                            "in buildings – Part 1: Vibration sources other than blasting", year=2008,
                            locator="vibration dose value VDV = (∫ a_w⁴ dt)^(1/4), m/s^1.75, over the 16 h day "
                            "and the 8 h night", tag="definition as described by NoiseNet (UK); the standard itself "
                            "not opened")
DERIVED_DOSE_SUM = Source(author="derived", title="the fourth-power integral of a period is the sum of those of its "
                          "events (additivity of the integral in the VDV definition)", tag="derived")

_dose, _n, _vdv_e = sp.symbols("D_4 n VDV_e")
_NAMES = {"VDV": r"\mathrm{VDV}", "D_4": r"\int a_w^4\,\mathrm{d}t", "VDV_e": r"\mathrm{VDV}_e"}
#: VDV from the fourth-power dose D₄ = ∫ a_w⁴ dt (or Σ VDV_i⁴).
VDV_FORMULA = Formula("VDV", _dose ** sp.Rational(1, 4), _NAMES)
#: VDV of n events of the same dose VDV_e.
EVENTS_FORMULA = Formula("VDV", (_n * _vdv_e ** 4) ** sp.Rational(1, 4), _NAMES)

DOSE_UNIT = "m^4/s^7"
VDV_UNIT = "m/s^1.75"


def vibration_dose_value(acceleration, *, sample_rate, id: str = "vdv") -> CalcResult:
    """VDV of a frequency-weighted acceleration record [acceleration], sampled at ``sample_rate`` [frequency].

    The fourth-power integral is the sum of a_w⁴ Δt over the samples (Δt = 1/``sample_rate``),
    exact for a record of whole periods of a sinusoid sampled five or more times a period.
    ``value`` is the VDV in m/s^1.75; the steps are ``<id>.dose`` and ``<id>.value``.
    """
    a = check_dimension(acceleration, name="acceleration", expected="acceleration").to("m/s^2").m
    a = np.asarray(a, dtype=float)
    if a.ndim != 1:
        raise InputError("a record is one channel, a 1-D array", input_name="acceleration",
                         expected="shape (samples,)", got=str(a.shape))
    if a.size < 2:
        raise RecordError("the record has fewer than two samples", input_name="acceleration",
                          expected="a record", got=str(a.size))
    if not np.all(np.isfinite(a)):
        raise RecordError("the record holds non-finite samples", input_name="acceleration",
                          expected="finite numbers", got="NaN or inf")
    fs = float(check_positive(check_dimension(sample_rate, name="sample_rate", expected="frequency"),
                              name="sample_rate").to("Hz").m)
    duration = a.size / fs
    dose = quantity_step(id=f"{id}.dose", description=f"Fourth-power dose of the weighted acceleration over "
                         f"{duration:.4g} s", value=Q_(float(np.sum(a ** 4)) / fs, DOSE_UNIT), unit=DOSE_UNIT,
                         method=f"sum of a_w⁴ Δt over {a.size} samples, Δt = 1/{fs:g} Hz",
                         source=BS_6472_1_2008_VDV)
    vdv = evaluate(VDV_FORMULA, id=f"{id}.value", description="Vibration dose value of the record",
                   values={"D_4": dose.result}, unit=VDV_UNIT, source=BS_6472_1_2008_VDV,
                   note="the record is taken as already frequency weighted (W_b vertical, W_d horizontal)")
    return CalcResult(value=vdv.result, steps=(dose, vdv), title="Vibration dose value")


def vdv_of_events(*, event_vdv, count, id: str = "vdv.period") -> CalcResult:
    """VDV of ``count`` events [dimensionless, ≥ 0] each of dose ``event_vdv`` [m/s^1.75]: (n VDV_e⁴)^(1/4)."""
    v = _vdv_quantity(event_vdv, name="event_vdv")
    n = float(count.m if hasattr(count, "m") else count)
    if not np.isfinite(n) or n < 0:
        raise InputError("the number of events must be zero or more", input_name="count", expected=">= 0",
                         got=repr(count))
    step = evaluate(EVENTS_FORMULA, id=id, description=f"Vibration dose value of {n:g} events of the same dose",
                    values={"n": Q_(n, ""), "VDV_e": v}, unit=VDV_UNIT, source=DERIVED_DOSE_SUM)
    return CalcResult(value=step.result, steps=(step,), title="Vibration dose value of repeated events")


def combine_vdv(*, vdvs, id: str = "vdv.total") -> CalcResult:
    """VDV of a period made of events of different doses ``vdvs`` [m/s^1.75, 1-D]: (Σ VDV_i⁴)^(1/4)."""
    v = np.atleast_1d(np.asarray(_vdv_quantity(vdvs, name="vdvs").m, dtype=float))
    if v.ndim != 1 or v.size == 0:
        raise InputError("needs one or more vibration dose values", input_name="vdvs",
                         expected="a 1-D array in m/s^1.75", got=str(v.shape))
    dose = quantity_step(id=f"{id}.dose", description=f"Fourth-power dose of {v.size} events, Σ VDV_i⁴",
                         value=Q_(float(np.sum(v ** 4)), DOSE_UNIT), unit=DOSE_UNIT,
                         method="sum of the events' VDV⁴", source=DERIVED_DOSE_SUM)
    vdv = evaluate(VDV_FORMULA, id=id, description="Vibration dose value of the period", values={"D_4": dose.result},
                   unit=VDV_UNIT, source=BS_6472_1_2008_VDV)
    return CalcResult(value=vdv.result, steps=(dose, vdv), title="Vibration dose value of a period")


def _vdv_quantity(value, *, name: str):
    q = check_dimension(value, name=name, expected=VDV_UNIT).to(VDV_UNIT)
    if np.any(np.asarray(q.m) < 0):
        raise InputError("a vibration dose value is not negative", input_name=name, expected=">= 0 m/s^1.75",
                         got=repr(q))
    return q
