"""LaTeX to MathML, done here on the server side so the package needs no JavaScript or network."""

from __future__ import annotations

import html
from functools import lru_cache

from latex2mathml.converter import convert


@lru_cache(maxsize=4096)
def to_mathml(latex: str, *, display: bool = False) -> str:
    """Return a ``<math>`` element for ``latex``; an escaped ``<code>`` fallback if it cannot convert."""
    if not latex:
        return ""
    try:
        out = convert(latex, display="block" if display else "inline")
    except Exception:  # noqa: BLE001 - any converter failure falls back to readable source
        return f'<code class="tex">{html.escape(latex)}</code>'
    return out
