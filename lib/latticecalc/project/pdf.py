"""Print an exported package to PDF with headless Chromium (Debian's ``chromium``).

Page numbers ("Page X of Y") and the running header come from the package's own print CSS
(``@page`` margin boxes), so Chromium's default header and footer are switched off. Chromium
runs with a fresh, throw-away profile and with its background network services disabled; the
package itself makes no request (its Content-Security-Policy forbids them).
"""

from __future__ import annotations

import os
import shutil
import subprocess
import tempfile
from pathlib import Path

from latticecalc.errors import InputError, ProjectError
from latticecalc.project.atomic import write_bytes_atomic

#: Where Debian installs Chromium; ``LATTICECALC_CHROMIUM`` overrides it.
CHROMIUM = "/usr/bin/chromium"
CHROMIUM_FLAGS = ("--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                  "--disable-background-networking", "--disable-component-update", "--disable-sync")
PRINT_FLAGS = ("--no-pdf-header-footer", "--run-all-compositor-stages-before-draw")
#: Paper sizes for the PDF (CSS page size keywords, CSS Paged Media Module Level 3, W3C, 2013 §7.1).
PAPERS = {"a4": "A4", "letter": "letter"}
DEFAULT_PAPER = "a4"


def check_paper(paper: str, *, input_name: str = "--paper") -> str:
    """``paper`` lower-cased, or an :class:`InputError` naming the sizes there are."""
    key = str(paper).strip().lower()
    if key not in PAPERS:
        raise InputError("unknown paper size", input_name=input_name, expected=" or ".join(PAPERS), got=repr(paper))
    return key


def with_paper(html: str, paper: str) -> str:
    """The package HTML with its page size fixed to ``paper`` (the package itself prints on any paper)."""
    rule = f"<style>@page {{ size: {PAPERS[check_paper(paper)]}; }}</style>"
    head_end = html.find("</head>")
    return html[:head_end] + rule + html[head_end:] if head_end >= 0 else rule + html


def find_chromium() -> str:
    """Path of the Chromium executable, or a ProjectError saying how to install it."""
    for candidate in (os.environ.get("LATTICECALC_CHROMIUM"), CHROMIUM, shutil.which("chromium"),
                      shutil.which("chromium-browser")):
        if candidate and Path(candidate).is_file() and os.access(candidate, os.X_OK):
            return candidate
    raise ProjectError("Chromium is needed to print the PDF and was not found", input_name="--pdf",
                       expected=f"an executable at {CHROMIUM} (or set LATTICECALC_CHROMIUM)",
                       hint="Install it with 'apt-get install chromium', or export without --pdf "
                            "and print the HTML from a browser")


def print_pdf(html_path: str | Path, *, pdf_path: str | Path | None = None, timeout: float = 180,
              paper: str = DEFAULT_PAPER) -> Path:
    """Print ``html_path`` to ``pdf_path`` (default: beside it, ``.pdf``) on ``paper``; returns the PDF's path.

    ``paper`` is ``a4`` or ``letter``. The PDF is written atomically: an earlier PDF stays as it was if
    printing fails.

    Raises
    ------
    ProjectError
        If Chromium is missing, fails, times out, or writes no PDF.
    """
    html_path = Path(html_path).resolve()
    if not html_path.is_file():
        raise ProjectError("package not found", input_name="html_path", got=str(html_path))
    target = Path(pdf_path) if pdf_path is not None else html_path.with_suffix(".pdf")
    paper = check_paper(paper)
    exe = find_chromium()
    with tempfile.TemporaryDirectory(prefix="latticecalc-pdf-") as work:
        out = Path(work) / "package.pdf"
        page = Path(work) / "package.html"       # the package with its paper fixed; the package is unchanged
        page.write_text(with_paper(html_path.read_text(encoding="utf-8"), paper), encoding="utf-8")
        cmd = [exe, *CHROMIUM_FLAGS, f"--user-data-dir={Path(work) / 'profile'}", *PRINT_FLAGS,
               f"--print-to-pdf={out}", page.as_uri()]
        try:
            proc = subprocess.run(cmd, capture_output=True, text=True, timeout=timeout, check=False)
        except subprocess.TimeoutExpired:
            raise ProjectError(f"Chromium did not finish printing within {timeout:.0f} s", input_name="--pdf",
                               got=str(html_path)) from None
        data = out.read_bytes() if out.is_file() else b""
        if not data.startswith(b"%PDF"):
            tail = "\n    ".join((proc.stderr or "").strip().splitlines()[-8:])
            raise ProjectError(f"Chromium wrote no PDF (exit status {proc.returncode})", input_name="--pdf",
                               got=str(html_path), hint=("Chromium said:\n    " + tail) if tail else None)
    write_bytes_atomic(target, data)
    return target


__all__ = ["CHROMIUM_FLAGS", "DEFAULT_PAPER", "PAPERS", "check_paper", "find_chromium", "print_pdf", "with_paper"]
