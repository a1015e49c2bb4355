"""Where a formula, a value or a limit comes from."""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True, kw_only=True)
class Source:
    """A published source, cited beside every step that uses it.

    Parameters
    ----------
    author:
        Author(s) or issuing body, e.g. ``"Rao, S. S."`` or ``"IEC"``.
    title:
        Title of the book, paper or standard.
    year:
        Year of the edition used.
    locator:
        Equation, table, section or clause, e.g. ``"eq. 8.82, Table 8.1"``.
    tag:
        ``""`` for a checked source; ``"from memory"`` or ``"common practice"`` where the
        value is recalled or a rule of thumb; the tag is printed beside the citation.
    """

    author: str
    title: str
    year: int | str = ""
    locator: str = ""
    tag: str = ""

    def cite(self) -> str:
        """One-line citation: ``Rao, S. S., Mechanical Vibrations (2017), Table 8.1``."""
        text = f"{self.author}, {self.title}"
        if self.year:
            text += f" ({self.year})"
        if self.locator:
            text += f", {self.locator}"
        if self.tag:
            text += f" [{self.tag}]"
        return text

    def short(self) -> str:
        """Author–year key used in the references list, e.g. ``Rao 2017``."""
        first = self.author.split(",")[0].split("&")[0].strip()
        return f"{first} {self.year}".strip()

    def to_dict(self) -> dict:
        """Plain dict for the JSON record."""
        return {"author": self.author, "title": self.title, "year": self.year,
                "locator": self.locator, "tag": self.tag, "cite": self.cite()}


COMMON_PRACTICE = Source(author="common practice", title="rule of thumb, no published source",
                         tag="common practice")
