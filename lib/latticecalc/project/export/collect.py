"""Read executed notebooks back into a structured sheet: sections of narrative and records."""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import nbformat

from latticecalc.project.export.narrative import first_heading, markdown_html, without_first_heading
from latticecalc.sheet.display import RECORD_MIME
from latticecalc.sheet.render import ReadingContext, reading_context


@dataclass(kw_only=True)
class Section:
    """One notebook's part of the package."""

    number: int
    title: str
    notebook: str
    blocks: list[tuple[str, object]] = field(default_factory=list)  # ("html", str) | ("record", dict)
    code: list[str] = field(default_factory=list)

    @property
    def anchor(self) -> str:
        """HTML id of the section."""
        return f"sec-{self.number}"


@dataclass(kw_only=True)
class SheetDocument:
    """Everything the package shows, gathered from the executed notebooks."""

    sections: list[Section]

    def records(self, kind: str | None = None) -> list[dict]:
        """All records in order (steps inside results flattened), optionally of one kind."""
        out = []
        for sec in self.sections:
            for what, payload in sec.blocks:
                if what != "record":
                    continue
                recs = payload["steps"] if payload["kind"] == "result" else [payload]
                out.extend(r for r in recs if kind is None or r["kind"] == kind)
        return out

    def reading_context(self) -> ReadingContext:
        """How the package shows each record: reference numbers, repeated steps, shared prefixes."""
        return reading_context([(sec.number, [p for what, p in sec.blocks if what == "record"])
                                for sec in self.sections])


def collect(executed: list[Path]) -> SheetDocument:
    """Build the :class:`SheetDocument` from executed notebooks, in run order.

    A notebook whose metadata holds ``{"latticecalc": {"in_package": false}}`` (the inputs form,
    say) is run but not shown as a section.
    """
    sections = []
    number = 0
    for path in executed:
        nb = nbformat.read(str(path), as_version=4)
        if not nb.metadata.get("latticecalc", {}).get("in_package", True):
            continue
        number += 1
        title = None
        sec = Section(number=number, title="", notebook=path.name)
        for cell in nb.cells:
            if cell.cell_type == "markdown":
                text = cell.source
                if title is None:
                    title = first_heading(text)
                    if title is not None:
                        text = without_first_heading(text)
                if text.strip():
                    sec.blocks.append(("html", markdown_html(text)))
            elif cell.cell_type == "code":
                if cell.source.strip():
                    sec.code.append(cell.source)
                for out in cell.get("outputs", []):
                    data = out.get("data", {})
                    if RECORD_MIME in data:
                        sec.blocks.append(("record", dict(data[RECORD_MIME])))
        sec.title = title or path.stem.replace("_", " ")
        sections.append(sec)
    return SheetDocument(sections=sections)
