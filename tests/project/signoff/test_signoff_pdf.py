"""``export --pdf`` without Chromium says what is missing and how to get it (no browser needed)."""

from __future__ import annotations

import pytest

from latticecalc.errors import ProjectError
from latticecalc.project import pdf


def test_missing_chromium_gives_a_clear_message(tmp_path, monkeypatch):
    page = tmp_path / "p.html"
    page.write_text("<html><body>x</body></html>", encoding="utf-8")
    monkeypatch.setenv("LATTICECALC_CHROMIUM", str(tmp_path / "nope"))
    monkeypatch.setattr(pdf, "CHROMIUM", str(tmp_path / "also-nope"))
    monkeypatch.setattr(pdf.shutil, "which", lambda _name: None)
    with pytest.raises(ProjectError, match="Chromium is needed to print the PDF") as err:
        pdf.print_pdf(page)
    assert "apt-get install chromium" in str(err.value)
    assert not page.with_suffix(".pdf").exists()


def test_a_failing_chromium_leaves_no_pdf_and_reports_its_output(tmp_path, monkeypatch):
    page = tmp_path / "p.html"
    page.write_text("<html><body>x</body></html>", encoding="utf-8")
    fake = tmp_path / "chromium"
    fake.write_text("#!/bin/sh\necho 'cannot open display' >&2\nexit 3\n", encoding="utf-8")
    fake.chmod(0o755)
    monkeypatch.setenv("LATTICECALC_CHROMIUM", str(fake))
    with pytest.raises(ProjectError, match="wrote no PDF") as err:
        pdf.print_pdf(page)
    assert "cannot open display" in str(err.value)
    assert not page.with_suffix(".pdf").exists()
