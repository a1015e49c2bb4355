"""The kit's one figure style: palette, line weights, fonts, grid and layout, defined once.

Every plot function in :mod:`latticecalc.plots` draws inside :func:`house_style` (the decorator
:func:`styled` does it for a whole function), so all figures of a calc package look alike
whatever the notebook's own matplotlib settings.  Changing anything here changes every figure:
raise :data:`STYLE_VERSION` with it, so cached figure images (:func:`latticecalc.sheet.figure`)
are drawn again.

Log axes get plain tick labels (``20``, ``50``, ``100``, never ``4.6×10¹``) from
:func:`plain_log_ticks`; spectra get an axis limited to what matters from :func:`spectrum_view`.
"""

from __future__ import annotations

import functools
import math
from collections.abc import Callable, Iterator
from contextlib import contextmanager

import numpy as np
from cycler import cycler

#: Raise with any change to :data:`RC` or to how a plot function draws: it is part of the figure cache key.
STYLE_VERSION = "2026.12-2"

#: Colours by role.  Ink for measured data, a deep slate blue for the design, a brick red for limits and
#: requirements, a moss green for peaks to target, a sand tint for bands; greys for context.
PALETTE = {
    "ink": "#1d232b",
    "design": "#2e5a7a",
    "design_light": "#a8c0d4",
    "limit": "#a8432c",
    "target": "#4d7a3a",
    "band": "#eadcb6",
    "band_strong": "#d4b86a",
    "context": "#7b8591",
    "context_light": "#c9cfd6",
    "accent": "#6c4f8c",
}

#: Series colours, in order, for plots that draw several of the same kind.
CYCLE = [PALETTE[k] for k in ("design", "limit", "target", "accent", "band_strong", "context")]

#: matplotlib settings of the house style.
RC: dict = {
    "font.family": "DejaVu Sans",
    "font.size": 8.0,
    "axes.titlesize": 8.5,
    "axes.labelsize": 8.0,
    "xtick.labelsize": 7.5,
    "ytick.labelsize": 7.5,
    "legend.fontsize": 7.0,
    "axes.linewidth": 0.7,
    "axes.edgecolor": PALETTE["ink"],
    "axes.labelcolor": PALETTE["ink"],
    "axes.spines.top": False,
    "axes.spines.right": False,
    "axes.grid": True,
    "axes.grid.which": "major",
    "axes.axisbelow": True,
    "axes.prop_cycle": cycler(color=CYCLE),
    "axes.formatter.useoffset": False,
    "axes.formatter.use_mathtext": False,
    "axes.formatter.limits": (-4, 6),
    "grid.color": "#dfe3e8",
    "grid.linewidth": 0.5,
    "grid.linestyle": "-",
    "lines.linewidth": 1.2,
    "lines.markersize": 4.0,
    "patch.linewidth": 0.0,
    "xtick.color": PALETTE["ink"],
    "ytick.color": PALETTE["ink"],
    "xtick.major.width": 0.6,
    "ytick.major.width": 0.6,
    "xtick.minor.width": 0.4,
    "ytick.minor.width": 0.4,
    "xtick.direction": "out",
    "ytick.direction": "out",
    "legend.frameon": False,
    "legend.handlelength": 1.8,
    "legend.borderaxespad": 0.3,
    "figure.dpi": 130,
    "figure.facecolor": "white",
    "figure.constrained_layout.use": True,
    "figure.constrained_layout.h_pad": 0.03,
    "figure.constrained_layout.w_pad": 0.03,
    "savefig.dpi": 130,
    "savefig.facecolor": "white",
    "image.cmap": "cividis",
}

#: Standard figure widths (inches): a full page column and a half.
FULL_WIDTH = 7.0
HALF_WIDTH = 4.6


@contextmanager
def house_style() -> Iterator[None]:
    """Draw inside this block to use the house style (the notebook's own settings are restored after)."""
    import matplotlib

    with matplotlib.rc_context(RC):
        yield


class DeferredFigure:
    """A house-style figure drawn only when something needs it.

    A plot function decorated with :func:`styled` returns this instead of a drawn figure.  The sheet's
    :func:`~latticecalc.sheet.figure` first looks for the image under a fingerprint of what the figure is
    drawn from (:meth:`data_key`): on a rerun with unchanged data the figure is never built, which took
    about a second of every run for the column-panel's sixteen figures.  Anything else asked of it (``.axes``,
    ``.savefig``…) builds the matplotlib figure and is passed on to it; a figure changed that way is then
    fingerprinted by its artists, as any other figure.
    """

    def __init__(self, function: Callable, args: tuple, kwargs: dict) -> None:
        self._function, self._args, self._kwargs = function, args, kwargs
        self._figure = None

    @property
    def built(self) -> bool:
        """Whether the matplotlib figure has been built."""
        return self._figure is not None

    def figure(self):
        """The matplotlib figure (built on first call, in the house style)."""
        if self._figure is None:
            with house_style():
                self._figure = self._function(*self._args, **self._kwargs)
        return self._figure

    def data_key(self) -> str | None:
        """A fingerprint of the plot function, its code, the style and its arguments.

        None if an argument cannot be fingerprinted: the figure is then built and keyed by its artists.
        """
        import matplotlib

        from latticecalc.cache import fingerprint
        from latticecalc.errors import InputError

        rc = repr(sorted((k, repr(v)) for k, v in matplotlib.rcParams.items()))
        try:
            return fingerprint("deferred-figure-v1", f"{self._function.__module__}.{self._function.__qualname__}",
                               _plot_code_hash(), STYLE_VERSION, matplotlib.__version__, rc,
                               list(self._args), dict(self._kwargs))
        except InputError:
            return None

    def _repr_png_(self) -> bytes:
        """The figure as PNG, for a notebook that shows a plot function's result on its own."""
        import io

        buf = io.BytesIO()
        self.figure().savefig(buf, format="png")
        return buf.getvalue()

    def __getattr__(self, name: str):
        if name.startswith("__") or name in ("_function", "_args", "_kwargs", "_figure"):
            raise AttributeError(name)
        return getattr(self.figure(), name)


@functools.cache
def _plot_code_hash() -> str:
    """SHA-256 of the source of every module a figure's look comes from (plots, units, display)."""
    import hashlib
    from pathlib import Path

    root = Path(__file__).resolve().parents[1]
    h = hashlib.sha256()
    for path in sorted((root / "plots").glob("*.py")) + [root / "units.py", root / "sheet" / "display.py"]:
        h.update(path.name.encode() + path.read_bytes())
    return h.hexdigest()


def styled(function: Callable) -> Callable:
    """Decorate a plot function so that it draws in the house style, when needed (:class:`DeferredFigure`)."""

    @functools.wraps(function)
    def draw(*args, **kwargs):
        return DeferredFigure(function, args, kwargs)

    return draw


def new_figure(width: float = FULL_WIDTH, height: float = 3.4):
    """A figure of the house style's size (call inside :func:`house_style`)."""
    from matplotlib.figure import Figure

    return Figure(figsize=(width, height), layout="constrained")


def _plain(value: float, _pos=None) -> str:
    from latticecalc.units import format_number

    if value <= 0 or not math.isfinite(value):
        return ""
    return format_number(value, 3)


def plain_log_ticks(ax, axis: str = "x") -> None:
    """Plain number tick labels on a log axis: 1-2-5 steps within each decade, no powers of ten.

    Minor ticks stay as marks without labels; a short axis (under two decades) labels 1, 2, 5 of
    every decade, a longer one 1 of every decade and 2, 5 only where there is room.
    """
    from matplotlib.ticker import FixedLocator, FuncFormatter, LogLocator, NullFormatter

    target = ax.xaxis if axis == "x" else ax.yaxis
    lo, hi = ax.get_xlim() if axis == "x" else ax.get_ylim()
    lo, hi = min(lo, hi), max(lo, hi)
    if not (lo > 0 and math.isfinite(hi)):
        return
    decades = math.log10(hi / lo)
    steps = (1, 2, 5) if decades <= 2.2 else (1, 3) if decades <= 3.5 else (1,)
    ticks = [m * 10.0 ** e for e in range(math.floor(math.log10(lo)) - 1, math.ceil(math.log10(hi)) + 1)
             for m in steps]
    ticks = [t for t in ticks if lo * (1 - 1e-9) <= t <= hi * (1 + 1e-9)]
    target.set_major_locator(FixedLocator(ticks))
    target.set_major_formatter(FuncFormatter(_plain))
    target.set_minor_locator(LogLocator(base=10, subs=np.arange(2, 10) * 1.0, numticks=50))
    target.set_minor_formatter(NullFormatter())


def spectrum_view(frequency, level, *, span_db: float = 60.0, headroom_db: float = 5.0):
    """Which bins of a dB spectrum to draw, and the level axis limits.

    Drops the DC bin and the bins below the first one within ``span_db`` of the peak (bins a
    high-pass or an integration filter pushed down by tens of dB), and floors the axis at
    ``span_db`` below the peak.  Returns ``(mask, (bottom, top))``.
    """
    f = np.asarray(frequency, dtype=float)
    lev = np.asarray(level, dtype=float)
    finite = np.isfinite(lev) & (f > 0)
    if not finite.any():
        return finite, (0.0, 1.0)
    peak = float(np.max(lev[finite]))
    floor = peak - span_db
    keep = finite.copy()
    above = np.flatnonzero(finite & (lev >= floor))
    if above.size:
        keep[: above[0]] = False
    shown = lev[keep]
    bottom = max(floor, float(np.min(shown))) - 2.0
    return keep, (bottom, peak + headroom_db)


def band_strip(ax, low: float, high: float, *, label: str, color: str | None = None, text: bool = True,
               orientation: str = "horizontal", alpha: float = 1.0) -> None:
    """A shaded strip for a frequency band with its name and edges written inside it.

    ``orientation="horizontal"``: frequency on the y axis (a dispersion diagram); ``"vertical"``:
    frequency on the x axis (a spectrum).
    """
    from latticecalc.units import format_number

    color = color or PALETTE["band"]
    words = f"{label} {format_number(low, 4)}–{format_number(high, 4)} Hz"
    if orientation == "horizontal":
        ax.axhspan(low, high, color=color, alpha=alpha, zorder=0, lw=0)
        if text:
            ax.text(0.995, (low + high) / 2, words, transform=ax.get_yaxis_transform(), ha="right", va="center",
                    fontsize=7, color=PALETTE["ink"], zorder=5,
                    bbox={"boxstyle": "round,pad=0.15", "fc": "white", "ec": "none", "alpha": 0.75})
    else:
        ax.axvspan(low, high, color=color, alpha=alpha, zorder=0, lw=0)
        if text:
            ax.text(math.sqrt(low * high) if ax.get_xscale() == "log" else (low + high) / 2, 0.99, words,
                    transform=ax.get_xaxis_transform(), ha="center", va="top", fontsize=6.5, rotation=90,
                    color=PALETTE["ink"], zorder=5)
