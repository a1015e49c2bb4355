"""Sub-commands ``sign``, ``keygen``, ``trust``, ``verify``, ``review`` and ``compare`` of ``latticecalc``.

Each turns its arguments into one library call; errors are LatticeCalcErrors, which ``cli.main``
prints and turns into exit status 2. ``verify`` exits 1 when the package does not verify.
"""

from __future__ import annotations

import argparse


def _sign(args: argparse.Namespace) -> int:
    from latticecalc.project.signoff.records import sign_project

    rec = sign_project(args.dir, role=args.role, name=args.name, comment=args.comment or "", key=args.key,
                       qualification=args.qualification or "")
    keyed = f", signed with key {rec['signature']['key_id']}" if rec.get("signature") else ""
    print(f"Signed {rec['role']} by {rec['name']} at {rec['time']} (sign-off {rec['seq']}{keyed}); "
          f"fingerprint {rec['fingerprint']}. Export again to show it in the package.")
    return 0


def _keygen(args: argparse.Namespace) -> int:
    from latticecalc.project.signoff.keys import generate_keypair

    files = generate_keypair(args.out, name=args.name)
    print(f"Private key (keep it secret): {files.private}")
    print(f"Public key (give it to whoever verifies): {files.public}")
    print(f"Key id: {files.key_id}")
    print(f"Key fingerprint: {files.fingerprint}")
    return 0


def _trust(args: argparse.Namespace) -> int:
    from latticecalc.project.signoff.trust import trust_key, trust_path

    entry = trust_key(args.dir, public=args.key, person=args.person, roles=args.role)
    print(f"Trusted key {entry.fingerprint[:16]}… of {entry.person} for {', '.join(entry.roles)} "
          f"in {trust_path(args.dir)}")
    return 0


def _verify(args: argparse.Namespace) -> int:
    from latticecalc.project.signoff.verify import verify_package

    report = verify_package(args.package, keys=args.keys, require_keys=args.require_keys)
    print(report.text())
    return 0 if report.ok else 1


def _review_add(args: argparse.Namespace) -> int:
    from latticecalc.project.signoff.review import add_comment

    c = add_comment(args.dir, step=args.step, author=args.author, text=args.text)
    print(f"{c.id} added against {c.step}")
    return 0


def _review_reply(args: argparse.Namespace) -> int:
    from latticecalc.project.signoff.review import reply_comment

    c = reply_comment(args.dir, args.comment, author=args.author, text=args.text)
    print(f"{c.id}: reply added ({c.status})")
    return 0


def _review_close(args: argparse.Namespace) -> int:
    from latticecalc.project.signoff.review import close_comment

    c = close_comment(args.dir, args.comment, author=args.author, text=args.text or "")
    print(f"{c.id}: closed")
    return 0


def _review_list(args: argparse.Namespace) -> int:
    from latticecalc.project.signoff.review import list_comments

    comments = list_comments(args.dir, include_closed=not args.open)
    if not comments:
        print("No review comments.")
    for c in comments:
        print(f"{c.id:<5} {c.status:<7} {c.step:<28} {c.author}: {c.text}")
        for r in c.replies:
            print(f"{'':<42}↳ {r['author']}: {r['text']}")
    return 0


def _compare(args: argparse.Namespace) -> int:
    from latticecalc.project.signoff.revisions import compare_revisions

    print("\n".join(compare_revisions(args.dir, a=args.a, b=args.b).lines()))
    return 0


def register(sub: argparse._SubParsersAction) -> None:
    """Add the sign-off sub-commands to the ``latticecalc`` parser."""
    p = sub.add_parser("sign", help="add a sign-off (prepared, checked, approved) for the project's current run")
    p.add_argument("dir", help="project folder")
    p.add_argument("--role", required=True, choices=["prepared", "checked", "approved"])
    p.add_argument("--name", required=True, help="who signs")
    p.add_argument("--comment", default="", help="remark kept with the sign-off")
    p.add_argument("--key", default=None, help="Ed25519 private key file (from 'latticecalc keygen')")
    p.add_argument("--qualification", default="",
                   help="the limit of an approval, shown beside the status (required to approve over a failing check)")
    p.set_defaults(func=_sign)

    p = sub.add_parser("keygen", help="make an Ed25519 key pair for keyed sign-offs")
    p.add_argument("--out", required=True, help="folder for the key files (created if missing)")
    p.add_argument("--name", default="signing", help="file name of the pair: NAME.key and NAME.pub")
    p.set_defaults(func=_keygen)

    p = sub.add_parser("trust", help="list a public key in the project's trusted keys: whose it is, what it may sign")
    p.add_argument("dir", help="project folder")
    p.add_argument("--key", required=True, help="the signer's public key file (NAME.pub from 'latticecalc keygen')")
    p.add_argument("--person", required=True, help="whose key it is (sign-offs with it must bear this name)")
    p.add_argument("--role", required=True, action="append", choices=["prepared", "checked", "approved"],
                   help="a role the key may sign (repeat for more)")
    p.set_defaults(func=_trust)

    p = sub.add_parser("verify", help="check an exported package (HTML or its JSON): content, seal and sign-offs")
    p.add_argument("package", help="the exported .html package or its .json")
    p.add_argument("--keys", default=None,
                   help="trusted keys: a trusted-keys.toml, a project or folder holding one, or a folder of *.pub")
    p.add_argument("--require-keys", action="store_true",
                   help="with --keys, fail on a sign-off made without a key (by default it is reported as a note)")
    p.set_defaults(func=_verify)

    p = sub.add_parser("review", help="review comments against step ids: add, reply, close, list")
    rsub = p.add_subparsers(dest="review_command", required=True, metavar="ACTION")
    r = rsub.add_parser("add", help="add a comment against a step id")
    r.add_argument("dir", help="project folder")
    r.add_argument("--step", required=True, help="step id shown in the package, e.g. strut.f1-cc")
    r.add_argument("--author", required=True)
    r.add_argument("--text", required=True)
    r.set_defaults(func=_review_add)
    r = rsub.add_parser("reply", help="reply to a comment")
    r.add_argument("dir", help="project folder")
    r.add_argument("comment", help="comment id, e.g. R1")
    r.add_argument("--author", required=True)
    r.add_argument("--text", required=True)
    r.set_defaults(func=_review_reply)
    r = rsub.add_parser("close", help="close a comment")
    r.add_argument("dir", help="project folder")
    r.add_argument("comment", help="comment id, e.g. R1")
    r.add_argument("--author", required=True)
    r.add_argument("--text", default="", help="closing remark")
    r.set_defaults(func=_review_close)
    r = rsub.add_parser("list", help="list the comments")
    r.add_argument("dir", help="project folder")
    r.add_argument("--open", action="store_true", help="only the open ones")
    r.set_defaults(func=_review_list)

    p = sub.add_parser("compare", help="list inputs and key results that changed between two revisions")
    p.add_argument("dir", help="project folder")
    p.add_argument("--from", dest="a", required=True, help="earlier revision, e.g. A")
    p.add_argument("--to", dest="b", required=True, help="later revision, e.g. B")
    p.set_defaults(func=_compare)
