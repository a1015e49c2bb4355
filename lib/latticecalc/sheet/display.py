"""Jupyter display hooks: every shown result carries an HTML view and a JSON record.

The JSON record (MIME type :data:`RECORD_MIME`) is what the export reads back from the executed
notebook; the HTML view is drawn from that same record by :mod:`latticecalc.sheet.render`.
"""

from __future__ import annotations

import base64
import io
from typing import Any

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


def figure(fig: Any, *, id: str, caption: str, dpi: int = 130) -> Shown:
    """Show a matplotlib figure on the sheet with an id and caption (closed after rendering)."""
    import matplotlib.pyplot as plt

    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=dpi, bbox_inches="tight")
    plt.close(fig)
    png = base64.b64encode(buf.getvalue()).decode("ascii")
    return Shown({"kind": "figure", "id": id, "caption": caption, "png": png}, f"[figure {id}] {caption}")


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
