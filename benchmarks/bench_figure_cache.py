"""Figure cache: time to put a figure on the sheet when it is drawn, and when its PNG comes from the cache.

Each figure is built from the same data in every variant (a notebook builds it on every run); the
variants differ only in what ``latticecalc.sheet.figure`` does with it: draw and encode the PNG
(no cache, and a cold cache that also writes it), or fingerprint the figure's artists and read the PNG
back (warm cache).  Prints times side by side and the ratio; asserts nothing.

Run: python benchmarks/bench_figure_cache.py [--repeat N]
"""

from __future__ import annotations

import argparse
import tempfile
import time
from pathlib import Path

import matplotlib

matplotlib.use("Agg")

from latticecalc import Q_  # noqa: E402
from latticecalc.plots.signals import narrowband_figure, transmissibility_figure  # noqa: E402
from latticecalc.sheet.display import figure  # noqa: E402
from latticecalc.signals import frf, spectra, synthetic  # noqa: E402
from latticecalc.signals import peaks as peak_search  # noqa: E402


def _data():
    rec = synthetic.site_record(duration=Q_(60, "s"), seed=3, passbys=2)
    x = synthetic.as_quantity(rec, rec.channels[-1])
    narrow = spectra.narrowband_spectrum(x, sample_rate=rec.sample_rate, resolution=Q_(0.25, "Hz"),
                                         quantity="acceleration", highpass=Q_(0.5, "Hz"))
    found = peak_search.find_peaks(frequency=narrow.value["frequency"], velocity_rms=narrow.value["rms"],
                                   prominence=6.0, lowest=Q_(1, "Hz"), highest=Q_(250, "Hz"))
    test = synthetic.prototype_test(seed=1)
    rin, rout = test.value["input"], test.value["output"]
    h = frf.transmissibility(input=synthetic.as_quantity(rin, rin.channels[0]),
                             output=synthetic.as_quantity(rout, rout.channels[0]), sample_rate=rin.sample_rate,
                             resolution=Q_(0.5, "Hz"))
    band = frf.attenuation_band(h, level=-10, lowest=Q_(20, "Hz"), highest=Q_(100, "Hz"))
    return {
        "fig.narrowband": lambda: narrowband_figure(narrow, peaks=found, highest=Q_(250, "Hz")),
        "fig.transmissibility": lambda: transmissibility_figure(h, band=band, level=-10, highest=Q_(200, "Hz")),
    }


def _time(build, *, fid: str, cache, repeat: int) -> tuple[float, str]:
    best, png = float("inf"), ""
    for _ in range(repeat):
        t0 = time.perf_counter()
        shown = figure(build(), id=fid, caption="benchmark", cache=cache)
        best = min(best, time.perf_counter() - t0)
        png = shown.record["png"]
    return best, png


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__)
    parser.add_argument("--repeat", type=int, default=3)
    args = parser.parse_args()
    builders = _data()
    print(f"{'figure':<24}{'build only':>12}{'no cache':>12}{'cold cache':>12}{'warm cache':>12}{'saving':>10}")
    total_draw = total_warm = 0.0
    for fid, build in builders.items():
        t0 = time.perf_counter()
        build()
        t_build = time.perf_counter() - t0
        t_none, png_none = _time(build, fid=fid, cache=None, repeat=args.repeat)
        with tempfile.TemporaryDirectory() as tmp:
            t_cold, _ = _time(build, fid=fid, cache=Path(tmp), repeat=1)
            t_warm, png_warm = _time(build, fid=fid, cache=Path(tmp), repeat=args.repeat)
        same = "same PNG" if png_warm == png_none else "PNG DIFFERS"
        total_draw += t_none
        total_warm += t_warm
        print(f"{fid:<24}{t_build:>11.3f}s{t_none:>11.3f}s{t_cold:>11.3f}s{t_warm:>11.3f}s"
              f"{t_none / t_warm:>9.1f}x  {same}")
    print(f"all figures: drawn {total_draw:.3f} s, from the warm cache {total_warm:.3f} s "
          f"({total_draw / total_warm:.1f}x)")


if __name__ == "__main__":
    main()
