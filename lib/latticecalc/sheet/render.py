"""HTML for steps, checks, figures and notes: one renderer for Jupyter and for the calc package.

Every function takes the JSON record (``Step.to_dict()`` and friends) so that the export, which
reads records back from executed notebooks, draws exactly what the notebook showed.  All text
from records is escaped; math is MathML made by :mod:`latticecalc.sheet.mathml`.
"""

from __future__ import annotations

import re
from html import escape

from latticecalc.sheet.mathml import to_mathml

_BASE64 = re.compile(r"[A-Za-z0-9+/]*={0,2}")
_NOTE_CATEGORIES = ("assumption", "caution", "note")


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
             f'{escape(rec["description"])}</div>']
    if rec.get("formula_latex"):
        parts.append(f'<div class="lc-formula">{to_mathml(rec["formula_latex"])}</div>')
        parts.append(f'<div class="lc-subst">{to_mathml(rec["substitution_latex"])}</div>')
    else:
        parts.append(f'<div class="lc-value"><span class="lc-result">{escape(rec["result_text"])}</span>')
        if rec.get("method"):
            parts.append(f' <span class="lc-method">({escape(rec["method"])})</span>')
        parts.append("</div>")
    parts.append(_source_html(rec.get("source")))
    if rec.get("note"):
        parts.append(f'<div class="lc-note">{escape(rec["note"])}</div>')
    parts.append("</div>")
    return "".join(parts)


def check_html(rec: dict, *, anchor: bool = True) -> str:
    """One check: description, demand against limit, utilisation, OK / NOT OK."""
    sid = escape(rec["id"])
    attrs = f' id="step-{sid}"' if anchor else ""
    rel = "≤" if rec["sense"] == "max" else "≥"
    cls = "ok" if rec["ok"] else "notok"
    return (f'<div class="lc-check lc-{cls}"{attrs} data-step="{sid}">'
            f'<div class="lc-step-head"><span class="lc-step-id">{sid}</span> '
            f'{escape(rec["description"])}</div>'
            f'<div class="lc-check-line">{escape(rec["demand_text"])} {rel} '
            f'{escape(rec["limit_text"])} · utilisation {float(rec["utilisation"]):.2f} · '
            f'<strong class="lc-verdict">{escape(rec["verdict"])}</strong></div>'
            + _source_html(rec.get("source"))
            + (f'<div class="lc-note">{escape(rec["note"])}</div>' if rec.get("note") else "")
            + "</div>")


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
            f'{escape(rec["category"].capitalize())}:</strong> {escape(rec["text"])}'
            + (f' <span class="lc-source">({escape(rec["source"]["cite"])})</span>'
               if rec.get("source") else "") + "</div>")


def table_html(rec: dict) -> str:
    """A small table of values (e.g. a list of peaks); every cell escaped."""
    head = "".join(f"<th>{escape(str(c))}</th>" for c in rec["columns"])
    body = "".join("<tr>" + "".join(f"<td>{escape(str(c))}</td>" for c in row) + "</tr>"
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
        return '<div class="lc-calc">' + title + "".join(record_html(s) for s in rec["steps"]) + "</div>"
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
"""
