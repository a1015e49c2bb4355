"""The fingerprint of a calculation: what a sign-off binds to.

The fingerprint is the SHA-256 (hex) of the canonical JSON (keys sorted, no whitespace, UTF-8)
of the *fingerprint content*:

``project``
    The identity in ``cover.toml`` (name, number, client, calc id, title, revision, preparer,
    description): a sign-off of revision A does not carry over to revision B. The fields, not the
    file: the same fields read from an older kit's ``project.toml``, or from the file after
    ``latticecalc refile`` renamed it, give the same fingerprint.
``inputs``
    ``Inputs.canonical()``: every input parsed and normalised to SI base units.
``inputs_shown``
    Each input as the package shows it (value text and unit), so a visible edit is caught.
``notebooks``
    The code of each notebook in run order (``state.notebook_code``: cell sources, no outputs).
``files``
    Every file the ``path`` inputs name (records, imported calc package exports): input, path,
    SHA-256 and size, and for an import its calc id, revision, fingerprint and status
    (:mod:`latticecalc.project.lineage`), so a sign-off made with one record is void with another.
``results``
    The key results of the package JSON: id, unit, the text shown, and the value rounded to
    :data:`RESULT_SIG_FIGS` significant figures (checks also carry their verdict), so that float
    noise in the last bits, which a rerun on another machine may produce, does not void a
    signature, while any change a reader could see does.
``shown``
    The text of every step and check as the package shows it (formula, substituted values,
    result, source), so that an edited figure on the page no longer matches.
``checks``
    Every check as recorded: id, description, demand and limit (values and texts), sense,
    utilisation and verdict: what the checks summary shows, and what its verdict follows from.
``summary``
    The summary boxes the package opens with, row by row (label, text, step, and whether the
    text is a result, the count of checks or the governing check).
``kit_version``
    The latticecalc version that produced the results.

Input values are rounded the same way. Shown texts carry the 4 significant figures the sheet
prints: a rerun elsewhere that changes a printed digit voids a sign-off, as it should, since the
package would then show a different figure. The content is embedded in the package beside the
fingerprint, so anyone can recompute it from the HTML alone (``latticecalc verify``).

The *display digest* (:func:`display_digest`) is the SHA-256 of the part a reader sees (checks,
summary boxes, steps and inputs as shown); a sign-off records it beside the fingerprint, so a
keyed signature names the displayed document it signed.
"""

from __future__ import annotations

import hashlib
import json
import math
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from latticecalc.project.project import Project

#: Significant figures kept of every number in the fingerprint content.
RESULT_SIG_FIGS = 10

CONTENT_FORMAT = "latticecalc-fingerprint-content/3"
#: The parts of the content a reader sees on the page.
DISPLAYED = ("checks", "summary", "shown", "inputs_shown")


def round_sig(value: Any, sig: int = RESULT_SIG_FIGS) -> Any:
    """Round every float in ``value`` (recursively) to ``sig`` significant figures.

    Non-finite floats become the strings ``"nan"``, ``"inf"``, ``"-inf"`` so the JSON stays
    canonical; integers, booleans and text are kept as they are.
    """
    if isinstance(value, bool) or value is None or isinstance(value, (int, str)):
        return value
    if isinstance(value, float):
        if not math.isfinite(value):
            return "nan" if math.isnan(value) else ("inf" if value > 0 else "-inf")
        return float(f"{value:.{sig}g}")
    if isinstance(value, dict):
        return {str(k): round_sig(v, sig) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [round_sig(v, sig) for v in value]
    return str(value)


def canonical_json(value: Any) -> str:
    """Canonical JSON text: sorted keys, no whitespace, non-ASCII kept (hashed as UTF-8)."""
    return json.dumps(value, sort_keys=True, separators=(",", ":"), ensure_ascii=False, allow_nan=False)


def fingerprint_of(content: dict) -> str:
    """SHA-256 (hex) of the canonical JSON of ``content``."""
    return hashlib.sha256(canonical_json(content).encode("utf-8")).hexdigest()


def display_digest(content: dict) -> str:
    """SHA-256 (hex) of the displayed part of a fingerprint content (:data:`DISPLAYED`)."""
    return fingerprint_of({k: content.get(k) for k in DISPLAYED})


def _result_entry(row: dict) -> dict:
    entry = {"id": row["id"], "value": row["value"], "unit": row.get("unit", ""), "text": row.get("text", "")}
    if "verdict" in row:
        entry["verdict"] = row["verdict"]
        entry["ok"] = row.get("ok")
    return entry


def shown_steps(doc) -> dict[str, str]:
    """Step id -> the text the package shows for that step (description, formula, values, source).

    Made with the package's own renderer and the same text extraction ``verify`` applies to the
    HTML, so a visible figure edited in the package no longer matches.
    """
    from latticecalc.project.signoff.verify import block_texts
    from latticecalc.sheet.render import record_html

    ctx = doc.reading_context()
    html = "".join(record_html(r, ctx=ctx) for r in doc.records() if r["kind"] in ("step", "check"))
    return {k[len("step-"):]: v for k, v in block_texts(html).items() if k.startswith("step-")}


def fingerprint_content(project: Project, data: dict, doc) -> dict:
    """The content the fingerprint covers, from the project, its package JSON ``data`` and sheet ``doc``."""
    from latticecalc.project.lineage import data_files
    from latticecalc.project.signoff.display import checks_content, summary_content
    from latticecalc.project.state import notebook_code

    meta = {k: v for k, v in data["project"].items() if k not in ("template", "kit_version")}
    return round_sig({
        "format": CONTENT_FORMAT,
        "project": meta,
        "inputs": project.inputs.canonical(),
        "inputs_shown": {i["id"]: f"{i['text']} {i['unit']}".strip() for i in data["inputs"]},
        "notebooks": [{"name": nb.name, "code": notebook_code(nb)} for nb in project.notebooks],
        "files": [f.to_dict() for f in data_files(project)],
        "results": [_result_entry(r) for r in data["results"]],
        "shown": shown_steps(doc),
        "checks": checks_content(doc),
        "summary": summary_content(project, doc),
        "kit_version": data["project"]["kit_version"],
    })


@dataclass(frozen=True, kw_only=True)
class ContentChanges:
    """What differs between two fingerprint contents (old -> new)."""

    inputs: list[str] = field(default_factory=list)
    results: list[str] = field(default_factory=list)
    notebooks: list[str] = field(default_factory=list)
    project: list[str] = field(default_factory=list)
    files: list[str] = field(default_factory=list)
    kit_version: str = ""

    @property
    def empty(self) -> bool:
        """True when nothing changed."""
        return not (self.inputs or self.results or self.notebooks or self.project or self.files or self.kit_version)

    def describe(self, max_items: int | None = None) -> str:
        """One line naming what changed, e.g. ``inputs changed: cell.width (0.12 m -> 0.1 m)``.

        ``max_items`` shortens each list to that many names plus "and N more".
        """
        parts = []
        for label, items in (("data files changed", self.files), ("inputs changed", self.inputs),
                             ("results changed", self.results),
                             ("notebook code changed", self.notebooks), ("project details changed", self.project)):
            if items:
                shown = items if max_items is None or len(items) <= max_items else [
                    *items[:max_items], f"and {len(items) - max_items} more"]
                parts.append(f"{label}: " + ", ".join(shown))
        if self.kit_version:
            parts.append(f"kit version changed: {self.kit_version}")
        return "; ".join(parts) if parts else "no change"


def _value_text(entry: Any) -> str:
    if isinstance(entry, dict) and "value" in entry:
        v, u = entry["value"], entry.get("unit", "")
        if isinstance(v, float):
            v = f"{v:.6g}"
        return f"{v} {u}".strip()
    return str(entry)


def diff_content(old: dict, new: dict) -> ContentChanges:
    """Name the inputs, results, notebooks and project fields that differ between two contents."""
    oi, ni = old.get("inputs", {}), new.get("inputs", {})
    # as the inputs table shows them (the input's own unit), falling back on the SI value
    os_, ns = old.get("inputs_shown", {}), new.get("inputs_shown", {})

    def shown(side: dict, texts: dict, k: str) -> str:
        text = texts.get(k) if isinstance(texts, dict) else None
        return text if isinstance(text, str) and text else _value_text(side[k])

    inputs = []
    for k in sorted(set(oi) | set(ni)):
        if oi.get(k) != ni.get(k):
            if k not in oi:
                inputs.append(f"{k} (added: {shown(ni, ns, k)})")
            elif k not in ni:
                inputs.append(f"{k} (removed)")
            else:
                inputs.append(f"{k} ({shown(oi, os_, k)} -> {shown(ni, ns, k)})")
    results = []
    for k, a, b in paired(old.get("results", []), new.get("results", []), key=lambda r: r["id"]):
        if a == b:
            continue
        if a is None:
            results.append(f"{k} (new: {b.get('text', '')})")
        elif b is None:
            results.append(f"{k} (no longer computed)")
        else:
            results.append(f"{k} ({a.get('text', '')} -> {b.get('text', '')})")
    onb = {n["name"]: n["code"] for n in old.get("notebooks", [])}
    nnb = {n["name"]: n["code"] for n in new.get("notebooks", [])}
    notebooks = sorted(k for k in set(onb) | set(nnb) if onb.get(k) != nnb.get(k))
    op, np_ = old.get("project", {}), new.get("project", {})
    project = [f"{k} ({op.get(k, '')!s} -> {np_.get(k, '')!s})" for k in sorted(set(op) | set(np_))
               if op.get(k) != np_.get(k)]
    kit = ""
    if old.get("kit_version") != new.get("kit_version"):
        kit = f"{old.get('kit_version')} -> {new.get('kit_version')}"
    return ContentChanges(inputs=inputs, results=results, notebooks=notebooks, project=project,
                          files=_file_changes(old.get("files", []), new.get("files", [])), kit_version=kit)


def paired(old: Any, new: Any, *, key: Callable[[dict], Any]):
    """``(key, old row, new row)`` for every key of two lists of dict rows: old order, then rows only new.

    A row missing on one side is None there; entries that are not dicts are skipped.
    """
    a = {key(r): r for r in old if isinstance(r, dict)} if isinstance(old, list) else {}
    b = {key(r): r for r in new if isinstance(r, dict)} if isinstance(new, list) else {}
    for k in list(a) + [k for k in b if k not in a]:
        yield k, a.get(k), b.get(k)


def _file_changes(old: list, new: list) -> list[str]:
    """``records/site.csv (record.file): contents changed (SHA-256 1a2b… -> 3c4d…)`` for each file that differs."""
    out = []
    for key, ra, rb in paired(old, new, key=lambda r: (r.get("input"), r.get("path"))):
        if ra == rb:
            continue
        name = f"{key[1]} ({key[0]})"
        if ra is None:
            out.append(f"{name} (now read)")
        elif rb is None:
            out.append(f"{name} (no longer read)")
        elif ra.get("sha256") != rb.get("sha256"):
            out.append(f"{name} (contents changed: SHA-256 {str(ra.get('sha256'))[:8]}… -> "
                       f"{str(rb.get('sha256'))[:8]}…)")
        else:
            pa, pb = ra.get("package") or {}, rb.get("package") or {}
            out.append(f"{name} (status {pa.get('status')} -> {pb.get('status')})")
    return out


__all__ = ["RESULT_SIG_FIGS", "ContentChanges", "canonical_json", "diff_content", "display_digest",
           "fingerprint_content", "fingerprint_of", "paired", "round_sig"]
