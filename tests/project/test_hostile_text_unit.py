r"""Hostile text never reaches the package as CSS or markup.

- A control character (newline, tab, C0/C1, bidi control) in a ``cover.toml`` field is refused
  at load with an error naming the field and the file.
- The running header, the one place project text sits in CSS, is a CSS string in which only
  letters, digits and spaces are literal, whatever the title holds.
- Maths (``$\text{<meta ...>}$``, ``\href``, ``\style``, ...) and markdown (links, raw HTML) come out
  as allow-listed MathML / HTML only: no other element, no ``href`` but ``#...``, no ``on*``
  attribute, no ``style`` but a table cell's ``text-align``.
"""

from __future__ import annotations

import re
from html.parser import HTMLParser
from pathlib import Path

import pytest

from latticecalc.errors import InputError, LatticeCalcError
from latticecalc.project.export.collect import SheetDocument
from latticecalc.project.export.html import PackageExtras, css_string, render_package
from latticecalc.project.export.narrative import markdown_html
from latticecalc.project.meta import ControlCharacterError, load_meta
from latticecalc.sheet.mathml import to_mathml
from latticecalc.sheet.render import figure_html, note_html, step_html

CSS_ATTACK = "Panel C3\n}\n.lc-verdict-notok{display:none}\n.x{"

PROJECT_TOML = """\
[project]
name = "Demo"
number = "0001"
client = "Client"

[calc]
id = "LC-001"
title = {title}
revision = "A"
prepared_by = "A. Person"
"""

CONTROL_CHARACTERS = {
    "newline": "\n", "carriage return": "\r", "tab": "\t", "NUL": "\x00", "escape": "\x1b",
    "delete": "\x7f", "next line (C1)": "\x85", "CSI (C1)": "\x9b", "RLO override": "\u202e",
    "LRE embedding": "\u202a", "RLI isolate": "\u2067", "RLM mark": "\u200f", "line separator": "\u2028",
    "paragraph separator": "\u2029",
}


def _toml_string(text: str) -> str:
    """A TOML basic string holding ``text`` (control characters as \\uXXXX escapes)."""
    return '"' + "".join(ch if ch.isprintable() and ch not in '"\\' else f"\\u{ord(ch):04x}"
                         for ch in text) + '"'


def _project_file(tmp_path: Path, title: str) -> Path:
    path = tmp_path / "cover.toml"
    path.write_text(PROJECT_TOML.format(title=_toml_string(title)), encoding="utf-8")
    return path


# --- cover.toml fields ----------------------------------------------------------------------

def test_title_with_css_breakout_is_refused_naming_field_and_file(tmp_path):
    path = _project_file(tmp_path, CSS_ATTACK)
    with pytest.raises(ControlCharacterError) as info:
        load_meta(path)
    err = info.value
    assert isinstance(err, LatticeCalcError) and isinstance(err, InputError)
    assert err.input_name == "calc.title"
    assert "calc.title" in str(err) and "cover.toml" in str(err)
    assert "U+000A" in str(err)  # says which character


@pytest.mark.parametrize("char", list(CONTROL_CHARACTERS.values()), ids=list(CONTROL_CHARACTERS))
def test_every_control_character_is_refused_in_the_title(tmp_path, char):
    with pytest.raises(ControlCharacterError, match="calc.title"):
        load_meta(_project_file(tmp_path, f"Panel {char}C3"))


@pytest.mark.parametrize(("table", "key"), [("project", "name"), ("project", "number"), ("project", "client"),
                                            ("calc", "prepared_by"), ("calc", "description")])
def test_control_characters_are_refused_in_every_text_field(tmp_path, table, key):
    path = _project_file(tmp_path, "Panel C3")
    text = path.read_text(encoding="utf-8")
    if f"\n{key} =" in text:
        line = f"{key} = {_toml_string('x' + chr(10) + 'y')}"
        text = re.sub(rf"(?m)^{key} = .*$", lambda _: line, text, count=1)
    else:
        text = text.replace(f"[{table}]\n", f"[{table}]\n{key} = {_toml_string('x' + chr(9) + 'y')}\n")
    path.write_text(text, encoding="utf-8")
    with pytest.raises(ControlCharacterError, match=re.escape(f"{table}.{key}")):
        load_meta(path)


def test_ordinary_unicode_titles_still_load(tmp_path):
    title = "Säule C3 — panel ≤ 5 mm, “quoted” <b> & 'x' ½ 日本 עברית"
    meta = load_meta(_project_file(tmp_path, title))
    assert meta.title == title


# --- CSS ----------------------------------------------------------------------------------------

def _css_unescape(quoted: str) -> str:
    """Read a CSS string token written with hex escapes back to its text (enough for these tests)."""
    assert quoted[0] == quoted[-1] == '"'
    return re.sub(r"\\([0-9a-fA-F]{1,6}) ?", lambda m: chr(int(m.group(1), 16)), quoted[1:-1])


CSS_HOSTILE = [CSS_ATTACK, 'a"; } body{display:none} x{content:"', "</style><script>alert(1)</script>",
               "back\\slash \\22 ", "tab\there", "*/ /* comment", "url(http://example.invalid/x.png)",
               "\u202eRLO", "nul\x00byte", "emoji 🙂 and — dash", "@import 'http://example.invalid/x.css';"]


@pytest.mark.parametrize("text", CSS_HOSTILE)
def test_css_string_keeps_only_letters_digits_spaces_and_escapes(text):
    out = css_string(text)
    assert re.fullmatch(r'"(?:[A-Za-z0-9 ]|\\[0-9a-f]{1,6} )*"', out), out
    assert _css_unescape(out) == text.replace("\x00", "\ufffd")


def _style_of(html: str) -> str:
    styles = re.findall(r"<style>(.*?)</style>", html, flags=re.DOTALL)
    assert len(styles) == 1 and html.count("</style") == 1
    return styles[0]


def test_package_style_holds_no_title_text_even_if_the_loader_is_bypassed():
    meta = {"name": "Demo", "number": "1", "calc_id": "LC-001", "title": CSS_ATTACK + '"</style>',
            "revision": "A", "prepared_by": "A. Person"}
    page = render_package(meta=meta, doc=SheetDocument(sections=[]), inputs=[], references=[],
                          extras=PackageExtras(), generated="2024-01-01T00:00:00+00:00")
    style = _style_of(page)
    assert "display:none" not in style and "lc-verdict-notok{" not in style and "\n}\n.x" not in style
    header = re.search(r"@top-left \{ content: (\"[^\"]*\");", style)
    assert header is not None
    assert _css_unescape(header.group(1)) == f"LC-001 rev A — {meta['title']}"


# --- maths and markdown ---------------------------------------------------------------------------

# The allow-list of the hardening issue (presentation MathML only: no maction, mglyph, annotation-xml).
MATHML_ELEMENTS = frozenset({
    "math", "mrow", "mi", "mn", "mo", "msub", "msup", "msubsup", "mfrac", "msqrt", "mroot", "mtext", "mspace",
    "mstyle", "mtable", "mtr", "mtd", "munder", "mover", "munderover", "mpadded", "mphantom", "menclose",
    "semantics", "annotation"})
# Harmless presentation attributes (the list and a few more latex2mathml writes); no colour.
MATHML_ATTRIBUTES = frozenset({
    "mathvariant", "displaystyle", "stretchy", "fence", "separator", "lspace", "rspace", "columnalign",
    "rowalign", "accent", "accentunder", "linethickness", "width", "height", "depth", "notation",
    "scriptlevel", "minsize", "maxsize", "movablelimits", "xmlns", "display", "mathsize", "form", "largeop",
    "symmetric", "rowspacing", "columnspacing", "rowlines", "columnlines", "frame", "voffset", "encoding"})
NARRATIVE_ATTRIBUTES = frozenset({"href", "class", "style", "start"})
NARRATIVE_HTML = frozenset({"p", "h2", "h3", "h4", "h5", "h6", "ul", "ol", "li", "em", "strong", "del",
                            "code", "pre", "blockquote", "table", "thead", "tbody", "tr", "th", "td",
                            "br", "hr", "a", "span", "div"})

MATH_HOSTILE = [  # from the hardening issue
    r'$\text{<meta http-equiv="refresh" content="0;url=http://example.invalid">}$',
    r"$\text{<script>alert(1)</script>}$",
    r"$\href{javascript:alert(1)}{x}$",
] + [  # more of the same kind ('/' separates attributes as a space would)
    r'$\text{<meta/http-equiv="refresh"/content="0;url=http://example.invalid">}$',
    r"$\href{http://example.invalid}{x}$",
    r"$\style{display:none}{x}$",
    r"$\class{lc-verdict-notok}{x}$",
    r"$\mbox{<iframe src=http://example.invalid></iframe>}$",
    r"$$\text{<svg onload=alert(1)>}$$",
    r'$\text{<a href="http://example.invalid">x</a>}$',
    r"$\text{</mtext></math><img src=x onerror=alert(1)>}$",
    r'$\text{<base href="http://example.invalid/">}$',
    r"$\text{<link rel=stylesheet href=http://example.invalid/x.css>}$",
    r"$\text{<form action=http://example.invalid><button>go</button></form>}$",
    r'$\text{<maction actiontype="statusline">x</maction>}$',
    r'$\text{<mglyph src="http://example.invalid/x.png"/>}$',
    r"$\text{<style>.lc-verdict-notok{display:none}</style>}$",
    r"$\text{<!-- x --><![CDATA[<script>alert(1)</script>]]>}$",
    r"$\text{&lt;script&gt;alert(1)&lt;/script&gt;}$",
    r'$\text{<mi xlink:href="javascript:alert(1)" onclick="alert(1)">x</mi>}$',
    r"$\color{white}{NOT OK}$",
    r"$\unicode{x}$",
]

MARKDOWN_HOSTILE = [  # from the hardening issue
    "[x](http://example.invalid)",
    "[y](javascript:alert(1))",
    "<img src=x onerror=alert(1)>",
] + [  # more of the same kind
    "[z](JaVaScRiPt:alert(1))",
    "[w](//example.invalid/page)",
    "[d](data:text/html,<script>alert(1)</script>)",
    '[q](#x" onmouseover="alert(1))',
    "![pic](http://example.invalid/x.png)",
    "<http://example.invalid>",
    "<javascript:alert(1)>",
    "[ref]\n\n[ref]: http://example.invalid",
    '<meta http-equiv="refresh" content="0;url=http://example.invalid">',
    "<style>.lc-verdict-notok{display:none}</style>",
    "<div>\n<script>alert(1)</script>\n</div>",
    "text <a href='http://example.invalid'>link</a> text",
    '```js" onload="alert(1)\ncode\n```',
    "| a | b |\n|:--|--:|\n| <img src=x> | [l](http://example.invalid) |",
]


class _Collector(HTMLParser):
    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.elements: list[str] = []
        self.attrs: list[tuple[str, str, str]] = []
        self.comments: list[str] = []

    def handle_starttag(self, tag, attrs):
        self.elements.append(tag)
        self.attrs.extend((tag, k, v or "") for k, v in attrs)

    handle_startendtag = handle_starttag

    def handle_comment(self, data):
        self.comments.append(data)

    def handle_decl(self, decl):
        self.comments.append(decl)

    def unknown_decl(self, data):
        self.comments.append(data)


def _assert_inert(html: str, allowed: frozenset[str], own_attributes: frozenset[str] = frozenset()) -> None:
    c = _Collector()
    c.feed(html)
    c.close()
    assert set(c.elements) <= allowed, (sorted(set(c.elements) - allowed), html)
    assert c.comments == [], html
    for tag, name, value in c.attrs:
        assert name in MATHML_ATTRIBUTES | NARRATIVE_ATTRIBUTES | own_attributes, (tag, name, html)
        assert not name.startswith("on"), (tag, name, html)
        assert name not in ("src", "srcset", "action", "formaction", "xlink:href", "http-equiv", "content"), html
        if name == "href":
            assert value.startswith("#"), html
        if name == "style":
            assert re.fullmatch(r"text-align:(left|right|center)", value), html
        if name == "class":
            assert "verdict" not in value and "noprint" not in value, html
        assert "javascript:" not in value.lower() and "example.invalid" not in value, html
    for bad in ("<script", "<meta", "<iframe", "<img", "<style", "<svg", "<a href=\"http", "<base", "<link"):
        assert bad not in html.lower(), (bad, html)


@pytest.mark.parametrize("text", MATH_HOSTILE + MARKDOWN_HOSTILE)
def test_narrative_holds_only_allow_listed_markup(text):
    _assert_inert(markdown_html(text), MATHML_ELEMENTS | NARRATIVE_HTML)


@pytest.mark.parametrize("latex", [m.strip("$") for m in MATH_HOSTILE])
def test_mathml_holds_only_allow_listed_elements(latex):
    for display in (False, True):
        out = to_mathml(latex, display=display)
        _assert_inert(out, MATHML_ELEMENTS | {"code"})


@pytest.mark.parametrize("latex", [m.strip("$") for m in MATH_HOSTILE])
def test_step_records_render_maths_through_the_allow_list(latex):
    rec = {"kind": "step", "id": "x.y", "description": "d", "formula_latex": latex,
           "substitution_latex": latex, "result_text": "1"}
    _assert_inert(step_html(rec), MATHML_ELEMENTS | {"div", "span", "code", "wbr"}, frozenset({"id", "data-step"}))


def test_links_keep_their_text_and_only_in_page_anchors_keep_an_href():
    out = markdown_html("see [the inputs](#inputs), [a page](http://example.org/x) and [y](javascript:alert(1))")
    assert '<a href="#inputs">the inputs</a>' in out
    assert "a page" in out and "y" in out
    assert out.count("<a ") == 1 and "javascript" not in out


def test_ordinary_maths_and_markdown_survive_the_allow_list():
    out = markdown_html("# Head\n\nText with $\\frac{a}{b} \\leq \\sqrt{c}$ and **bold**.\n\n"
                        "$$\\sigma = \\frac{F}{A}$$\n\n| a | b |\n|:--|--:|\n| 1 | 2 |\n\n1. one\n2. two")
    assert "≤" in out or "&#x02264;" in out
    for piece in ("<mfrac>", "<msqrt>", "<strong>bold</strong>", 'display="block"', "<table>",
                  '<th style="text-align:left">', "<ol>", "<li>two</li>", "<h2>Head</h2>"):
        assert piece in out, piece


def test_forged_records_cannot_break_out_of_attributes():
    c = _Collector()
    c.feed(figure_html({"id": "f", "caption": 'c" onload="x', "png": 'AAAA" onerror="alert(1)'}))
    assert [(t, k) for t, k, _ in c.attrs] == [("figure", "class"), ("figure", "id"), ("figure", "data-figure"),
                                              ("img", "alt"), ("img", "src")]
    assert dict((k, v) for _, k, v in c.attrs)["src"] == "data:image/png;base64,"
    note = note_html({"kind": "note", "category": "noprint lc-verdict-notok", "text": "t"})
    assert 'class="lc-remark lc-note"' in note
