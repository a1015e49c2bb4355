"""Sign-off records (``signoff/signatures.jsonl``, append-only) and the status they give.

A record holds the role (prepared, checked, approved), the name, the UTC time, the fingerprint
signed, a comment, the revision, and the fingerprint content itself, so that a later export can
say exactly what changed when a sign-off no longer matches (it is then VOID). It also holds the
*display digest* of what the reader sees (``document``: checks summary, summary box, steps and
inputs as shown), the status the package takes with it (``status``) and the head of the review
file its signer saw (``review``). With a key, the record also carries an Ed25519 signature of
its signed fields (``keys.SIGNED_FIELDS``). Each record holds the hash of the one before it
(``previous``), so a removed or altered record shows.

Rules ``sign_project`` enforces:

* the project must have a valid run that matches its current inputs, notebooks and executed
  outputs (not stale, not failed, not never run), and every verdict must follow from its
  demand and limit;
* the sign-off and review files must be whole (chains unbroken, nothing cut from the end);
* ``checked`` is refused while checker queries are open, and when the checker is the preparer
  (names compared as :mod:`~latticecalc.project.signoff.identity` folds them);
* one key signs one role of a revision;
* with ``signoff/trusted-keys.toml``: a listed key, in the name of its person, for a role the
  list allows;
* ``approved`` needs a current ``checked`` sign-off;
* ``checked`` or ``approved`` with a failing check needs a comment saying how it was resolved.
* ``checked`` or ``approved`` is refused while a verdict rests on a hand estimate alone (a
  ``*.preliminary`` result, e.g. band coverage with no computed complete gap).
* ``approved`` is refused while a check relies on a source tagged ``from memory`` (the register of
  values to confirm, :mod:`latticecalc.sources_register`).

Status: ``approved`` if a current approved and a current checked sign-off exist, ``checked`` if a
current checked one does, else ``preliminary``. A sign-off is current when it signed the
current fingerprint, its signature (if any) is good, it keeps the rules above on separation and
trust, and the chain of records is unbroken.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import UTC, datetime
from pathlib import Path

from latticecalc.errors import InputError, ProjectError
from latticecalc.project.project import Project, open_project
from latticecalc.project.signoff.display import check_problems
from latticecalc.project.signoff.fingerprint import (
    ContentChanges,
    diff_content,
    display_digest,
    fingerprint_content,
    fingerprint_of,
)
from latticecalc.project.signoff.identity import separation_problems
from latticecalc.project.signoff.journal import SIGNOFF_DIR, append_line, head_of, head_problem, read_lines
from latticecalc.project.signoff.keys import (
    chain_problems,
    check_signature,
    load_private_key,
    record_link,
    sign_bytes,
    signed_message,
)
from latticecalc.project.signoff.review import load_comments, review_path, review_problems
from latticecalc.project.signoff.trust import TrustList, project_trust
from latticecalc.project.state import EXECUTED_DIR, stale_files

SIGNATURES_FILE = "signatures.jsonl"
ROLES = ("prepared", "checked", "approved")
MAX_NAME = 200


def signatures_path(project: Project) -> Path:
    """Where the project's sign-off records are kept."""
    return project.folder / SIGNOFF_DIR / SIGNATURES_FILE


def current_package(project: Project) -> tuple[dict, object]:
    """The package JSON and sheet of the project's last run (as an export now would make them)."""
    from latticecalc.project.export.collect import collect
    from latticecalc.project.export.package import build_package_data

    doc = collect([project.out / EXECUTED_DIR / nb.name for nb in project.notebooks])
    return build_package_data(project, doc, ""), doc


def current_fingerprint(project: Project) -> tuple[str, dict]:
    """Fingerprint and its content for the project's last run (raises if the run is stale)."""
    changed = stale_files(project)
    if changed:
        raise ProjectError("has no valid run matching its current inputs and notebooks (changed: "
                           + ", ".join(changed) + ")", input_name=str(project.folder),
                           hint="Run it ('latticecalc run DIR') and check the results before signing")
    data, doc = current_package(project)
    content = fingerprint_content(project, data, doc)
    return fingerprint_of(content), content


@dataclass(frozen=True, kw_only=True)
class SignoffState:
    """A sign-off record judged against the current content."""

    record: dict
    void: bool
    changes: ContentChanges | None
    signature_problem: str = ""
    rule_problem: str = ""

    @property
    def valid(self) -> bool:
        """Current, (if signed with a key) correctly signed, and within the rules on who signs."""
        return not self.void and not self.signature_problem and not self.rule_problem

    @property
    def reason(self) -> str:
        """Why it is void or invalid (empty when valid); each list of changes cut at 8 names."""
        if self.signature_problem:
            return f"signature invalid: {self.signature_problem}"
        if self.void:
            return self.changes.describe(max_items=8) if self.changes else "fingerprint differs"
        return self.rule_problem


def rule_problems(records: list[dict], content: dict, trust: TrustList | None = None) -> dict[int, str]:
    """Record index -> why it breaks the separation of roles or the trust list (see the module doc)."""
    prepared_by = str(content.get("project", {}).get("prepared_by", ""))
    problems = separation_problems(records, prepared_by=prepared_by,
                                   person_of=trust.person_of if trust is not None else None)
    if trust is not None:
        for i, rec in enumerate(records):
            why = trust.problem(rec)
            if why and i not in problems:
                problems[i] = f"not trusted: {why}"
    return problems


def judge(records: list[dict], fingerprint: str, content: dict, *, trust: TrustList | None = None
          ) -> list[SignoffState]:
    """Each record: void when its fingerprint differs from ``fingerprint`` (with what changed).

    A record is also invalid when its signature does not verify, or it breaks the separation of
    roles or (with ``trust``, the project's trust list) is not signed by a key listed for it.
    """
    rules = rule_problems(records, content, trust)
    states = []
    for i, rec in enumerate(records):
        void = rec.get("fingerprint") != fingerprint
        changes = diff_content(rec.get("content", {}), content) if void else None
        problem = check_signature(rec["signature"], signed_message(rec)) if rec.get("signature") else ""
        states.append(SignoffState(record=rec, void=void, changes=changes, signature_problem=problem,
                                   rule_problem=rules.get(i, "")))
    return states


def status_from_roles(roles: set) -> str:
    """``approved`` with current checked and approved sign-offs, ``checked`` with a checked one, else preliminary."""
    if "checked" in roles and "approved" in roles:
        return "approved"
    if "checked" in roles:
        return "checked"
    return "preliminary"


def status_of(states: list[SignoffState]) -> str:
    """``preliminary``, ``checked`` or ``approved`` from the current, valid sign-offs.

    A broken record chain (a record removed or altered) leaves the status preliminary.
    """
    if chain_problems([s.record for s in states]):
        return "preliminary"
    return status_from_roles({s.record.get("role") for s in states if s.valid})


def load_records(project: Project) -> list[dict]:
    """All sign-off records of the project, oldest first."""
    return read_lines(signatures_path(project))


def preliminary_results(content: dict) -> list[str]:
    """Ids of results that mark a verdict as preliminary (``*.preliminary`` steps with a non-zero value)."""
    out = []
    for r in content.get("results", []):
        if str(r.get("id", "")).endswith(".preliminary"):
            try:
                if float(r.get("value") or 0) != 0:
                    out.append(r["id"])
            except (TypeError, ValueError):
                out.append(r["id"])
    return out


def sign_project(folder: str | Path, *, role: str, name: str, comment: str = "",
                 key: str | Path | None = None, qualification: str = "") -> dict:
    """Add a sign-off record for the project's current run; returns the record.

    Parameters
    ----------
    folder:
        The project folder.
    role:
        ``prepared``, ``checked`` or ``approved``.
    name:
        Who signs.
    comment:
        Free text (required when signing checked/approved with a failing check).
    key:
        Optional Ed25519 private key file (``latticecalc key new``); the record is then signed.
    qualification:
        The limit of an approval (``for prototype fabrication only``): required to approve over a
        failing check, signed with the record and shown beside the status on the cover.

    Raises
    ------
    InputError
        Unknown role, empty name, missing comment, unreadable key.
    ProjectError
        Stale, failed or never-run project; open review comments (``checked``); no current
        ``checked`` sign-off (``approved``); checker is the preparer.
    """
    if role not in ROLES:
        raise InputError("unknown role", input_name="--role", expected=" or ".join(ROLES), got=repr(role))
    if not isinstance(name, str) or not name.strip() or len(name) > MAX_NAME:
        raise InputError("must be a name", input_name="--name", expected=f"1 to {MAX_NAME} characters",
                         got=repr(name))
    name, comment = name.strip(), (comment or "").strip()
    private = load_private_key(key) if key is not None else None
    project = open_project(folder)
    fingerprint, content = current_fingerprint(project)
    edited = check_problems(content)
    if edited:
        raise ProjectError(edited[0] + "; the executed notebooks were edited after the run",
                           input_name=str(project.folder), hint="Run the project again ('latticecalc run DIR')")
    records = load_records(project)
    path = signatures_path(project)
    broken = chain_problems(records) + [p for p in [head_problem(path, records, what="sign-off")] if p]
    if broken:
        raise ProjectError(broken[0], input_name=str(project.folder),
                           hint="Sign-off records are append-only: restore the file from version control")
    review_broken = review_problems(project, signoffs=records)
    if review_broken:
        raise ProjectError(review_broken[0], input_name=str(project.folder),
                           hint="Review events are append-only: restore the file from version control")
    trust = project_trust(project.folder)
    states = judge(records, fingerprint, content, trust=trust)
    current = [s for s in states if s.valid]
    if role == "checked":
        open_ids = [c.id for c in load_comments(project) if c.status == "open"]
        if open_ids:
            raise ProjectError("cannot be marked checked while checker queries are open: " + ", ".join(open_ids),
                               input_name=str(project.folder),
                               hint="Answer them; their authors settle them (latticecalc query answer / settle)")
    probe = {"seq": len(records) + 1, "role": role, "name": name, "calc_id": project.meta.calc_id,
             "revision": project.meta.revision, "signature": sign_bytes(private, b"") if private else None}
    if trust is not None and private is None:
        raise ProjectError(f"needs a key: the project lists who may sign in {trust.where}",
                           input_name="--key", hint="Sign with --key KEYFILE")
    why = rule_problems([*records, probe], content, trust).get(len(records), "")
    if why:
        raise ProjectError(why, input_name="--name" if why.startswith("the checker") else "--key", got=repr(name))
    if role == "approved" and not any(s.record.get("role") == "checked" for s in current):
        raise ProjectError("cannot be approved before a current 'checked' sign-off exists",
                           input_name=str(project.folder))
    if role == "approved":
        from latticecalc.sources_register import blocks_approval

        _data, doc = current_package(project)
        recalled = blocks_approval(doc.records("check"))
        if recalled:
            raise ProjectError("checks rely on values recalled from sources not yet confirmed ("
                               + "; ".join(s.cite() for s in recalled[:3]) + (" …" if len(recalled) > 3 else "")
                               + "): the package cannot be approved", input_name=str(project.folder),
                               hint="Confirm each against its published table (the package lists them under "
                                    "'Values to confirm before approval'), update the source, rerun and export")
    from latticecalc.project.lineage import upstream_problems

    imported = upstream_problems(content.get("files", []), role)
    if imported:
        raise ProjectError(imported[0], input_name=str(project.folder),
                           hint="Have the upstream package signed, export it again, then rerun and export this one")
    held = preliminary_results(content)
    if role in ("checked", "approved") and held:
        raise ProjectError("a verdict rests on a hand estimate alone (" + ", ".join(held) + "): the package is "
                           "preliminary and cannot be marked " + role, input_name=str(project.folder),
                           hint="Confirm it numerically (raise the Bloch bands or revise the design) and rerun")
    failing = [r["id"] for r in content["results"] if r.get("ok") is False]
    if role in ("checked", "approved") and failing and not comment:
        raise InputError("checks fail (" + ", ".join(failing) + "): say in a comment how this was resolved",
                         input_name="--comment")
    qualification = " ".join((qualification or "").split())
    if role == "approved" and failing and not qualification:
        raise InputError(f"{len(failing)} check(s) fail (" + ", ".join(failing[:4])
                         + (" …" if len(failing) > 4 else "") + "): an approval over a failing check must state "
                         "its qualification, which the package shows beside its status on the cover",
                         input_name="--qualification", expected="e.g. 'for prototype fabrication only'")
    if len(qualification) > MAX_NAME:
        raise InputError("too long", input_name="--qualification", expected=f"at most {MAX_NAME} characters",
                         got=f"{len(qualification)} characters")
    status = status_from_roles({s.record.get("role") for s in current} | {role})
    record = {"role": role, "name": name, "time": datetime.now(UTC).isoformat(timespec="seconds"),
              "fingerprint": fingerprint, "comment": comment, "calc_id": project.meta.calc_id,
              "revision": project.meta.revision, "document": display_digest(content), "status": status,
              "review": head_of(read_lines(review_path(project))), "content": content}
    if qualification:
        record["qualification"] = qualification

    def complete(existing: list[dict], rec: dict) -> dict:
        rec = rec | {"seq": len(existing) + 1, "previous": record_link(existing[-1]) if existing else ""}
        if private is not None:
            rec["signature"] = sign_bytes(private, signed_message(rec))
        return rec

    return append_line(signatures_path(project), record, prepare=complete)


__all__ = ["ROLES", "SignoffState", "current_fingerprint", "judge", "load_records", "rule_problems", "sign_project",
           "signed_message", "status_from_roles", "status_of"]
