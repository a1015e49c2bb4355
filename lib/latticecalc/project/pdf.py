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

from latticecalc.errors import ProjectError
from latticecalc.project.atomic import write_bytes_atomic

#: Where Debian installs Chromium; ``LATTICECALC_CHROMIUM`` overrides it.
CHROMIUM = "/usr/bin/chromium"
CHROMIUM_FLAGS = ("--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                  "--disable-background-networking", "--disable-component-update", "--disable-sync")
PRINT_FLAGS = ("--no-pdf-header-footer", "--run-all-compositor-stages-before-draw")


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


def print_pdf(html_path: str | Path, *, pdf_path: str | Path | None = None, timeout: float = 180) -> Path:
    """Print ``html_path`` to ``pdf_path`` (default: beside it, ``.pdf``); returns the PDF's path.

    The PDF is written atomically: an earlier PDF stays as it was if printing fails.

    Raises
    ------
    ProjectError
        If Chromium is missing, fails, times out, or writes no PDF.
    """
    html_path = Path(html_path).resolve()
    if not html_path.is_file():
        raise ProjectError("package not found", input_name="html_path", got=str(html_path))
    target = Path(pdf_path) if pdf_path is not None else html_path.with_suffix(".pdf")
    exe = find_chromium()
    with tempfile.TemporaryDirectory(prefix="latticecalc-pdf-") as work:
        out = Path(work) / "package.pdf"
        cmd = [exe, *CHROMIUM_FLAGS, f"--user-data-dir={Path(work) / 'profile'}", *PRINT_FLAGS,
               f"--print-to-pdf={out}", html_path.as_uri()]
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


__all__ = ["CHROMIUM_FLAGS", "find_chromium", "print_pdf"]
