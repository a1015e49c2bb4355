"""Seal an exported package and verify one: ``latticecalc verify PACKAGE.html [--keys DIR]``.

What is checked, from the HTML file alone:

1. the fingerprint recomputed from the embedded fingerprint content equals the one embedded and
   the one shown on the title block;
2. every step and input shown on the page agrees with the fingerprinted content (the text of
   the element ``step-<id>`` equals the fingerprinted text of that step; ``input-<id>`` holds
   the input's value and unit);
3. the document hash: SHA-256 of the whole HTML with the embedded data left out equals the one
   sealed at export; if not, the blocks (elements with an ``id``) whose text changed are named
   with the words that differ;
4. each sign-off's Ed25519 signature (when it has one) against the public key it carries, and
   with ``keys`` against the trusted public keys in that folder (every current sign-off must
   then be signed by one of them), and that no record is missing between them (each record
   carries the hash of the one before);
5. the status shown agrees with the current, valid sign-offs.

The document hash and fingerprints are plain hashes: without keys they show an accidental or
careless edit; only a keyed signature shows who signed which content.
"""

from __future__ import annotations

import difflib
import hashlib
import json
import re
from dataclasses import dataclass, field
from html.parser import HTMLParser
from pathlib import Path

from latticecalc.errors import InputError
from latticecalc.project.signoff.fingerprint import fingerprint_of
from latticecalc.project.signoff.keys import chain_problems, check_signature, load_public_keys, signed_message

EMBED_FORMAT = "latticecalc-signoff/1"
SEAL_PLACEHOLDER = "@@latticecalc-seal@@"
_SCRIPT = re.compile(r'(<script type="application/json" id="lc-package-data">)(.*?)(</script>)', re.DOTALL)
_VOID = {"area", "base", "br", "col", "embed", "hr", "img", "input", "link", "meta", "source", "track", "wbr"}


class _Blocks(HTMLParser):
    """Text of every element with an ``id`` (nested ones included in their parents)."""

    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.stack: list[tuple[str, str | None]] = []
        self.parts: dict[str, list[str]] = {}
        self.skip = 0

    def handle_starttag(self, tag, attrs):
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
        for _, ident in self.stack:
            if ident is not None:
                self.parts[ident].append(data)


def block_texts(html: str) -> dict[str, str]:
    """Element id -> its text, whitespace collapsed (the embedded data excluded)."""
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


def _word_diff(old: str, new: str) -> str:
    a, b = old.split(), new.split()
    for op, i1, i2, j1, j2 in difflib.SequenceMatcher(a=a, b=b, autojunk=False).get_opcodes():
        if op != "equal":
            return f"'{' '.join(a[i1:i2])[:60]}' became '{' '.join(b[j1:j2])[:60]}'"
    return "text differs"


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


def verify_package(path: str | Path, *, keys: str | Path | None = None) -> VerifyReport:
    """Check an exported package's content hash, visible figures and sign-offs (see module doc)."""
    path = Path(path)
    try:
        html = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise InputError("package file not found", input_name="PACKAGE", got=str(path)) from None
    except UnicodeDecodeError:
        raise InputError("not a UTF-8 HTML file", input_name="PACKAGE", got=str(path)) from None
    trusted = load_public_keys(keys) if keys is not None else None
    report = VerifyReport(path=path)
    bad = report.problems
    data = read_embedded(html)
    if data.get("format") != EMBED_FORMAT:
        bad.append("package: no embedded sign-off data (" + data.get("_error", "not a latticecalc package") + ")")
        return report
    content, stated = data.get("fingerprint_content", {}), data.get("fingerprint", "")
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
            bad.append(f"step {step}: the page differs from the fingerprinted content: {_word_diff(text, shown)}")
    for name, text in content.get("inputs_shown", {}).items():
        shown = blocks.get(f"input-{name}")
        if shown is None or not _has(shown, text):
            bad.append(f"input {name}: the inputs table does not show the fingerprinted value '{text}'")
    seal = data.get("seal") if isinstance(data.get("seal"), dict) else {}
    if document_hash(html) != seal.get("document_sha256"):
        sealed = seal.get("blocks", {})
        changed = [k for k in sealed if blocks.get(k) != sealed[k]]
        changed += [k for k in blocks if k not in sealed]
        inner = [k for k in changed if not any(o != k and sealed.get(o, "") and o in changed
                                               and sealed.get(o, "") in sealed.get(k, "") for o in changed)]
        if not inner:
            bad.append("document: markup or images differ from the sealed package (no text changed)")
        for k in inner[:10]:
            if k not in sealed:
                bad.append(f"document: block '{k}' was added")
            elif k not in blocks:
                bad.append(f"document: block '{k}' was removed")
            else:
                bad.append(f"document: block '{k}': {_word_diff(sealed[k], blocks[k])}")
    valid_roles = set()
    broken = chain_problems(data.get("signoffs", []))
    bad.extend(broken)
    for rec in data.get("signoffs", []):
        who = f"sign-off {rec.get('seq')} ({rec.get('role')}, {rec.get('name')})"
        void = rec.get("fingerprint") != stated
        sig = rec.get("signature")
        ok = True
        if sig:
            problem = check_signature(sig, signed_message(rec))
            if problem:
                bad.append(f"{who}: {problem}")
                ok = False
            elif trusted is not None and sig.get("key_id") not in trusted:
                bad.append(f"{who}: signed with key {sig.get('key_id')}, which is not among the trusted keys in {keys}")
                ok = False
        elif trusted is not None and not void:
            bad.append(f"{who}: not signed with a key, so it cannot be checked against the trusted keys")
            ok = False
        elif not void:
            report.notes.append(f"{who}: no keyed signature (content hash only)")
        if void:
            report.notes.append(f"{who}: VOID, it signed fingerprint {str(rec.get('fingerprint'))[:16]}…")
        elif ok:
            valid_roles.add(rec.get("role"))
    if broken:  # a broken record chain cannot vouch for any sign-off
        valid_roles = set()
    status = ("approved" if {"checked", "approved"} <= valid_roles else
              "checked" if "checked" in valid_roles else "preliminary")
    if data.get("status") != status or not _has(title, status):
        bad.append(f"status: the package states '{data.get('status')}' but its valid sign-offs give '{status}'")
    if trusted is None and any(r.get("signature") for r in data.get("signoffs", [])):
        report.notes.append("signatures checked against the keys they carry; give --keys DIR to check who signed")
    return report


__all__ = ["SEAL_PLACEHOLDER", "VerifyReport", "block_texts", "document_hash", "seal_package", "verify_package"]
