"""Seal an exported package and verify one: ``latticecalc verify PACKAGE.html [--keys DIR]``.

What is checked, from the HTML file alone:

1. the fingerprint recomputed from the embedded fingerprint content equals the one embedded and
   the one shown on the title block;
2. every step and input shown on the page agrees with the fingerprinted content (the text of
   the element ``step-<id>`` equals the fingerprinted text of that step; ``input-<id>`` holds
   the input's value and unit);
3. the checks summary and the summary box, rebuilt from the fingerprinted checks and key
   results, are the ones on the page, and every fingerprinted verdict follows from its demand
   and limit (:mod:`~latticecalc.project.signoff.display`); each difference is named;
4. the document hash: SHA-256 of the whole HTML with the embedded data left out equals the one
   sealed at export; if not, the blocks (elements with an ``id``) whose text changed are named
   with the words that differ;
5. each sign-off's Ed25519 signature (when it has one) against the public key it carries; that
   no record is missing between them (each record carries the hash of the one before); that a
   current sign-off signed this displayed document (``document``) and the status the sign-offs
   up to it give (``status``); that the roles are kept apart (the checker is not the preparer
   by name, one key and one person sign one role of a revision:
   :mod:`~latticecalc.project.signoff.identity`); and with ``keys`` (a ``trusted-keys.toml``,
   a folder or project holding one, or a folder of ``*.public.pem`` keys) that every current sign-off
   is signed by a listed key, in the name of its person, for a role it may sign;
6. the status shown, and each sign-off's state in the sign-off table (current or VOID), follow
   from the valid sign-offs, and the title block names the current signer of each role.

The document hash and fingerprints are plain hashes anyone can recompute: without keys they
show an accidental or careless edit; only a keyed signature shows who signed which content, and
since it signs the fingerprint and the display digest, a page edited and resealed no longer
matches what was signed.
"""

from __future__ import annotations

import functools
import hashlib
import json
import re
from dataclasses import dataclass, field
from html.parser import HTMLParser
from pathlib import Path

from latticecalc.errors import InputError
from latticecalc.project.signoff.display import check_problems, display_problems, signoff_states, word_diff
from latticecalc.project.signoff.fingerprint import display_digest, fingerprint_of
from latticecalc.project.signoff.identity import separation_problems
from latticecalc.project.signoff.keys import chain_problems, check_signature, signed_message
from latticecalc.project.signoff.standing import standing_text
from latticecalc.project.signoff.trust import load_trust

EMBED_FORMAT = "latticecalc-signoff/1"
SEAL_PLACEHOLDER = "@@latticecalc-seal@@"
_SCRIPT = re.compile(r'(<script type="application/json" id="lc-package-data">)(.*?)(</script>)', re.DOTALL)
#: The block key of the page text that lies in no element with an id (the summary box, captions...).
OUTSIDE_BLOCKS = "(text outside the named blocks)"
_VOID = {"area", "base", "br", "col", "embed", "hr", "img", "input", "link", "meta", "source", "track", "wbr"}


class _Blocks(HTMLParser):
    """Text of every element with an ``id`` (nested ones included in their parents)."""

    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.stack: list[tuple[str, str | None]] = []
        self.parts: dict[str, list[str]] = {}
        self.skip = 0
        self.glue = False   # a <wbr> (a line-break hint inside a word) joins the text on either side

    def handle_starttag(self, tag, attrs):
        if tag == "wbr":
            self.glue = True
        if tag in _VOID:
            return
        ident = dict(attrs).get("id")
        self.stack.append((tag, ident))
        if ident is not None:
            self.parts.setdefault(ident, [])
        if tag in ("script", "style", "title"):
            self.skip += 1

    def handle_endtag(self, tag):
        for k in range(len(self.stack) - 1, -1, -1):
            if self.stack[k][0] == tag:
                self.skip -= sum(1 for t, _ in self.stack[k:] if t in ("script", "style", "title"))
                del self.stack[k:]
                return

    def handle_data(self, data):
        if self.skip:
            return
        glue, self.glue = self.glue, False

        def add(chunks: list[str]) -> None:
            if glue and chunks:
                chunks[-1] += data
            else:
                chunks.append(data)

        named = False
        for _, ident in self.stack:
            if ident is not None:
                add(self.parts[ident])
                named = True
        if not named:
            add(self.parts.setdefault(OUTSIDE_BLOCKS, []))


def block_texts(html: str) -> dict[str, str]:
    """Element id -> its text, whitespace collapsed (the embedded data excluded)."""
    return dict(_block_texts(html))


@functools.lru_cache(maxsize=8)
def _block_texts(html: str) -> dict[str, str]:
    # kept by text: signing, sealing and verifying one package read the same page several times (a second each)
    p = _Blocks()
    p.feed(_SCRIPT.sub(r"\1\3", html))
    p.close()
    return {k: " ".join(" ".join(v).split()) for k, v in p.parts.items()}


def document_hash(html: str) -> str:
    """SHA-256 of the package HTML with the embedded data element emptied."""
    return hashlib.sha256(_SCRIPT.sub(r"\1\3", html).encode("utf-8")).hexdigest()


def _embed(value) -> str:
    return (json.dumps(value, ensure_ascii=False, sort_keys=True)
            .replace("<", "\\u003c").replace(">", "\\u003e").replace("&", "\\u0026"))


def seal_package(html: str) -> str:
    """Put the document hash and block texts in place of the seal placeholder of the embedded data."""
    token = json.dumps(SEAL_PLACEHOLDER)
    m = _SCRIPT.search(html)
    if m is None or token not in m.group(2):
        return html
    seal = {"document_sha256": document_hash(html), "blocks": block_texts(html)}
    return html[:m.start(2)] + m.group(2).replace(token, _embed(seal), 1) + html[m.end(2):]


@dataclass(kw_only=True)
class VerifyReport:
    """Outcome of ``verify``: OK, or the list of what does not match."""

    path: Path
    problems: list[str] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)

    @property
    def ok(self) -> bool:
        """True when nothing failed."""
        return not self.problems

    def text(self) -> str:
        """What the command prints."""
        head = f"{self.path}: " + ("OK" if self.ok else f"FAILED ({len(self.problems)} problem(s))")
        lines = [head] + [f"  MISMATCH {p}" for p in self.problems] + [f"  note: {n}" for n in self.notes]
        return "\n".join(lines)


def _has(text: str, needle: str) -> bool:
    needle = " ".join(needle.split())
    return bool(needle) and re.search(r"(?<!\S)" + re.escape(needle) + r"(?!\S)", text) is not None


def read_embedded(html: str) -> dict:
    """The package's embedded sign-off data (``{}`` if there is none)."""
    m = _SCRIPT.search(html)
    if not m:
        return {}
    try:
        data = json.loads(m.group(2))
    except json.JSONDecodeError:
        return {"_error": "embedded data is not valid JSON"}
    return data if isinstance(data, dict) else {}


def verify_export_json(path: str | Path, *, keys: str | Path | None = None, require_keys: bool = False) -> VerifyReport:
    """Check a package's exported JSON: its seal, fingerprint, results and the status its sign-offs give.

    The same checks a project that imports the JSON makes (:func:`latticecalc.project.lineage.check_export`);
    with ``keys``, every sign-off that counts must also be signed by a listed key, for its person and role.
    """
    from latticecalc.errors import RecordError
    from latticecalc.project.lineage import check_export

    path = Path(path)
    report = VerifyReport(path=path)
    try:
        found = check_export(path, input_name="PACKAGE")
    except RecordError as exc:  # what the export says does not hold (file errors are raised as they are)
        report.problems.append("export: " + exc.message)
        return report
    report.notes.append(f"{found.label}: status {found.status}" + (" (" + "; ".join(found.signed) + ")"
                                                                   if found.signed else ""))
    if keys is not None:
        trust = load_trust(keys)
        data = json.loads(path.read_text(encoding="utf-8"))
        for rec in data["signoff"].get("signoffs", []):
            if isinstance(rec, dict) and rec.get("fingerprint") == found.fingerprint:
                why = trust.problem(rec)
                if why and not rec.get("signature") and not require_keys:
                    report.notes.append(f"sign-off {rec.get('seq')} ({rec.get('role')}, {rec.get('name')}): no keyed "
                                        "signature, so not checked against the trusted keys")
                elif why:
                    report.problems.append(f"sign-off {rec.get('seq')} ({rec.get('role')}, {rec.get('name')}): {why}")
    return report


def verify_package(path: str | Path, *, keys: str | Path | None = None, require_keys: bool = False) -> VerifyReport:
    """Check an exported package's content hash, visible figures and sign-offs (see module doc).

    With ``keys``, a sign-off made without a key is reported as a note (it counts only as a content
    hash); ``require_keys`` makes it a failure, as does any keyed sign-off the trusted keys do not vouch
    for. A ``.json`` path is the package's exported JSON: see :func:`verify_export_json`.
    """
    path = Path(path)
    if path.suffix.lower() == ".json":
        return verify_export_json(path, keys=keys, require_keys=require_keys)
    try:
        html = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise InputError("package file not found", input_name="PACKAGE", got=str(path)) from None
    except UnicodeDecodeError:
        raise InputError("not a UTF-8 HTML file", input_name="PACKAGE", got=str(path)) from None
    trust = load_trust(keys) if keys is not None else None
    report = VerifyReport(path=path)
    bad = report.problems
    data = read_embedded(html)
    if data.get("format") != EMBED_FORMAT:
        bad.append("package: no embedded sign-off data (" + data.get("_error", "not a latticecalc package") + ")")
        return report
    content, stated = data.get("fingerprint_content", {}), data.get("fingerprint", "")
    if not isinstance(content, dict):
        content = {}
    fp = fingerprint_of(content)
    if fp != stated:
        bad.append(f"fingerprint: the embedded content hashes to {fp[:16]}… but the package states {stated[:16]}…")
    blocks = block_texts(html)
    title = blocks.get("title-block", "")
    if not _has(title, stated):
        bad.append("fingerprint: the title block does not show the embedded fingerprint " + stated[:16] + "…")
    for step, text in content.get("shown", {}).items():
        shown = blocks.get(f"step-{step}")
        if shown is None:
            bad.append(f"step {step}: not shown in the package")
        elif shown != text:
            bad.append(f"step {step}: the page differs from the fingerprinted content: {word_diff(text, shown)}")
    for name, text in content.get("inputs_shown", {}).items():
        shown = blocks.get(f"input-{name}")
        if shown is None or not _has(shown, text):
            bad.append(f"input {name}: the inputs table does not show the fingerprinted value '{text}'")
    bare = _SCRIPT.sub(r"\1\3", html)
    if "checks" in content or "summary" in content:
        bad.extend(check_problems(content))
        bad.extend(display_problems(content, bare))
    else:
        report.notes.append("the fingerprinted content predates checks and summary in it: the checks summary and "
                            "summary box are covered by the document hash only")
    seal = data.get("seal") if isinstance(data.get("seal"), dict) else {}
    if document_hash(html) != seal.get("document_sha256"):
        sealed = seal.get("blocks", {})
        changed = [k for k in sealed if blocks.get(k) != sealed[k]]
        # a package sealed before the outside text was kept has no such block: nothing to compare it with
        changed += [k for k in blocks if k not in sealed and k != OUTSIDE_BLOCKS]
        inner = [k for k in changed if not any(o != k and sealed.get(o, "") and o in changed
                                               and sealed.get(o, "") in sealed.get(k, "") for o in changed)]
        if not inner:
            bad.append("document: markup or images differ from the sealed package (no text changed)"
                       if OUTSIDE_BLOCKS in sealed else
                       "document: differs from the sealed package, and no block with an id changed its text "
                       "(this package was sealed without its other text: markup, images or text outside "
                       "the named blocks changed)")
        for k in inner[:10]:
            if k == OUTSIDE_BLOCKS:
                bad.append(f"document: {k}: {word_diff(sealed[k], blocks[k])}")
            elif k not in sealed:
                bad.append(f"document: block '{k}' was added")
            elif k not in blocks:
                bad.append(f"document: block '{k}' was removed")
            else:
                bad.append(f"document: block '{k}': {word_diff(sealed[k], blocks[k])}")
    _check_signoffs(report, data, content, stated, blocks, signoff_states(bare), trust, keys, require_keys)
    return report


def _status(roles: set) -> str:
    return "approved" if {"checked", "approved"} <= roles else "checked" if "checked" in roles else "preliminary"


def _check_signoffs(report: VerifyReport, data: dict, content: dict, stated: str, blocks: dict[str, str],
                    states: dict[str, str], trust, keys, require_keys: bool = False) -> None:
    """Signatures, chain, separation of roles, trust, what each sign-off signed, and the status shown."""
    bad = report.problems
    title = blocks.get("title-block", "")
    records = [r for r in data.get("signoffs", []) if isinstance(r, dict)]
    broken = chain_problems(records)
    bad.extend(broken)
    meta = content.get("project")
    prepared_by = str(meta.get("prepared_by", "")) if isinstance(meta, dict) else ""
    rules = separation_problems(records, prepared_by=prepared_by)
    persons = (separation_problems(records, prepared_by=prepared_by, person_of=trust.person_of)
               if trust is not None and trust.bound else {})
    digest = display_digest(content)
    valid_roles: set = set()
    latest_valid: dict[str, dict] = {}
    for i, rec in enumerate(records):
        who = f"sign-off {rec.get('seq')} ({rec.get('role')}, {rec.get('name')})"
        void = rec.get("fingerprint") != stated
        sig = rec.get("signature")
        ok = True  # counts towards the status, as the package itself judged it
        if sig:
            problem = check_signature(sig, signed_message(rec))
            if problem:
                bad.append(f"{who}: {problem}")
                ok = False
        if i in rules:
            bad.append(f"{who}: {rules[i]}")
            ok = False
        if trust is not None and not void:  # who may sign: reported, the package's own status aside
            why = trust.problem(rec) or (persons.get(i, "") if i not in rules else "")
            if why and not sig and not require_keys:  # an unkeyed sign-off is a fact to note, not a forgery
                report.notes.append(f"{who}: no keyed signature, so not checked against the trusted keys "
                                    "(--require-keys makes this a failure)")
            elif why:
                bad.append(f"{who}: {why}")
        elif not sig and not void:
            report.notes.append(f"{who}: no keyed signature (content hash only)")
        if void:
            report.notes.append(f"{who}: VOID, it signed fingerprint {str(rec.get('fingerprint'))[:16]}…")
            ok = False
        elif "document" in rec and rec.get("document") != digest:
            bad.append(f"{who}: it signed a displayed document (checks, summary, steps, inputs) that differs from "
                       "this package's")
            ok = False
        state = rec.get("state", "current")
        if ok and state != "current":  # e.g. the project's trust list does not list its key
            report.notes.append(f"{who}: the package does not count it: {state}")
            ok = False
        if ok:
            valid_roles.add(rec.get("role"))
            latest_valid[str(rec.get("role"))] = rec
            claimed = rec.get("status")
            if claimed is not None and claimed != _status(valid_roles):
                bad.append(f"{who}: it signed the status '{claimed}' but the sign-offs up to it give "
                           f"'{_status(valid_roles)}'")
        shown = states.get(str(rec.get("seq")))
        if shown is not None and shown != ("current" if ok else "VOID"):
            bad.append(f"{who}: the sign-off table shows it as '{shown}' but its record makes it "
                       f"{'current' if ok else 'VOID'}")
    if broken:  # a broken record chain cannot vouch for any sign-off
        valid_roles, latest_valid = set(), {}
    for role, rec in latest_valid.items():
        if " ".join(str(rec.get("name", "")).split()) not in title:
            bad.append(f"title block: the current {role} sign-off is by {rec.get('name')}, which it does not show")
    standing = blocks.get("status-standing")
    if standing is not None and "checks" in content:
        expected = " ".join(standing_text(content.get("checks"), latest_valid.get("approved")).split())
        if standing != expected:
            bad.append(f"title block: the standing reads '{standing}' but the checks and sign-offs give '{expected}'")
    status = _status(valid_roles)
    if data.get("status") != status or not _has(title, status):
        bad.append(f"status: the package states '{data.get('status')}' but its valid sign-offs give '{status}'")
    if trust is None and any(r.get("signature") for r in records):
        report.notes.append("signatures checked against the keys they carry; give --keys to check who signed")
    elif trust is not None and not trust.bound:
        report.notes.append(f"the keys in {keys} name no person or role: list them in a trusted-keys.toml "
                            "('latticecalc key trust') to check who may sign what")


__all__ = ["SEAL_PLACEHOLDER", "VerifyReport", "block_texts", "document_hash", "seal_package", "verify_export_json",
           "verify_package"]
