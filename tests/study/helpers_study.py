"""Shared set-up of the design-study tests: the column-panel template's requirement, small study settings."""

from __future__ import annotations

import dataclasses

from latticecalc.project.templates import templates_root
from latticecalc.study.requirement import Requirement, context_from_project


def template_context(**changes):
    """The study context of the bundled column-panel template's own inputs (read-only), with ``changes``."""
    ctx = context_from_project(templates_root() / "column-panel")
    return dataclasses.replace(ctx, **changes) if changes else ctx


def one_peak(peak_hz: float, required_db: float = 10.0, spread: float = 0.02) -> Requirement:
    """A requirement of one targeted peak (invented)."""
    return Requirement(peaks=(peak_hz,), required=(required_db,), spread=spread, direction="normal",
                       source="test requirement (invented)")


#: A bcc cell of 350 mm with an 8 mm frame, as the invented demo panel (base values the space does not vary).
BCC_BASE = {"cell.kind": "bcc", "cell.width": 350.0, "lattice.strut_diameter": 24.6, "frame.strut_diameter": 8.0}


def bcc_context(peak_hz: float = 39.0, **changes):
    """The template's column and brackets, a 400 × 400 mm column face, a bcc demo-like base design."""
    ctx = template_context()
    base = dict(ctx.base, **BCC_BASE)
    column = dict(ctx.column, width_m=0.4, depth_m=0.4)
    return dataclasses.replace(ctx, base=base, column=column, requirement=one_peak(peak_hz), **changes)
