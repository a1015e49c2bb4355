"""Ed25519 key pairs for keyed sign-offs (the ``cryptography`` library).

``generate_keypair`` writes ``<holder>.signing.pem`` (PKCS#8 PEM, file mode 0600) and
``<holder>.public.pem`` (SubjectPublicKeyInfo PEM), ``<holder>`` being the holder's name made safe for
a file name, and never replaces an existing file. A signature is made over the canonical JSON of the
sign-off record's signed fields; the record carries the raw public key (base64) and its *key mark*
(``LK-`` and four groups of four characters: the first 80 bits of the SHA-256 of the raw public key in
the Crockford base-32 alphabet, which has no I, L, O or U to misread; the 64 hex digits of that SHA-256
are the key's fingerprint), so a package can be checked on its own, and against a project's list of
trusted keys (:mod:`~latticecalc.project.signoff.trust`). Records signed before key marks carry a
16-hex-digit key id instead; both are accepted.
"""

from __future__ import annotations

import base64
import hashlib
import os
import tempfile
from dataclasses import dataclass
from pathlib import Path

from cryptography.exceptions import InvalidSignature
from cryptography.hazmat.primitives import serialization
from cryptography.hazmat.primitives.asymmetric.ed25519 import Ed25519PrivateKey, Ed25519PublicKey

from latticecalc.errors import InputError
from latticecalc.project.signoff.fingerprint import canonical_json
from latticecalc.project.signoff.journal import UNLINKED_FIELDS, chain_breaks, record_link

PRIVATE_SUFFIX = ".signing.pem"
PUBLIC_SUFFIX = ".public.pem"
#: Crockford's base-32 alphabet (digits and letters without I, L, O, U).
_BASE32 = "0123456789ABCDEFGHJKMNPQRSTVWXYZ"
ALGORITHM = "ed25519"
#: The fields of a sign-off record a signature covers: the fingerprint binds it to the content,
#: ``document`` to what the reader sees (checks summary, summary box, steps, inputs), ``status``
#: to the status the package takes with it, ``review`` to the review events the signer saw,
#: ``qualification`` to the limit an approver set (when there is one).
SIGNED_FIELDS = ("seq", "role", "name", "time", "fingerprint", "comment", "calc_id", "revision", "previous",
                 "document", "status", "review", "qualification")
#: Signed as ``null`` when missing (the fields every record has had).
_ALWAYS_SIGNED = SIGNED_FIELDS[:9]


@dataclass(frozen=True, kw_only=True)
class KeyPairFiles:
    """Where ``generate_keypair`` put the two halves, the key id and the fingerprint (SHA-256 of the public key)."""

    private: Path
    public: Path
    key_id: str
    fingerprint: str


def key_id(public_raw: bytes) -> str:
    """The key mark of a public key: ``LK-7Q2M-4XKD-9PAH-3RTB`` (see the module doc)."""
    bits = int.from_bytes(hashlib.sha256(public_raw).digest()[:10], "big")
    chars = "".join(_BASE32[(bits >> (5 * k)) & 31] for k in range(15, -1, -1))
    return "LK-" + "-".join(chars[i:i + 4] for i in range(0, 16, 4))


def legacy_key_id(public_raw: bytes) -> str:
    """The key id records signed before key marks carry: first 16 hex digits of the SHA-256."""
    return hashlib.sha256(public_raw).hexdigest()[:16]


def holder_file_stem(holder: str) -> str:
    """``S. Checker`` -> ``s-checker``: the holder's name as a file name (letters, digits, hyphens)."""
    import unicodedata

    text = unicodedata.normalize("NFKD", holder).encode("ascii", "ignore").decode("ascii").lower()
    stem = "-".join(w for w in "".join(c if c.isalnum() else " " for c in text).split())
    return stem[:60]


def _raw(public: Ed25519PublicKey) -> bytes:
    return public.public_bytes(serialization.Encoding.Raw, serialization.PublicFormat.Raw)


def _write_new(path: Path, data: bytes, mode: int) -> None:
    """Write a file that must not exist yet: temp file, fsync, then hard-link (fails if it exists)."""
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=path.parent)
    try:
        os.fchmod(fd, mode)
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        try:
            os.link(tmp, path)
        except FileExistsError:
            raise InputError("a key file of that name exists already and is never replaced",
                             input_name="--folder", got=str(path),
                             hint="Choose another --holder or --folder") from None
    finally:
        Path(tmp).unlink(missing_ok=True)


def generate_keypair(out: str | Path, *, name: str = "signing") -> KeyPairFiles:
    """Make an Ed25519 key pair in folder ``out`` for holder ``name``.

    The files are ``<stem>.signing.pem`` (mode 0600) and ``<stem>.public.pem``, ``<stem>`` being
    :func:`holder_file_stem` of ``name``.

    Raises
    ------
    InputError
        If either file exists already (keys are never overwritten) or ``name`` gives no file name.
    """
    stem = holder_file_stem(name or "")
    if not stem:
        raise InputError("the key holder's name gives no file name", input_name="--holder", got=repr(name),
                         expected="a name with letters or digits")
    name = stem
    folder = Path(out)
    folder.mkdir(parents=True, exist_ok=True)
    priv_path, pub_path = folder / f"{name}{PRIVATE_SUFFIX}", folder / f"{name}{PUBLIC_SUFFIX}"
    for p in (priv_path, pub_path):
        if p.exists():
            raise InputError("a key file of that name exists already and is never replaced",
                             input_name="--folder", got=str(p), hint="Choose another --holder or --folder")
    private = Ed25519PrivateKey.generate()
    priv_pem = private.private_bytes(serialization.Encoding.PEM, serialization.PrivateFormat.PKCS8,
                                     serialization.NoEncryption())
    pub_pem = private.public_key().public_bytes(serialization.Encoding.PEM,
                                                serialization.PublicFormat.SubjectPublicKeyInfo)
    _write_new(priv_path, priv_pem, 0o600)
    _write_new(pub_path, pub_pem, 0o644)
    raw = _raw(private.public_key())
    return KeyPairFiles(private=priv_path, public=pub_path, key_id=key_id(raw),
                        fingerprint=hashlib.sha256(raw).hexdigest())


def load_private_key(path: str | Path) -> Ed25519PrivateKey:
    """Read an Ed25519 private key written by :func:`generate_keypair`."""
    path = Path(path)
    try:
        key = serialization.load_pem_private_key(path.read_bytes(), password=None)
    except FileNotFoundError:
        raise InputError("key file not found", input_name="--key", got=str(path)) from None
    except (ValueError, TypeError) as exc:
        raise InputError(f"not a readable private key ({exc})", input_name="--key", got=str(path),
                         expected="an Ed25519 PEM private key made by 'latticecalc key new'") from None
    if not isinstance(key, Ed25519PrivateKey):
        raise InputError("wrong key type", input_name="--key", got=type(key).__name__, expected="Ed25519")
    return key


def signed_message(record: dict) -> bytes:
    """The bytes an Ed25519 signature covers: canonical JSON of the record's signed fields.

    The fields of :data:`SIGNED_FIELDS` the record has (records made before ``document``,
    ``status`` and ``review`` existed keep verifying; removing a field breaks the signature).
    """
    return canonical_json({k: record.get(k) for k in SIGNED_FIELDS
                           if k in record or k in _ALWAYS_SIGNED}).encode("utf-8")


def chain_problems(records: list[dict]) -> list[str]:
    """Where the chain of sign-off records is broken (a record removed, reordered or altered)."""
    return [f"sign-off {records[i].get('seq')} ({records[i].get('role')}, {records[i].get('name')}): the record "
            "before it is missing or was altered (the chain of sign-offs is broken)" for i in chain_breaks(records)]


def sign_bytes(private: Ed25519PrivateKey, message: bytes) -> dict:
    """Signature dict for a record: algorithm, public key (base64 raw), key id, signature (base64)."""
    raw = _raw(private.public_key())
    return {"algorithm": ALGORITHM, "public_key": base64.b64encode(raw).decode("ascii"),
            "key_id": key_id(raw), "value": base64.b64encode(private.sign(message)).decode("ascii")}


def check_signature(signature: dict, message: bytes) -> str:
    """Empty string if ``signature`` is a valid Ed25519 signature of ``message``, else why not."""
    try:
        if signature.get("algorithm") != ALGORITHM:
            return f"unknown signature algorithm {signature.get('algorithm')!r}"
        raw = base64.b64decode(signature["public_key"], validate=True)
        if signature.get("key_id") not in (key_id(raw), legacy_key_id(raw)):
            return "key id does not match the public key carried with the signature"
        Ed25519PublicKey.from_public_bytes(raw).verify(base64.b64decode(signature["value"], validate=True), message)
    except InvalidSignature:
        return "signature does not match the signed content"
    except (KeyError, ValueError, TypeError, AttributeError) as exc:
        return f"malformed signature ({exc})"
    return ""


__all__ = ["SIGNED_FIELDS", "UNLINKED_FIELDS", "KeyPairFiles", "chain_problems", "check_signature",
           "generate_keypair", "holder_file_stem", "key_id", "legacy_key_id", "load_private_key", "record_link",
           "sign_bytes", "signed_message"]
