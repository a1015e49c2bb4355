"""Markdown narrative from notebooks, rendered safely.

Raw HTML is escaped, maths goes through the MathML allow-list, images are not embedded, and a
link keeps its text but an ``href`` only when it points inside the package (``#...``); a web
address is shown as plain text after the link text.  The rendered HTML is then rebuilt once more
from an allow-list of elements and attributes (:func:`latticecalc.sheet.mathml.clean_markup`), so
nothing the renderer lets through by mistake can reach the package as markup.
"""

from __future__ import annotations

import re
from html import escape

import mistune

from latticecalc.sheet.mathml import MATHML_ATTRIBUTES, MATHML_ELEMENTS, Policy, clean_markup, to_mathml

# In-page anchors only: "#inputs", "#step-strut.f1-cc".
_ANCHOR = re.compile(r"^#[\w.:~%+\-]*$")
# Addresses shown (as text, never as a link) after the link text.
_SHOWN_URL = re.compile(r"^(https?://|mailto:)[^\s]*$", re.IGNORECASE)
_CLASSES = frozenset({"lc-math", "lc-url", "lc-missing-image", "tex"})
_LANGUAGE_CLASS = re.compile(r"^language-[A-Za-z0-9_+\-]{1,32}$")
_ALIGN = re.compile(r"^text-align:(left|right|center)$")

#: What the narrative may hold: the HTML mistune writes for markdown, plus MathML.
NARRATIVE_POLICY = Policy(
    elements=MATHML_ELEMENTS | frozenset({
        "p", "h2", "h3", "h4", "h5", "h6", "ul", "ol", "li", "em", "strong", "del", "code", "pre",
        "blockquote", "table", "thead", "tbody", "tr", "th", "td", "br", "hr", "a", "span", "div"}),
    attributes={**MATHML_ATTRIBUTES,
                "href": lambda v: bool(_ANCHOR.match(v)),
                "class": lambda v: v in _CLASSES or bool(_LANGUAGE_CLASS.match(v)),
                "style": lambda v: bool(_ALIGN.match(v)),
                "start": lambda v: v.isascii() and v.isdigit() and len(v) <= 6},
    void=frozenset({"br", "hr"}),
)


class _SafeRenderer(mistune.HTMLRenderer):
    """HTML renderer that escapes raw HTML, turns math into MathML and fetches nothing."""

    def __init__(self) -> None:
        super().__init__(escape=True)

    def inline_math(self, text: str) -> str:
        return to_mathml(text)

    def block_math(self, text: str) -> str:
        return f'<div class="lc-math">{to_mathml(text, display=True)}</div>\n'

    def link(self, text: str, url: str, title: str | None = None) -> str:
        url = url.strip()
        if _ANCHOR.match(url):
            return f'<a href="{escape(url)}">{text}</a>'
        if _SHOWN_URL.match(url) and escape(url) != text:
            return f'{text} <span class="lc-url">({escape(url)})</span>'
        return text

    def image(self, text: str, url: str, title: str | None = None) -> str:
        return f'<span class="lc-missing-image">[image not embedded: {escape(text or url)}]</span>'

    def inline_html(self, html: str) -> str:
        return escape(html)

    def block_html(self, html: str) -> str:
        return f"<p>{escape(html.strip())}</p>\n"

    def heading(self, text: str, level: int, **attrs) -> str:
        level = min(level + 1, 6)  # notebook '#' headings sit under the package's section headings
        return f"<h{level}>{text}</h{level}>\n"


_MARKDOWN = mistune.create_markdown(renderer=_SafeRenderer(), plugins=["table", "math", "strikethrough"])


def markdown_html(text: str) -> str:
    """Render notebook markdown to safe HTML (allow-listed elements and attributes only)."""
    return clean_markup(_MARKDOWN(text), policy=NARRATIVE_POLICY)


def first_heading(text: str) -> str | None:
    """The text of the first ``# `` heading in a markdown cell, if any."""
    for line in text.splitlines():
        if line.startswith("# "):
            return line[2:].strip()
    return None


def without_first_heading(text: str) -> str:
    """The markdown with its first ``# `` heading line removed."""
    lines = text.splitlines()
    for i, line in enumerate(lines):
        if line.startswith("# "):
            return "\n".join(lines[:i] + lines[i + 1:])
    return text
