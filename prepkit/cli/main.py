"""Command line: the only place that prints and sets exit codes.

Exit codes: 0 success; 2 a problem with the input (workbook mistakes, a file
that cannot be read, wrong arguments); 1 an internal fault (reported in one
line; set ``PREPKIT_DEBUG=1`` to see the traceback); 130 interrupted.
"""

from __future__ import annotations

import argparse
import os
import shlex
import shutil
import sys
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import TYPE_CHECKING

from prepkit import __version__
from prepkit.cli.env import in_ci, on_terminal
from prepkit.cli.help import (
    DRAWS_HELP,
    EXIT_INPUT,
    EXIT_INTERNAL,
    EXIT_INTERRUPTED,
    EXIT_OK,
    FORCE_HELP,
    OUTDIR_HELP,
    QUIET_HELP,
    WORKBOOK_HELP,
)
from prepkit.cli.help import Formatter as _Formatter
from prepkit.cli.help import epilog as _epilog
from prepkit.cli.help import exit_codes as _exit_codes
from prepkit.cli.help import para as _para
from prepkit.errors import PrepkitError, WorkbookError

__all__ = ["DEMO_OUTDIR", "EXIT_INPUT", "EXIT_INTERNAL", "EXIT_INTERRUPTED", "EXIT_OK", "entry",
           "main", "typed_command"]

#: Default folder of ``prepkit demo`` (the same as :data:`prepkit.pipeline.demo.DEMO_OUTDIR`;
#: kept here so that ``--help`` does not load the model).
DEMO_OUTDIR = Path("prepkit-demo")


if TYPE_CHECKING:
    _Commands = argparse._SubParsersAction[argparse.ArgumentParser]


def _parser() -> argparse.ArgumentParser:
    formatter = _Formatter
    p = argparse.ArgumentParser(
        prog="prepkit",
        description=_para(
            "Outbreak planning scenarios for emergency planners: reads a planning workbook, "
            "runs age-structured scenarios with and without measures, and writes a briefing "
            "pack. Results are a planning aid, not a forecast."
        ),
        epilog=_epilog(
            "examples:\n"
            "  prepkit demo                          the sample city's pack, in prepkit-demo/\n"
            "  prepkit template my-plan.xlsx         a blank planning workbook\n"
            "  prepkit run my-plan.xlsx -o my-pack   every scenario, into a briefing pack\n"
            "  prepkit COMMAND --help                each command's options"
        ),
        formatter_class=formatter,
    )
    p.add_argument("--version", action="version", version=f"prepkit {__version__}")
    sub = p.add_subparsers(dest="command", metavar="COMMAND")

    _add_template_and_check(sub, formatter)
    _add_run(sub, formatter)
    _add_watch_and_demo(sub, formatter)
    return p


def _add_template_and_check(sub: _Commands, formatter: type[argparse.HelpFormatter]) -> None:
    """The ``template`` and ``check`` commands."""
    t = sub.add_parser(
        "template", help="write a blank planning workbook", formatter_class=formatter,
        description=_para(
            "Write a blank planning workbook: an instructions sheet and one sheet per topic, "
            "with guidance on every input."
        ),
        epilog=_epilog("example:\n  prepkit template my-plan.xlsx"),
    )
    t.add_argument("path", type=Path,
                   help="where to write the workbook: a file name ending in .xlsx")
    t.add_argument("--force", action="store_true",
                   help="replace a file already at PATH (default: refuse to)")

    c = sub.add_parser(
        "check", help="read a workbook and list every problem, or summarise it",
        formatter_class=formatter,
        description=_para(
            "Read a planning workbook without running it: list every problem with its sheet "
            "and cell, or summarise the plan when there are none."
        ),
        epilog=_epilog("example:\n  prepkit check my-plan.xlsx"),
    )
    c.add_argument("workbook", type=Path, help=WORKBOOK_HELP)


def _add_run(sub: _Commands, formatter: type[argparse.HelpFormatter]) -> None:
    """The ``run`` command."""
    r = sub.add_parser(
        "run", help="run every scenario and write the briefing pack", formatter_class=formatter,
        description=_para(
            "Run every scenario of a planning workbook with and without its measures, with "
            "uncertainty ranges, and write the briefing pack (PDF and HTML), the results "
            "workbook and the data files."
        ),
        epilog=_epilog(
            "examples:\n"
            "  prepkit run my-plan.xlsx -o my-pack\n"
            "  prepkit run my-plan.xlsx --summary-json results.json --summary-only\n"
            "  prepkit run my-plan.xlsx --draws 20000 --scheduler tcp://SCHEDULER-HOST:8786\n"
            "    (SCHEDULER-HOST stands for the machine running your Dask scheduler)"
        ),
    )
    r.add_argument("workbook", type=Path, help=WORKBOOK_HELP)
    r.add_argument("-o", "--outdir", type=Path, default=None, help=OUTDIR_HELP)
    r.add_argument("--summary-json", type=Path, default=None, metavar="PATH",
                   help="also write every metric as JSON to PATH: a new file, or one prepkit "
                        "wrote before, outside the pack folder (default: only summary.json "
                        "inside the pack)")
    r.add_argument("--draws", type=int, default=None, metavar="N", help=DRAWS_HELP)
    r.add_argument("--summary-only", action="store_true",
                   help="compute the metrics and write only the JSON summary given by "
                        "--summary-json, no pack (default: write the whole pack)")
    r.add_argument("--no-fit", action="store_true",
                   help="do not fit the scenarios to the Observed sheet's figures; only draw "
                        "them (default: fit when the sheet asks for it)")
    r.add_argument("-q", "--quiet", action="store_true", help=QUIET_HELP)
    r.add_argument("--force", action="store_true", help=FORCE_HELP)
    r.add_argument("--scheduler", default=None, metavar="ADDRESS",
                   help="run the uncertainty draws on the Dask cluster whose scheduler is at "
                        "ADDRESS, e.g. tcp://SCHEDULER-HOST:8786; needs prepkit[cluster] "
                        "(default: on this machine's cores)")


def _add_watch_and_demo(sub: _Commands, formatter: type[argparse.HelpFormatter]) -> None:
    """The ``watch`` and ``demo`` commands."""
    w = sub.add_parser(
        "watch", help="build the pack, then rebuild it on every save", formatter_class=formatter,
        description=_para(
            "Build the pack, then rebuild it every time the workbook is saved, until stopped "
            "with Ctrl-C. A save with mistakes lists them and leaves the pack as it was."
        ),
        epilog=_epilog(
            "example:\n  prepkit watch my-plan.xlsx -o my-pack",
            _exit_codes("stopped with Ctrl-C (the last good pack stays)", interrupted=False),
        ),
    )
    w.add_argument("workbook", type=Path, help=WORKBOOK_HELP)
    w.add_argument("-o", "--outdir", type=Path, default=None, help=OUTDIR_HELP)
    w.add_argument("--draws", type=int, default=None, metavar="N", help=DRAWS_HELP)
    w.add_argument("--force", action="store_true", help=FORCE_HELP)

    d = sub.add_parser(
        "demo", help="run the bundled sample city and write its pack", formatter_class=formatter,
        description=_para(
            "Run the sample workbook of the invented city of Vellmora and write its briefing "
            "pack, with a copy of the workbook to change and run again."
        ),
        epilog=_epilog("examples:\n  prepkit demo\n  prepkit demo my-demo --draws 200"),
    )
    d.add_argument("outdir", type=Path, nargs="?", default=DEMO_OUTDIR,
                   help=f"folder for the pack and the copy of the workbook (default: "
                        f"{DEMO_OUTDIR} in the current folder)")
    d.add_argument("-q", "--quiet", action="store_true", help=QUIET_HELP)
    d.add_argument("--force", action="store_true", help=FORCE_HELP)
    d.add_argument("--draws", type=int, default=None, metavar="N",
                   help="uncertainty draws per scenario and variant (default: the number the "
                        "sample workbook gives; 0 = no uncertainty ranges)")


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
    except MemoryError:
        print("prepkit: this machine ran out of memory; ask for fewer uncertainty draws "
              "(--draws) or close other programs. Earlier outputs were left as they were.",
              file=sys.stderr)
        return EXIT_INPUT
    except OSError as exc:  # the disk, a permission: the machine's trouble, not prepkit's
        if os.environ.get("PREPKIT_DEBUG"):
            raise
        from prepkit.cli.env import os_error_message

        print(f"prepkit: {os_error_message(exc)}", file=sys.stderr)
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
    from prepkit.cli import env as cli_env

    if args.command != "check":  # the commands that stamp a time on what they write
        cli_env.check_environment()
    if args.command in ("run", "watch", "demo"):
        with cli_env.compiled_model() as note:
            if note is not None and not getattr(args, "quiet", False):
                print(note, file=sys.stderr)
            return _dispatch_command(args)
    return _dispatch_command(args)


def _dispatch_command(args: argparse.Namespace) -> int:
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
    from prepkit.base.files import atomic_write_with
    from prepkit.workbook.template import write_workbook

    if path.exists() and not force:
        print(f"prepkit: {path} already exists; use --force to replace it.", file=sys.stderr)
        return EXIT_INPUT
    if path.suffix.lower() != ".xlsx":
        print(f"prepkit: the template must be an .xlsx file, not {path.name!r}.", file=sys.stderr)
        return EXIT_INPUT
    atomic_write_with(path, write_workbook)
    print(f"Wrote a blank planning workbook to {path}.")
    print(f"Fill the shaded cells, then run: {typed_command()} check {shlex.quote(str(path))}")
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
    from prepkit.pipeline.run import RunOptions, run_workbook

    if args.summary_only and args.summary_json is None:
        print("prepkit: --summary-only: expected --summary-json PATH beside it (the summary is "
              "the only file written), found none; add --summary-json results.json",
              file=sys.stderr)
        return EXIT_INPUT
    options = RunOptions(
        outdir=args.outdir,
        summary_json=args.summary_json,
        draws=args.draws,
        summary_only=args.summary_only,
        scheduler=args.scheduler,
        force=args.force,
        quiet=args.quiet or in_ci(),
        terminal=on_terminal(),
        fit=not args.no_fit,
    )
    report = run_workbook(args.workbook, options, say=_sayer(args.quiet))
    if not args.quiet:
        print(report)
    return EXIT_OK


def _demo(args: argparse.Namespace) -> int:
    from prepkit.pipeline.demo import run_demo
    from prepkit.pipeline.run import RunOptions

    options = RunOptions(outdir=args.outdir, draws=args.draws, force=args.force,
                         quiet=args.quiet or in_ci(), terminal=on_terminal())
    report = run_demo(options, say=_sayer(args.quiet), command=typed_command())
    if not args.quiet:
        print(report)
    return EXIT_OK


def _watch(args: argparse.Namespace) -> int:
    from prepkit.pipeline.first_use import first_use_note
    from prepkit.pipeline.guard import check_draws_option
    from prepkit.pipeline.run import RunOptions, check_outdir, default_outdir, run_workbook
    from prepkit.pipeline.watch import watch_workbook
    from prepkit.workbook.source_file import read_file

    read_file(args.workbook)  # a missing file, a folder or a pipe is refused before watching
    check_draws_option(args.draws)
    outdir = args.outdir if args.outdir is not None else default_outdir(args.workbook)
    check_outdir(outdir, args.workbook, force=args.force)  # refused before watching
    options = RunOptions(outdir=outdir, draws=args.draws, quiet=True, force=args.force)

    def build() -> str:
        return run_workbook(args.workbook, options, say=_sayer(True))

    note = first_use_note()
    if note is not None:
        print(note, file=sys.stderr)
    try:
        watch_workbook(args.workbook, build, say=_say_now, outdir=outdir)
    except KeyboardInterrupt:
        print(f"Stopped watching {args.workbook.name}.")
    return EXIT_OK


def typed_command() -> str:
    """How to type ``prepkit`` so that it runs from the shell this process was started in.

    ``prepkit`` when that name on ``PATH`` is the program running now;
    otherwise the path it was started by (``.venv/bin/prepkit`` under
    ``make demo``), or ``python -m prepkit.cli.main`` when it was started that
    way.

    Returns
    -------
    str
        A command, quoted for a POSIX shell.
    """
    started = sys.argv[0] if sys.argv else ""
    script = Path(started)
    if script.name != "prepkit":
        return f"{shlex.quote(sys.executable)} -m prepkit.cli.main"
    found = shutil.which("prepkit")
    try:
        if found is not None and Path(found).resolve() == script.resolve():
            return "prepkit"
    except OSError:
        pass
    return shlex.quote(started)


def _say_now(message: str) -> None:
    """Print at once, also into a pipe or a log file (watch runs for hours)."""
    print(message, flush=True)


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
