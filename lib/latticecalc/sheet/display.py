"""Jupyter display hooks: every shown result carries an HTML view and a JSON record.

The JSON record (MIME type :data:`RECORD_MIME`) is what the export reads back from the executed
notebook; the HTML view is drawn from that same record by :mod:`latticecalc.sheet.render`.
"""

from __future__ import annotations

import base64
import hashlib
import io
from pathlib import Path
from typing import Any

import numpy as np

from latticecalc.sheet.render import NOTEBOOK_CSS, record_html
from latticecalc.sheet.source import Source

RECORD_MIME = "application/vnd.latticecalc.record+json"


def result_record(result: Any) -> dict:
    """The JSON record of a :class:`~latticecalc.sheet.result.CalcResult`."""
    return {"kind": "result", "title": getattr(result, "title", ""),
            "steps": [s.to_dict() for s in result.steps]}


def _bundle(rec: dict, plain: str) -> dict:
    return {RECORD_MIME: rec, "text/html": f"<style>{NOTEBOOK_CSS}</style>" + record_html(rec),
            "text/plain": plain}


def result_bundle(result: Any) -> dict:
    """MIME bundle for a result: JSON record + HTML + plain text."""
    rec = result_record(result)
    plain = "\n".join(f"{s['id']}: {s['description']} = {s['result_text']}"
                      + (f" [{s['verdict']}]" if s["kind"] == "check" else "")
                      for s in rec["steps"])
    return _bundle(rec, plain)


class Shown:
    """A displayable wrapper around one record (figure, note, table)."""

    def __init__(self, rec: dict, plain: str) -> None:
        self.record = rec
        self._plain = plain

    def _repr_mimebundle_(self, include=None, exclude=None) -> dict:
        return _bundle(self.record, self._plain)


_FIGURE_SUBFOLDER = "figures"


def _figure_folder(cache: Any) -> Path | None:
    from latticecalc.cache import project_folder_cache, resolve_folder

    if cache == "auto":    # the project's cache when the current folder is a project
        return project_folder_cache(_FIGURE_SUBFOLDER)
    folder = resolve_folder(cache)
    return None if folder is None else folder / _FIGURE_SUBFOLDER


def _feed(h, value: Any) -> None:
    """Feed one artist property into the hash (arrays by their bytes, the rest by its repr)."""
    if isinstance(value, np.ma.MaskedArray):
        value = value.filled(np.nan)
    if isinstance(value, np.ndarray):
        arr = np.ascontiguousarray(value)
        if arr.dtype == object:
            h.update(repr(arr.tolist()).encode())
        else:
            h.update(str(arr.dtype).encode() + str(arr.shape).encode() + arr.tobytes())
    elif isinstance(value, (list, tuple)) and value and isinstance(value[0], np.ndarray):
        for v in value:
            _feed(h, v)
    else:
        h.update(repr(value).encode())
    h.update(b"|")


def _artist_state(artist) -> list:
    """What a drawn artist shows: its data, colours, line styles, text and place (no drawing needed)."""
    out: list = [type(artist).__name__, artist.get_visible(), artist.get_zorder(), artist.get_label(),
                 artist.get_alpha()]
    for getter in ("get_xydata", "get_offsets", "get_array", "get_segments", "get_xy", "get_text", "get_position",
                   "get_color", "get_facecolor", "get_edgecolor", "get_linestyle", "get_linewidth", "get_marker",
                   "get_markersize", "get_fontsize", "get_rotation", "get_hatch", "get_extent", "get_sizes",
                   "get_clim", "get_width", "get_height", "get_ha", "get_va", "get_data_3d"):
        method = getattr(artist, getter, None)
        if method is None:
            continue
        try:
            value = method()
        except (TypeError, ValueError, AttributeError, RuntimeError):
            continue
        out.append(np.asarray(value) if isinstance(value, (list, tuple)) and getter != "get_segments"
                   and value and not isinstance(value[0], np.ndarray) and not isinstance(value[0], str)
                   else value)
    # 3D artists keep their data in these until drawn (their 2D data is empty before the first draw)
    for name in ("_verts3d", "_offsets3d", "_segments3d", "_vec"):
        value = getattr(artist, name, None)
        if value is not None:
            out.append(np.asarray(value, dtype=float) if name != "_segments3d" else
                       [np.asarray(v, dtype=float) for v in value])
    if hasattr(artist, "get_paths") and not hasattr(artist, "get_segments"):
        out.extend(p.vertices for p in artist.get_paths())
    cmap = getattr(artist, "get_cmap", None)
    if cmap is not None:
        out.append(cmap().name)
    return out


def _artists(fig: Any):
    """Every artist of ``fig`` except the tick marks and labels of its axes (see :func:`_axis_state`).

    ``fig.findobj()`` would make a Tick artist for every tick of every axis just to read it (a third of a
    second per notebook); the ticks are read from each axis's locator and formatter instead.
    """
    import matplotlib.axis

    stack = [fig]
    while stack:
        artist = stack.pop()
        yield artist
        if isinstance(artist, matplotlib.axis.Axis):
            stack += [artist.label, artist.offsetText]
        else:
            stack += artist.get_children()


def _axis_state(axis: Any) -> list:
    """What an axis shows: its range, scale, tick places and texts, tick and label settings (no Tick artist made)."""
    major = np.asarray(axis.get_majorticklocs(), dtype=float)
    minor = np.asarray(axis.get_minorticklocs(), dtype=float)
    return [type(axis).__name__, np.asarray(axis.get_view_interval(), dtype=float), axis.get_scale(),
            major, list(axis.major.formatter.format_ticks(major)), minor,
            list(axis.minor.formatter.format_ticks(minor)), sorted(axis._major_tick_kw.items(), key=str),
            sorted(axis._minor_tick_kw.items(), key=str), axis.get_inverted(), axis.get_visible()]


def figure_fingerprint(fig: Any, *, id: str, dpi: int) -> str:
    """SHA-256 of a figure's id, the data and look of every artist it holds, the house style version and dpi.

    Two figures with the same fingerprint draw the same image, so a cached PNG stands for either.
    Reading the artists costs far less than drawing them.
    """
    import matplotlib

    from latticecalc.plots.style import STYLE_VERSION

    fig = _built(fig)
    h = hashlib.sha256()
    for part in (id, STYLE_VERSION, matplotlib.__version__, dpi, tuple(fig.get_size_inches())):
        _feed(h, part)
    for artist in _artists(fig):
        for value in _artist_state(artist):
            _feed(h, value)
        for axis in getattr(artist, "_axis_map", {}).values():    # an Axes: x, y (and z) axes
            for value in _axis_state(axis):
                _feed(h, np.asarray(value) if isinstance(value, np.ndarray) else value)
    return h.hexdigest()


def _png(fig: Any, dpi: int) -> bytes:
    """The figure as PNG; cropped to its artists only when no layout engine has fitted it already.

    A figure in the house style is laid out by matplotlib's constrained layout; cropping it as well drew it
    twice (a third of the time of every figure drawn).
    """
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=dpi, bbox_inches=None if fig.get_layout_engine() is not None else "tight")
    return buf.getvalue()


def _built(fig: Any) -> Any:
    """The matplotlib figure of ``fig`` (a deferred figure is built)."""
    from latticecalc.plots.style import DeferredFigure

    return fig.figure() if isinstance(fig, DeferredFigure) else fig


def _cache_key(fig: Any, *, id: str, dpi: int) -> tuple[str, Any]:
    """The image's cache key, and the matplotlib figure if it had to be built for the key (else None).

    A deferred figure not yet built is keyed by what it is drawn from (:meth:`DeferredFigure.data_key`)
    and stays unbuilt; any other figure by its artists (:func:`figure_fingerprint`).
    """
    from latticecalc.plots.style import DeferredFigure

    if isinstance(fig, DeferredFigure) and not fig.built:
        data = fig.data_key()
        if data is not None:
            return "d" + hashlib.sha256(f"{data}|{id}|{dpi}".encode()).hexdigest(), None
    built = _built(fig)
    return figure_fingerprint(built, id=id, dpi=dpi), built


def figure(fig: Any, *, id: str, caption: str, dpi: int = 130, cache: Any = "auto") -> Shown:
    """Show a matplotlib figure on the sheet with an id and caption (closed after rendering).

    The PNG is cached on disk under a key of the id, the resolution and either what a plot function's
    deferred figure is drawn from (it is then not even built on a hit) or the figure's artists
    (:func:`figure_fingerprint`): a figure that did not change since the last run is not drawn again.
    ``cache``: ``"auto"`` (the project's ``.latticecalc-cache/figures`` when the current folder is a
    project, else no cache), a folder, ``True`` (``./.latticecalc-cache``) or ``None`` (always draw).
    """
    import matplotlib.pyplot as plt

    from latticecalc.cache import write_entry

    folder = _figure_folder(cache)
    png = built = None
    if folder is not None:
        key, built = _cache_key(fig, id=id, dpi=dpi)
        path = folder / f"{key}.png"
        if path.is_file():
            png = path.read_bytes()
    if png is None:
        built = built if built is not None else _built(fig)
        png = _png(built, dpi)
        if folder is not None:
            write_entry(path, png)
    if built is not None:
        plt.close(built)
    text = base64.b64encode(png).decode("ascii")
    return Shown({"kind": "figure", "id": id, "caption": caption, "png": text}, f"[figure {id}] {caption}")


def note(text: str, *, category: str = "note", source: Source | None = None) -> Shown:
    """Show an assumption, caution or note; ``category`` is ``assumption``, ``caution`` or ``note``."""
    if category not in ("assumption", "caution", "note"):
        raise ValueError("category must be 'assumption', 'caution' or 'note'")
    rec = {"kind": "note", "category": category, "text": text,
           "source": source.to_dict() if source else None}
    return Shown(rec, f"{category}: {text}")


def assumption(text: str, *, source: Source | None = None) -> Shown:
    """Show an assumption (listed again in the package's assumptions section)."""
    return note(text, category="assumption", source=source)


def table(*, id: str, caption: str, columns: list[str], rows: list[list[Any]]) -> Shown:
    """Show a small table (cells are turned to text)."""
    rec = {"kind": "table", "id": id, "caption": caption, "columns": [str(c) for c in columns],
           "rows": [[str(c) for c in row] for row in rows]}
    return Shown(rec, f"[table {id}] {caption}")


def summary(items: dict[str, Any], *, title: str = "Summary") -> Shown:
    """Show a short summary; the calc package lifts it to the top.

    ``items`` maps a label to a Step or Check (its result and id are shown) or to plain text.
    """
    rows = []
    for label, item in items.items():
        if hasattr(item, "to_dict"):
            rec = item.to_dict()
            text = rec["result_text"] + (f" ({rec['verdict']})" if rec["kind"] == "check" else "")
            rows.append({"label": label, "text": text, "step": rec["id"]})
        else:
            rows.append({"label": label, "text": str(item), "step": ""})
    rec = {"kind": "summary", "title": title, "rows": rows}
    return Shown(rec, "\n".join(f"{r['label']}: {r['text']}" for r in rows))
