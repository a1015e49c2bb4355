"""HTML for steps, checks, figures and notes: one renderer for Jupyter and for the calc package.

Every function takes the JSON record (``Step.to_dict()`` and friends) so that the export, which
reads records back from executed notebooks, draws exactly what the notebook showed.  All text
from records is escaped; math is MathML made by :mod:`latticecalc.sheet.mathml`.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field
from html import escape

from latticecalc.sheet.mathml import to_mathml
from latticecalc.units import format_number, plain_numbers

_BASE64 = re.compile(r"[A-Za-z0-9+/]*={0,2}")
_NOTE_CATEGORIES = ("assumption", "caution", "note")


def _text(text: str) -> str:
    """Record text for the page: program-written e-notation numbers rewritten plainly, then escaped."""
    return escape(plain_numbers(str(text)))


# --- the reading context of a whole sheet: numbered references, repeats, shared prefixes -----------------

#: Shortest description prefix (before ``": "``) that a run of steps may share and show once.
_GROUP_MIN = 12


def work_key(source: dict) -> tuple[str, str, str]:
    """A cited work, without the locator and tag: the unit the reference list numbers."""
    return (str(source.get("author", "")), str(source.get("title", "")), str(source.get("year", "")))


def _content_key(rec: dict) -> str:
    """What a reader sees of a step apart from its id: two steps with the same key show the same thing."""
    keep = ("kind", "description", "formula_latex", "substitution_latex", "result_text", "method", "note",
            "demand_text", "limit_text", "verdict", "sense")
    src = rec.get("source") or {}
    return repr(tuple(rec.get(k) for k in keep) + (src.get("cite", ""),))


def _prefix(description: str) -> str:
    head, sep, _ = str(description).partition(": ")
    return head if sep and len(head) >= _GROUP_MIN else ""


@dataclass(frozen=True, kw_only=True)
class ReadingContext:
    """How the package shows each record, worked out once for the whole sheet (see :func:`reading_context`).

    ``refs`` numbers the cited works in order of first use; ``same_as`` sends a step that repeats an earlier
    one (same description, formula, values, result and source under another id) to it; ``prefix`` holds the
    description prefix a step shares with its neighbours (shown once, as ``group_heads`` says where).
    """

    refs: dict[tuple[str, str, str], int] = field(default_factory=dict)
    same_as: dict[str, tuple[str, int]] = field(default_factory=dict)
    prefix: dict[str, str] = field(default_factory=dict)
    group_heads: dict[str, str] = field(default_factory=dict)

    def ref_number(self, source: dict | None) -> int | None:
        """The reference-list number of the work ``source`` cites (None for no source)."""
        return self.refs.get(work_key(source)) if source else None


def reading_context(sections: list[tuple[int, list[dict]]]) -> ReadingContext:
    """The :class:`ReadingContext` of a sheet given as ``[(section number, top-level records), ...]``.

    Records are in page order; a ``result`` record's steps are read as one run.  The same function serves
    the page and the fingerprint's shown text, so the two always agree.
    """
    refs: dict[tuple[str, str, str], int] = {}
    first: dict[str, tuple[str, int]] = {}
    same_as: dict[str, tuple[str, int]] = {}
    prefix: dict[str, str] = {}
    heads: dict[str, str] = {}
    for number, records in sections:
        for top in records:
            run = top.get("steps", []) if top.get("kind") == "result" else [top]
            for rec in run:
                src = rec.get("source")
                if src and work_key(src) not in refs:
                    refs[work_key(src)] = len(refs) + 1
                if rec.get("kind") not in ("step", "check") or "id" not in rec:
                    continue
                key = _content_key(rec)
                if key in first and first[key][0] != rec["id"]:
                    same_as[rec["id"]] = first[key]
                else:
                    first.setdefault(key, (rec["id"], number))
            title = str(top.get("title", "")) if top.get("kind") == "result" else ""
            steps = [r for r in run if r.get("kind") in ("step", "check") and "id" in r]
            i = 0
            while i < len(steps):
                p = _prefix(steps[i].get("description", ""))
                j = i + 1
                while p and j < len(steps) and _prefix(steps[j].get("description", "")) == p:
                    j += 1
                if p and j - i >= 2:
                    for r in steps[i:j]:
                        prefix[r["id"]] = p
                    if p not in title:
                        heads[steps[i]["id"]] = p
                i = j
    return ReadingContext(refs=refs, same_as=same_as, prefix=prefix, group_heads=heads)


def _description(rec: dict, ctx: ReadingContext | None) -> str:
    text = str(rec.get("description", ""))
    p = ctx.prefix.get(rec.get("id", "")) if ctx else None
    if p and text.startswith(p + ": "):
        rest = text[len(p) + 2:]
        text = rest[:1].upper() + rest[1:]
    return text


def _source_html(source: dict | None, ctx: ReadingContext | None = None) -> str:
    """Where a step's formula or value comes from: a numbered marker into the references, or a line."""
    if not source:
        return ""
    number = ctx.ref_number(source) if ctx else None
    if number is None:
        return f'<div class="lc-source">Source: {escape(source.get("cite", ""))}</div>'
    loc = str(source.get("locator", ""))
    return (f'<div class="lc-ref"><a href="#ref-{number}">[{number}]</a>'
            + (f' <span class="lc-loc">{escape(loc)}</span>' if loc else "") + "</div>")


def _margin(sid: str, rec: dict, ctx: ReadingContext | None) -> str:
    """The left margin of a step: its id, then (in a package) its reference marker."""
    ref = _source_html(rec.get("source"), ctx) if ctx and sid not in ctx.same_as else ""
    shown = sid.replace(".", ".<wbr>").replace("-", "-<wbr>")
    return f'<div class="lc-margin"><span class="lc-step-id">{shown}</span>{ref}</div>'


def _same_as_html(rec: dict, ctx: ReadingContext | None) -> str:
    if not ctx or rec.get("id") not in ctx.same_as:
        return ""
    other, number = ctx.same_as[rec["id"]]
    return (f'<div class="lc-same">as <a href="#step-{escape(other)}">{escape(other)}</a> '
            f"in section {number}</div>")


def step_html(rec: dict, *, anchor: bool = True, ctx: ReadingContext | None = None) -> str:
    """One step in three columns: margin, working, output.

    The margin holds the id and the source marker; the working the description, formula,
    substitution and note; the output column the result, aligned down the page.

    With a :class:`ReadingContext` (the package), the source is a numbered marker into the reference
    list and a step that repeats an earlier one shows only its description, a link to the first
    and the result; without one (a notebook), the source is written out under the working.
    """
    sid = escape(rec["id"])
    attrs = f' id="step-{sid}"' if anchor else ""
    repeat = bool(ctx and rec["id"] in ctx.same_as)
    work = [f'<div class="lc-step-head">{_text(_description(rec, ctx))}</div>']
    if repeat:
        work.append(_same_as_html(rec, ctx))
    elif rec.get("formula_latex"):
        work.append(f'<div class="lc-formula">{to_mathml(rec["formula_latex"])}</div>')
        # in the package the result stands in the output column beside the substituted line
        bare = rec.get("substituted_latex") if ctx else None
        work.append(f'<div class="lc-subst">{to_mathml("= " + bare if bare else rec["substitution_latex"])}</div>')
    elif rec.get("method"):
        work.append(f'<div class="lc-method">{_text(rec["method"])}</div>')
    if not ctx:
        work.append(_source_html(rec.get("source")))
    if rec.get("note") and not repeat:
        work.append(f'<div class="lc-note">{_text(rec["note"])}</div>')
    return (f'<div class="lc-step lc-row"{attrs} data-step="{sid}">' + _margin(sid, rec, ctx)
            + '<div class="lc-work">' + "".join(work) + "</div>"
            + f'<div class="lc-out"><span class="lc-result">{_text(rec["result_text"])}</span></div></div>')


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


def check_html(rec: dict, *, anchor: bool = True, ctx: ReadingContext | None = None) -> str:
    """One check in the step's three columns.

    The working holds the relation in words and the distance to the limit; the output column the verdict.
    """
    sid = escape(rec["id"])
    attrs = f' id="step-{sid}"' if anchor else ""
    cls = "ok" if rec["ok"] else "notok"
    work = [f'<div class="lc-step-head">{escape(_description(rec, ctx))}</div>',
            f'<div class="lc-check-line">{escape(check_relation_text(rec))}; {escape(check_measure_text(rec))}</div>']
    if not ctx:
        work.append(_source_html(rec.get("source")))
    if rec.get("note"):
        work.append(f'<div class="lc-note">{_text(rec["note"])}</div>')
    return (f'<div class="lc-check lc-row lc-{cls}"{attrs} data-step="{sid}">' + _margin(sid, rec, ctx)
            + '<div class="lc-work">' + "".join(work) + "</div>"
            + f'<div class="lc-out"><strong class="lc-verdict">{escape(rec["verdict"])}</strong></div></div>')


#: The checks summary's layout mark (``data-layout`` of its table): failing checks first, in groups.
CHECKS_LAYOUT = "grouped"


def checks_summary_groups(checks: list[dict]) -> list[tuple[str, list[dict]]]:
    """The checks summary's groups: (heading, checks), the failing checks first, each in calculation order.

    The one ordering the package draws and ``verify`` rebuilds from the fingerprinted checks.
    """
    groups = []
    for ok in (False, True):
        members = [c for c in checks if (c.get("ok") is True) is ok]
        if members:
            n, verb = len(members), "hold" if ok else "fail"
            groups.append((f"{n} check{'s' if n != 1 else ''} {verb}{'s' if n == 1 else ''}", members))
    return groups


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


def note_html(rec: dict, *, ctx: ReadingContext | None = None) -> str:
    """An assumption, caution or remark; its source a marker into the references in a package."""
    category = rec["category"] if rec["category"] in _NOTE_CATEGORIES else "note"
    src = rec.get("source")
    number = ctx.ref_number(src) if ctx and src else None
    if number is not None:
        cite = f' <a class="lc-ref-inline" href="#ref-{number}">[{number}]</a>'
    elif src:
        cite = f' <span class="lc-source">({escape(src["cite"])})</span>'
    else:
        cite = ""
    return (f'<div class="lc-remark lc-{category}"><strong>'
            f'{escape(rec["category"].capitalize())}:</strong> {_text(rec["text"])}' + cite + "</div>")


def table_html(rec: dict) -> str:
    """A small table of values (e.g. a list of peaks); every cell escaped."""
    head = "".join(f"<th>{escape(str(c))}</th>" for c in rec["columns"])
    body = "".join("<tr>" + "".join(f"<td>{_text(str(c))}</td>" for c in row) + "</tr>"
                   for row in rec["rows"])
    tid = escape(rec["id"])
    return (f'<div class="lc-table" id="table-{tid}"><div class="lc-step-head">'
            f'<span class="lc-step-id">{tid}</span> {escape(rec["caption"])}</div>'
            f"<table><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table></div>")


#: A summary value too long for the output column reads as text: left-aligned, regular weight.
_LONG = ' class="lc-long"'


def summary_html(rec: dict) -> str:
    """The summary box: label, result, and a link to the step."""
    rows = "".join(
        f"<tr><th>{escape(r['label'])}</th><td{_LONG if len(r['text']) > 24 else ''}>{escape(r['text'])}</td><td>"
        + (f'<a href="#step-{escape(r["step"])}">{escape(r["step"])}</a>' if r["step"] else "")
        + "</td></tr>" for r in rec["rows"])
    return (f'<div class="lc-summary"><div class="lc-result-title">{escape(rec["title"])}</div>'
            f"<table>{rows}</table></div>")


def result_html(rec: dict, *, ctx: ReadingContext | None = None, after=None) -> str:
    """A result block: its title, then each step.

    A shared description prefix is shown once, a band note under a pair of band checks, and whatever
    ``after(step)`` adds (review comments in the package) after each step.
    """
    title = f'<div class="lc-result-title">{escape(rec["title"])}</div>' if rec.get("title") else ""
    notes = band_notes(rec["steps"])
    parts = ['<div class="lc-calc">', title]
    for s in rec["steps"]:
        head = ctx.group_heads.get(s.get("id", "")) if ctx else None
        if head:
            parts.append(f'<div class="lc-group-head">{_text(head)}</div>')
        parts.append(record_html(s, ctx=ctx))
        if s.get("id") in notes:
            parts.append(band_note_html(notes[s["id"]]))
        if after is not None:
            parts.append(after(s))
    parts.append("</div>")
    return "".join(parts)


def record_html(rec: dict, *, ctx: ReadingContext | None = None) -> str:
    """Dispatch on the record's kind."""
    kind = rec["kind"]
    if kind == "step":
        return step_html(rec, ctx=ctx)
    if kind == "check":
        return check_html(rec, ctx=ctx)
    if kind == "figure":
        return figure_html(rec)
    if kind == "note":
        return note_html(rec, ctx=ctx)
    if kind == "table":
        return table_html(rec)
    if kind == "summary":
        return summary_html(rec)
    if kind == "result":
        return result_html(rec, ctx=ctx)
    return ""


#: A small stylesheet for steps shown inside JupyterLab (the package has its own, fuller one).
NOTEBOOK_CSS = """
.lc-calc{border-left:3px solid #5b7a99;padding:2px 0 2px 10px;margin:6px 0}
.lc-result-title{font-weight:600;margin-bottom:4px}
.lc-row{display:grid;grid-template-columns:11em minmax(0,1fr) 9em;column-gap:.9em;margin:6px 0 10px 0}
.lc-step-id{font-family:monospace;font-size:85%;color:#555;overflow-wrap:anywhere}
.lc-out{text-align:right;align-self:end;font-weight:600}
.lc-formula,.lc-subst{margin:2px 0;font-size:110%}
.lc-formula math,.lc-subst math,.lc-formula mfrac>*,.lc-subst mfrac>*{math-style:normal}
.lc-source,.lc-method{font-size:85%;color:#555}
.lc-note{font-size:90%;color:#8a4b00}
.lc-ok .lc-verdict{color:#1f5f4a}.lc-notok .lc-verdict{color:#9c1c1c}
.lc-band-note{margin:0 0 10px 12px;color:#9c1c1c}
"""
