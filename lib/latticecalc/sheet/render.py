"""HTML for steps, checks, figures and notes: one renderer for Jupyter and for the calc package.

Every function takes the JSON record (``Step.to_dict()`` and friends) so that the export, which
reads records back from executed notebooks, draws exactly what the notebook showed.  All text
from records is escaped; math is MathML made by :mod:`latticecalc.sheet.mathml`.
"""

from __future__ import annotations

import math
import re
from html import escape

from latticecalc.sheet.mathml import to_mathml
from latticecalc.units import format_number, plain_numbers

_BASE64 = re.compile(r"[A-Za-z0-9+/]*={0,2}")
_NOTE_CATEGORIES = ("assumption", "caution", "note")


def _text(text: str) -> str:
    """Record text for the page: program-written e-notation numbers rewritten plainly, then escaped."""
    return escape(plain_numbers(str(text)))


def _source_html(source: dict | None) -> str:
    if not source:
        return ""
    return f'<div class="lc-source">Source: {escape(source.get("cite", ""))}</div>'


def step_html(rec: dict, *, anchor: bool = True) -> str:
    """One step: description, formula, substitution = result, source, note."""
    sid = escape(rec["id"])
    attrs = f' id="step-{sid}"' if anchor else ""
    parts = [f'<div class="lc-step"{attrs} data-step="{sid}">',
             f'<div class="lc-step-head"><span class="lc-step-id">{sid}</span> '
             f'{_text(rec["description"])}</div>']
    if rec.get("formula_latex"):
        parts.append(f'<div class="lc-formula">{to_mathml(rec["formula_latex"])}</div>')
        parts.append(f'<div class="lc-subst">{to_mathml(rec["substitution_latex"])}</div>')
    else:
        parts.append(f'<div class="lc-value"><span class="lc-result">{_text(rec["result_text"])}</span>')
        if rec.get("method"):
            parts.append(f' <span class="lc-method">({_text(rec["method"])})</span>')
        parts.append("</div>")
    parts.append(_source_html(rec.get("source")))
    if rec.get("note"):
        parts.append(f'<div class="lc-note">{_text(rec["note"])}</div>')
    parts.append("</div>")
    return "".join(parts)


def _number(value) -> float:
    try:
        return float(value)
    except (TypeError, ValueError):
        return math.nan


def _check_numbers(rec: dict) -> tuple[float, float, str]:
    """(demand, limit, unit) of a check record (``Check.to_dict()``) or of its fingerprinted row."""
    demand, limit = rec.get("demand"), rec.get("limit")
    unit = rec.get("unit", "")
    if isinstance(demand, dict):
        demand = demand.get("value")
    if isinstance(limit, dict):
        unit = limit.get("unit", unit) or ""
        limit = limit.get("value")
    return _number(demand), _number(limit), str(unit or "")


def _is_frequency(unit: str) -> bool:
    return unit in ("Hz", "kHz", "mHz", "MHz", "1/s")


def _is_level(unit: str) -> bool:
    return unit in ("dB", "decibel", "dBm")


def check_relation_text(rec: dict) -> str:
    """The check in plain words, stating the actual relation of demand and limit.

    ``'155 µm/s exceeds the 50 µm/s limit'``, ``'55.2 Hz is above the 51.7 Hz limit'``,
    ``'4.16 meets the required 3'``.  The words follow the numbers, never the sense alone, so
    the sentence is true whatever the verdict; where the verdict disagrees with the plain
    comparison (a ratio taken against a limit of zero or below), the sentence says so.
    """
    d, lim, unit = _check_numbers(rec)
    demand, limit = str(rec.get("demand_text", "")), str(rec.get("limit_text", ""))
    ok = rec.get("ok") is True
    sense = rec.get("sense", "max")
    if math.isnan(d) or math.isnan(lim):
        return f"{demand} against the {limit} {'limit' if sense == 'max' else 'minimum'}: not a number"
    freq = _is_frequency(unit)
    if sense == "max":
        if d < lim:
            text = f"{demand} is {'below' if freq else 'within'} the {limit} limit"
        elif d == lim:
            text = f"{demand} equals the {limit} limit"
        else:
            text = f"{demand} {'is above' if freq else 'exceeds'} the {limit} limit"
        holds = d <= lim
    else:
        if d > lim:
            text = f"{demand} {'is above' if freq else 'exceeds'} the required {limit}"
        elif d == lim:
            text = f"{demand} equals the required {limit}"
        else:
            text = f"{demand} {'is below' if freq else 'falls short of'} the required {limit}"
        holds = d >= lim
    if holds != ok:
        text += " (the verdict follows the demand-to-limit ratio, taken against a limit of zero or below)"
    return text


def check_measure_text(rec: dict) -> str:
    """How far the check is from its limit, in terms that mean something for its quantity.

    A utilisation (demand over limit, or limit over demand for a minimum) is shown where a ratio
    of the two is meaningful: positive amounts of a ratio-scale quantity.  For a level in dB, a
    value of zero or below, or a ratio that is infinite, the difference is shown instead; for a
    frequency, the distance to the limit in Hz and as a share of the limit.
    """
    d, lim, unit = _check_numbers(rec)
    u = _number(rec.get("utilisation"))
    if math.isnan(d) or math.isnan(lim):
        return "no margin: not a number"
    ok = rec.get("ok") is True
    diff = abs(d - lim)
    diff_text = format_number(diff, 3) + (f" {unit}" if unit else "")
    word = "margin" if ok else "short by"
    if _is_level(unit):
        return f"{word} {diff_text} (levels in dB are compared by difference, not by ratio)"
    if d <= 0 or lim <= 0 or not math.isfinite(u):
        return f"{word} {diff_text} (no utilisation: a ratio with a value of zero or below means nothing)"
    if _is_frequency(unit):
        return f"{word} {diff_text} ({format_number(100 * diff / lim, 2)} % of the limit)"
    return f"utilisation {u:.2f}"


def check_html(rec: dict, *, anchor: bool = True) -> str:
    """One check: description, the relation in words, how far from the limit, OK / NOT OK."""
    sid = escape(rec["id"])
    attrs = f' id="step-{sid}"' if anchor else ""
    cls = "ok" if rec["ok"] else "notok"
    return (f'<div class="lc-check lc-{cls}"{attrs} data-step="{sid}">'
            f'<div class="lc-step-head"><span class="lc-step-id">{sid}</span> '
            f'{escape(rec["description"])}</div>'
            f'<div class="lc-check-line">{escape(check_relation_text(rec))} · '
            f'{escape(check_measure_text(rec))} · '
            f'<strong class="lc-verdict">{escape(rec["verdict"])}</strong></div>'
            + _source_html(rec.get("source"))
            + (f'<div class="lc-note">{_text(rec["note"])}</div>' if rec.get("note") else "")
            + "</div>")


def band_notes(records: list[dict]) -> dict[str, str]:
    """Notes for pairs of checks that hold one value inside a band: ``<x>-lower`` (a minimum) and ``<x>-upper``.

    When the pair's lower limit lies above its upper limit there is no band at all; the note says so
    (``'the lower edge 54.32 Hz lies above the upper edge 51.66 Hz, ...'``) rather than leaving the reader
    to piece an inverted interval together.  Keyed by the id of the pair's second check, after which
    the note is shown.
    """
    by_id = {r.get("id"): r for r in records if r.get("kind") == "check"}
    notes = {}
    for cid, low in by_id.items():
        if not (isinstance(cid, str) and cid.endswith("-lower")) or low.get("sense") != "min":
            continue
        high = by_id.get(cid[: -len("-lower")] + "-upper")
        if high is None or high.get("sense") != "max":
            continue
        lo, hi = _check_numbers(low)[1], _check_numbers(high)[1]
        if _check_numbers(low)[2] != _check_numbers(high)[2] or not lo > hi:
            continue
        order = [r.get("id") for r in records]
        last = high["id"] if order.index(high["id"]) > order.index(cid) else cid
        unit = _check_numbers(low)[2]
        notes[last] = (f"the lower edge {format_number(lo, 4)} {unit} lies above the upper edge "
                       f"{format_number(hi, 4)} {unit}, so no frequency, {low.get('demand_text', '')} included, "
                       "is inside the band.")
    return notes


def band_note_html(text: str) -> str:
    """The note :func:`band_notes` gives, as a block under the pair of checks."""
    return f'<div class="lc-band-note"><strong>No stop band:</strong> {escape(text)}</div>'


def figure_html(rec: dict, *, number: int | None = None) -> str:
    """A figure with its caption; the image is an inline ``data:`` PNG."""
    label = f"Figure {number}. " if number is not None else ""
    fid = escape(rec["id"])
    png = rec["png"] if isinstance(rec.get("png"), str) and _BASE64.fullmatch(rec["png"]) else ""
    return (f'<figure class="lc-figure" id="fig-{fid}" data-figure="{fid}">'
            f'<img alt="{escape(rec["caption"])}" src="data:image/png;base64,{png}">'
            f'<figcaption>{escape(label)}{escape(rec["caption"])}</figcaption></figure>')


def note_html(rec: dict) -> str:
    """An assumption, caution or remark."""
    category = rec["category"] if rec["category"] in _NOTE_CATEGORIES else "note"
    return (f'<div class="lc-remark lc-{category}"><strong>'
            f'{escape(rec["category"].capitalize())}:</strong> {_text(rec["text"])}'
            + (f' <span class="lc-source">({escape(rec["source"]["cite"])})</span>'
               if rec.get("source") else "") + "</div>")


def table_html(rec: dict) -> str:
    """A small table of values (e.g. a list of peaks); every cell escaped."""
    head = "".join(f"<th>{escape(str(c))}</th>" for c in rec["columns"])
    body = "".join("<tr>" + "".join(f"<td>{_text(str(c))}</td>" for c in row) + "</tr>"
                   for row in rec["rows"])
    tid = escape(rec["id"])
    return (f'<div class="lc-table" id="table-{tid}"><div class="lc-step-head">'
            f'<span class="lc-step-id">{tid}</span> {escape(rec["caption"])}</div>'
            f"<table><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table></div>")


def summary_html(rec: dict) -> str:
    """The summary box: label, result, and a link to the step."""
    rows = "".join(
        f"<tr><th>{escape(r['label'])}</th><td>{escape(r['text'])}</td><td>"
        + (f'<a href="#step-{escape(r["step"])}">{escape(r["step"])}</a>' if r["step"] else "")
        + "</td></tr>" for r in rec["rows"])
    return (f'<div class="lc-summary"><div class="lc-result-title">{escape(rec["title"])}</div>'
            f"<table>{rows}</table></div>")


def record_html(rec: dict) -> str:
    """Dispatch on the record's kind."""
    kind = rec["kind"]
    if kind == "step":
        return step_html(rec)
    if kind == "check":
        return check_html(rec)
    if kind == "figure":
        return figure_html(rec)
    if kind == "note":
        return note_html(rec)
    if kind == "table":
        return table_html(rec)
    if kind == "summary":
        return summary_html(rec)
    if kind == "result":
        title = f'<div class="lc-result-title">{escape(rec["title"])}</div>' if rec.get("title") else ""
        notes = band_notes(rec["steps"])
        return ('<div class="lc-calc">' + title
                + "".join(record_html(s) + (band_note_html(notes[s["id"]]) if s.get("id") in notes else "")
                          for s in rec["steps"]) + "</div>")
    return ""


#: A small stylesheet for steps shown inside JupyterLab (the package has its own, fuller one).
NOTEBOOK_CSS = """
.lc-calc{border-left:3px solid #5b7a99;padding:2px 0 2px 10px;margin:6px 0}
.lc-result-title{font-weight:600;margin-bottom:4px}
.lc-step,.lc-check{margin:6px 0 10px 0}
.lc-step-id{font-family:monospace;font-size:85%;color:#555;background:#eef2f6;padding:0 4px;border-radius:3px}
.lc-formula,.lc-subst{margin:2px 0 2px 12px;font-size:110%}
.lc-formula math,.lc-subst math,.lc-formula mfrac>*,.lc-subst mfrac>*{math-style:normal}
.lc-source{font-size:85%;color:#555;margin-left:12px}
.lc-note{font-size:90%;color:#8a4b00;margin-left:12px}
.lc-ok .lc-verdict{color:#1d6b2a}.lc-notok .lc-verdict{color:#b00020}
.lc-check-line{margin-left:12px}
.lc-band-note{margin:0 0 10px 12px;color:#b00020}
"""
