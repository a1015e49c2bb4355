"""Render the calc package: one self-contained HTML file, no scripts, no external requests."""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from html import escape
from importlib import resources

from latticecalc.project.export.collect import SheetDocument
from latticecalc.sheet.render import (
    CHECKS_LAYOUT,
    ReadingContext,
    check_measure_text,
    check_relation_text,
    checks_summary_groups,
    record_html,
    result_html,
    work_key,
)
from latticecalc.units import format_value, plain_numbers

CAUTIONS = (
    "This calculation package is a design aid. It does not replace the judgement of a licensed "
    "professional engineer, who must review and take responsibility for the design.",
    "The capacity of the column, its connections and the panel's fixings to the column are not "
    "assessed here; they need their own structural check.",
    "Follow the codes, standards and regulations that apply where the panel is installed; where "
    "they differ from the methods used here, they govern.",
    "Material values for printed elastomers vary with temperature, frequency, age and print "
    "process: design values must come from the supplier's data sheet and tests of printed samples.",
)

CSP = "default-src 'none'; img-src data:; style-src 'unsafe-inline'; base-uri 'none'; form-action 'none'"


@dataclass(kw_only=True)
class SignRow:
    """One title-block signature line."""

    role: str
    name: str = ""
    date: str = ""
    void: bool = False
    void_reason: str = ""
    signature: str = ""


@dataclass(kw_only=True)
class PackageExtras:
    """What sign-off, review and revisions add to a package (empty until they exist)."""

    status: str = "preliminary"
    fingerprint: str = ""
    signatures: list[SignRow] = field(default_factory=list)
    comments_by_step: dict[str, list[dict]] = field(default_factory=dict)
    comments_html: str = ""
    open_comments: int = 0
    revision_history_html: str = ""
    signature_block_html: str = ""
    embedded_json: str = ""
    #: Beside the status: failing checks and an approval's qualification (signoff.standing).
    standing: str = ""


def css_string(text: str) -> str:
    r"""``text`` as a quoted CSS string in which only letters, digits and spaces stay literal.

    Every other character is a CSS hex escape (``\a `` for a newline, ``\22 `` for a quote,
    ``\3c `` for ``<``), so no text, however hostile, can end the string, the rule or the
    ``<style>`` element it sits in. NUL and surrogates become U+FFFD, as a CSS parser would read them.
    """
    out = []
    for ch in str(text):
        code = ord(ch)
        if ch.isascii() and (ch.isalnum() or ch == " "):
            out.append(ch)
        else:
            if code == 0 or 0xD800 <= code <= 0xDFFF:
                code = 0xFFFD
            out.append(f"\\{code:x} ")
    return '"' + "".join(out) + '"'


def _css() -> str:
    return (resources.files("latticecalc.project.export") / "package.css").read_text(encoding="utf-8")


def _title_block(meta: dict, extras: PackageExtras, prepared_date: str) -> str:
    rows = {s.role: s for s in extras.signatures}
    prepared = rows.get("prepared", SignRow(role="prepared", name=meta["prepared_by"], date=prepared_date))

    def sign_cell(row: SignRow | None) -> str:
        if row is None or not row.name:
            return "—"
        cls = ' class="lc-void"' if row.void else ""
        text = f"<span{cls}>{escape(row.name)}, {escape(row.date)}</span>"
        if row.void:
            text += f' <strong class="lc-verdict-notok">VOID</strong> <small>{escape(row.void_reason)}</small>'
        return text

    status = escape(extras.status)
    return f"""
<div class="lc-titleblock" id="title-block">
<table>
<tr><th>Project</th><td colspan="3">{escape(meta['name'])}</td>
    <th>Project no.</th><td>{escape(meta['number'])}</td></tr>
<tr><th>Calculation</th><td colspan="3" class="lc-calctitle">{escape(meta['title'])}</td>
    <th>Calc id</th><td>{escape(meta['calc_id'])}</td></tr>
<tr><th>Client</th><td colspan="3">{escape(meta.get('client', '')) or '—'}</td>
    <th>Revision</th><td>{escape(meta['revision'])}</td></tr>
<tr><th>Prepared</th><td>{sign_cell(prepared)}</td><th>Checked</th><td>{sign_cell(rows.get('checked'))}</td>
    <th>Status</th><td class="lc-status lc-status-{status}">{status}</td></tr>
<tr><th>Approved</th><td>{sign_cell(rows.get('approved'))}</td><th>Open comments</th><td>{extras.open_comments}</td>
    <th>Kit</th><td>latticecalc {escape(meta.get('kit_version', ''))}</td></tr>
<tr><th>Standing</th><td colspan="5" id="status-standing">{escape(extras.standing) or '—'}</td></tr>
<tr><th>Fingerprint</th><td colspan="5" class="lc-fingerprint">{escape(extras.fingerprint) or '—'}</td></tr>
</table></div>"""


_REPLACES = re.compile(r"\breplaces? ([a-z0-9_]+(?:\.[a-z0-9_]+)+)")
_SURVEY_FALLBACK = "used when no site-survey export is named"


def _given(row: dict) -> bool:
    return row.get("value") not in (None, "", [], {})


def unused_inputs(inputs: list[dict]) -> dict[str, str]:
    """Inputs whose value another given input replaces, with the words the source column shows.

    An input's description says what it replaces (``'... its peaks to target replace
    coverage.target_peaks'``), or that it is only ``used when no site-survey export is named``; when
    the replacing input is given, the replaced value is not what the calculation used, and its
    template source (``'example values; take them from a site survey'``) must not read as if it were.
    """
    by_id = {i["id"]: i for i in inputs}
    out: dict[str, str] = {}
    survey = next((i for i in inputs if "site-survey project" in i.get("description", "") and _given(i)), None)
    for row in inputs:
        if not _given(row):
            continue
        for name in _REPLACES.findall(row.get("description", "")):
            if name in by_id and name != row["id"]:
                out[name] = f"not used: {row['id']} ({row['text']}) replaces it"
    if survey is not None:
        for row in inputs:
            if _SURVEY_FALLBACK in row.get("description", "") and row["id"] not in out:
                out[row["id"]] = f"not used: the site-survey export {survey['id']} ({survey['text']}) replaces it"
    return out


def _mapping_table(row: dict) -> str:
    """A mapping input (e.g. project materials) as a small table: entry, property, value, source."""
    body = []
    for entry, props in row["value"].items():
        items = props.items() if isinstance(props, dict) else [("value", props)]
        for key, val in items:
            source = ""
            if isinstance(val, dict) and "value" in val and set(val) <= {"value", "source"}:
                source, val = str(val.get("source", "")), val["value"]
            body.append(f"<tr><td><code>{escape(str(entry))}</code></td><td>{escape(str(key).replace('_', ' '))}</td>"
                        f"<td>{escape(format_value(val, 6))}</td><td>{escape(source) or '—'}</td></tr>")
    return (f'<table class="lc-inputs lc-input-mapping" id="input-table-{escape(row["id"])}"><caption>'
            f'{escape(row["id"])}: {escape(row["description"])}</caption><thead><tr><th>Entry</th><th>Property</th>'
            f"<th>Value</th><th>Source</th></tr></thead><tbody>{''.join(body)}</tbody></table>")


def _inputs_table(inputs: list[dict]) -> str:
    unused = unused_inputs(inputs)
    rows = []
    mappings = []
    for i in inputs:
        source = escape(i["source"]) or "—"
        if i["id"] in unused:
            source = f'<span class="lc-unused">{escape(unused[i["id"]])}</span>' + (
                f" <s>{escape(i['source'])}</s>" if i["source"] else "")
        text = escape(i["text"])
        if isinstance(i.get("value"), dict) and i["value"]:
            mappings.append(_mapping_table(i))
            text += f' <a href="#input-table-{escape(i["id"])}">(table below)</a>'
        rows.append(f"<tr id=\"input-{escape(i['id'])}\"><td><code>{escape(i['id'])}</code></td>"
                    f"<td>{escape(i['description'])}</td><td>{text}</td><td>{escape(i['unit'])}</td>"
                    f"<td>{source}</td></tr>")
    return ('<table class="lc-inputs"><colgroup><col class="lc-col-id"><col class="lc-col-desc">'
            '<col class="lc-col-val"><col class="lc-col-unit"><col class="lc-col-src"></colgroup><thead><tr>'
            "<th>Input</th><th>Description</th>"
            f"<th>Value</th><th>Unit</th><th>Source</th></tr></thead><tbody>{''.join(rows)}</tbody></table>"
            + "".join(mappings))


def _checks_table(checks: list[dict]) -> str:
    """Every check, the failing ones first: verdict, the check and its step, then what the numbers say.

    Within each group the checks keep the calculation's order (``checks_summary_groups``); the finding
    is the relation in words (never an inequality sign) with the distance to the limit under it.
    """
    if not checks:
        return "<p>No checks in this calculation.</p>"
    body = []
    for heading, members in checks_summary_groups(checks):
        body.append(f'<tr class="lc-checks-group"><th colspan="3">{escape(heading)}</th></tr>')
        for c in members:
            cid = escape(c["id"])
            cls = "lc-verdict-ok" if c["ok"] else "lc-verdict-notok"
            body.append(f'<tr data-check="{cid}"><td class="{cls}"><strong>{escape(c["verdict"])}</strong></td>'
                        f'<td>{escape(c["description"])}<div class="lc-checks-step"><a href="#step-{cid}">{cid}</a>'
                        f'</div></td><td class="lc-finding">{escape(check_relation_text(c))}'
                        f'<div class="lc-checks-margin">{escape(check_measure_text(c))}</div></td></tr>')
    return (f'<table class="lc-checks" data-layout="{CHECKS_LAYOUT}"><colgroup><col class="lc-col-verdict">'
            '<col class="lc-col-check"><col class="lc-col-finding"></colgroup><thead><tr><th>Verdict</th>'
            "<th>Check, step</th><th>What the numbers say</th></tr></thead><tbody>" + "".join(body)
            + "</tbody></table>")


def _comments_for(step_id: str, extras: PackageExtras) -> str:
    out = []
    for c in extras.comments_by_step.get(step_id, []):
        cls = "lc-comment lc-comment-open" if c.get("status") == "open" else "lc-comment"
        out.append(f'<div class="{cls}"><strong>Review {escape(str(c.get("id", "")))} '
                   f'({escape(c.get("status", ""))})</strong> {escape(c.get("author", ""))}: '
                   f'{escape(c.get("text", ""))}'
                   + "".join(f"<br>↳ {escape(r.get('author', ''))}: {escape(r.get('text', ''))}"
                             for r in c.get("replies", [])) + "</div>")
    return "".join(out)


def _to_confirm_html(checks: list[dict]) -> str:
    """The recalled (``from memory``) sources the checks rely on: listed, and approval waits on them."""
    from latticecalc.sources_register import blocks_approval, register_entries

    blockers = blocks_approval(checks)
    if not blockers:
        return ('<p class="lc-to-confirm-none">Every source the checks rely on is a checked published source.'
                "</p>")
    items = []
    for src in blockers:
        entries = register_entries(src)
        what = "; ".join(e.confirm_against or e.value for e in entries[:2])
        items.append(f"<li>{escape(src.cite())}" + (f" <em>to confirm against: {escape(what)}</em>" if what else "")
                     + "</li>")
    return ('<div class="lc-to-confirm" id="to-confirm"><h3>Values to confirm before approval</h3><p>These checks '
            "rely on values recalled from the sources below, not yet confirmed against the published document "
            "(register of values to confirm). The package cannot be approved until they are confirmed.</p><ul>"
            + "".join(items) + "</ul></div>")


_TAG_WORDS = {"from memory": "recalled, to be confirmed against the document",
              "common practice": "a rule of thumb with no published source"}


def _references_html(references: list[dict], ctx: ReadingContext) -> str:
    """The numbered works the page's markers point to, each with the places cited and their standing.

    A work is listed once; the locators cited from it follow, and a locator whose value is recalled
    rather than read from the document says so here, once, instead of beside every step.
    """
    works: dict[tuple, list[dict]] = {}
    for r in references:
        works.setdefault(work_key(r), []).append(r)
    items = []
    for key, number in sorted(ctx.refs.items(), key=lambda kv: kv[1]):
        cites = works.get(key, [])
        author, title, year = key
        head = f"{escape(author)}, <em>{escape(title)}</em>" + (f" ({escape(year)})" if year else "")
        places = []
        for c in cites:
            loc, tag = str(c.get("locator", "")), str(c.get("tag", ""))
            if not loc and not tag:
                continue
            text = escape(loc) if loc else "the work as a whole"
            if tag:
                text += f' <span class="lc-tag">({escape(_TAG_WORDS.get(tag, tag))})</span>'
            places.append(text)
        items.append(f'<li id="ref-{number}" value="{number}">{head}'
                     + (f'<div class="lc-places">Cited: {"; ".join(places)}</div>' if places else "") + "</li>")
    return '<ol class="lc-references">' + "".join(items) + "</ol>" if items else "<p>No sources cited.</p>"


def render_package(*, meta: dict, doc: SheetDocument, inputs: list[dict], references: list[dict],
                   extras: PackageExtras, generated: str, with_code: bool = False,
                   summary: dict | None = None) -> str:
    """The whole package as one HTML string."""
    checks = doc.records("check")
    notes = doc.records("note")
    assumptions = [n for n in notes if n["category"] == "assumption"]
    cautions = [n for n in notes if n["category"] == "caution"]
    summaries = ([summary] if summary else []) + doc.records("summary")
    ctx = doc.reading_context()
    running = f"{meta['calc_id']} rev {meta['revision']} — {meta['title']}"
    running_css = css_string(running)

    contents = ['<li><a href="#inputs">Inputs</a></li>', '<li><a href="#checks">Checks summary</a></li>']
    contents += [f'<li><a href="#{s.anchor}">{s.number}. {escape(s.title)}</a></li>' for s in doc.sections]
    back = [("comments", "Review comments"), ("revisions", "Revision history"), ("references", "References"),
            ("assumptions", "Assumptions"), ("cautions", "Cautions")]
    if with_code:
        back.insert(4, ("code", "Appendix: notebook code"))
    contents += [f'<li><a href="#{a}">{t}</a></li>' for a, t in back]

    body = [_title_block(meta, extras, generated[:10])]
    body.append('<div class="lc-cautions" id="cautions-top"><h2>Cautions</h2><ul>'
                + "".join(f"<li>{escape(c)}</li>" for c in CAUTIONS) + "</ul></div>")
    for s in summaries:
        body.append(record_html(s))
    body.append('<nav class="lc-contents"><h2>Contents</h2><ul>' + "".join(contents) + "</ul></nav>")
    body.append('<section class="lc-section" id="inputs"><h2>Inputs</h2>' + _inputs_table(inputs) + "</section>")
    body.append('<section id="checks"><h2>Checks summary</h2>' + _checks_table(checks)
                + _to_confirm_html(checks) + "</section>")

    fig_no = 0
    for sec in doc.sections:
        parts = [f'<section class="lc-section" id="{sec.anchor}" data-notebook="{escape(sec.notebook)}">'
                 f"<h2>{sec.number}. {escape(sec.title)}</h2>"]
        for what, payload in sec.blocks:
            if what == "html":
                parts.append(f'<div class="lc-narrative">{payload}</div>')
                continue
            rec = payload
            if rec["kind"] == "summary":
                continue
            if rec["kind"] == "figure":
                fig_no += 1
                from latticecalc.sheet.render import figure_html

                parts.append(figure_html(rec, number=fig_no))
                continue
            if rec["kind"] == "result":  # each step followed by its review comments
                parts.append(result_html(rec, ctx=ctx, after=lambda st: _comments_for(st["id"], extras)
                                         if "id" in st else ""))
                continue
            parts.append(record_html(rec, ctx=ctx))
            if "id" in rec:
                parts.append(_comments_for(rec["id"], extras))
        parts.append("</section>")
        body.append("".join(parts))

    body.append('<section class="lc-backmatter" id="comments"><h2>Review comments</h2>'
                + (extras.comments_html or "<p>No review comments.</p>") + "</section>")
    body.append('<section id="revisions"><h2>Revision history</h2>'
                + (extras.revision_history_html or
                   f"<p>Revision {escape(meta['revision'])}: first issue of this package.</p>") + "</section>")
    body.append('<section id="references"><h2>References</h2>' + _references_html(references, ctx) + "</section>")
    body.append('<section id="assumptions"><h2>Assumptions</h2>'
                + ("<ol>" + "".join(f"<li>{escape(plain_numbers(a['text']))}</li>" for a in assumptions) + "</ol>"
                   if assumptions else "<p>None stated beyond those in the steps.</p>") + "</section>")
    if with_code:
        code = "".join(f'<h3>{escape(s.notebook)}</h3><div class="lc-code">'
                       + "".join(f"<pre>{escape(c)}</pre>" for c in s.code) + "</div>" for s in doc.sections)
        body.append(f'<section id="code"><h2>Appendix: notebook code</h2>{code}</section>')
    body.append('<section id="cautions"><h2>Cautions</h2><ul>'
                + "".join(f"<li>{escape(c)}</li>" for c in CAUTIONS)
                + "".join(f"<li>{escape(plain_numbers(c['text']))}</li>" for c in cautions) + "</ul></section>")
    body.append(extras.signature_block_html)
    body.append(f'<div class="lc-footer">{escape(running)} · generated {escape(generated)} by latticecalc '
                f'{escape(meta.get("kit_version", ""))}</div>')
    embedded = (f'<script type="application/json" id="lc-package-data">{extras.embedded_json}</script>'
                if extras.embedded_json else "")
    return f"""<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8">
<meta http-equiv="Content-Security-Policy" content="{CSP}">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="generator" content="latticecalc {escape(meta.get('kit_version', ''))}">
<title>{escape(meta['calc_id'])} rev {escape(meta['revision'])} — {escape(meta['title'])}</title>
<style>{_css()}
:root {{ --lc-running: {running_css}; }}
@page {{ @top-left {{ content: {running_css}; font-size: 8pt; color: #5a6470; }} }}
</style></head>
<body>
{''.join(body)}
{embedded}
</body></html>
"""
