"""Headless Chromium for browser tests: Debian's chromium driven by Playwright (never a downloaded browser)."""

from __future__ import annotations

import shutil

import pytest

CHROMIUM_FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                  "--disable-background-networking", "--disable-component-update", "--disable-sync"]


def chromium_path() -> str | None:
    """Debian's chromium, if installed."""
    return shutil.which("chromium") or shutil.which("chromium-browser")


@pytest.fixture(scope="session")
def browser():
    exe = chromium_path()
    if exe is None:
        pytest.skip("Debian's chromium is not installed (apt-get install chromium); .ci/run installs it")
    sync_api = pytest.importorskip("playwright.sync_api", reason="the playwright package is not installed")
    with sync_api.sync_playwright() as pw:
        b = pw.chromium.launch(executable_path=exe, args=CHROMIUM_FLAGS)
        try:
            yield b
        finally:
            b.close()
