"""Command line: the only place that prints and sets exit codes.

Exit codes: 0 success; 2 a problem with the input (workbook mistakes, a file
that cannot be read, wrong arguments); 1 an internal fault (reported in one
line; set ``PREPKIT_DEBUG=1`` to see the traceback); 130 interrupted.
"""

from __future__ import annotations

import argparse
import os
import sys
from collections.abc import Callable, Sequence
from pathlib import Path

from prepkit import __version__
from prepkit.errors import PrepkitError, WorkbookError

EXIT_OK = 0
EXIT_INTERNAL = 1
EXIT_INPUT = 2
EXIT_INTERRUPTED = 130


def _parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(
        prog="prepkit",
        description=(
            "Outbreak planning scenarios for emergency planners: reads a planning workbook, "
            "runs age-structured scenarios with and without measures, and writes a briefing "
            "pack. Results are a planning aid, not a forecast."
        ),
    )
    p.add_argument("--version", action="version", version=f"prepkit {__version__}")
    sub = p.add_subparsers(dest="command", metavar="COMMAND")

    t = sub.add_parser("template", help="write a blank planning workbook")
    t.add_argument("path", type=Path, help="where to write the .xlsx file")
    t.add_argument("--force", action="store_true", help="overwrite an existing file")

    c = sub.add_parser("check", help="read a workbook and list every problem, or summarise it")
    c.add_argument("workbook", type=Path)

    r = sub.add_parser("run", help="run every scenario and write the briefing pack")
    r.add_argument("workbook", type=Path)
    r.add_argument("-o", "--outdir", type=Path, default=None,
                   help="folder for the pack (default: <workbook name>-pack beside it)")
    r.add_argument("--summary-json", type=Path, default=None, metavar="PATH",
                   help="also write every metric as JSON to PATH")
    r.add_argument("--draws", type=int, default=None,
                   help="uncertainty draws per scenario (overrides the workbook; 0 = none)")
    r.add_argument("--summary-only", action="store_true",
                   help="compute the metrics and write only the JSON summary")
    r.add_argument("-q", "--quiet", action="store_true", help="print nothing but errors")
    r.add_argument("--scheduler", default=None, metavar="ADDRESS",
                   help="run the uncertainty draws on the Dask cluster at ADDRESS "
                        "(e.g. tcp://scheduler-host:8786); needs prepkit[cluster]")

    w = sub.add_parser("watch", help="build the pack, then rebuild it on every save")
    w.add_argument("workbook", type=Path)
    w.add_argument("-o", "--outdir", type=Path, default=None,
                   help="folder for the pack (default: <workbook name>-pack beside it)")
    w.add_argument("--draws", type=int, default=None,
                   help="uncertainty draws per scenario (overrides the workbook; 0 = none)")

    d = sub.add_parser("demo", help="run the bundled sample city and write its pack")
    d.add_argument("outdir", type=Path, nargs="?", default=Path("prepkit-demo"))
    d.add_argument("-q", "--quiet", action="store_true", help="print nothing but errors")
    d.add_argument("--draws", type=int, default=None, help="override the uncertainty draws")
    return p


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``prepkit`` command."""
    parser = _parser()
    try:
        args = parser.parse_args(argv)
    except SystemExit as exc:  # argparse exits 2 on usage errors, 0 on --help
        return int(exc.code or 0)
    if args.command is None:
        parser.print_help()
        return EXIT_INPUT
    try:
        return _dispatch(args)
    except KeyboardInterrupt:
        print("prepkit: interrupted; earlier outputs were left as they were.", file=sys.stderr)
        return EXIT_INTERRUPTED
    except WorkbookError as exc:
        from prepkit.workbook.describe import describe_problems

        print(describe_problems(exc), file=sys.stderr)
        return EXIT_INPUT
    except PrepkitError as exc:
        print(f"prepkit: {exc}", file=sys.stderr)
        return EXIT_INPUT
    except Exception as exc:  # the last line of defence: never a traceback for users
        if os.environ.get("PREPKIT_DEBUG"):
            raise
        print(
            f"prepkit: internal error ({type(exc).__name__}: {exc}). Please report it with the "
            "workbook; set PREPKIT_DEBUG=1 to see the details.",
            file=sys.stderr,
        )
        return EXIT_INTERNAL


def _dispatch(args: argparse.Namespace) -> int:
    if args.command == "template":
        return _template(args.path, force=args.force)
    if args.command == "check":
        return _check(args.workbook)
    if args.command == "run":
        return _run(args)
    if args.command == "demo":
        return _demo(args)
    if args.command == "watch":
        return _watch(args)
    raise AssertionError(args.command)


def _template(path: Path, *, force: bool) -> int:
    from prepkit.outputs import atomic_write_with
    from prepkit.workbook.template import write_workbook

    if path.exists() and not force:
        print(f"prepkit: {path} already exists; use --force to replace it.", file=sys.stderr)
        return EXIT_INPUT
    if path.suffix.lower() != ".xlsx":
        print(f"prepkit: the template must be an .xlsx file, not {path.name!r}.", file=sys.stderr)
        return EXIT_INPUT
    atomic_write_with(path, write_workbook)
    print(f"Wrote a blank planning workbook to {path}.")
    print("Fill the shaded cells, then run: prepkit check " + str(path))
    return EXIT_OK


def _check(workbook: Path) -> int:
    from prepkit.workbook.describe import describe_plan, describe_problems
    from prepkit.workbook.reader import read_plan_with_warnings

    try:
        plan, warnings = read_plan_with_warnings(workbook)
    except WorkbookError as exc:
        print(describe_problems(exc))
        return EXIT_INPUT
    print(describe_plan(plan, warnings))
    return EXIT_OK


def _run(args: argparse.Namespace) -> int:
    from prepkit.pipeline import RunOptions, run_workbook

    options = RunOptions(
        outdir=args.outdir,
        summary_json=args.summary_json,
        draws=args.draws,
        summary_only=args.summary_only,
        quiet=args.quiet,
        scheduler=args.scheduler,
    )
    report = run_workbook(args.workbook, options, say=_sayer(args.quiet))
    if not args.quiet:
        print(report)
    return EXIT_OK


def _demo(args: argparse.Namespace) -> int:
    from prepkit.pipeline import RunOptions, run_demo

    options = RunOptions(outdir=args.outdir, draws=args.draws, quiet=args.quiet)
    report = run_demo(options, say=_sayer(args.quiet))
    if not args.quiet:
        print(report)
    return EXIT_OK


def _watch(args: argparse.Namespace) -> int:
    from prepkit.pipeline import RunOptions, run_workbook
    from prepkit.watch import watch_workbook

    if not args.workbook.is_file():
        print(f"prepkit: there is no workbook at {args.workbook}.", file=sys.stderr)
        return EXIT_INPUT
    options = RunOptions(outdir=args.outdir, draws=args.draws, quiet=True)

    def build() -> str:
        return run_workbook(args.workbook, options, say=_sayer(True))

    watch_workbook(args.workbook, build, say=print)
    return EXIT_OK


def _sayer(quiet: bool) -> Callable[[str], None]:
    def say(message: str) -> None:
        if not quiet:
            print(message, file=sys.stderr)

    return say


def entry() -> None:
    """Console-script entry point: run, flush, and leave without interpreter teardown.

    Tearing down numba, weasyprint, matplotlib and pandas at exit takes about half a
    second and does nothing useful here: every output has already been written,
    synced to disk and renamed into place before :func:`main` returns.
    """
    code = main()
    for stream in (sys.stdout, sys.stderr):
        try:
            stream.flush()
        except (BrokenPipeError, OSError):  # e.g. output piped into `head`
            pass
    os._exit(code)


if __name__ == "__main__":  # pragma: no cover
    entry()
