"""Invented demo records: a site with train pass-bys, and a prototype transmissibility test.

Nothing here is a measurement.  The site is made up: a column near a railway whose pass-bys carry
a few tonal components (their frequencies drift a little from train to train, as train speed does)
over band-limited noise, on top of broadband background vibration and the white noise floor of a
seismic accelerometer.  The prototype test is a base-excited chain of mass-in-mass cells (Huang,
Sun & Huang 2009), whose local resonance opens a stop band, measured with noisy sensors.
All values are chosen for the demo; every generator is seeded, so records are reproducible.
"""

from __future__ import annotations

import math
import os
import tempfile
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pint
from scipy import fft as sfft

from latticecalc.errors import InputError
from latticecalc.sheet import CalcResult, Source, quantity_step
from latticecalc.signals.records import DemoRecordError, Record, from_array
from latticecalc.units import Q_, check_dimension, check_positive

HUANG_2009 = Source(author="Huang, H. H., Sun, C. T. & Huang, G. L.", title="On the negative effective "
                    "mass density in acoustic metamaterials. Int. J. Eng. Sci. 47", year=2009,
                    locator="pp. 610–617, mass-in-mass lattice")

#: Invented tonal components of the demo pass-bys (Hz) and their relative amplitudes.
DEMO_TONES = ((40.0, 1.0), (25.0, 0.10), (12.5, 0.04))
#: Sensor noise floor of the demo accelerometer, m/s² per √Hz (about 0.5 µg/√Hz).
SENSOR_NOISE_DENSITY = 0.5e-6 * 9.80665
#: RMS of the broadband background (1–100 Hz), m/s².
BACKGROUND_RMS = 3e-4
#: Peak tonal amplitude of the strongest pass-by component, m/s² (vertical channel).
PASSBY_AMPLITUDE = 0.05
#: Relative channel scaling (x, y, z).
CHANNEL_SCALE = (0.45, 0.35, 1.0)


def _rate(sample_rate) -> float:
    return float(check_positive(check_dimension(sample_rate, name="sample_rate", expected="frequency"),
                                name="sample_rate").to("Hz").m)


def _seconds(value, name) -> float:
    return float(check_positive(check_dimension(value, name=name, expected="time"), name=name).to("s").m)


def passby_times(*, duration: float, count: int, rng: np.random.Generator, length: float) -> np.ndarray:
    """Start times (s) of ``count`` pass-bys spread over ``duration`` without overlap."""
    if count == 0:
        return np.array([])
    slot = duration / count
    if slot < length + 4.0:
        raise InputError("too many pass-bys for the record length", input_name="passbys",
                         expected=f"<= {int(duration // (length + 4.0))}", got=str(count))
    return np.array([k * slot + rng.uniform(2.0, slot - length - 2.0) for k in range(count)])


def site_channel(*, n: int, fs: float, rng: np.random.Generator, starts: np.ndarray, lengths: np.ndarray,
                 speeds: np.ndarray, scale: float) -> np.ndarray:
    """One acceleration channel (m/s²) of the invented site, float64 array of ``n`` samples."""
    from scipy import signal as ssig  # here: scipy.signal costs a kernel ~0.7 s to import

    t_all = np.arange(n) / fs
    sos_bg = ssig.butter(4, [1.0, min(100.0, 0.45 * fs)], btype="bandpass", fs=fs, output="sos")
    x = ssig.sosfilt(sos_bg, rng.standard_normal(n))
    x *= BACKGROUND_RMS * scale / max(float(np.std(x)), 1e-30)
    x += rng.standard_normal(n) * SENSOR_NOISE_DENSITY * math.sqrt(fs / 2)
    sos_ev = ssig.butter(2, [16.0, min(80.0, 0.45 * fs)], btype="bandpass", fs=fs, output="sos")
    for t0, length, speed in zip(starts, lengths, speeds):
        i0, i1 = int(t0 * fs), min(n, int((t0 + length) * fs))
        t = t_all[i0:i1] - t0
        env = ssig.windows.tukey(i1 - i0, alpha=0.5)
        sig = np.zeros(i1 - i0)
        for f, rel in DEMO_TONES:
            sig += rel * np.sin(2 * np.pi * f * speed * t + rng.uniform(0, 2 * np.pi))
        noise = ssig.sosfilt(sos_ev, rng.standard_normal(i1 - i0))
        sig += 0.3 * noise / max(float(np.std(noise)), 1e-30)
        x[i0:i1] += PASSBY_AMPLITUDE * scale * env * sig
    return x


_SITE_DURATION = Q_(600.0, "s")
_SITE_RATE = Q_(1000.0, "Hz")
_DEMO_DURATION = Q_(240.0, "s")
_TEST_RESONANCE = Q_(40.0, "Hz")
_TEST_DURATION = Q_(120.0, "s")
_TEST_RATE = Q_(2000.0, "Hz")
_TEST_INPUT = Q_(0.5, "m/s^2")
_TEST_NOISE = Q_(2e-4, "m/s^2")


def site_record(*, duration=_SITE_DURATION, sample_rate=_SITE_RATE, passbys: int = 6, seed: int = 0,
                channels: tuple[str, ...] = ("x", "y", "z"), name: str = "synthetic-site") -> Record:
    """A synthetic three-axis acceleration record of the invented site.

    Parameters
    ----------
    duration:
        Record length [time].
    sample_rate:
        [frequency].
    passbys:
        Number of train pass-bys (8 to 14 s each), spread over the record.
    seed:
        Random seed (the record is reproducible).
    channels:
        Channel names (one to three; scaled 0.45, 0.35, 1.0 for x, y, z).
    name:
        Name shown as the record's file.

    Returns
    -------
    Record
        Acceleration in m/s², checked like a file record.
    """
    fs = _rate(sample_rate)
    dur = _seconds(duration, "duration")
    n = int(round(dur * fs))
    rng = np.random.default_rng(seed)
    lengths = rng.uniform(8.0, 14.0, size=passbys)
    starts = passby_times(duration=dur, count=passbys, rng=rng, length=14.0)
    speeds = rng.uniform(0.97, 1.03, size=passbys)
    scales = CHANNEL_SCALE[-len(channels):] if len(channels) < 3 else CHANNEL_SCALE
    data = np.empty((n, len(channels)))
    for c, s in enumerate(scales):
        data[:, c] = site_channel(n=n, fs=fs, rng=rng, starts=starts, lengths=lengths, speeds=speeds, scale=s)
    return from_array(Q_(data, "m/s^2"), sample_rate=Q_(fs, "Hz"), channels=tuple(channels), name=name)


def write_csv(record: Record, path, *, digits: int = 6) -> Path:
    """Write a record as CSV (time column, channels with units in the header)."""
    p = Path(path)
    fs = float(record.sample_rate.to("Hz").m)
    t = np.arange(record.n_samples) / fs
    header = ",".join(["time [s]"] + [f"{c} [{record.unit.replace(' ', '')}]" for c in record.channels])
    header = header.replace("meter / second ** 2", "m/s^2").replace("meter/second**2", "m/s^2")
    table = np.column_stack([t, np.asarray(record.data)])
    fmt = ["%.6f"] + [f"%.{digits}g"] * len(record.channels)   # time to 1 µs, samples to `digits` figures
    np.savetxt(p, table, delimiter=",", header=header, comments="", fmt=fmt)
    return p


# --- prototype test ----------------------------------------------------------------------------
@dataclass(frozen=True, kw_only=True)
class ChainModel:
    """Base-excited chain of mass-in-mass cells (SI values; ``eta`` is the loss factor)."""

    cells: int
    m1: float
    m2: float
    k1: float
    k2: float
    eta: float

    def transmissibility(self, frequency: np.ndarray) -> np.ndarray:
        """Complex acceleration ratio (last outer mass / base) at ``frequency`` (Hz, array)."""
        w = 2 * np.pi * np.asarray(frequency, dtype=float)
        k1 = self.k1 * (1 + 1j * self.eta)
        k2 = self.k2 * (1 + 1j * self.eta)
        m_eff = self.m1 + self.m2 * k2 / (k2 - self.m2 * w ** 2)
        n = self.cells
        out = np.empty(w.shape, dtype=complex)
        for i, (wi, mi) in enumerate(zip(w, m_eff)):
            a = np.zeros((n, n), dtype=complex)
            for j in range(n):
                a[j, j] = (2 * k1 if j < n - 1 else k1) - wi ** 2 * mi
                if j > 0:
                    a[j, j - 1] = -k1
                if j < n - 1:
                    a[j, j + 1] = -k1
            rhs = np.zeros(n, dtype=complex)
            rhs[0] = k1
            out[i] = np.linalg.solve(a, rhs)[-1]
        return out


@dataclass(frozen=True, kw_only=True)
class SyntheticTest(CalcResult):
    """Input and output records of a synthetic shaker test; ``value`` maps ``input`` and ``output``."""

    model: ChainModel

    def true_transmissibility(self, frequency) -> np.ndarray:
        """The model's exact complex transmissibility at ``frequency`` [frequency] (array)."""
        f = check_dimension(frequency, name="frequency", expected="frequency").to("Hz").m
        return self.model.transmissibility(np.atleast_1d(f))


def prototype_test(*, resonance=_TEST_RESONANCE, mass_ratio: float = 1.0, cells: int = 3,
                   loss_factor: float = 0.05, duration=_TEST_DURATION, sample_rate=_TEST_RATE,
                   input_rms=_TEST_INPUT, noise_rms=_TEST_NOISE, seed: int = 0) -> SyntheticTest:
    """Synthetic shaker test of a prototype: random base input, noisy input and output accelerometers.

    Parameters
    ----------
    resonance:
        Local resonance of the inner masses, √(k2/m2) / 2π [frequency] (the stop band's lower edge).
    mass_ratio:
        m2 / m1 (inner to outer mass); the stop band runs to about resonance·√(1 + mass_ratio).
    cells:
        Number of cells in the chain.
    loss_factor:
        Structural loss factor η of every spring.
    duration, sample_rate:
        Record length [time] and rate [frequency].
    input_rms:
        RMS of the base acceleration, band-limited 2 Hz to 0.4 × sample rate [acceleration].
    noise_rms:
        RMS of each sensor's white noise [acceleration].
    seed:
        Random seed.
    """
    from scipy import signal as ssig  # here: scipy.signal costs a kernel ~0.7 s to import

    f0 = float(check_positive(check_dimension(resonance, name="resonance", expected="frequency"),
                              name="resonance").to("Hz").m)
    fs = _rate(sample_rate)
    dur = _seconds(duration, "duration")
    if not mass_ratio > 0:
        raise InputError("mass ratio must be positive", input_name="mass_ratio", expected="> 0",
                         got=repr(mass_ratio))
    m1 = 1.0
    m2 = mass_ratio * m1
    k2 = m2 * (2 * np.pi * f0) ** 2
    k1 = m1 * (2 * np.pi * 1.6 * f0) ** 2
    model = ChainModel(cells=int(cells), m1=m1, m2=m2, k1=k1, k2=k2, eta=float(loss_factor))
    n = int(round(dur * fs))
    rng = np.random.default_rng(seed)
    sos = ssig.butter(4, [2.0, 0.4 * fs], btype="bandpass", fs=fs, output="sos")
    base = ssig.sosfilt(sos, rng.standard_normal(n))
    a_in = float(check_dimension(input_rms, name="input_rms", expected="acceleration").to("m/s^2").m)
    base *= a_in / float(np.std(base))
    spec = sfft.rfft(base)
    freq = sfft.rfftfreq(n, 1 / fs)
    out = sfft.irfft(spec * model.transmissibility(freq), n=n)
    sn = float(check_dimension(noise_rms, name="noise_rms", expected="acceleration").to("m/s^2").m)
    inp = base + sn * rng.standard_normal(n)
    out = out + sn * rng.standard_normal(n)
    rin = from_array(Q_(inp, "m/s^2"), sample_rate=Q_(fs, "Hz"), channels=("input",), name="synthetic-input")
    rout = from_array(Q_(out, "m/s^2"), sample_rate=Q_(fs, "Hz"), channels=("output",),
                      name="synthetic-output")
    upper = f0 * math.sqrt(1 + mass_ratio)
    step = quantity_step(id="synthetic.model-band", description="Local-resonance band of the synthetic "
                         "model (inner resonance to f0·√(1 + m2/m1))", value=Q_([f0, upper], "Hz"), unit="Hz",
                         method=f"{cells} mass-in-mass cells, η = {loss_factor:g}", source=HUANG_2009)
    return SyntheticTest(value={"input": rin, "output": rout}, steps=(step,), model=model,
                         title="Synthetic prototype test")


def as_quantity(record: Record, channel: str) -> pint.Quantity:
    """Shorthand for ``record.channel(channel)``."""
    return record.channel(channel)


#: Files that mark a project folder (the same the project loader looks for): the template and the
#: cover file, ``cover.toml`` or its name in projects an older kit made, ``project.toml``.
PROJECT_MARKERS = ("template.toml", ("cover.toml", "project.toml"))
_NO_DATA_HINT = ("Nothing was written. Give a path inside the project folder where no file is, or give the real "
                 "record and delete the demo seed input")


def _is_project(folder: Path) -> bool:
    return all(any((folder / name).is_file() for name in ((names,) if isinstance(names, str) else names))
               for names in PROJECT_MARKERS)


def _project_folder(path: Path) -> Path | None:
    """The project folder demo data may go to (resolved), or ``None`` outside any project.

    A notebook runs in its project folder, so the current folder's project wins; otherwise the
    nearest folder on ``path`` that holds ``template.toml`` and ``cover.toml``.
    """
    here = Path.cwd().resolve()
    for folder in (here, *here.parents):
        if _is_project(folder):
            return folder
    for folder in path.parents:
        if _is_project(folder):
            return folder.resolve()
    return None


def _state(path: Path) -> str:
    if path.is_symlink() and not path.exists():
        return "is a link to nothing"
    return "exists" if os.path.lexists(path) else "is missing"


def _demo_target(path, *, input_name: str) -> Path:
    """The absolute path where a demo record may be created, or :class:`DemoRecordError`.

    Refused: a path with ``..``, a path outside the project folder (resolved), a path through a
    link inside the project (or, outside any project, through a link at the nearest existing
    folder), and any path where a file or link already is.
    """
    p = Path(path).absolute()
    where = str(path)
    if ".." in p.parts:
        raise DemoRecordError("a demo record is never written through '..'", input_name=input_name,
                              expected="a path inside the project folder without '..'", got=where, file=where,
                              hint=_NO_DATA_HINT)
    if os.path.lexists(p):
        raise DemoRecordError(f"the path {_state(p)}: demo data never replace a file or follow a link",
                              input_name=input_name, expected="no file at this path", got=where, file=where,
                              hint=_NO_DATA_HINT)
    root = _project_folder(p)
    for q in p.parents:
        if not os.path.lexists(q):
            continue                       # created below, as a real folder
        if root is None:                   # outside any project: the nearest existing folder bounds it
            if q.is_symlink():
                raise _link_error(q, where, input_name)
            return p
        if not _inside(q, root):
            break
        if q.resolve() == root and not _inside(q.parent, root):
            return p                       # the project folder itself
        if q.is_symlink():
            raise _link_error(q, where, input_name)
    raise DemoRecordError("the path is outside the project folder: demo data are written only inside it",
                          input_name=input_name, expected=f"a path inside {root}", got=f"{where} "
                          f"(resolves to {p.resolve()})", file=where, hint=_NO_DATA_HINT)


def _inside(path: Path, root: Path) -> bool:
    real = path.resolve()
    return real == root or root in real.parents


def _link_error(link: Path, where: str, input_name: str) -> DemoRecordError:
    return DemoRecordError(f"the folder {link} is a link: demo data are never written through a link",
                           input_name=input_name, expected="a path of real folders inside the project",
                           got=where, file=where, hint=_NO_DATA_HINT)


def _stage_csv(record: Record, target: Path, *, digits: int) -> Path:
    """Write ``record`` as CSV to a new temporary file beside ``target``; return the temporary path."""
    target.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".part", dir=target.parent)
    os.close(fd)
    try:
        write_csv(record, tmp, digits=digits)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return Path(tmp)


def _publish(tmp: Path, target: Path, *, input_name: str) -> None:
    """Give the staged file its name only if nothing is there (a hard link never replaces a file)."""
    try:
        try:
            os.link(tmp, target)
        except FileExistsError:
            raise DemoRecordError("a file appeared at the path while the demo record was written",
                                  input_name=input_name, got=str(target), file=str(target),
                                  hint=_NO_DATA_HINT) from None
        except OSError:                    # no hard links here: exclusive create, never through a link
            flags = os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_NOFOLLOW", 0)
            try:
                fd = os.open(target, flags, 0o666)
            except FileExistsError:
                raise DemoRecordError("a file appeared at the path while the demo record was written",
                                      input_name=input_name, got=str(target), file=str(target),
                                      hint=_NO_DATA_HINT) from None
            with os.fdopen(fd, "wb") as out:
                out.write(tmp.read_bytes())
    finally:
        tmp.unlink(missing_ok=True)


def ensure_demo_record(path, *, seed: int, duration=_DEMO_DURATION, passbys: int = 4,
                       input_name: str = "record.file") -> Path:
    """Write the invented site's record to ``path`` (CSV) unless a file is there; return the path.

    Used by the demo survey project so that no record data need be committed: the record is made
    from ``seed`` at the first run.  An existing file is left as it is (and read by the caller).
    The record is written only inside the project folder, never through a link nor over a file;
    otherwise :class:`~latticecalc.signals.records.DemoRecordError` names ``input_name`` and the path.
    """
    p = Path(path)
    if p.exists():
        return p
    target = _demo_target(p, input_name=input_name)
    rec = site_record(duration=duration, sample_rate=_SITE_RATE, passbys=passbys, seed=seed, name=p.name)
    _publish(_stage_csv(rec, target, digits=5), target, input_name=input_name)
    return p


def ensure_demo_test(input_path, output_path, *, seed: int, resonance=_TEST_RESONANCE,
                     duration=_TEST_DURATION,
                     input_names: tuple[str, str] = ("test.input_file", "test.output_file")) -> tuple[Path, Path]:
    """Write the synthetic prototype test's input and output records (CSV) when neither file exists.

    Both files there: nothing is written.  One of them there (or a link to nothing at either
    path): :class:`~latticecalc.signals.records.DemoRecordError`, since writing the pair would
    replace a file the kit may not have made, and writing one half would pair it with another test.
    The records are written only inside the project folder and never through a link.
    """
    pi, po = Path(input_path), Path(output_path)
    if pi.exists() and po.exists():
        return pi, po
    if os.path.lexists(pi) or os.path.lexists(po):
        states = f"{input_names[0]} {pi} {_state(pi)}, {input_names[1]} {po} {_state(po)}"
        pairs = tuple(zip(input_names, (pi, po)))
        name, path = ([(n, q) for n, q in pairs if q.is_symlink() and not q.exists()]
                      or [(n, q) for n, q in pairs if not os.path.lexists(q)])[0]
        raise DemoRecordError("one record of the test pair is there and the other is not: demo data are "
                              "generated only where neither file exists", input_name=name,
                              expected="both records, or neither (demo)", got=states, file=str(path),
                              hint="Put the missing record in place, or for a fresh demo delete both files; "
                                   "for a real test delete test.demo_seed. Nothing was written")
    t_in = _demo_target(pi, input_name=input_names[0])
    t_out = _demo_target(po, input_name=input_names[1])
    if t_in == t_out:
        raise DemoRecordError("the input and output records are the same file", input_name=input_names[1],
                              expected=f"a path other than {input_names[0]}", got=str(po), file=str(po))
    test = prototype_test(resonance=resonance, duration=duration, seed=seed)
    staged_in = _stage_csv(test.value["input"], t_in, digits=6)
    try:
        staged_out = _stage_csv(test.value["output"], t_out, digits=6)
    except BaseException:
        staged_in.unlink(missing_ok=True)
        raise
    try:
        _publish(staged_in, t_in, input_name=input_names[0])
    except BaseException:
        staged_out.unlink(missing_ok=True)
        raise
    try:
        _publish(staged_out, t_out, input_name=input_names[1])
    except BaseException:
        t_in.unlink(missing_ok=True)       # made by this call a moment ago: the pair is all or nothing
        raise
    return pi, po
