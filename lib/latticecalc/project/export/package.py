"""``latticecalc export``: the HTML calc package and the JSON of inputs and key results."""

from __future__ import annotations

import fcntl
import json
from contextlib import contextmanager
from dataclasses import dataclass
from datetime import UTC, datetime
from pathlib import Path

from latticecalc import __version__
from latticecalc.errors import ProjectError
from latticecalc.project.atomic import write_many_atomic
from latticecalc.project.export.collect import SheetDocument, collect
from latticecalc.project.export.html import PackageExtras, render_package
from latticecalc.project.project import Project, open_project
from latticecalc.project.state import EXECUTED_DIR, stale_files
from latticecalc.sheet.render import check_measure_text
from latticecalc.sheet.step import checks_tally

PACKAGE_FORMAT = "latticecalc-package"
PACKAGE_FORMAT_VERSION = 1


@dataclass(frozen=True, kw_only=True)
class ExportReport:
    """Where the package went."""

    html: Path
    json: Path
    pdf: Path | None = None


def inputs_rows(project: Project) -> list[dict]:
    """The inputs table: id, description, value text, unit, source, plus the JSON value.

    A file input's source also names the file's SHA-256 and size, and for an imported calc package its
    calc id, revision and status (:mod:`latticecalc.project.lineage`).
    """
    from latticecalc.project.lineage import data_files

    files = {f.input_name: f for f in data_files(project)}
    rows = []
    for e in project.inputs.entries():
        text, unit = e.display()
        value, value_unit = e.display_value()
        canon = e.canonical()
        source = e.source
        if e.spec.name in files:
            source = "; ".join(s for s in (source, files[e.spec.name].summary()) if s)
        rows.append({"id": e.spec.name, "description": e.spec.description, "text": text, "unit": unit,
                     "value": value, "value_unit": value_unit, "si_value": canon["value"],
                     "si_unit": canon["unit"], "source": source, "step": "inputs", "line": e.line})
    return rows


def _value_unit(rec: dict) -> tuple[object, str]:
    res = rec["result"]
    return res["value"], res["unit"]


def results_rows(doc: SheetDocument) -> list[dict]:
    """Every step and check result: id, value, unit, step id (duplicates keep the first)."""
    seen = set()
    rows = []
    for rec in doc.records():
        if rec["kind"] not in ("step", "check") or rec["id"] in seen:
            continue
        seen.add(rec["id"])
        value, unit = _value_unit(rec)
        row = {"id": rec["id"], "value": value, "unit": unit, "step": rec["id"],
               "description": rec["description"], "text": rec["result_text"]}
        if rec["kind"] == "check":
            row.update({"utilisation": rec["utilisation"], "ok": rec["ok"],
                        "limit": rec["limit"]["value"], "verdict": rec["verdict"]})
        rows.append(row)
    return rows


def references(doc: SheetDocument) -> list[dict]:
    """Unique sources cited by steps, checks and notes, in order of first use."""
    seen = {}
    for rec in doc.records():
        src = rec.get("source")
        if src and src["cite"] not in seen:
            seen[src["cite"]] = src
    return list(seen.values())


def summary_record(project: Project, doc: SheetDocument) -> dict | None:
    """The package's summary box: the template's key steps, then the checks and the governing one."""
    by_id = {r["id"]: r for r in doc.records() if r["kind"] in ("step", "check")}
    rows = []
    for label, candidates in project.template.summary:
        rec = next((by_id[c] for c in candidates if c in by_id), None)
        if rec is not None:
            text = rec["result_text"] + (f" ({rec['verdict']})" if rec["kind"] == "check" else "")
            rows.append({"label": label, "text": text, "step": rec["id"]})
    checks = [r for r in by_id.values() if r["kind"] == "check"]
    if checks:
        rows.append({"label": "Checks", "text": checks_tally(checks), "step": ""})
        worst = max(checks, key=lambda c: float(c["utilisation"]))
        rows.append({"label": "Governing check", "step": worst["id"],
                     "text": f"{worst['description']}: {check_measure_text(worst)} ({worst['verdict']})"})
    return {"kind": "summary", "title": "Summary", "rows": rows} if rows else None


def build_package_data(project: Project, doc: SheetDocument, generated: str, *,
                       inputs: list[dict] | None = None) -> dict:
    """The JSON content of the package (what the checker's tools and sign-off read).

    ``inputs`` are the project's :func:`inputs_rows` when the caller has them already (each reads and
    hashes the files the inputs name).
    """
    meta = project.meta.to_dict() | {"template": project.template.name, "kit_version": __version__}
    if inputs is None:
        inputs = inputs_rows(project)
    return {
        "format": PACKAGE_FORMAT,
        "format_version": PACKAGE_FORMAT_VERSION,
        "generated": generated,
        "project": meta,
        "inputs": [{"id": r["id"], "value": r["value"], "unit": r["value_unit"], "step": r["step"],
                    "description": r["description"], "source": r["source"], "text": r["text"],
                    "si_value": r["si_value"], "si_unit": r["si_unit"]} for r in inputs],
        "results": results_rows(doc),
        "sections": [{"number": s.number, "title": s.title, "notebook": s.notebook} for s in doc.sections],
        "references": [r["cite"] for r in references(doc)],
    }


def _extras(project: Project, data: dict, doc: SheetDocument) -> PackageExtras:
    """Sign-off, review and revision content for the package (the plain default until signed)."""
    try:
        from latticecalc.project.signoff import package_extras
    except ImportError:
        return PackageExtras()
    return package_extras(project, data, doc)


def _seal(html: str) -> str:
    """Seal the rendered package (document hash for ``latticecalc verify``) when sign-off is present."""
    try:
        from latticecalc.project.signoff import seal_package
    except ImportError:
        return html
    return seal_package(html)


def _revision_file(project: Project, data: dict, embedded: dict) -> dict[Path, str]:
    """The revision record of this export, to be written in the same batch as the package ({} if frozen).

    ``embedded`` is the sign-off data the package embeds: its fingerprint, content and status.
    """
    if not embedded:
        return {}
    from latticecalc.project.signoff.extras import revision_file

    found = revision_file(project, data, fingerprint=embedded["fingerprint"],
                          content=embedded["fingerprint_content"], status=embedded["status"])
    return {} if found is None else {found[0]: found[1]}


def _sealed_json(data: dict, embedded: dict) -> dict:
    """The package JSON with its fingerprint, fingerprinted content, status, sign-offs and seal."""
    from latticecalc.project.lineage import seal_export

    if not embedded:
        return data
    return seal_export(data, fingerprint=embedded["fingerprint"], content=embedded["fingerprint_content"],
                       status=embedded["status"], signoffs=embedded["signoffs"], embed_format=embedded["format"])


#: Staged files an export writes (``.<name>.<random>.part``), swept when an earlier export was killed.
_PART_PATTERNS = (".{stem}.html.*.part", ".{stem}.json.*.part", ".{stem}.pdf.*.part")


def sweep_leftovers(project: Project) -> list[Path]:
    """Remove the staged files an interrupted export left (call it holding the export lock)."""
    stem = project.meta.package_stem
    found = [p for pattern in _PART_PATTERNS for p in project.out.glob(pattern.format(stem=stem))]
    revisions = project.out / "revisions"
    if revisions.is_dir():
        found += list(revisions.glob(".*.json.*.part"))
    for p in found:
        if p.is_file() and not p.is_symlink():
            p.unlink(missing_ok=True)
    return found


@contextmanager
def export_lock(project: Project):
    """One export of a project at a time (an advisory lock on ``out/.export.lock``)."""
    project.out.mkdir(parents=True, exist_ok=True)
    with open(project.out / ".export.lock", "a+b") as fh:
        fcntl.flock(fh.fileno(), fcntl.LOCK_EX)
        try:
            yield
        finally:
            fcntl.flock(fh.fileno(), fcntl.LOCK_UN)


def export_project(folder: str | Path, *, run: bool = False, with_code: bool = False,
                   pdf: bool = False, progress=None, paper: str | None = None) -> ExportReport:
    """Write ``out/<calc-id>-rev<rev>.html`` and ``.json`` for the project in ``folder``.

    Parameters
    ----------
    folder:
        The project folder.
    run:
        Run the notebooks first (otherwise a project changed since its last run is refused).
    with_code:
        Add the notebooks' code as an appendix.
    pdf:
        Also print the package to PDF with headless Chromium.
    paper:
        ``a4`` or ``letter`` for the PDF (default: ``calc.paper`` of ``cover.toml``, A4 when unset).
    progress:
        Progress callback passed to the run (default: lines on stderr).

    Raises
    ------
    ProjectError
        If the project is stale (inputs or notebooks changed since the last run) and ``run`` is
        false. Nothing is written then; an earlier package stays as it was.
    """
    project = open_project(folder)
    if run:
        from latticecalc.project.runner import run_project

        kwargs = {} if progress is None else {"progress": progress}
        run_project(project.folder, **kwargs)
        project = open_project(folder)
    changed = stale_files(project)
    if changed:
        raise ProjectError("changed since the last run, so its results may not match its inputs: "
                           + ", ".join(changed), input_name=str(project.folder),
                           hint="Run it again ('latticecalc run DIR'), or export with --run")
    with export_lock(project):
        sweep_leftovers(project)
        html_path, json_path = _write_package(project, with_code=with_code)
    pdf_path = None
    if pdf:
        from latticecalc.project.pdf import print_pdf

        pdf_path = print_pdf(html_path, paper=paper or project.meta.paper)
    return ExportReport(html=html_path, json=json_path, pdf=pdf_path)


def _write_package(project: Project, *, with_code: bool) -> tuple[Path, Path]:
    """Render the package and write its HTML, JSON and revision record as one batch."""
    executed = [project.out / EXECUTED_DIR / nb.name for nb in project.notebooks]
    doc = collect(executed)
    generated = datetime.now(UTC).isoformat(timespec="seconds")
    inputs = inputs_rows(project)
    data = build_package_data(project, doc, generated, inputs=inputs)
    extras = _extras(project, data, doc)
    html = render_package(meta=data["project"], doc=doc, inputs=inputs,
                          references=references(doc), extras=extras, generated=generated,
                          with_code=with_code, summary=summary_record(project, doc))
    html = _seal(html)
    stem = project.meta.package_stem
    html_path = project.out / f"{stem}.html"
    json_path = project.out / f"{stem}.json"
    embedded = json.loads(extras.embedded_json) if extras.embedded_json else {}
    text = json.dumps(_sealed_json(data, embedded), indent=2, ensure_ascii=False)
    # Render everything first, then stage all files and rename them: a failure while staging leaves the
    # old package and its revision record as they were.
    write_many_atomic({html_path: html, json_path: text, **_revision_file(project, data, embedded)})
    return html_path, json_path


def embed_json(data: dict) -> str:
    """JSON safe to place inside ``<script type="application/json">`` (no ``</script>`` breakout)."""
    return (json.dumps(data, ensure_ascii=False, sort_keys=True)
            .replace("<", "\\u003c").replace(">", "\\u003e").replace("&", "\\u0026"))


__all__ = ["ExportReport", "build_package_data", "embed_json", "export_project"]
