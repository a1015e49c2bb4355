"""The PDF is printed on the paper asked for: A4 by default, Letter on request (Debian's chromium).

Page sizes: A4 is 210 × 297 mm (ISO 216:2007, Table 1), US Letter 8.5 × 11 in (ANSI/ASME Y14.1-2020,
Table 1); a PDF states its page size in points of 1/72 in (ISO 32000-1:2008, §14.11.2 MediaBox).
"""

from __future__ import annotations

import re

import pytest
from tests.browser.conftest import chromium_path

from latticecalc.errors import InputError
from latticecalc.project import pdf

PAGE = """<!DOCTYPE html><html><head><meta charset="utf-8"><title>t</title>
<style>@page { size: auto; margin: 20mm; }</style></head><body><p>one page</p></body></html>"""


def _media_box(path) -> tuple[float, float]:
    data = path.read_bytes()
    m = re.search(rb"/MediaBox\s*\[\s*([\d.]+)\s+([\d.]+)\s+([\d.]+)\s+([\d.]+)", data)
    assert m, "no MediaBox in the PDF"
    x0, y0, x1, y1 = (float(v) for v in m.groups())
    return x1 - x0, y1 - y0


@pytest.mark.parametrize("paper, size_pt", [("a4", (210 / 25.4 * 72, 297 / 25.4 * 72)), ("letter", (612.0, 792.0))])
def test_the_pdf_is_printed_on_the_paper_asked_for(tmp_path, paper, size_pt):
    if chromium_path() is None:
        pytest.skip("Debian's chromium is not installed (apt-get install chromium); .ci/run installs it")
    page = tmp_path / "package.html"
    page.write_text(PAGE, encoding="utf-8")
    out = pdf.print_pdf(page, paper=paper)
    w, h = _media_box(out)
    assert w == pytest.approx(size_pt[0], abs=1.0) and h == pytest.approx(size_pt[1], abs=1.0)
    assert page.read_text(encoding="utf-8") == PAGE          # the package itself is not changed


def test_an_unknown_paper_is_a_named_error(tmp_path):
    page = tmp_path / "package.html"
    page.write_text(PAGE, encoding="utf-8")
    with pytest.raises(InputError, match="unknown paper size") as err:
        pdf.print_pdf(page, paper="a3")
    assert err.value.input_name == "--paper"
    assert not page.with_suffix(".pdf").exists()
