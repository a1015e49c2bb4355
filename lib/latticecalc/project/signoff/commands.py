"""Sub-commands ``sign``, ``key``, ``verify``, ``query`` and ``changes`` of ``latticecalc``.

``key`` has the actions ``new`` and ``trust``; ``query`` has ``raise``, ``answer``, ``settle`` and ``list``.

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


def _key_new(args: argparse.Namespace) -> int:
    from latticecalc.project.signoff.keys import generate_keypair

    files = generate_keypair(args.folder, name=args.holder)
    print(f"Signing key of {args.holder} (keep it secret): {files.private}")
    print(f"Public key (give it to whoever verifies): {files.public}")
    print(f"Key mark: {files.key_id}")
    print(f"Key fingerprint (SHA-256): {files.fingerprint}")
    return 0


def _key_trust(args: argparse.Namespace) -> int:
    from latticecalc.project.signoff.trust import trust_key, trust_path

    entry = trust_key(args.dir, public=args.public, person=args.person, roles=args.role)
    print(f"Trusted key {entry.fingerprint[:16]}… of {entry.person} for {', '.join(entry.roles)} "
          f"in {trust_path(args.dir)}")
    return 0


def _verify(args: argparse.Namespace) -> int:
    from latticecalc.project.signoff.verify import verify_package

    report = verify_package(args.package, keys=args.keys, require_keys=args.require_keys)
    print(report.text())
    return 0 if report.ok else 1


def _query_raise(args: argparse.Namespace) -> int:
    from latticecalc.project.signoff.review import add_comment

    c = add_comment(args.dir, step=args.at, author=args.by, text=args.text)
    print(f"{c.id} raised at {c.step}")
    return 0


def _query_answer(args: argparse.Namespace) -> int:
    from latticecalc.project.signoff.review import reply_comment

    c = reply_comment(args.dir, args.query, author=args.by, text=args.text)
    print(f"{c.id}: answered ({'still open' if c.status == 'open' else c.status})")
    return 0


def _query_settle(args: argparse.Namespace) -> int:
    from latticecalc.project.signoff.review import close_comment

    c = close_comment(args.dir, args.query, author=args.by, text=args.text or "")
    print(f"{c.id}: settled by {c.closed_by}")
    return 0


def _query_list(args: argparse.Namespace) -> int:
    from latticecalc.project.signoff.review import list_comments

    comments = list_comments(args.dir, include_closed=not args.open)
    if not comments:
        print("No checker queries.")
    for c in comments:
        state = "open" if c.status == "open" else "settled"
        print(f"{c.id:<6} {state:<8} at {c.step}")
        print(f"         {c.author}: {c.text}")
        for r in c.replies:
            print(f"         {'settled' if r.get('closing') else 'answer'} by {r['author']}: {r['text']}")
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
    p.add_argument("--key", default=None, help="signing key file (HOLDER.signing.pem from 'latticecalc key new')")
    p.add_argument("--qualification", default="",
                   help="the limit of an approval, shown beside the status (required to approve over a failing check)")
    p.set_defaults(func=_sign)

    p = sub.add_parser("key", help="signing keys: make a pair, or list a public key as trusted for a project")
    ksub = p.add_subparsers(dest="key_command", required=True, metavar="ACTION")
    k = ksub.add_parser("new", help="make an Ed25519 key pair (PEM files) for keyed sign-offs")
    k.add_argument("--holder", required=True, help="whose key it is; names the files HOLDER.signing.pem / .public.pem")
    k.add_argument("--folder", required=True, help="folder for the key files (created if missing)")
    k.set_defaults(func=_key_new)
    k = ksub.add_parser("trust", help="list a public key in the project's trusted keys: whose it is, what it may sign")
    k.add_argument("dir", help="project folder")
    k.add_argument("--public", required=True, help="the signer's public key file (HOLDER.public.pem)")
    k.add_argument("--person", required=True, help="whose key it is (sign-offs with it must bear this name)")
    k.add_argument("--role", required=True, action="append", choices=["prepared", "checked", "approved"],
                   help="a role the key may sign (repeat for more)")
    k.set_defaults(func=_key_trust)

    p = sub.add_parser("verify", help="check an exported package (HTML or its JSON): content, seal and sign-offs")
    p.add_argument("package", help="the exported .html package or its .json")
    p.add_argument("--keys", default=None, help="trusted keys: a trusted-keys.toml, a project or folder holding "
                                                "one, or a folder of *.public.pem")
    p.add_argument("--require-keys", action="store_true",
                   help="with --keys, fail on a sign-off made without a key (by default it is reported as a note)")
    p.set_defaults(func=_verify)

    p = sub.add_parser("query", help="checker queries against step ids: raise, answer, settle, list")
    qsub = p.add_subparsers(dest="query_command", required=True, metavar="ACTION")
    q = qsub.add_parser("raise", help="raise a query at a step id of the last export")
    q.add_argument("dir", help="project folder")
    q.add_argument("--at", required=True, help="step id shown in the package, e.g. strut.f1-cc")
    q.add_argument("--by", required=True, help="who raises it")
    q.add_argument("--text", required=True)
    q.set_defaults(func=_query_raise)
    q = qsub.add_parser("answer", help="answer a query (it stays open)")
    q.add_argument("dir", help="project folder")
    q.add_argument("query", help="query id, e.g. CQ-1")
    q.add_argument("--by", required=True)
    q.add_argument("--text", required=True)
    q.set_defaults(func=_query_answer)
    q = qsub.add_parser("settle", help="settle a query (its author or a checker)")
    q.add_argument("dir", help="project folder")
    q.add_argument("query", help="query id, e.g. CQ-1")
    q.add_argument("--by", required=True)
    q.add_argument("--text", default="", help="settling remark")
    q.set_defaults(func=_query_settle)
    q = qsub.add_parser("list", help="list the queries")
    q.add_argument("dir", help="project folder")
    q.add_argument("--open", action="store_true", help="only the open ones")
    q.set_defaults(func=_query_list)

    p = sub.add_parser("changes", help="what changed between two revisions: verdicts first, then inputs and results")
    p.add_argument("dir", help="project folder")
    p.add_argument("--from", dest="a", required=True, help="earlier revision, e.g. A")
    p.add_argument("--to", dest="b", required=True, help="later revision, e.g. B")
    p.set_defaults(func=_compare)
