"""The standing line under a package's status: how many checks fail, and the approval's qualification.

A status word alone can be misread: "approved" over a failing check, or with a restriction the approver
wrote, says less than the reader needs on the cover. The line is built from the fingerprinted checks and
the current approval, so ``verify`` rebuilds it and names an edited one.
"""

from __future__ import annotations

from typing import Any

from latticecalc.sheet.step import EARLIER_VERDICTS, verdict_words


def failing_checks(checks: Any) -> tuple[int, int]:
    """(failing, total) of the fingerprinted checks."""
    rows = [c for c in checks if isinstance(c, dict)] if isinstance(checks, list) else []
    return sum(c.get("ok") is not True for c in rows), len(rows)


def standing_text(checks: Any, approval: dict | None) -> str:
    """``2 of 9 checks fail; approved by A. Approver with the qualification: for prototype fabrication only``.

    ``approval`` is the current ``approved`` sign-off record (None when there is none).
    """
    failing, total = failing_checks(checks)
    if verdict_words(checks) is EARLIER_VERDICTS:   # a package made before today's verdict words
        parts = [f"{failing} of {total} checks NOT OK" if failing else (f"all {total} checks OK" if total else
                                                                          "no checks")]
    else:
        parts = [f"{failing} of {total} check{'s' if total != 1 else ''} fail{'s' if failing == 1 else ''}"
                 if failing else (f"all {total} checks hold" if total > 1 else
                                  "the one check holds" if total == 1 else "no checks")]
    if approval is not None:
        qualification = str(approval.get("qualification", "") or "").strip()
        who = str(approval.get("name", ""))
        parts.append(f"approved by {who} with the qualification: {qualification}" if qualification
                     else f"approved by {who} without qualification")
    return "; ".join(parts)


__all__ = ["failing_checks", "standing_text"]
