"""How the package reads: numbered source markers, repeated steps shown once, shared prefixes shown once.

Sources: the kit's own layout rules (DEVELOPERS.md, "The calc package's layout"), `common practice` for
calculation sheets: each source is cited once in a reference list and referred to by number; a value
worked out once is referred to, not worked out again.
"""

from __future__ import annotations

import html as html_module
import re

import sympy as sp

from latticecalc import Q_
from latticecalc.project.export.collect import Section, SheetDocument
from latticecalc.project.signoff.fingerprint import shown_steps
from latticecalc.project.signoff.verify import block_texts
from latticecalc.sheet import Formula
from latticecalc.sheet.render import reading_context, record_html
from latticecalc.sheet.source import Source
from latticecalc.sheet.step import evaluate

ROARK = Source(author="Young, W. C. & Budynas, R. G.", title="Roark's Formulas for Stress and Strain",
               year=2002, locator="Table A.1")
RAO = Source(author="Rao, S. S.", title="Mechanical Vibrations", year=2017, locator="eq. (8.82)")
d = sp.Symbol("d")
AREA = Formula("A", sp.pi * d ** 2 / 4)


def _area(sid: str, diameter: str, description: str = "Strut cross-section area") -> dict:
    return evaluate(AREA, id=sid, description=description, values={"d": Q_(diameter)}, unit="mm^2",
                    source=ROARK).to_dict()


def _result(steps: list[dict], title: str = "") -> dict:
    return {"kind": "result", "title": title, "steps": steps}


def _doc() -> SheetDocument:
    s1 = Section(number=1, title="one", notebook="10.ipynb", blocks=[
        ("record", _result([_area("a.area", "10 mm"),
                            {**_area("a.other", "12 mm"), "source": {**RAO.to_dict()}}]))])
    s2 = Section(number=2, title="two", notebook="20.ipynb", blocks=[
        ("record", _result([_area("b.area", "10 mm"),                       # repeats a.area
                            _area("b.m1", "11 mm", "TPU 90A, printed, test batch: area one"),
                            _area("b.m2", "13 mm", "TPU 90A, printed, test batch: area two")]))])
    return SheetDocument(sections=[s1, s2])


def test_works_are_numbered_in_order_of_first_use_and_locators_stay_beside_the_marker():
    ctx = _doc().reading_context()
    assert ctx.refs == {("Young, W. C. & Budynas, R. G.", "Roark's Formulas for Stress and Strain", "2002"): 1,
                        ("Rao, S. S.", "Mechanical Vibrations", "2017"): 2}
    html = record_html(_area("a.area", "10 mm"), ctx=ctx)
    assert '<a href="#ref-1">[1]</a>' in html and "Table A.1" in html
    assert "Source:" not in html and "Roark" not in html      # the work itself is in the reference list


def test_a_repeated_step_refers_to_the_first_and_keeps_its_result_in_the_output_column():
    ctx = _doc().reading_context()
    assert ctx.same_as == {"b.area": ("a.area", 1)}
    html = record_html(_area("b.area", "10 mm"), ctx=ctx)
    assert 'href="#step-a.area"' in html and "in section 1" in html
    assert "<math" not in html                                # not worked out again
    assert '<div class="lc-out"><span class="lc-result">78.54 mm²</span></div>' in html


def test_a_shared_description_prefix_is_shown_once_above_its_run():
    ctx = _doc().reading_context()
    assert ctx.group_heads == {"b.m1": "TPU 90A, printed, test batch"}
    assert ctx.prefix == {"b.m1": "TPU 90A, printed, test batch", "b.m2": "TPU 90A, printed, test batch"}
    texts = block_texts(record_html(_area("b.m2", "13 mm", "TPU 90A, printed, test batch: area two"), ctx=ctx))
    assert texts["step-b.m2"].startswith("b.m2 [1] Table A.1 Area two")


def test_the_package_substitution_leaves_the_result_to_the_output_column_and_the_notebook_keeps_it():
    rec = _area("a.area", "10 mm")
    ctx = _doc().reading_context()
    package, notebook = record_html(rec, ctx=ctx), record_html(rec)

    def subst(html: str) -> str:
        """The text of the substituted line, tags stripped."""
        line = re.search(r'<div class="lc-subst">(.*?)</div>', html).group(1)
        return html_module.unescape(re.sub(r"<[^>]+>", "", line))

    assert subst(package).startswith("=") and "78.54" not in subst(package)
    assert "78.54" in subst(notebook)                         # a notebook step has no output column
    assert "Source: Young" in notebook


def test_the_fingerprinted_shown_text_is_what_the_page_shows_in_context():
    doc = _doc()
    ctx = doc.reading_context()
    page = "".join(record_html(top, ctx=ctx) for sec in doc.sections for _, top in sec.blocks)
    blocks = block_texts(page)
    shown = shown_steps(doc)
    assert set(shown) == {"a.area", "a.other", "b.area", "b.m1", "b.m2"}
    for sid, text in shown.items():
        assert blocks[f"step-{sid}"] == text


def test_no_context_without_records():
    assert reading_context([]).refs == {}
