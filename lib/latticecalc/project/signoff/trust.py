"""Who may sign a project: ``signoff/trusted-keys.toml``, one entry per public key.

.. code-block:: toml

    [[key]]
    fingerprint = "5f0c…"            # SHA-256 (hex) of the 32-byte Ed25519 public key
    person = "Sam Checks"
    roles = ["checked"]

``latticecalc key trust DIR --public sam-checks.public.pem --person "Sam Checks" --role checked`` adds an entry. When
the file exists, ``sign`` needs a listed key, signed in the name of its person, for a role the
entry allows; ``verify --keys`` given the file (or a folder holding it, or the project folder)
checks every current sign-off of a package the same way. A folder of ``*.public.pem`` files without
the file still works for ``verify --keys``, but binds keys to no person or role.
"""

from __future__ import annotations

import hashlib
import tomllib
from dataclasses import dataclass, field
from pathlib import Path

import tomlkit
from cryptography.hazmat.primitives import serialization
from cryptography.hazmat.primitives.asymmetric.ed25519 import Ed25519PublicKey

from latticecalc.errors import InputError, ProjectError
from latticecalc.project.atomic import write_text_atomic
from latticecalc.project.meta import COVER_FILE, OLD_COVER_FILE
from latticecalc.project.signoff.identity import key_fingerprint, same_person
from latticecalc.project.signoff.journal import SIGNOFF_DIR

TRUST_FILE = "trusted-keys.toml"
ROLES = ("prepared", "checked", "approved")
PUBLIC_SUFFIX = ".public.pem"
#: Public key files named before key marks (``NAME.pub``), still read from a folder of keys.
LEGACY_PUBLIC_SUFFIX = ".pub"


@dataclass(frozen=True, kw_only=True)
class TrustedKey:
    """One trusted public key: its fingerprint, whose it is, what it may sign."""

    fingerprint: str
    person: str = ""
    roles: tuple[str, ...] = ROLES
    source: str = ""


@dataclass(kw_only=True)
class TrustList:
    """Trusted keys by fingerprint; ``bound`` when they come from a trust file (person and roles)."""

    keys: dict[str, TrustedKey] = field(default_factory=dict)
    bound: bool = False
    where: str = ""

    def person_of(self, fingerprint: str) -> str | None:
        """The person a key is bound to (None if unknown or unbound)."""
        k = self.keys.get(fingerprint)
        return k.person if (k is not None and self.bound and k.person) else None

    def problem(self, record: dict) -> str:
        """Why ``record`` is not a sign-off this list vouches for (``""`` if it is)."""
        sig = record.get("signature")
        if not isinstance(sig, dict) or not sig:
            return f"not signed with a key, so it cannot be checked against the trusted keys in {self.where}"
        entry = self.keys.get(key_fingerprint(sig))
        if entry is None:
            return f"signed with key {sig.get('key_id')}, which is not among the trusted keys in {self.where}"
        if not self.bound:
            return ""
        if not same_person(record.get("name", ""), entry.person):
            return f"signed as {record.get('name')!r} with key {sig.get('key_id')}, which belongs to {entry.person}"
        if record.get("role") not in entry.roles:
            return (f"key {sig.get('key_id')} of {entry.person} may sign only: {', '.join(entry.roles)} "
                    f"(not {record.get('role')})")
        return ""


def public_fingerprint(raw: bytes) -> str:
    """SHA-256 (hex) of a raw 32-byte Ed25519 public key."""
    return hashlib.sha256(raw).hexdigest()


def read_public_key(path: str | Path, *, input_name: str = "--key") -> bytes:
    """Raw bytes of an Ed25519 public key file (PEM, from ``latticecalc key new``)."""
    path = Path(path)
    try:
        pub = serialization.load_pem_public_key(path.read_bytes())
    except FileNotFoundError:
        raise InputError("public key file not found", input_name=input_name, got=str(path)) from None
    except ValueError as exc:
        raise InputError(f"not a readable public key ({exc})", input_name=input_name, got=str(path)) from None
    if not isinstance(pub, Ed25519PublicKey):
        raise InputError("wrong key type", input_name=input_name, got=type(pub).__name__, expected="Ed25519")
    return pub.public_bytes(serialization.Encoding.Raw, serialization.PublicFormat.Raw)


def _roles(value, where: str) -> tuple[str, ...]:
    if not isinstance(value, list) or not value or any(r not in ROLES for r in value):
        raise InputError("roles must be a list of prepared, checked, approved", input_name="roles", file=where,
                         got=repr(value))
    return tuple(value)


def read_trust_file(path: str | Path, *, where: str | None = None) -> TrustList:
    """The entries of a ``trusted-keys.toml`` (``where``: how messages name it, the path by default)."""
    path = Path(path)
    try:
        doc = tomllib.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise InputError("trusted keys file not found", input_name="--keys", got=str(path)) from None
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
        raise InputError(f"not a readable TOML file ({exc})", input_name="--keys", got=str(path)) from None
    keys = {}
    for n, entry in enumerate(doc.get("key", []), start=1):
        fp = str(entry.get("fingerprint", "")).lower()
        person = str(entry.get("person", "")).strip()
        if len(fp) != 64 or any(c not in "0123456789abcdef" for c in fp) or not person:
            raise InputError(f"entry {n} needs a 64-digit hex fingerprint and a person", input_name="key",
                             file=str(path), got=repr(entry))
        keys[fp] = TrustedKey(fingerprint=fp, person=person, roles=_roles(entry.get("roles"), str(path)),
                              source=f"{path} entry {n}")
    return TrustList(keys=keys, bound=True, where=where or str(path))


def _pub_folder(folder: Path) -> TrustList:
    keys = {}
    for p in sorted([*folder.glob(f"*{PUBLIC_SUFFIX}"), *folder.glob(f"*{LEGACY_PUBLIC_SUFFIX}")]):
        try:
            fp = public_fingerprint(read_public_key(p, input_name="--keys"))
        except InputError as exc:
            if "wrong key type" in str(exc):
                continue
            raise
        keys[fp] = TrustedKey(fingerprint=fp, source=str(p))
    return TrustList(keys=keys, bound=False, where=str(folder))


def load_trust(path: str | Path) -> TrustList:
    """The trust list ``verify --keys PATH`` means.

    ``PATH`` is a ``trusted-keys.toml``; or a folder holding one (directly or in ``signoff/``, as
    a project folder does); or else a folder of ``*.public.pem`` public keys (keys without persons).
    """
    path = Path(path)
    if path.is_file():
        return read_trust_file(path)
    if not path.is_dir():
        raise InputError("not a folder of public keys or a trusted keys file", input_name="--keys", got=str(path))
    for candidate in (path / TRUST_FILE, path / SIGNOFF_DIR / TRUST_FILE):
        if candidate.is_file():
            return read_trust_file(candidate)
    return _pub_folder(path)


def trust_path(folder: str | Path) -> Path:
    """Where a project keeps its trust list."""
    return Path(folder) / SIGNOFF_DIR / TRUST_FILE


def project_trust(folder: str | Path) -> TrustList | None:
    """The project's trust list, or None when it has none."""
    path = trust_path(folder)
    return read_trust_file(path, where=f"{SIGNOFF_DIR}/{TRUST_FILE}") if path.is_file() else None


def trust_key(folder: str | Path, *, public: str | Path, person: str, roles: list[str],
              create: bool = False) -> TrustedKey:
    """Add the public key file ``public`` to the project's trust list, bound to ``person`` and ``roles``.

    ``create`` allows a folder that is not a project (a shared trust list kept elsewhere).

    Raises
    ------
    InputError
        Unreadable key, empty person, unknown role, or the key listed already.
    """
    folder = Path(folder)
    if not create and not any((folder / name).is_file() for name in (COVER_FILE, OLD_COVER_FILE)):
        raise ProjectError(f"is not a project folder (no {COVER_FILE})", input_name=str(folder))
    if not isinstance(person, str) or not person.strip():
        raise InputError("must be a name", input_name="--person", got=repr(person))
    roles = list(dict.fromkeys(roles))
    _roles(roles, "--role")
    fp = public_fingerprint(read_public_key(public))
    path = trust_path(folder)
    if path.is_file():
        existing = read_trust_file(path)
        if fp in existing.keys:
            raise InputError(f"that key is listed already, for {existing.keys[fp].person}", input_name="--key",
                             got=str(public), hint=f"Edit {path} by hand to change its entry")
        doc = tomlkit.parse(path.read_text(encoding="utf-8"))
    else:
        doc = tomlkit.document()
        doc.add(tomlkit.comment("Keys allowed to sign this project: fingerprint (SHA-256 of the public key), "
                                "person, roles."))
        doc.add(tomlkit.comment("Add entries with 'latticecalc key trust'. Commit this file with the project."))
    table = tomlkit.table()
    table["fingerprint"] = fp
    table["person"] = person.strip()
    table["roles"] = roles
    if "key" not in doc:
        doc["key"] = tomlkit.aot()
    doc["key"].append(table)
    write_text_atomic(path, tomlkit.dumps(doc))
    return TrustedKey(fingerprint=fp, person=person.strip(), roles=tuple(roles), source=str(path))


__all__ = ["TRUST_FILE", "TrustList", "TrustedKey", "load_trust", "project_trust", "public_fingerprint",
           "read_trust_file", "trust_key", "trust_path"]
