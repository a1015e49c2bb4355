"""Where a formula, a value or a limit comes from."""

from __future__ import annotations

from dataclasses import dataclass

#: The tag text that marks a recalled, unconfirmed value (see :attr:`Source.from_memory`).
FROM_MEMORY = "from memory"


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
        value is recalled or a rule of thumb; the tag is printed beside the citation.  A tag
        containing ``"from memory"`` marks values still to be confirmed against the published
        document: :mod:`latticecalc.sources_register` lists them and says which checks rely on them.
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

    @property
    def from_memory(self) -> bool:
        """True when the tag says the values were recalled and not confirmed against the document."""
        return FROM_MEMORY in self.tag

    def to_dict(self) -> dict:
        """Plain dict for the JSON record."""
        return {"author": self.author, "title": self.title, "year": self.year,
                "locator": self.locator, "tag": self.tag, "cite": self.cite()}

    @classmethod
    def from_dict(cls, data: dict) -> Source:
        """The source of a JSON record written by :meth:`to_dict` (``cite`` is recomputed, not read)."""
        return cls(author=str(data.get("author", "")), title=str(data.get("title", "")),
                   year=data.get("year", "") or "", locator=str(data.get("locator", "")),
                   tag=str(data.get("tag", "")))


COMMON_PRACTICE = Source(author="common practice", title="rule of thumb, no published source",
                         tag="common practice")
