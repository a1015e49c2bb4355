"""Markdown narrative from notebooks, rendered safely: raw HTML escaped, no external links or images."""

from __future__ import annotations

from html import escape

import mistune

from latticecalc.sheet.mathml import to_mathml


class _SafeRenderer(mistune.HTMLRenderer):
    """HTML renderer that escapes raw HTML, turns math into MathML and fetches nothing."""

    def __init__(self) -> None:
        super().__init__(escape=True)

    def inline_math(self, text: str) -> str:
        return to_mathml(text)

    def block_math(self, text: str) -> str:
        return f'<div class="lc-math">{to_mathml(text, display=True)}</div>\n'

    def link(self, text: str, url: str, title: str | None = None) -> str:
        if url.startswith("#"):
            return f'<a href="{escape(url)}">{text}</a>'
        return f'{text} <span class="lc-url">({escape(url)})</span>'

    def image(self, text: str, url: str, title: str | None = None) -> str:
        return f'<span class="lc-missing-image">[image not embedded: {escape(text or url)}]</span>'

    def heading(self, text: str, level: int, **attrs) -> str:
        level = min(level + 1, 6)  # notebook '#' headings sit under the package's section headings
        return f"<h{level}>{text}</h{level}>\n"


_MARKDOWN = mistune.create_markdown(renderer=_SafeRenderer(), plugins=["table", "math", "strikethrough"])


def markdown_html(text: str) -> str:
    """Render notebook markdown to safe HTML."""
    return _MARKDOWN(text)


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
