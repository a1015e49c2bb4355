"""Data lineage: every file a project reads, hashed, and every calc package export it imports, verified.

A project reads files named by its ``path`` inputs (a survey's record, a prototype test's input and
output records, the survey or calibration export a column panel imports). Each is hashed here
(SHA-256 of its bytes), so that:

* the stale check (:mod:`latticecalc.project.state`) names a changed file, and export and sign
  refuse until the project is run again;
* the fingerprint content (:mod:`latticecalc.project.signoff.fingerprint`) carries the hashes, so a
  sign-off of the calculation made with one record is VOID with another, naming the file;
* the inputs table shows each file's hash beside its name.

A file that is the JSON export of another calc package (``latticecalc export``) is verified as well:
its seal (the SHA-256 of its canonical JSON), its fingerprint (recomputed from the fingerprinted
content it carries), that its results are the fingerprinted ones, and its status (recomputed from the
sign-off records it carries: their chain, their signatures and the fingerprint each signed). An export
that fails any of these is refused with a named error, so a value edited into it never reaches the
importing calculation. Its calc id, revision and status are shown on the importing sheet; the importing
calculation cannot be signed ``checked`` while an import is preliminary, nor ``approved`` while one is
not approved (common practice: a calculation is no more final than the data it rests on).
"""

from __future__ import annotations

import hashlib
import json
import os
import stat
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

from latticecalc.errors import RecordError

if TYPE_CHECKING:
    from latticecalc.project.project import Project

#: The format tag of an export's seal.
SEAL_FORMAT = "latticecalc-export-seal/1"
#: Status order: a role may be signed only over imports at least this final.
STATUS_RANK = {"preliminary": 0, "checked": 1, "approved": 2}
NEEDED_FOR_ROLE = {"checked": "checked", "approved": "approved"}
_CHUNK = 1 << 20


def canonical(value: Any) -> str:
    """Canonical JSON: keys sorted, no whitespace, UTF-8 text kept (the seal hashes this)."""
    return json.dumps(value, sort_keys=True, separators=(",", ":"), ensure_ascii=False, allow_nan=False)


def seal_digest(data: dict) -> str:
    """SHA-256 of the export's canonical JSON without its ``seal``."""
    body = {k: v for k, v in data.items() if k != "seal"}
    return hashlib.sha256(canonical(body).encode("utf-8")).hexdigest()


def seal_export(data: dict, *, fingerprint: str, content: dict, status: str, signoffs: list[dict],
                embed_format: str) -> dict:
    """The export JSON with its sign-off block (fingerprint, content, status, records) and its seal."""
    out = dict(data)
    out["signoff"] = {"format": embed_format, "fingerprint": fingerprint, "status": status,
                      "fingerprint_content": content, "signoffs": signoffs}
    out["seal"] = {"format": SEAL_FORMAT, "sha256": seal_digest(out)}
    return out


def file_sha256(path: Path) -> str:
    """SHA-256 (hex) of a regular file's bytes, read in blocks; ``missing`` or ``not a regular file``."""
    try:
        st = os.stat(path)
    except FileNotFoundError:
        return "missing"
    except OSError as exc:
        return f"unreadable ({exc.strerror or type(exc).__name__})"
    if not stat.S_ISREG(st.st_mode):
        return "not a regular file"
    h = hashlib.sha256()
    try:
        with open(path, "rb") as fh:
            while block := fh.read(_CHUNK):
                h.update(block)
    except OSError as exc:
        return f"unreadable ({exc.strerror or type(exc).__name__})"
    return h.hexdigest()


def export_identity(path: Path) -> str | None:
    """SHA-256 of what a calc package export says, not of its bytes; None when it is not one.

    What an importing project reads from an export is its fingerprinted content (every value it
    takes is checked against it, :func:`check_export`), and what the importing sheet shows of it is
    its status and sign-offs.  So the identity is the canonical JSON of the export's fingerprint,
    status and sign-off records: exporting an unchanged calculation again (which rewrites the file
    with a new generation time) leaves it as it was, while a changed result, a new sign-off or a
    voided one changes it.  Never raises: a file that cannot be read or parsed is hashed by its
    bytes instead (:func:`file_sha256`).
    """
    from latticecalc.files import read_json

    try:
        data = read_json(path, what="the calc package export", file=str(path))
    except Exception:   # noqa: BLE001 -- the stale check must never raise; the bytes hash stands in
        return None
    block = data.get("signoff") if isinstance(data, dict) else None
    if not isinstance(block, dict) or not isinstance(block.get("fingerprint"), str):
        return None
    said = {"fingerprint": block["fingerprint"], "status": block.get("status"), "signoffs": block.get("signoffs")}
    return hashlib.sha256(canonical(said).encode("utf-8")).hexdigest()


@dataclass(frozen=True, kw_only=True)
class UpstreamPackage:
    """A verified calc package export: whose it is and how final."""

    calc_id: str
    revision: str
    title: str
    template: str
    fingerprint: str
    status: str
    signed: tuple[str, ...] = ()

    @property
    def label(self) -> str:
        """``QY-SV-01 rev A``."""
        return f"{self.calc_id} rev {self.revision}"

    def to_dict(self) -> dict:
        """JSON-ready fields (what the fingerprint content keeps)."""
        return {"calc_id": self.calc_id, "revision": self.revision, "title": self.title, "template": self.template,
                "fingerprint": self.fingerprint, "status": self.status, "signed": list(self.signed)}


@dataclass(frozen=True, kw_only=True)
class DataFile:
    """One file a project reads: the input naming it, its path as typed, its hash, and what it is."""

    input_name: str
    text: str
    path: Path
    sha256: str
    size: int | None
    package: UpstreamPackage | None = None
    #: What ``sha256`` hashes: ``"file"`` (the bytes) or ``"export"`` (a calc package export's fingerprint,
    #: status and sign-offs, :func:`export_identity`, so an unchanged re-export is the same file).
    basis: str = "file"

    @property
    def exists(self) -> bool:
        """True when the file is there and was read."""
        return self.size is not None

    @property
    def state_key(self) -> str:
        """The name the stale check gives this file: ``records/site.csv (record.file)``."""
        return f"{self.text} ({self.input_name})"

    def to_dict(self) -> dict:
        """JSON-ready fields (what the fingerprint content and the export keep)."""
        return {"input": self.input_name, "path": self.text, "sha256": self.sha256, "bytes": self.size,
                "basis": self.basis, "package": self.package.to_dict() if self.package else None}

    def summary(self) -> str:
        """One line for the inputs table: ``SHA-256 1a2b3c4d5e6f…, 12.3 kB; QY-SV-01 rev A, preliminary``."""
        from latticecalc.files import format_size

        if not self.exists:
            return f"file {self.sha256}"
        what = "SHA-256" if self.basis == "file" else "content SHA-256"
        text = f"{what} {self.sha256[:12]}…, {format_size(self.size)}"
        if self.package is not None:
            text += f"; calc package {self.package.label}, {self.package.status}"
        return text


def _error(message: str, *, input_name: str, file: str, hint: str | None = None, got: str | None = None) -> RecordError:
    return RecordError(message, input_name=input_name, file=file, hint=hint, got=got)


def _status_from(records: list[dict], fingerprint: str, prepared_by: str) -> tuple[str, tuple[str, ...], list[str]]:
    """Status the records give for ``fingerprint`` (chain, signatures, role rules), who signed, problems."""
    from latticecalc.project.signoff.identity import separation_problems
    from latticecalc.project.signoff.keys import chain_problems, check_signature, signed_message
    from latticecalc.project.signoff.records import status_from_roles

    problems = list(chain_problems(records))
    rules = separation_problems(records, prepared_by=prepared_by)
    roles, signed = set(), []
    for i, rec in enumerate(records):
        if rec.get("fingerprint") != fingerprint or i in rules:
            continue
        sig = rec.get("signature")
        if sig:
            why = check_signature(sig, signed_message(rec))
            if why:
                problems.append(f"sign-off {rec.get('seq')} ({rec.get('role')}): {why}")
                continue
        roles.add(rec.get("role"))
        signed.append(f"{rec.get('role')}: {rec.get('name')}")
    status = "preliminary" if problems else status_from_roles(roles)
    return status, tuple(signed), problems


def check_export(path: str | Path, *, input_name: str, file: str | None = None) -> UpstreamPackage:
    """Verify a calc package export JSON (see the module doc) and say whose it is and its status.

    Raises
    ------
    RecordError
        When the file is not a sealed export, was edited after export (seal, fingerprint, a result
        that is not the fingerprinted one) or states a status its sign-off records do not give.
        File errors (missing, a folder, too large, not JSON) come from :mod:`latticecalc.files`.
    """
    from latticecalc.files import read_json
    from latticecalc.project.signoff.fingerprint import fingerprint_of, round_sig

    p = Path(path)
    where = str(p) if file is None else file
    data = read_json(p, what="the calc package export", input_name=input_name, file=where)
    again = "Export the upstream project again with this kit ('latticecalc export DIR') and rerun this one"
    if not isinstance(data, dict) or not isinstance(data.get("results"), list):
        raise _error("not a calc package export (no 'results' list)", input_name=input_name, file=where,
                     hint="Name the JSON that 'latticecalc export' wrote in the upstream project's out/ folder")
    seal = data.get("seal")
    if not isinstance(seal, dict) or "sha256" not in seal:
        raise _error("the export carries no seal, so what it says cannot be checked (exported by an earlier "
                     "kit version, or not by 'latticecalc export')", input_name=input_name, file=where, hint=again)
    if seal.get("sha256") != seal_digest(data):
        raise _error("the export was changed after it was exported: its content no longer matches its seal",
                     input_name=input_name, file=where, hint=again)
    block = data.get("signoff")
    if not isinstance(block, dict) or not isinstance(block.get("fingerprint_content"), dict):
        raise _error("the export carries no fingerprinted content", input_name=input_name, file=where, hint=again)
    content, stated = block["fingerprint_content"], str(block.get("fingerprint", ""))
    if fingerprint_of(content) != stated:
        raise _error("the export's fingerprinted content does not hash to its fingerprint", input_name=input_name,
                     file=where, hint=again)
    fingerprinted = {r.get("id"): r for r in content.get("results", []) if isinstance(r, dict)}
    for row in data["results"]:
        if not isinstance(row, dict):
            continue
        rid = row.get("id")
        ref = fingerprinted.get(rid)
        mine = round_sig({"value": row.get("value"), "unit": row.get("unit", ""), "text": row.get("text", "")})
        theirs = None if ref is None else {"value": ref.get("value"), "unit": ref.get("unit", ""),
                                           "text": ref.get("text", "")}
        if mine != theirs:
            shown = theirs["text"] if theirs else "(not in it)"
            raise _error(f"the result {rid} is not the fingerprinted one ({shown}): the export was edited",
                         input_name=input_name, file=where, got=str(row.get("text") or row.get("value"))[:80],
                         hint=again)
    shown = content.get("inputs_shown") if isinstance(content.get("inputs_shown"), dict) else {}
    for row in data.get("inputs", []) if isinstance(data.get("inputs"), list) else []:
        if not isinstance(row, dict):
            continue
        text = f"{row.get('text', '')} {row.get('unit', '')}".strip()
        if shown.get(row.get("id")) != text:
            was = shown.get(row.get("id"), "(not in it)")
            raise _error(f"the input {row.get('id')} is not the fingerprinted one ({was}): the export was edited",
                         input_name=input_name, file=where, got=text[:80], hint=again)
    records = [r for r in block.get("signoffs", []) if isinstance(r, dict)]
    meta_fp = content.get("project") if isinstance(content.get("project"), dict) else {}
    status, signed, problems = _status_from(records, stated, str(meta_fp.get("prepared_by", "")))
    if problems:
        raise _error("the export's sign-off records do not hold: " + problems[0], input_name=input_name,
                     file=where, hint=again)
    if block.get("status") != status:
        raise _error(f"the export states the status '{block.get('status')}' but its sign-offs give '{status}'",
                     input_name=input_name, file=where, hint=again)
    meta = data.get("project") if isinstance(data.get("project"), dict) else {}
    return UpstreamPackage(calc_id=str(meta.get("calc_id", "")), revision=str(meta.get("revision", "")),
                           title=str(meta.get("title", "")), template=str(meta.get("template", "")),
                           fingerprint=stated, status=status, signed=signed)


def _looks_like_export(path: Path) -> bool:
    return path.suffix.lower() == ".json"


def data_files(project: Project, *, verify_exports: bool = True) -> list[DataFile]:
    """Every file the project's ``path`` inputs name (given and not empty), hashed; exports verified.

    With ``verify_exports`` an export that fails verification raises (:func:`check_export`); without
    it (the stale check, which must stay cheap and never raise) exports are only hashed.
    """
    out = []
    for entry in project.inputs.entries():
        if entry.spec.kind != "path" or not isinstance(entry.value, str) or not entry.value.strip():
            continue
        text = entry.value.strip()
        path = (project.folder / text)
        # an export is identified by what it says; its bytes are hashed only when it is not a sealed export
        identity = export_identity(path) if _looks_like_export(path) else None
        digest, basis = (identity, "export") if identity is not None else (file_sha256(path), "file")
        size = path.stat().st_size if len(digest) == 64 else None
        package = None
        if verify_exports and size is not None and _looks_like_export(path):
            package = check_export(path, input_name=entry.spec.name, file=text)
        out.append(DataFile(input_name=entry.spec.name, text=text, path=path, sha256=digest, size=size,
                            package=package, basis=basis))
    return out


def state_of(project: Project) -> dict[str, str]:
    """The stale check's entries: ``"<path> (<input>)" -> SHA-256`` (or ``missing``)."""
    return {f.state_key: f.sha256 for f in data_files(project, verify_exports=False)}


def upstream_problems(files: list[dict], role: str) -> list[str]:
    """Why ``role`` cannot be signed over these imports (empty when it can).

    ``files`` are :meth:`DataFile.to_dict` rows, as the fingerprint content keeps them.
    """
    needed = NEEDED_FOR_ROLE.get(role)
    if needed is None:
        return []
    out = []
    for f in files:
        pkg = f.get("package") if isinstance(f, dict) else None
        if isinstance(pkg, dict) and STATUS_RANK.get(pkg.get("status"), 0) < STATUS_RANK[needed]:
            out.append(f"{f.get('path')} ({f.get('input')}) is calc package {pkg.get('calc_id')} rev "
                       f"{pkg.get('revision')}, which is {pkg.get('status')}: this calculation cannot be marked "
                       f"{role} before it is {needed}")
    return out


def imports_shown(project: Project) -> list:
    """What the importing sheet shows: a table of the calc packages it imports and a note on their status.

    Verifies each import (a tampered one raises here, in the first section, before anything computes).
    Returns sheet display objects (nothing when the project imports no calc package).
    """
    from latticecalc.sheet.display import note, table

    imports = [f for f in data_files(project) if f.package is not None]
    if not imports:
        return []
    rows = [[f.input_name, f.text, f.package.label, f.package.title, f.package.status,
             f.package.fingerprint[:16] + "…", f.sha256[:12] + "…"] for f in imports]
    shown = [table(id="lineage.imports", caption="Calc packages this calculation imports (verified: seal, "
                   "fingerprint, results and sign-offs)", columns=["input", "file", "calc package", "title",
                                                                    "status", "fingerprint", "content SHA-256"],
                   rows=rows)]
    held = [f for f in imports if f.package.status != "approved"]
    if held:
        shown.append(note("Imports not yet approved: " + "; ".join(
            f"{f.package.label} is {f.package.status}" for f in held) + ". This calculation cannot be marked "
            "checked while an import is preliminary, nor approved while one is not approved; when the upstream "
            "package is signed, export it again and rerun this project.", category="caution"))
    return shown


__all__ = ["DataFile", "UpstreamPackage", "check_export", "data_files", "export_identity", "file_sha256",
           "imports_shown", "seal_digest", "seal_export", "state_of", "upstream_problems"]
