"""One-third-octave bands: exact base-10 midband frequencies and band edges.

IEC 61260-1:2014, *Electroacoustics – Octave-band and fractional-octave-band filters – Part 1:
Specifications*, clause 5.2–5.4: octave frequency ratio G = 10^(3/10); for one-third-octave bands
(b = 3) the exact midband frequencies are f_m = f_r · G^(x/b) with f_r = 1000 Hz and x an integer,
and the band edges are f_m · G^(∓1/(2b)).  The same base-10 system is in ANSI S1.11-2004.
Nominal labels follow the ISO 266 R10 preferred numbers (1, 1.25, 1.6, 2, 2.5, 3.15, 4, 5, 6.3, 8
times a power of ten).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import sympy as sp

from latticecalc.errors import InputError
from latticecalc.sheet import CalcResult, Formula, Source, evaluate, quantity_step
from latticecalc.units import Q_, check_dimension, check_positive

IEC_61260_1 = Source(author="IEC", title="IEC 61260-1:2014 Electroacoustics – Octave-band and "
                     "fractional-octave-band filters – Part 1: Specifications", year=2014,
                     locator="clauses 5.2 to 5.4 (base-10 system, eqs. 1, 3 and 4)")
ISO_266 = Source(author="ISO", title="ISO 266:1997 Acoustics – Preferred frequencies", year=1997,
                 locator="Table 1 (R10 series)", tag="from memory")

_fr, _G, _x, _b = sp.symbols("f_r G x b")

#: Octave frequency ratio, base-10 system.
OCTAVE_RATIO = Formula("G", sp.Integer(10) ** (sp.Integer(3) / 10))
#: Exact midband frequency of band x (b = 3 for one-third octaves).
MIDBAND = Formula("f_m", _fr * _G ** (_x / _b))
_fm = sp.Symbol("f_m")
#: Lower and upper band-edge frequencies.
LOWER_EDGE = Formula("f_1", _fm * _G ** (-1 / (2 * _b)))
UPPER_EDGE = Formula("f_2", _fm * _G ** (1 / (2 * _b)))

#: Default band range of the kit: 1 Hz to 250 Hz (nominal).
DEFAULT_LOWEST = Q_(1.0, "Hz")
DEFAULT_HIGHEST = Q_(250.0, "Hz")

_R10 = (1.0, 1.25, 1.6, 2.0, 2.5, 3.15, 4.0, 5.0, 6.3, 8.0)


def band_index(frequency: float) -> int:
    """Index x of the one-third-octave band whose exact midband is nearest ``frequency`` (Hz)."""
    if not (frequency > 0 and math.isfinite(frequency)):
        raise InputError("a band frequency must be positive", input_name="frequency",
                         expected="> 0 Hz", got=repr(frequency))
    return int(round(10.0 * math.log10(frequency / 1000.0)))


def nominal_label(index: int) -> str:
    """Nominal midband label of band ``index`` (ISO 266 R10): ``-30 -> '1'``, ``-12 -> '63'``."""
    decade, k = divmod(index, 10)
    value = _R10[k] * 10.0 ** (decade + 3)
    text = f"{value:.6g}"
    return text


@dataclass(frozen=True, kw_only=True)
class BandSet(CalcResult):
    """Result of :func:`third_octave_bands`.

    ``value`` maps ``index`` (x, int array), ``nominal`` (labels), ``centre``, ``lower``,
    ``upper`` (exact frequencies, Quantity arrays in Hz).
    """

    @property
    def centre(self):
        """Exact midband frequencies (Hz)."""
        return self.value["centre"]

    @property
    def lower(self):
        """Lower band edges (Hz)."""
        return self.value["lower"]

    @property
    def upper(self):
        """Upper band edges (Hz)."""
        return self.value["upper"]

    def __len__(self) -> int:
        return len(self.value["index"])


def third_octave_bands(*, lowest=DEFAULT_LOWEST, highest=DEFAULT_HIGHEST) -> BandSet:
    """The one-third-octave bands from ``lowest`` to ``highest`` (nominal frequencies, [frequency]).

    Parameters
    ----------
    lowest, highest:
        Nominal (or exact) midband frequencies of the first and last band [frequency]; each is
        snapped to the nearest base-10 band.

    Returns
    -------
    BandSet
        Exact midband and edge frequencies per IEC 61260-1:2014, with the labels.
    """
    lo = check_positive(check_dimension(lowest, name="lowest", expected="frequency"), name="lowest")
    hi = check_positive(check_dimension(highest, name="highest", expected="frequency"), name="highest")
    i0, i1 = band_index(float(lo.to("Hz").m)), band_index(float(hi.to("Hz").m))
    if i1 < i0:
        raise InputError("the highest band lies below the lowest band", input_name="highest",
                         expected=f">= {lo:~P}", got=f"{hi:~P}")
    x = np.arange(i0, i1 + 1)
    g = evaluate(OCTAVE_RATIO, id="bands.ratio", description="Octave frequency ratio (base 10)",
                 values={}, unit="", source=IEC_61260_1, sig=6)
    values = {"f_r": Q_(1000.0, "Hz"), "G": g.result, "x": Q_(x.astype(float), ""), "b": Q_(3.0, "")}
    mid = evaluate(MIDBAND, id="bands.midband", description="Exact one-third-octave midband frequencies",
                   values=values, unit="Hz", source=IEC_61260_1, sig=5)
    lower = evaluate(LOWER_EDGE, id="bands.lower", description="Lower band-edge frequencies",
                     values={"f_m": mid.result, "G": g.result, "b": Q_(3.0, "")}, unit="Hz",
                     source=IEC_61260_1, sig=5)
    upper = evaluate(UPPER_EDGE, id="bands.upper", description="Upper band-edge frequencies",
                     values={"f_m": mid.result, "G": g.result, "b": Q_(3.0, "")}, unit="Hz",
                     source=IEC_61260_1, sig=5)
    labels = tuple(nominal_label(int(i)) for i in x)
    count = quantity_step(id="bands.count", description=f"Bands from {labels[0]} Hz to {labels[-1]} Hz "
                          "(nominal labels, ISO 266 R10)", value=Q_(len(x), ""), method="count",
                          source=ISO_266)
    return BandSet(value={"index": x, "nominal": labels, "centre": mid.result, "lower": lower.result,
                          "upper": upper.result},
                   steps=(g, mid, lower, upper, count), title="One-third-octave bands (IEC 61260-1)")
