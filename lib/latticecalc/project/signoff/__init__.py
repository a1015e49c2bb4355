"""Checker review and sign-off: fingerprints, sign-off records, review comments, revisions, verify.

Names are imported on first use, so that ``latticecalc verify`` does not load the export and
calculation machinery it does not need.
"""

from importlib import import_module

_WHERE = {
    "package_extras": "extras",
    "fingerprint_content": "fingerprint", "fingerprint_of": "fingerprint",
    "generate_keypair": "keys",
    "sign_project": "records",
    "add_comment": "review", "reply_comment": "review", "close_comment": "review", "list_comments": "review",
    "compare_revisions": "revisions",
    "trust_key": "trust", "same_person": "identity",
    "seal_package": "verify", "verify_package": "verify",
}


def __getattr__(name: str):
    if name in _WHERE:
        return getattr(import_module(f"latticecalc.project.signoff.{_WHERE[name]}"), name)
    raise AttributeError(f"module 'latticecalc.project.signoff' has no attribute {name!r}")


__all__ = sorted(_WHERE)
