r"""LaTeX to MathML, done here on the server side so the package needs no JavaScript or network.

The converter (latex2mathml) copies the argument of ``\text{...}`` into its output unescaped and
turns ``\href``, ``\style`` and ``\class`` into attributes, so its output is never trusted: it is
parsed with :mod:`html.parser` and rebuilt from an allow-list of MathML elements and harmless
attributes, every text node escaped (:func:`clean_markup`).  Anything else (``<meta>``,
``<script>``, ``href``, ``style``, ``on*`` handlers) is dropped.  The markdown narrative uses the
same rebuilder with a small set of HTML elements added.
"""

from __future__ import annotations

import html
import html.entities
import re
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from functools import lru_cache
from html.parser import HTMLParser

from latex2mathml.converter import convert

MATHML_NAMESPACE = "http://www.w3.org/1998/Math/MathML"

#: Presentation MathML elements kept; every other element is dropped (its text kept, escaped).
MATHML_ELEMENTS = frozenset({
    "math", "mrow", "mi", "mn", "mo", "msub", "msup", "msubsup", "mfrac", "msqrt", "mroot", "mtext",
    "mspace", "mstyle", "mtable", "mtr", "mtd", "munder", "mover", "munderover", "mpadded", "mphantom",
    "menclose", "semantics", "annotation",
})

# A value of a presentation attribute: words, numbers and lengths ("0.2222em", "-1ex", "left center").
_PLAIN_VALUE = re.compile(r"^[A-Za-z0-9 .%+\-]{0,64}$")


def _plain(value: str) -> bool:
    return bool(_PLAIN_VALUE.match(value))


#: Attributes kept on MathML elements, each with the test its value must pass.
MATHML_ATTRIBUTES: Mapping[str, Callable[[str], bool]] = {
    **{name: _plain for name in (
        "mathvariant", "displaystyle", "stretchy", "fence", "separator", "lspace", "rspace",
        "columnalign", "rowalign", "accent", "accentunder", "linethickness", "width", "height", "depth",
        "notation", "scriptlevel", "minsize", "maxsize", "movablelimits", "mathsize", "form", "largeop",
        "symmetric", "rowspacing", "columnspacing", "rowlines", "columnlines", "frame", "voffset")},
    "xmlns": lambda v: v == MATHML_NAMESPACE,
    "display": lambda v: v in ("block", "inline"),
    "encoding": lambda v: v in ("application/x-tex", "text/x-tex"),
}

_CHARREF = re.compile(r"[xX][0-9a-fA-F]{1,6}|[0-9]{1,7}")

# Elements whose content is dropped with them (code, styles, embedded documents, HTML islands).
_DROP_CONTENT = frozenset({
    "script", "style", "template", "textarea", "title", "noscript", "noembed", "noframes", "iframe",
    "object", "embed", "xmp", "plaintext", "svg", "annotation-xml", "select", "head",
})
# Elements that never have content or an end tag in HTML.
_VOID = frozenset({"area", "base", "br", "col", "embed", "hr", "img", "input", "link", "meta", "param",
                   "source", "track", "wbr", "keygen", "basefont", "frame", "isindex"})


@dataclass(frozen=True, kw_only=True)
class Policy:
    """What :func:`clean_markup` keeps: element names, and per attribute a test of its value."""

    elements: frozenset[str]
    attributes: Mapping[str, Callable[[str], bool]]
    void: frozenset[str] = frozenset()


MATHML_POLICY = Policy(elements=MATHML_ELEMENTS, attributes=MATHML_ATTRIBUTES)


class _Rebuilder(HTMLParser):
    """Rebuild markup from parser events: allowed elements and attributes only, all text escaped."""

    def __init__(self, policy: Policy) -> None:
        super().__init__(convert_charrefs=False)  # character references are kept as written
        self.policy = policy
        self.out: list[str] = []
        self.open: list[str] = []  # allowed elements written and not yet closed
        self.dropping: list[str] = []  # open elements whose content is being dropped

    def _attrs(self, attrs: list[tuple[str, str | None]]) -> str:
        kept = []
        seen = set()
        for name, value in attrs:
            test = self.policy.attributes.get(name)
            if test is None or name in seen:
                continue
            value = "" if value is None else value
            if test(value):
                seen.add(name)
                kept.append(f' {name}="{html.escape(value, quote=True)}"')
        return "".join(kept)

    def handle_starttag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        if tag in _DROP_CONTENT and tag not in _VOID:
            self.dropping.append(tag)
            return
        if self.dropping or tag not in self.policy.elements:
            return
        self.out.append(f"<{tag}{self._attrs(attrs)}>")
        if tag in self.policy.void:
            return
        self.open.append(tag)

    def handle_startendtag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        if self.dropping or tag not in self.policy.elements:
            return
        if tag in self.policy.void:
            self.out.append(f"<{tag}{self._attrs(attrs)}>")
        else:
            self.out.append(f"<{tag}{self._attrs(attrs)}></{tag}>")

    def handle_endtag(self, tag: str) -> None:
        if self.dropping:
            if tag in self.dropping:
                while self.dropping.pop() != tag:
                    pass
            return
        if tag not in self.open:
            return
        while self.open:
            top = self.open.pop()
            self.out.append(f"</{top}>")
            if top == tag:
                break

    def handle_data(self, data: str) -> None:
        if not self.dropping:
            self.out.append(html.escape(data, quote=False))

    def handle_charref(self, name: str) -> None:
        # "&#x0003D;" stays as latex2mathml wrote it (a reference is text, never markup)
        if self.dropping:
            return
        if _CHARREF.fullmatch(name):
            code = int(name[1:], 16) if name[0] in "xX" else int(name)
            if 0 < code <= 0x10FFFF and not 0xD800 <= code <= 0xDFFF:
                self.out.append(f"&#{name};")
                return
        self.out.append(html.escape(f"&#{name};", quote=False))

    def handle_entityref(self, name: str) -> None:
        if self.dropping:
            return
        if f"{name};" in html.entities.html5:
            self.out.append(f"&{name};")
        else:
            self.out.append(html.escape(f"&{name};", quote=False))

    # comments, <!DOCTYPE ...>, <?...?> and marked sections are dropped
    def handle_comment(self, data: str) -> None:
        return

    def handle_decl(self, decl: str) -> None:
        return

    def handle_pi(self, data: str) -> None:
        return

    def unknown_decl(self, data: str) -> None:
        return

    def result(self) -> str:
        self.close()
        return "".join(self.out) + "".join(f"</{t}>" for t in reversed(self.open))


def clean_markup(markup: str, *, policy: Policy = MATHML_POLICY) -> str:
    """Rebuild ``markup`` keeping only the elements and attributes ``policy`` allows.

    Text is kept and escaped; comments, declarations and the content of script-like elements are
    dropped; every element left open is closed.  The result therefore holds no element, attribute
    or unescaped ``<`` / ``&`` that the policy does not name.
    """
    rebuilder = _Rebuilder(policy)
    rebuilder.feed(markup)
    return rebuilder.result()


@lru_cache(maxsize=4096)
def to_mathml(latex: str, *, display: bool = False) -> str:
    """Return a ``<math>`` element for ``latex``; an escaped ``<code>`` fallback if it cannot convert.

    The converter's output passes through :func:`clean_markup` with the MathML allow-list.
    """
    if not latex:
        return ""
    try:
        out = convert(latex, display="block" if display else "inline")
    except Exception:  # noqa: BLE001 - any converter failure falls back to readable source
        return f'<code class="tex">{html.escape(latex)}</code>'
    return clean_markup(out)
