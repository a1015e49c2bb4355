"""Who signed: names compared as a reader sees them, and the separation of roles.

Two names are the same person when their *folded* forms are equal (:func:`fold_name`):

1. Unicode NFKC (UAX #15): full-width and compatibility letters become plain ones (``Ｄ`` -> ``D``);
2. format and control characters removed (zero-width space and joiners, soft hyphen, BOM,
   direction marks: Unicode category Cf/Cc), and combining marks (accents) dropped;
3. Greek and Cyrillic letters that look like Latin ones mapped to those (``Ρ`` -> ``P``,
   ``а`` -> ``a``), a small table from the Unicode confusables data (UTS #39);
4. case folded, and every space, dot, hyphen or other punctuation removed, so ``Dr Pat``,
   ``Dr. Pat``, ``Dr.  Pat`` and ``Dr. Pat.`` fold alike.

The rules (:func:`separation_problems`), for sign-offs of one calc id and revision:

* a *checked* sign-off must not bear the name of the preparer (``calc.prepared_by`` or the
  name on any *prepared* sign-off);
* one key signs one role: a key that signed one role may not sign another;
* with a trust list binding keys to persons, one person signs one role.
"""

from __future__ import annotations

import base64
import hashlib
import unicodedata
from collections.abc import Callable

#: Look-alikes of Latin letters (Greek, Cyrillic and a few Latin variants), upper and lower case.
CONFUSABLES = {
    # Greek capitals
    "Α": "A", "Β": "B", "Ε": "E", "Ζ": "Z", "Η": "H", "Ι": "I", "Κ": "K", "Μ": "M", "Ν": "N", "Ο": "O",
    "Ρ": "P", "Τ": "T", "Υ": "Y", "Χ": "X", "Ϲ": "C", "Ϳ": "J", "Ϝ": "F",
    # Greek small
    "α": "a", "ϲ": "c", "ε": "e", "ι": "i", "κ": "k", "ν": "v", "ο": "o", "ρ": "p", "υ": "u", "χ": "x",
    "γ": "y", "ω": "w", "ϳ": "j",
    # Cyrillic capitals
    "А": "A", "В": "B", "С": "C", "Е": "E", "Н": "H", "І": "I", "Ј": "J", "К": "K", "М": "M", "О": "O",
    "Р": "P", "Ѕ": "S", "Т": "T", "Х": "X", "У": "Y", "Ү": "Y", "Ԁ": "D", "Ԛ": "Q", "Ԝ": "W", "Ӏ": "I",
    # Cyrillic small
    "а": "a", "с": "c", "е": "e", "һ": "h", "і": "i", "ј": "j", "о": "o", "р": "p", "ѕ": "s", "х": "x",
    "у": "y", "ү": "y", "ԁ": "d", "ԛ": "q", "ԝ": "w", "ӏ": "l", "ѵ": "v",
    # Latin variants NFKC keeps
    "ı": "i", "ȷ": "j", "ɑ": "a", "ɡ": "g", "ʏ": "y", "ɪ": "i", "ᴅ": "d",
}
_TABLE = str.maketrans(CONFUSABLES)


def fold_name(name: str) -> str:
    """The form two names are compared in (see the module docstring); ``""`` for no letters."""
    text = unicodedata.normalize("NFKC", str(name))
    text = "".join(ch for ch in text if unicodedata.category(ch) not in ("Cf", "Cc"))
    text = unicodedata.normalize("NFKD", text.translate(_TABLE))
    text = "".join(ch for ch in text if not unicodedata.combining(ch))
    text = unicodedata.normalize("NFKC", text.casefold()).translate(_TABLE).casefold()
    return "".join(ch for ch in text if ch.isalnum())


def same_person(a: str, b: str) -> bool:
    """True when names ``a`` and ``b`` fold alike (and are not both empty of letters)."""
    fa, fb = fold_name(a), fold_name(b)
    return bool(fa) and fa == fb


def key_fingerprint(signature: dict | None) -> str:
    """SHA-256 (hex) of the raw public key a record's signature carries (``""`` without one)."""
    if not isinstance(signature, dict):
        return ""
    try:
        return hashlib.sha256(base64.b64decode(signature.get("public_key", ""), validate=True)).hexdigest()
    except (ValueError, TypeError):
        return ""


def separation_problems(records: list[dict], *, prepared_by: str = "",
                        person_of: Callable[[str], str | None] | None = None) -> dict[int, str]:
    """Sign-off index -> why it breaks the separation of roles (only the later of two records is named).

    The reason does not name the sign-off itself; callers put ``sign-off N (role, name):`` before it.

    ``prepared_by`` is the project's preparer (``calc.prepared_by``); ``person_of`` maps a key
    fingerprint to the person a trust list binds it to.
    """
    problems: dict[int, str] = {}
    for i, rec in enumerate(records):
        same_issue = [r for r in records[:i] if r.get("calc_id") == rec.get("calc_id")
                      and r.get("revision") == rec.get("revision")]
        role = rec.get("role")
        if role == "checked":
            preparers = [r.get("name", "") for r in same_issue if r.get("role") == "prepared"]
            preparers.append(prepared_by)
            if any(same_person(rec.get("name", ""), p) for p in preparers if p):
                problems[i] = ("the checker must not be the preparer (the name reads as the "
                               "preparer's once case, spacing, dots and look-alike letters are set aside)")
                continue
        fp = key_fingerprint(rec.get("signature"))
        if not fp:
            continue
        for r in same_issue:
            if r.get("role") != role and key_fingerprint(r.get("signature")) == fp:
                problems[i] = (f"key {rec['signature'].get('key_id')} signed '{r.get('role')}' of "
                               f"revision {rec.get('revision')} already (sign-off {r.get('seq')}); one key "
                               "signs one role")
                break
        if i in problems or person_of is None:
            continue
        person = person_of(fp)
        for r in same_issue:
            other = person_of(key_fingerprint(r.get("signature")))
            if person and other and r.get("role") != role and same_person(person, other):
                problems[i] = (f"{person} signed '{r.get('role')}' of revision "
                               f"{rec.get('revision')} already (sign-off {r.get('seq')}); one person signs "
                               "one role")
                break
    return problems


__all__ = ["CONFUSABLES", "fold_name", "key_fingerprint", "same_person", "separation_problems"]
