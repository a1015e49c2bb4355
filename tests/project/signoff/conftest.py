"""The sign-off tests work on private copies of the session's quick column-panel project (tests/conftest.py)."""

from __future__ import annotations

from pathlib import Path

import pytest


@pytest.fixture
def project(quick_panel_copy) -> Path:
    """A private copy of the run and exported quick project (the run record stays valid: it hashes contents)."""
    return quick_panel_copy
