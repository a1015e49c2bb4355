"""The ``latticecalc`` command: each sub-command turns its arguments into one library call."""

from __future__ import annotations

import argparse
import sys
from collections.abc import Callable, Sequence

from latticecalc import __version__
from latticecalc.errors import LatticeCalcError
from latticecalc.study import cli as study_cli


def _templates(args: argparse.Namespace) -> int:
    from latticecalc.project.templates import list_templates

    for t in list_templates():
        print(f"{t.name:<18} {t.description}")
    return 0


def _new(args: argparse.Namespace) -> int:
    from latticecalc.project.templates import new_project

    folder = new_project(args.dir, template=args.template)
    print(f"Created {folder} from template '{args.template}'. Edit inputs.toml and cover.toml, "
          f"then: latticecalc run {folder}")
    return 0


def _run(args: argparse.Namespace) -> int:
    from latticecalc.project.runner import run_project

    report = run_project(args.dir, timeout=args.timeout, only=args.only)
    print(f"Ran {len(report.notebooks)} notebooks in {report.seconds:.1f} s; outputs in {report.executed_dir}")
    if report.skipped:
        print(f"Partial run: skipped {', '.join(report.skipped)}. Export and sign-off refuse this project "
              "until a run without --only.")
    return 0


def _export(args: argparse.Namespace) -> int:
    from latticecalc.project.export import export_project

    report = export_project(args.dir, run=args.run, with_code=args.with_code, pdf=args.pdf, paper=args.paper)
    print(report.html)
    print(report.json)
    if report.pdf:
        print(report.pdf)
    return 0


def _refile(args: argparse.Namespace) -> int:
    from latticecalc.project.refile import refile

    report = refile(args.dir)
    for line in report.done:
        print(f"{report.folder}: {line}")
    if not report.done:
        print(f"{report.folder}: nothing to refile; its files have the current names and layout")
    return 0


def _demo(args: argparse.Namespace) -> int:
    from latticecalc.project.demo import build_demo

    report = build_demo(args.dir)
    for p in report.packages[1:]:
        print(f"also exported: {p}", file=sys.stderr)
    print(report.main_package)
    return 0


Builder = Callable[[argparse._SubParsersAction], None]


def _build_parser(extra: Sequence[Builder] = ()) -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(prog="latticecalc",
                                     description="Calculation kit for strut-lattice vibration absorber panels.")
    parser.add_argument("--version", action="version", version=f"latticecalc {__version__}")
    sub = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")

    p = sub.add_parser("templates", help="list the project templates")
    p.set_defaults(func=_templates)

    p = sub.add_parser("new", help="copy a template into a new project folder")
    p.add_argument("dir", help="new project folder (must not exist, or be empty)")
    p.add_argument("--template", required=True, help="template name (see 'latticecalc templates')")
    p.set_defaults(func=_new)

    p = sub.add_parser("run", help="execute the project's notebooks headless and save their outputs",
                       epilog="example: latticecalc run my-project --only 20 30 (the folder first)")
    p.add_argument("dir", help="project folder")
    p.add_argument("--timeout", type=int, default=1200, help="seconds allowed per cell (default 1200)")
    p.add_argument("--only", nargs="+", metavar="SECTION",
                   help="run only these sections, by number (20), stem or file name, and any they need; "
                        "export refuses a partial run")
    p.set_defaults(func=_run)

    p = sub.add_parser("export", help="write the HTML calc package and JSON of results to DIR/out/")
    p.add_argument("dir", help="project folder")
    p.add_argument("--run", action="store_true", help="run the notebooks first")
    p.add_argument("--with-code", action="store_true", help="add the notebook code as an appendix")
    p.add_argument("--pdf", action="store_true", help="also print a PDF with headless Chromium")
    p.add_argument("--paper", choices=["a4", "letter"], default=None,
                   help="paper of the PDF (default: calc.paper in cover.toml, A4 when unset)")
    p.set_defaults(func=_export)

    p = sub.add_parser("refile", help="rename and convert a project's files from an older kit's names and layout "
                                      "(project.toml -> cover.toml; template.toml's [template]/[[input]] tables)")
    p.add_argument("dir", metavar="PROJECT", help="project folder")
    p.set_defaults(func=_refile)

    p = sub.add_parser("demo", help="build, run and export the worked demo project")
    p.add_argument("dir", nargs="?", default=None, help="folder to build it in (default: a new dated folder)")
    p.set_defaults(func=_demo)

    study_cli.add_parser(sub)   # dispatches through set_defaults(func=study_cli.run)

    for build in extra:
        build(sub)
    return parser


def _extra_builders() -> list[Builder]:
    try:
        from latticecalc.project.signoff.commands import register
    except ImportError:
        return []
    return [register]


def _skip_iri_grammar() -> None:
    """Let jsonschema (imported by nbformat) start without building its IRI grammar.

    When the optional ``rfc3987_syntax`` is installed (JupyterLab brings it), importing jsonschema
    builds that grammar, about 1.4 s; notebook validation checks no IRI, and nothing else the command
    does uses it. Marking the module absent makes jsonschema leave that one format check out.
    """
    if "jsonschema" not in sys.modules:
        sys.modules.setdefault("rfc3987_syntax", None)


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``latticecalc`` console script."""
    _skip_iri_grammar()
    parser = _build_parser(_extra_builders())
    args = parser.parse_args(argv)
    try:
        return args.func(args)
    except LatticeCalcError as exc:
        print(f"latticecalc {args.command}: error: {exc}", file=sys.stderr)
        sig = getattr(exc, "signal_name", None)
        if sig:
            import signal

            # stopped by a signal: the shell's convention, 128 + its number (130 Ctrl-C, 143 SIGTERM)
            return 128 + int(getattr(signal, sig, signal.SIGTERM))
        return 2
    except KeyboardInterrupt:
        print("interrupted", file=sys.stderr)
        return 130


if __name__ == "__main__":
    sys.exit(main())
