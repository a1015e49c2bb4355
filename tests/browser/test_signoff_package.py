"""A signed, reviewed package in headless Chromium: title block, math, figures, no console error;
hostile strings in every user field stay inert text; the PDF carries the title block and
"Page X of Y" (read back with pypdf).

The browser is Debian's chromium driven by Playwright (``browser`` fixture in conftest.py).
"""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest

from latticecalc.project.signoff import verify_package

pytestmark = [pytest.mark.browser]


@pytest.fixture(scope="module")
def hostile_package(hostile_panel) -> Path:
    """A project whose every user-typed field holds script and markup (``tests.helpers.HOSTILE``: each part
    sets ``window.__lcPwned`` or opens a dialog if it ever runs), reviewed and signed: the session's
    ``hostile_panel`` (tests/conftest.py), shared with the escaping tests of the HTML text."""
    return hostile_panel


def test_hostile_strings_are_inert_in_chromium(browser, hostile_package, tmp_path):
    page = browser.new_page(viewport={"width": 1000, "height": 1400})
    dialogs, errors = [], []
    page.on("dialog", lambda d: (dialogs.append(d.message), d.dismiss()))
    page.on("console", lambda m: errors.append(m.text) if m.type == "error" else None)
    page.on("pageerror", lambda e: errors.append(str(e)))
    page.goto(hostile_package.as_uri())
    page.wait_for_load_state("load")
    page.wait_for_timeout(300)
    assert dialogs == []
    assert page.evaluate("() => window.__lcPwned") is None
    dom = page.evaluate("""() => ({
        scripts: [...document.querySelectorAll('script')].map(s => s.id),
        handlers: [...document.querySelectorAll('*')].filter(
            el => [...el.attributes].some(a => a.name.startsWith('on'))).length,
        svgs: document.querySelectorAll('svg').length,
        title: document.querySelector('#title-block .lc-calctitle').textContent,
    })""")
    assert dom["scripts"] == ["lc-package-data"]
    assert dom["handlers"] == 0 and dom["svgs"] == 0
    assert dom["title"].startswith("title <script>window.__lcPwned")  # shown as text, not run
    body = page.inner_text("body")
    for shown in ("comment <script>", "reply <script>", "signer <script>", "source <script>"):
        assert shown in body
    assert errors == []
    page.screenshot(path=str(tmp_path / "hostile.png"), full_page=True)
    assert verify_package(hostile_package).ok


def test_signed_package_renders_title_block_math_and_figures(browser, hostile_package, tmp_path):
    page = browser.new_page(viewport={"width": 1000, "height": 1400})
    errors = []
    page.on("console", lambda m: errors.append(m.text) if m.type == "error" else None)
    page.goto(hostile_package.as_uri())
    page.wait_for_load_state("load")
    block = page.locator("#title-block")
    assert block.is_visible()
    text = block.inner_text()
    assert "Fingerprint" in text and "PRELIMINARY" in text and "Open comments\t1" in text.replace("\n", "\t")
    geometry = page.evaluate("""() => {
        const f = document.querySelector('.lc-formula mfrac');
        const [num, den] = f.children;
        return {numBottom: num.getBoundingClientRect().bottom, denTop: den.getBoundingClientRect().top};
    }""")
    assert geometry["numBottom"] <= geometry["denTop"] + 1  # numerator above denominator
    images = page.evaluate("() => [...document.querySelectorAll('figure.lc-figure img')].map(i => i.naturalWidth)")
    assert images and all(w > 100 for w in images)
    assert page.locator(".lc-comment-open").count() == 1
    assert errors == []
    block.screenshot(path=str(tmp_path / "title-block.png"))
    page.screenshot(path=str(tmp_path / "package.png"), full_page=True)
    assert (tmp_path / "title-block.png").stat().st_size > 5_000


def test_pdf_holds_title_block_and_page_numbers(hostile_package):
    if shutil.which("chromium") is None:
        pytest.skip("Debian's chromium is not installed (apt-get install chromium)")
    pypdf = pytest.importorskip("pypdf", reason="pypdf is not installed")
    reader = pypdf.PdfReader(str(hostile_package.with_suffix(".pdf")))
    n = len(reader.pages)
    assert n >= 2
    first = reader.pages[0].extract_text()
    last = reader.pages[-1].extract_text()
    assert f"Page 1 of {n}" in first and f"Page {n} of {n}" in last
    for label in ("Project", "Calculation", "Calc id", "Revision", "Prepared", "Checked", "Fingerprint"):
        assert label in first
    fp = next(line for line in first.splitlines() if line.startswith("Fingerprint")).split()[-1]
    assert len(fp) == 64
    for k, page in enumerate(reader.pages, start=1):
        text = page.extract_text()
        assert f"Page {k} of {n}" in text
        assert "LC-001 rev A" in text  # the running header (the body names the calc id on page 1 only)
