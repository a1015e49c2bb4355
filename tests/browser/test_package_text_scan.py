"""What a checker reads in a calc package: no Python reprs, no raw LaTeX, no e-notation in the maths, no
check line whose words or signs the numbers or the verdict contradict.

The session's quick project of each template (column-panel, site-survey, prototype-test: ``executed_projects``)
and the design study of the session's quick demo (``quick_demo``: its search cut down, beside the demo survey
it reads its requirement from), run and exported once in tests/conftest.py, are opened in headless
Chromium; the scan reads the text the page shows (``innerText``), so what it checks is what a reader sees.

Sources: the kit's own promise (a package states no falsehood and shows values as an engineer writes
them); BIPM, *The International System of Units (SI Brochure)*, 9th ed. (2019), §5.4: a power of ten is
written ``× 10ⁿ``, never ``e``.
"""

from __future__ import annotations

import re

import pytest
from tests.helpers import package_paths

from latticecalc import Q_

pytestmark = [pytest.mark.browser, pytest.mark.slow]

TEMPLATES = ("column-panel", "site-survey", "prototype-test")
#: The demo's design study: its nearest-designs table shows every kind of value a study writes.
PACKAGES = TEMPLATES + ("demo-design-study",)

#: Python reprs that must never reach a page a checker reads.
REPR_ANYWHERE = ("[]", "{'", "[np.", "np.float64(", "array([")
#: Whole-word reprs, looked for only where values are shown (prose may say "None stated").
REPR_WORDS = re.compile(r"\b(True|False|None|nan|inf)\b")
#: LaTeX that did not become maths.
RAW_LATEX = ("\\mu", "\\frac", "\\text", "\\left", "\\cdot", "\\times")
#: e-notation in a number as maths text shows it: 1.5e-04, 2.7e−06 (a symbol E after a coefficient, as in
#: ``2E``, is not a number; the MathML structure check below catches ``1e-05`` without a decimal point).
E_NOTATION = re.compile(r"\d\.\d*[eE][+\-−]?\d")

_SUPERSCRIPT = str.maketrans("⁻⁰¹²³⁴⁵⁶⁷⁸⁹", "-0123456789")
_QUANTITY = re.compile(r"^(-?[0-9.]+)(?: × 10([⁻⁰¹²³⁴⁵⁶⁷⁸⁹]+))?\s*(.*)$")

# "A exceeds the B limit", "A is within the B limit", "A is below the required B", ...
_RELATION = re.compile(
    r"^(?P<a>.+?) (?P<word>is within|exceeds|equals|is below|is above|falls short of|meets) the "
    r"(?:required )?(?P<b>.+?)(?: limit| minimum)?(?: \(.*\))?$")


@pytest.fixture(scope="module")
def packages(executed_projects, quick_demo):
    """The exported HTML of the session's quick project of each template, and of the quick demo's study."""
    out = {name: package_paths(executed_projects.get(name))[0] for name in TEMPLATES}
    out["demo-design-study"] = package_paths(quick_demo.folder / "quillon-yard-study")[0]
    return out


def _quantity(text: str):
    """``'0.902 µm'``, ``'2.6 × 10⁻⁴ dB'``, ``'4.16'`` as a Quantity."""
    m = _QUANTITY.match(text.strip())
    assert m, f"not a value as the kit writes one: {text!r}"
    number = float(m.group(1)) * (10.0 ** int(m.group(2).translate(_SUPERSCRIPT)) if m.group(2) else 1.0)
    unit = m.group(3).strip()
    if unit == "dB":                       # a level: its number is compared as it stands
        return Q_(number, "")
    return Q_(number, unit.replace("µ", "u").replace("²", "^2").replace("³", "^3").replace("⁴", "^4"))


def _holds(word: str, a, b) -> bool:
    a, b = float(a.to(b.units).magnitude), float(b.magnitude)
    return {"is within": a <= b, "is below": a < b, "falls short of": a < b, "exceeds": a > b,
            "is above": a > b, "meets": a >= b, "equals": a == b}[word]


def _scan(page) -> dict:
    return page.evaluate("""() => {
        const txt = el => (el.innerText || el.textContent || '').trim();
        const all = sel => Array.from(document.querySelectorAll(sel));
        return {
            body: document.body.innerText,
            values: all('table.lc-inputs td:nth-child(3), .lc-table td, .lc-result, .lc-summary td, '
                        + '.lc-check-line, table.lc-checks td').map(txt),
            maths: all('math').map(m => m.textContent.replace(/\\s+/g, '')),
            // <mn>1.5</mn><mi>e</mi><mo>−</mo><mn>04</mn>: a number, the letter e, a sign and digits
            eNumbers: all('mi').filter(mi => {
                const tag = el => (el ? el.tagName.toLowerCase() : '');
                const before = mi.previousElementSibling, after = mi.nextElementSibling;
                const signed = after && /^[-+−]$/.test(after.textContent.trim())
                    && tag(after.nextElementSibling) === 'mn';
                return /^[eE]$/.test(mi.textContent.trim()) && tag(before) === 'mn' && (tag(after) === 'mn' || signed);
            }).map(mi => mi.parentElement.textContent.replace(/\\s+/g, '')),
            checks: all('.lc-check').map(c => ({id: c.dataset.step, line: txt(c.querySelector('.lc-check-line')),
                                                verdict: txt(c.querySelector('.lc-verdict'))})),
            // the checks summary: one row per check (group rows carry no data-check): verdict, check, finding
            rows: all('table.lc-checks tbody tr[data-check]').map(r => [r.dataset.check, txt(r.cells[0]),
                                                                        txt(r.cells[2])]),
            groups: all('table.lc-checks tbody tr:not([data-check])').length,
            wide: all('table.lc-inputs').map(t => t.scrollWidth - t.parentElement.clientWidth),
            // the output column: the right edge of every step's result cell, down the whole page
            outRight: all('.lc-row > .lc-out').map(o => Math.round(o.getBoundingClientRect().right)),
            outLeft: all('.lc-row > .lc-out').map(o => Math.round(o.getBoundingClientRect().left)),
        };
    }""")


def _relation_problems(where: str, text: str, verdict: str) -> list[str]:
    problems = []
    if re.search(r"[≤≥<>]", text):
        problems.append(f"{where}: an inequality sign in a check line: {text!r}")
    sentence = re.split(r" · |; |\n", text)[0].strip()
    m = _RELATION.match(sentence)
    if m is None:
        return problems + [f"{where}: the check line does not state a relation in words: {text!r}"]
    a, b = _quantity(m.group("a")), _quantity(m.group("b"))
    if not _holds(m.group("word"), a, b):
        problems.append(f"{where}: '{sentence}' is false for the numbers it shows")
    if verdict not in ("HOLDS", "FAILS"):
        problems.append(f"{where}: verdict {verdict!r} is not HOLDS or FAILS")
    return problems


@pytest.mark.parametrize("template", PACKAGES)
def test_package_text_states_no_repr_latex_e_notation_or_false_relation(browser, packages, template):
    page = browser.new_page(viewport={"width": 1000, "height": 1400})
    page.goto(packages[template].as_uri())
    page.wait_for_load_state("load")
    seen = _scan(page)
    page.close()
    body = seen["body"]

    for token in REPR_ANYWHERE:
        assert token not in body, f"{template}: Python repr {token!r} on the page"
    for value in seen["values"]:
        assert not REPR_WORDS.search(value), f"{template}: a Python repr where a value is shown: {value!r}"
    for token in RAW_LATEX:
        assert token not in body, f"{template}: raw LaTeX {token!r} on the page"
    assert seen["maths"], f"{template}: no maths on the page"
    for math in seen["maths"]:
        assert not E_NOTATION.search(math), f"{template}: e-notation in the maths: {math[:120]!r}"
    assert not seen["eNumbers"], f"{template}: e-notation in the maths: {seen['eNumbers'][:3]}"

    problems = []
    for c in seen["checks"]:
        problems += _relation_problems(f"check {c['id']}", c["line"], c["verdict"])
    for row in seen["rows"]:
        problems += _relation_problems(f"checks summary {row[0]}", row[2], row[1])
    assert not problems, "\n".join(problems)
    if template == "column-panel":
        assert seen["checks"], "the column-panel package shows no checks to scan"
    # results stand in one output column down the page: one left and one right edge for all of them
    if seen["outRight"]:
        assert max(seen["outRight"]) - min(seen["outRight"]) <= 1, f"{template}: results not in one column"
        assert max(seen["outLeft"]) - min(seen["outLeft"]) <= 1, f"{template}: results not in one column"
    if template == "column-panel":
        assert len(seen["outRight"]) >= len(seen["checks"]) > 0
    # the inputs table keeps to the page column
    assert all(w <= 1 for w in seen["wide"]), f"{template}: the inputs table is wider than its column: {seen['wide']}"
