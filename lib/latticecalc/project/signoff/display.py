"""What the reader sees: the checks summary and the summary box, fingerprinted and rebuilt.

At export (and when signing) :func:`checks_content` and :func:`summary_content` put into the
fingerprint content every check as recorded (id, description, demand and limit with their
texts, sense, utilisation, verdict) and every summary box row (label, text, step, and how the
row's text is made). ``verify`` then:

* checks that each fingerprinted verdict follows from its demand and limit
  (:func:`check_problems`: utilisation demand/limit for ``max``, limit/demand for ``min``,
  OK when it is at most 1, as :class:`latticecalc.sheet.step.Check` decides);
* rebuilds the rows of the checks summary and of the summary box from those checks and the key
  results (:func:`expected_checks_rows`, :func:`expected_summary`) and compares them with the
  fingerprinted rows and with the rows on the page (:func:`page_tables`), naming every row
  that differs.

Texts are compared as the page shows them: whitespace collapsed, character references decoded.
"""

from __future__ import annotations

import copy
import dataclasses
import difflib
import functools
import math
from html.parser import HTMLParser
from typing import Any

from latticecalc.sheet.render import CHECKS_LAYOUT, check_measure_text, check_relation_text, checks_summary_groups
from latticecalc.sheet.step import checks_tally, verdict_words

#: A utilisation this close to 1 is not re-judged (the fingerprint keeps 10 significant figures).
UTILISATION_RTOL = 1e-8


def _norm(text: Any) -> str:
    return " ".join(str(text).split())


def _float(value: Any) -> float:
    try:
        return float(value)
    except (TypeError, ValueError):
        return math.nan


def _dicts(value: Any) -> list[dict]:
    """The dicts of a list (the embedded content is read from a file anyone can edit)."""
    return [v for v in value if isinstance(v, dict)] if isinstance(value, list) else []


def utilisation_text(value: Any) -> str:
    """The utilisation as the checks summary prints it (two decimals)."""
    return f"{_float(value):.2f}"


def checks_content(doc) -> list[dict]:
    """Every check record of the sheet, in order, as the fingerprint content keeps it."""
    out = []
    for rec in doc.records("check"):
        out.append({"id": rec["id"], "description": rec["description"], "sense": rec["sense"],
                    "demand": rec["demand"].get("value"), "limit": rec["limit"].get("value"),
                    "unit": rec["limit"].get("unit", ""), "demand_text": rec["demand_text"],
                    "limit_text": rec["limit_text"], "utilisation": rec["utilisation"],
                    "utilisation_text": utilisation_text(rec["utilisation"]), "ok": rec["ok"],
                    "verdict": rec["verdict"], "relation_text": check_relation_text(rec),
                    "measure_text": check_measure_text(rec)})
    return out


def summary_content(project, doc) -> list[dict]:
    """The summary boxes the package opens with: the template's, then those the notebooks show."""
    from latticecalc.project.export.package import summary_record

    boxes = []
    template = summary_record(project, doc)
    if template is not None:
        rows = [dict(r) for r in template["rows"]]
        has_checks = bool(doc.records("check"))
        for n, r in enumerate(rows):
            special = has_checks and n >= len(rows) - 2
            r["rule"] = ("checks" if n == len(rows) - 2 else "governing") if special else "step"
        boxes.append({"title": template["title"], "source": "template", "rows": rows})
    for rec in doc.records("summary"):
        rows = [dict(r) | {"rule": "step" if r.get("step") else "text"} for r in rec["rows"]]
        boxes.append({"title": rec["title"], "source": "notebook", "rows": rows})
    return boxes


def _utilisation(check: dict) -> float:
    """Utilisation from demand and limit, as :class:`latticecalc.sheet.step.Check` computes it."""
    d, lim = _float(check.get("demand")), _float(check.get("limit"))
    if check.get("sense") == "max":
        return d / lim if lim != 0 else math.inf
    if d > 0:
        return lim / d
    return 0.0 if lim <= d else math.inf


def check_problems(content: dict) -> list[str]:
    """Fingerprinted checks whose verdict does not follow from their own demand and limit."""
    out = []
    words = verdict_words(_dicts(content.get("checks")))
    for c in _dicts(content.get("checks")):
        u = _utilisation(c)
        stated = _float(c.get("utilisation"))
        why = ""
        if math.isnan(u) or math.isnan(stated):
            if not (math.isnan(u) and math.isnan(stated) and c.get("ok") is False):  # NaN <= 1 is False
                why = "its demand, limit or utilisation is not a number"
        elif not (u == stated or (math.isfinite(u) and math.isfinite(stated)
                                  and math.isclose(u, stated, rel_tol=UTILISATION_RTOL, abs_tol=1e-12))):
            why = f"the utilisation stated ({c.get('utilisation')}) is not demand and limit's ({u:.6g})"
        elif abs(u - 1.0) > UTILISATION_RTOL and c.get("ok") is not (u <= 1.0):
            why = f"utilisation {u:.3g} gives {words[u <= 1.0]}"
        if not why and c.get("verdict") != words[c.get("ok") is True]:
            why = f"the verdict '{c.get('verdict')}' is not the one its result gives"
        if why:
            out.append(f"check {c.get('id')}: the verdict '{c.get('verdict')}' does not follow from its demand "
                       f"and limit ({why})")
    return out


#: What each cell of a checks-summary row holds, by the table's layout.
ROW_LABELS = {CHECKS_LAYOUT: ("verdict", "check and step", "finding"),
              "": ("step", "check", "demand and limit", "utilisation", "verdict")}


def expected_checks_rows(content: dict, layout: str = CHECKS_LAYOUT) -> list[tuple[str, list[str]]]:
    """(check id, cells) of each row of the checks summary, rebuilt from the fingerprinted checks.

    ``layout`` is the page's (``data-layout`` of its table): the current one groups the failing checks
    first under a heading row (id ``""``); a package made before it has one row per check in
    calculation order.
    """
    if layout == CHECKS_LAYOUT:
        rows = []
        for heading, members in checks_summary_groups(_dicts(content.get("checks"))):
            rows.append(("", [_norm(heading)]))
            for c in members:
                rows.append((str(c.get("id")), [_norm(c.get("verdict")), _norm(f"{c.get('description')} {c.get('id')}"),
                                                _norm(f"{check_relation_text(c)} {check_measure_text(c)}")]))
        return rows
    rows = []
    for c in _dicts(content.get("checks")):
        rel = "≤" if c.get("sense") == "max" else "≥"
        if "relation_text" in c:  # the relation in words, rebuilt from the check's own numbers
            relation, measure = check_relation_text(c), check_measure_text(c)
        else:  # a package fingerprinted before the checks summary said it in words
            relation, measure = f"{c.get('demand_text')} {rel} {c.get('limit_text')}", c.get("utilisation_text")
        rows.append((str(c.get("id")), [_norm(c.get("id")), _norm(c.get("description")), _norm(relation),
                                        _norm(measure), _norm(c.get("verdict"))]))
    return rows


def _row_text(row: dict, results: dict[str, dict], checks: dict[str, dict]) -> str | None:
    rule = row.get("rule")
    if rule == "checks":
        return checks_tally(list(checks.values()))
    if rule == "governing":
        if not checks:
            return None
        worst = max(checks.values(), key=lambda c: _float(c.get("utilisation")))
        measure = (check_measure_text(worst) if "measure_text" in worst
                   else f"utilisation {worst.get('utilisation_text')}")
        return f"{worst.get('description')}: {measure} ({worst.get('verdict')})"
    if rule == "step":
        r = results.get(row.get("step", ""))
        if r is None:
            return None
        return str(r.get("text", "")) + (f" ({r['verdict']})" if "verdict" in r else "")
    return None  # plain text a notebook showed: kept as fingerprinted


def expected_summary(content: dict) -> list[dict]:
    """The summary boxes with each row's text rebuilt from the checks and key results where it can be."""
    results = {}
    for r in _dicts(content.get("results")):
        results.setdefault(str(r.get("id")), r)
    checks: dict[str, dict] = {}
    for c in _dicts(content.get("checks")):
        checks[str(c.get("id"))] = c
    boxes = []
    for box in _dicts(content.get("summary")):
        rows = []
        for row in _dicts(box.get("rows")):
            rebuilt = _row_text(row, results, checks)
            rows.append(row | {"expected": _norm(rebuilt if rebuilt is not None else row.get("text", ""))})
        boxes.append(box | {"rows": rows})
    return boxes


class _Tables(HTMLParser):
    """Table rows: the checks summary, each summary box and the sign-off table (``tr#signoff-<seq>``)."""

    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.checks: list[list[str]] = []
        self.checks_layout = ""
        self.boxes: list[list[list[str]]] = []
        self.signoffs: dict[str, list[str]] = {}
        self.row_id: str | None = None
        self.stack: list[tuple[str, str | None]] = []  # (tag, region opened here)
        self.row: list[str] | None = None
        self.cell: list[str] | None = None
        self.skip = 0

    def _region(self) -> str | None:
        return next((r for _, r in reversed(self.stack) if r is not None), None)

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        region = None
        if tag == "section" and a.get("id") == "checks":
            region = "checks"
        if tag == "table" and "lc-checks" in (a.get("class") or "").split():
            self.checks_layout = a.get("data-layout") or ""
        elif tag == "div" and "lc-summary" in (a.get("class") or "").split():
            region = "summary"
            self.boxes.append([])
        if tag in ("br", "img", "hr", "meta", "link", "input", "wbr"):
            return
        self.stack.append((tag, region))
        if tag in ("script", "style", "title"):
            self.skip += 1
        if tag == "tr" and (a.get("id") or "").startswith("signoff-"):
            self.row, self.row_id = [], a["id"][len("signoff-"):]
        elif self._region() is None or any(t == "thead" for t, _ in self.stack):
            pass
        elif tag == "tr":
            self.row, self.row_id = [], None
        if tag in ("td", "th") and self.row is not None:
            self.cell = []

    def handle_endtag(self, tag):
        for k in range(len(self.stack) - 1, -1, -1):
            if self.stack[k][0] != tag:
                continue
            self.skip -= sum(1 for t, _ in self.stack[k:] if t in ("script", "style", "title"))
            where = self._region()
            if tag in ("td", "th") and self.cell is not None and self.row is not None:
                self.row.append(_norm(" ".join(self.cell)))
                self.cell = None
            elif tag == "tr" and self.row is not None:
                if self.row_id is not None:
                    self.signoffs[self.row_id] = self.row
                elif where == "checks":
                    self.checks.append(self.row)
                elif where == "summary" and self.boxes:
                    self.boxes[-1].append(self.row)
                self.row = None
            del self.stack[k:]
            return

    def handle_data(self, data):
        if not self.skip and self.cell is not None:
            self.cell.append(data)


@dataclasses.dataclass
class _PageTables:
    """What :class:`_Tables` read from a page."""

    checks: list[list[str]]
    checks_layout: str
    boxes: list[list[list[str]]]
    signoffs: dict[str, list[str]]


def _parse(html: str) -> _PageTables:
    """The page's tables, parsed once per page text (a copy: callers may change what they are given)."""
    return copy.deepcopy(_parsed(html))


@functools.lru_cache(maxsize=8)
def _parsed(html: str) -> _PageTables:
    # kept by text: signing, sealing and verifying one package read the same page several times
    p = _Tables()
    p.feed(html)
    p.close()
    return _PageTables(checks=p.checks, checks_layout=p.checks_layout, boxes=p.boxes, signoffs=p.signoffs)


def page_tables(html: str) -> tuple[list[list[str]], list[list[list[str]]]]:
    """The checks summary rows (cells) and the summary boxes (rows of label, text, step) on the page."""
    p = _parse(html)
    return p.checks, p.boxes


def page_checks_layout(html: str) -> str:
    """The layout of the page's checks summary (``data-layout`` of its table; ``""`` before it had one)."""
    return _parse(html).checks_layout


def signoff_states(html: str) -> dict[str, str]:
    """Sign-off seq -> the state the sign-off table shows for it (``current`` or ``VOID``)."""
    out = {}
    for seq, cells in _parse(html).signoffs.items():
        state = cells[6] if len(cells) > 6 else ""
        out[seq] = "current" if state == "current" else "VOID" if state.startswith("VOID") else state
    return out


def word_diff(old: str, new: str) -> str:
    """The first run of words that differs, and the word before it: ``'15.41' became '15.47' after 'mass'``.

    When more runs differ, their count follows (``… (and 2 more changes)``).
    """
    a, b = old.split(), new.split()
    runs = [op for op in difflib.SequenceMatcher(a=a, b=b, autojunk=False).get_opcodes() if op[0] != "equal"]
    if not runs:
        return "text differs"
    _, i1, i2, j1, j2 = runs[0]
    text = f"'{' '.join(a[i1:i2])[:60]}' became '{' '.join(b[j1:j2])[:60]}'"
    if i1 > 0:
        text += f" after '{a[i1 - 1][:30]}'"
    return text + (f" (and {len(runs) - 1} more change{'s' if len(runs) > 2 else ''})" if len(runs) > 1 else "")


def _diff(shown: str, expected: str) -> str:
    change = f"'{expected}' became '{shown}'" if max(len(shown), len(expected)) <= 40 else word_diff(expected, shown)
    return f"the page differs from the fingerprinted content: {change}"


def display_problems(content: dict, html: str) -> list[str]:
    """Rows of the checks summary and summary box that differ from what the fingerprinted content gives.

    ``html`` is the package without its embedded data.
    """
    out = []
    parsed = _parse(html)
    page_checks, page_boxes = parsed.checks, parsed.boxes
    layout = parsed.checks_layout if parsed.checks_layout in ROW_LABELS else CHECKS_LAYOUT
    expected = expected_checks_rows(content, layout)
    for n, (cid, cells) in enumerate(expected):
        name = cid or "group heading"
        if n >= len(page_checks):
            out.append(f"checks summary: {name}: missing from the page")
            continue
        shown = page_checks[n]
        labels = ROW_LABELS[layout] if cid else ("heading",)
        for label, want, got in zip(labels, cells, shown + [""] * (len(cells) - len(shown))):
            if want != got:
                out.append(f"checks summary: {name}: {label}: {_diff(got, want)}")
    for extra in page_checks[len(expected):]:
        out.append(f"checks summary: a row not in the fingerprinted content: '{' '.join(extra)[:80]}'")
    boxes = expected_summary(content)
    for n, box in enumerate(boxes):
        shown_rows = page_boxes[n] if n < len(page_boxes) else []
        if n >= len(page_boxes):
            out.append(f"summary box {n + 1}: missing from the page")
            continue
        for m, row in enumerate(box["rows"]):
            label = row.get("label", "")
            if _norm(row.get("text", "")) != row["expected"]:
                out.append(f"summary box: '{label}': the fingerprinted text '{_norm(row.get('text'))[:80]}' is not "
                           f"the one its checks and results give ('{row['expected'][:80]}')")
            if m >= len(shown_rows):
                out.append(f"summary box: '{label}': missing from the page")
                continue
            cells = shown_rows[m] + ["", "", ""]
            if cells[0] != _norm(label):
                out.append(f"summary box: '{label}': label: {_diff(cells[0], _norm(label))}")
            if cells[1] != row["expected"]:
                out.append(f"summary box: '{label}': {_diff(cells[1], row['expected'])}")
            if cells[2] != _norm(row.get("step", "")):
                out.append(f"summary box: '{label}': step: {_diff(cells[2], _norm(row.get('step', '')))}")
        for extra in shown_rows[len(box["rows"]):]:
            out.append(f"summary box: a row not in the fingerprinted content: '{' '.join(extra)[:80]}'")
    for n in range(len(boxes), len(page_boxes)):
        out.append(f"summary box {n + 1}: not in the fingerprinted content")
    return out


__all__ = ["check_problems", "checks_content", "display_problems", "expected_checks_rows", "expected_summary",
           "page_checks_layout", "page_tables", "signoff_states", "summary_content", "utilisation_text", "word_diff"]
