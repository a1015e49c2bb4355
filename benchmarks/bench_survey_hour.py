"""One-hour three-axis survey record at 1 kHz: processing time and peak memory.

Generates an invented record (latticecalc.signals.synthetic, seeded) into a temporary .npy file,
then times the survey pipeline on it: read + check (memory-mapped), and per channel the
one-third-octave band levels (1-250 Hz), integration to velocity (one FFT of the whole channel, the
step that is not blocked), running RMS with 1 s and 0.125 s time weighting, events,
max-hold band spectra over the events, and a 0.25 Hz narrowband spectrum.

Memory is measured with tracemalloc (peak of Python/numpy allocations during the pipeline;
numpy reports its buffers to tracemalloc) and, for the whole process, resource.getrusage
(ru_maxrss, which also counts the generation step and the memory-mapped pages touched).
Side by side: scipy.signal.welch on the whole loaded channel, for a time and memory ratio.
Goal (issue 4): under 10 s and under 1 GB on the 2-core machine.  Prints figures; asserts nothing.
"""

from __future__ import annotations

import resource
import tempfile
import time
import tracemalloc
from pathlib import Path

import numpy as np
from scipy import signal as ssig

from latticecalc import Q_
from latticecalc.signals import records, spectra, synthetic

FS = 1000.0
HOURS = 1.0


def generate(path: Path) -> None:
    n = int(HOURS * 3600 * FS)
    rng = np.random.default_rng(2026)
    count = int(HOURS * 3600 / 120)      # a pass-by every two minutes
    lengths = rng.uniform(8.0, 14.0, count)
    starts = synthetic.passby_times(duration=HOURS * 3600, count=count, rng=rng, length=14.0)
    speeds = rng.uniform(0.97, 1.03, count)
    out = np.lib.format.open_memmap(path, mode="w+", dtype=np.float64, shape=(n, 3))
    for c, scale in enumerate(synthetic.CHANNEL_SCALE):
        out[:, c] = synthetic.site_channel(n=n, fs=FS, rng=rng, starts=starts, lengths=lengths, speeds=speeds,
                                           scale=scale)
    out.flush()
    del out


def pipeline(path: Path) -> dict:
    rec = records.read_npy(path, sample_rate=Q_(FS, "Hz"), unit="m/s^2")
    rec.check_bands(lowest=Q_(1, "Hz"), highest=Q_(250, "Hz"))
    out = {}
    for name in rec.channels:
        sig = rec.channel(name)
        bands = spectra.third_octave_levels(sig, sample_rate=rec.sample_rate)
        vel = spectra.to_velocity(sig, sample_rate=rec.sample_rate).value      # whole-channel FFT
        slow = spectra.running_rms(vel, sample_rate=rec.sample_rate, time_constant=spectra.SLOW)
        spectra.running_rms(vel, sample_rate=rec.sample_rate, time_constant=spectra.FAST)
        del vel
        ev = spectra.find_events(slow)
        hold = spectra.event_spectra(sig, sample_rate=rec.sample_rate, events=ev)
        spectra.narrowband_spectrum(sig, sample_rate=rec.sample_rate)
        out[name] = (bands, len(ev), hold)
    return out


def main() -> None:
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "survey-hour.npy"
        t0 = time.perf_counter()
        generate(path)
        t_gen = time.perf_counter() - t0
        size_mb = path.stat().st_size / 1e6

        tracemalloc.start()
        t0 = time.perf_counter()
        out = pipeline(path)
        t_kit = time.perf_counter() - t0
        _, peak_kit = tracemalloc.get_traced_memory()
        tracemalloc.stop()

        tracemalloc.start()
        t0 = time.perf_counter()
        whole = np.load(path)
        for c in range(3):
            ssig.welch(whole[:, c], fs=FS, nperseg=34_560, noverlap=17_280)
        t_ref = time.perf_counter() - t0
        _, peak_ref = tracemalloc.get_traced_memory()
        tracemalloc.stop()
        del whole

    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024   # kB on Linux
    events = {k: v[1] for k, v in out.items()}
    print(f"record: {HOURS:g} h x 3 channels at {FS:g} Hz = {int(HOURS * 3600 * FS * 3):,} samples, "
          f"{size_mb:.0f} MB on disk (generated in {t_gen:.1f} s, not counted)")
    print(f"survey pipeline (read+check, bands, velocity, running RMS S and F, events, max-hold, narrowband): "
          f"{t_kit:.2f} s; tracemalloc peak {peak_kit / 1e6:.0f} MB")
    print(f"events found per channel: {events}")
    print(f"reference, scipy.signal.welch on the loaded channels only: {t_ref:.2f} s; "
          f"tracemalloc peak {peak_ref / 1e6:.0f} MB")
    print(f"ratios kit/reference: time {t_kit / t_ref:.2f}, peak memory {peak_kit / peak_ref:.2f}")
    print(f"process peak resident set (getrusage ru_maxrss, includes generation): {rss:.0f} MB")
    print(f"goal: < 10 s and < 1000 MB -> time {'met' if t_kit < 10 else 'NOT met'}, "
          f"memory {'met' if max(peak_kit / 1e6, rss) < 1000 else 'NOT met'}")


if __name__ == "__main__":
    main()
