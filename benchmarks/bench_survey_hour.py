"""Long three-axis survey records at 1 kHz (one hour; ``--hours 4`` for the four-hour mode): processing time
and peak memory.

Generates an invented record (latticecalc.signals.synthetic, seeded) into a temporary .npy file,
then times the survey pipeline on it: read + check (memory-mapped), and per channel the
one-third-octave band levels (1-250 Hz), integration to velocity (one FFT of the whole channel, the
step that is not blocked), running RMS with 1 s and 0.125 s time weighting, events,
max-hold band spectra over the events, and a 0.25 Hz narrowband spectrum.

Memory is measured with tracemalloc (peak of Python/numpy allocations during the pipeline;
numpy reports its buffers to tracemalloc) and, for the whole process, resource.getrusage
(ru_maxrss, which also counts the generation step and the memory-mapped pages touched).
Side by side: scipy.signal.welch on the whole loaded channel, for a time and memory ratio.
The pipeline runs in a child process of its own, so the whole-process peak (ru_maxrss of that child)
is the pipeline's and not the generator's.
Goals (2-core machine): one hour under 10 s; four hours under 15 s and under 1 GB whole-process peak.
The per-event band levels are timed side by side with the one-call-per-event path they replace.
Prints figures; asserts nothing.
"""

from __future__ import annotations

import argparse
import json
import resource
import subprocess
import sys
import tempfile
import time
import tracemalloc
from pathlib import Path

import numpy as np
from scipy import signal as ssig

from latticecalc import Q_
from latticecalc.signals import records, spectra, synthetic

FS = 1000.0
GOALS_S = {1.0: 10.0, 4.0: 15.0}
GOAL_MB = 1000.0


def generate(path: Path, hours: float) -> None:
    n = int(hours * 3600 * FS)
    rng = np.random.default_rng(2026)
    count = int(hours * 3600 / 120)      # a pass-by every two minutes
    lengths = rng.uniform(8.0, 14.0, count)
    starts = synthetic.passby_times(duration=hours * 3600, count=count, rng=rng, length=14.0)
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


def per_event_old_and_new(path: Path) -> dict:
    """The max-hold band spectra of the vertical channel: one band-level call per event (as before) and the
    vectorised event_spectra, side by side on the same events."""
    rec = records.read_npy(path, sample_rate=Q_(FS, "Hz"), unit="m/s^2")
    sig = rec.channel(rec.channels[-1])
    vel = spectra.to_velocity(sig, sample_rate=rec.sample_rate).value
    ev = spectra.find_events(spectra.running_rms(vel, sample_rate=rec.sample_rate, time_constant=spectra.SLOW))
    del vel
    t0 = time.perf_counter()
    new = spectra.event_spectra(sig, sample_rate=rec.sample_rate, events=ev)
    t_new = time.perf_counter() - t0
    t0 = time.perf_counter()
    per = []
    fs = rec.sample_rate.to("Hz").m
    for k, (a, b) in enumerate(zip(ev.value["start"].to("s").m, ev.value["end"].to("s").m)):
        seg = sig[int(a * fs):int(np.ceil(b * fs)) + 1]
        per.append(spectra.third_octave_levels(seg, sample_rate=rec.sample_rate,
                                               id_prefix=f"event{k + 1}").value["velocity_rms"].to("m/s").m)
    t_old = time.perf_counter() - t0
    diff = float(np.max(np.abs(np.vstack(per) - new.value["per_event"].to("m/s").m) / np.vstack(per).max()))
    return {"events": len(ev), "t_new": t_new, "t_old": t_old, "diff": diff}


def child(kind: str, path: Path) -> None:
    tracemalloc.start()
    t0 = time.perf_counter()
    if kind == "kit":
        out = pipeline(path)
        info = {"events": {k: v[1] for k, v in out.items()}}
    elif kind == "ref":
        whole = np.load(path)
        for c in range(3):
            ssig.welch(whole[:, c], fs=FS, nperseg=34_560, noverlap=17_280)
        info = {}
    else:
        info = per_event_old_and_new(path)
    t = time.perf_counter() - t0
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024   # kB on Linux
    print(json.dumps({"time": t, "traced_mb": peak / 1e6, "rss_mb": rss, **info}))


def run_child(kind: str, path: Path) -> dict:
    done = subprocess.run([sys.executable, __file__, "--child", kind, str(path)], capture_output=True, text=True,
                          check=True)
    return json.loads(done.stdout.strip().splitlines()[-1])


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--hours", type=float, default=1.0, help="record length in hours (1 or 4)")
    ap.add_argument("--child", nargs=2, metavar=("KIND", "PATH"), help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.child:
        child(args.child[0], Path(args.child[1]))
        return
    hours = args.hours
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "survey.npy"
        t0 = time.perf_counter()
        generate(path, hours)
        t_gen = time.perf_counter() - t0
        size_mb = path.stat().st_size / 1e6
        kit = run_child("kit", path)
        ref = run_child("ref", path)
        evs = run_child("events", path)

    goal_s = GOALS_S.get(hours, 10.0 * hours)
    print(f"record: {hours:g} h x 3 channels at {FS:g} Hz = {int(hours * 3600 * FS * 3):,} samples, "
          f"{size_mb:.0f} MB on disk (generated in {t_gen:.1f} s, not counted)")
    print(f"survey pipeline (read+check, bands, velocity, running RMS S and F, events, max-hold, narrowband): "
          f"{kit['time']:.2f} s; tracemalloc peak {kit['traced_mb']:.0f} MB; whole-process peak (ru_maxrss of "
          f"its own process, memory-mapped pages included) {kit['rss_mb']:.0f} MB")
    print(f"events found per channel: {kit['events']}")
    print(f"reference, scipy.signal.welch on the loaded channels only: {ref['time']:.2f} s; tracemalloc peak "
          f"{ref['traced_mb']:.0f} MB; whole-process peak {ref['rss_mb']:.0f} MB")
    print(f"ratios kit/reference: time {kit['time'] / ref['time']:.2f}, whole-process peak "
          f"{kit['rss_mb'] / ref['rss_mb']:.2f}")
    print(f"per-event band levels, vertical channel, {evs['events']} events: event_spectra {evs['t_new']:.2f} s, "
          f"one third_octave_levels call per event {evs['t_old']:.2f} s -> {evs['t_old'] / evs['t_new']:.1f}x; "
          f"largest difference {evs['diff']:.1e} of the largest band RMS")
    print(f"goal: < {goal_s:g} s and < {GOAL_MB:g} MB -> time {'met' if kit['time'] < goal_s else 'NOT met'}, "
          f"memory {'met' if kit['rss_mb'] < GOAL_MB else 'NOT met'}")


if __name__ == "__main__":
    main()
