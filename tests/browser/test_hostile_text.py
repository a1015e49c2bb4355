r"""Hostile project text and narrative in headless Chromium: nothing navigates, nothing is fetched,
no failing verdict is hidden.

One site-survey project (its default inputs give one failing check) with

- a ``calc.title`` that tries to close the running header's CSS string and hide the verdicts (a
  newline there is refused when the project is opened; the same text without control characters
  is let through and must stay inert text);
- a markdown cell of maths and links that tried to navigate (``<meta http-equiv="refresh">``),
  run script or link out.

The package is also rendered with a newline title straight from the records (as if the check at
load were bypassed), and both pages are checked on screen and in print media.
"""

from __future__ import annotations

from pathlib import Path

import nbformat
import pytest
import tomlkit

from latticecalc.project import open_project
from latticecalc.project.export import export_project
from latticecalc.project.export.collect import collect
from latticecalc.project.export.html import PackageExtras, render_package
from latticecalc.project.meta import ControlCharacterError
from latticecalc.project.state import EXECUTED_DIR
from latticecalc.project.templates import new_project

pytestmark = [pytest.mark.browser]

CSS_BREAKOUT = "Panel C3\n}\n.lc-verdict-notok{display:none}\n.x{"
# The same without control characters, plus an end of the style element and a refresh.
TITLE = ('Panel C3 } .lc-verdict-notok{display:none} .lc-verdict{visibility:hidden} .x{ "\\" '
         '</style><style>.lc-verdict{display:none}</style>'
         '<meta http-equiv="refresh" content="0;url=http://example.invalid/title">')

HOSTILE_MARKDOWN = "\n\n".join([
    "## Hostile narrative",
    # from the hardening issue
    r'Refresh: $\text{<meta http-equiv="refresh" content="0;url=http://example.invalid/math">}$',
    r"Script: $\text{<script>window.__lcPwned = 1</script>}$",
    r"Href: $\href{javascript:window.__lcPwned=2}{x}$ and $\href{http://example.invalid/href}{y}$",
    "[outside](http://example.invalid/link) and [script link](javascript:window.__lcPwned=3)",
    "<img src=x onerror=window.__lcPwned=4>",
    # more of the same kind ('/' separates attributes as a space would; latex2mathml keeps it)
    r'$\text{<meta/http-equiv="refresh"/content="0;url=http://example.invalid/slash">}$',
    r"$$\text{<style>.lc-verdict-notok{display:none}</style><base href=http://example.invalid/>}$$",
    r"$\style{display:none}{x}$ $\class{lc-verdict-notok}{y}$ $\color{white}{z}$",
    r'$\text{</mtext></math><img src="http://example.invalid/img.png" onerror="window.__lcPwned=5">}$',
    r"$\mbox{<iframe src=http://example.invalid/frame></iframe>}$",
    r'$\text{<link rel="stylesheet" href="http://example.invalid/x.css">}$',
    r'$\text{<mglyph src="http://example.invalid/glyph.png"/>}$',
    r"$\text{<form action=http://example.invalid/form><button>go</button></form>}$",
    "![picture](http://example.invalid/pic.png) <http://example.invalid/auto> [proto](//example.invalid/p)",
    '<meta http-equiv="refresh" content="0;url=http://example.invalid/raw">',
    "<style>.lc-verdict-notok{display:none}</style>",
    '[anchor](#checks) [quote](#x" onmouseover="window.__lcPwned=6)',
])

ALLOWED = {
    "math", "mrow", "mi", "mn", "mo", "msub", "msup", "msubsup", "mfrac", "msqrt", "mroot", "mtext", "mspace",
    "mstyle", "mtable", "mtr", "mtd", "munder", "mover", "munderover", "mpadded", "mphantom", "menclose",
    "semantics", "annotation",
    "p", "h2", "h3", "h4", "h5", "h6", "ul", "ol", "li", "em", "strong", "del", "code", "pre", "blockquote",
    "table", "thead", "tbody", "tr", "th", "td", "br", "hr", "a", "span", "div"}


def _edit_toml(path: Path, edit) -> None:
    doc = tomlkit.parse(path.read_text(encoding="utf-8"))
    edit(doc)
    path.write_text(tomlkit.dumps(doc), encoding="utf-8")


def _set_title(folder: Path, title: str) -> None:
    def edit(doc):
        doc["calc"]["title"] = title

    _edit_toml(folder / "cover.toml", edit)


@pytest.fixture(scope="module")
def hostile_pages(tmp_path_factory) -> dict[str, Path]:
    folder = new_project(tmp_path_factory.mktemp("hostile-text") / "survey", template="site-survey")
    nb_path = folder / "10_record.ipynb"
    nb = nbformat.read(str(nb_path), as_version=4)
    nb.cells.append(nbformat.v4.new_markdown_cell(HOSTILE_MARKDOWN))
    nbformat.write(nb, str(nb_path))

    _set_title(folder, CSS_BREAKOUT)
    with pytest.raises(ControlCharacterError, match="calc.title") as info:
        export_project(folder, run=True, progress=None)
    assert "cover.toml" in str(info.value)

    _set_title(folder, TITLE)
    report = export_project(folder, run=True, progress=None)

    # The same records with the newline title, as if the check at load were bypassed.
    project = open_project(folder)
    doc = collect([project.out / EXECUTED_DIR / nb.name for nb in project.notebooks])
    meta = project.meta.to_dict() | {"title": CSS_BREAKOUT}
    bypass = folder / "out" / "bypassed-title.html"
    bypass.write_text(render_package(meta=meta, doc=doc, inputs=[], references=[], extras=PackageExtras(),
                                     generated="2024-01-01T00:00:00+00:00"), encoding="utf-8")
    return {"package": report.html, "bypassed": bypass}


DOM_REPORT = """() => {
    const all = [...document.querySelectorAll('*')];
    const shown = el => {
        const s = getComputedStyle(el);
        const r = el.getBoundingClientRect();
        return s.display !== 'none' && s.visibility !== 'hidden' && Number(s.opacity) > 0
            && r.width > 0 && r.height > 0
            && el.checkVisibility({checkOpacity: true, checkVisibilityCSS: true});
    };
    const verdicts = [...document.querySelectorAll('.lc-verdict, .lc-verdict-notok')]
        .filter(el => el.textContent.includes('FAILS'));
    return {
        notok: verdicts.length,
        hidden: verdicts.filter(el => !shown(el)).map(el => el.outerHTML),
        narrative: [...new Set([...document.querySelectorAll('.lc-narrative *')].map(e => e.localName))],
        hrefs: [...document.querySelectorAll('[href]')].map(e => e.getAttribute('href')),
        srcs: [...document.querySelectorAll('[src]')].map(e => e.getAttribute('src').slice(0, 22)),
        handlers: all.filter(el => [...el.attributes].some(a => a.name.startsWith('on'))).map(e => e.localName),
        metas: [...document.querySelectorAll('meta[http-equiv]')].map(m => m.getAttribute('http-equiv')),
        styles: document.querySelectorAll('style').length,
        links: document.querySelectorAll('link, base, iframe, form, img:not(.lc-figure img)').length,
        pwned: window.__lcPwned === undefined ? null : window.__lcPwned,
    };
}"""


@pytest.mark.parametrize("which", ["package", "bypassed"])
def test_hostile_text_neither_navigates_nor_fetches_nor_hides_a_verdict(browser, hostile_pages, which):
    url = hostile_pages[which].as_uri()
    page = browser.new_page(viewport={"width": 1000, "height": 1400})
    requests, navigations, dialogs, errors = [], [], [], []
    page.on("request", lambda r: requests.append(r.url))
    page.on("framenavigated", lambda f: navigations.append(f.url))
    page.on("dialog", lambda d: (dialogs.append(d.message), d.dismiss()))
    page.on("pageerror", lambda e: errors.append(str(e)))
    page.goto(url)
    page.wait_for_load_state("load")
    page.wait_for_timeout(1500)  # a 0-second refresh would have fired by now
    assert page.url == url
    assert navigations == [url]
    assert all(u == url or u.startswith("data:") for u in requests), requests
    assert dialogs == [] and errors == []
    for media in ("screen", "print"):
        page.emulate_media(media=media)
        dom = page.evaluate(DOM_REPORT)
        assert dom["pwned"] is None
        assert dom["notok"] >= 1, "the survey's default inputs give a failing check; the test needs one"
        assert dom["hidden"] == [], (media, dom["hidden"])
        assert set(dom["narrative"]) <= ALLOWED, set(dom["narrative"]) - ALLOWED
        assert all(h.startswith("#") for h in dom["hrefs"]), dom["hrefs"]
        assert all(s.startswith("data:image/png;base64,") for s in dom["srcs"]), dom["srcs"]
        assert dom["handlers"] == [] and dom["metas"] == ["Content-Security-Policy"]
        assert dom["styles"] == 1 and dom["links"] == 0
    page.emulate_media(media="screen")
    body = page.inner_text("body")
    assert "Hostile narrative" in body  # the cell was rendered, not lost
    assert "outside" in body and "script link" in body  # link text kept, href dropped
    if which == "package":  # the title is shown as text on the title block
        assert page.inner_text("#title-block .lc-calctitle") == TITLE
    assert page.title().endswith(TITLE if which == "package" else CSS_BREAKOUT.replace("\n", " "))
    page.close()
