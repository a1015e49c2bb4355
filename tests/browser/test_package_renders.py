"""The demo's calc package opens in headless Chromium with its math laid out, offline.

Nothing here reads the demo's numbers, so the demo is the session's quick demo (``quick_demo`` in
tests/conftest.py: the column-panel's numerical check coarsened and the study's search cut down before each
project runs): the same build, projects, overlays and package, in a fraction of the time.
"""

from __future__ import annotations

import pytest

from latticecalc.project import demo

pytestmark = [pytest.mark.browser, pytest.mark.slow]


@pytest.fixture(scope="module")
def demo_html(quick_demo):
    assert len(quick_demo.packages) == len(demo.demo_projects())
    return quick_demo.main_package


def test_demo_package_renders_math_offline(browser, demo_html, tmp_path):
    page = browser.new_page(viewport={"width": 1000, "height": 1400})
    requests = []
    page.on("request", lambda r: requests.append(r.url))
    errors = []
    page.on("console", lambda m: errors.append(m.text) if m.type == "error" else None)
    page.goto(demo_html.as_uri())
    page.wait_for_load_state("load")
    # every request the page made is the file itself or inline data
    assert all(u.startswith(("file:", "data:")) for u in requests), requests
    assert errors == []
    assert page.locator("#title-block").is_visible()
    assert "Cautions" in page.inner_text("body")
    # MathML is laid out as math: a fraction's numerator sits above its denominator
    geometry = page.evaluate("""() => {
        const f = document.querySelector('.lc-formula mfrac');
        const [num, den] = f.children;
        const a = num.getBoundingClientRect(), b = den.getBoundingClientRect();
        return {numBottom: a.bottom, denTop: b.top, width: f.getBoundingClientRect().width};
    }""")
    assert geometry["width"] > 5
    assert geometry["numBottom"] <= geometry["denTop"] + 1
    shot = tmp_path / "package.png"
    page.screenshot(path=str(shot), full_page=True)
    assert shot.stat().st_size > 10_000
    page.close()
