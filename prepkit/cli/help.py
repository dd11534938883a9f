"""Words of the command line's help: option texts, exit codes and the help layout.

Kept apart from :mod:`prepkit.cli.main` so that the command line itself stays short;
nothing here loads the model.
"""

from __future__ import annotations

import argparse
import textwrap

__all__ = [
    "DRAWS_HELP",
    "EXIT_INPUT",
    "EXIT_INTERNAL",
    "EXIT_INTERRUPTED",
    "EXIT_OK",
    "FORCE_HELP",
    "OUTDIR_HELP",
    "QUIET_HELP",
    "WORKBOOK_HELP",
    "Formatter",
    "epilog",
    "exit_codes",
    "para",
]

EXIT_OK = 0
EXIT_INTERNAL = 1
EXIT_INPUT = 2
EXIT_INTERRUPTED = 130

def exit_codes(done: str = "done", *, interrupted: bool = True) -> str:
    """The exit codes section of a command's help, ``done`` saying what 0 means."""
    lines = [
        "exit codes:",
        f"  {EXIT_OK}    {done}",
        f"  {EXIT_INPUT}    a problem with the input: mistakes in the workbook (each listed with",
        "       its sheet and cell), a file that cannot be read, a wrong option or output",
        "       folder, or the machine (a full disk, too little memory)",
        f"  {EXIT_INTERNAL}    an internal error (set PREPKIT_DEBUG=1 to see the details)",
    ]
    if interrupted:
        lines.append(f"  {EXIT_INTERRUPTED}  interrupted with Ctrl-C; earlier outputs are left as "
                     "they were")
    return "\n".join(lines)


WORKBOOK_HELP = "the planning workbook (.xlsx); it is only read, never changed"
OUTDIR_HELP = (
    "folder for the pack (default: <workbook name>-pack beside the workbook, e.g. "
    "my-plan-pack for my-plan.xlsx); it must be new, empty or hold an earlier pack, as it is "
    "replaced whole"
)
DRAWS_HELP = (
    "uncertainty draws per scenario and variant (default: the workbook's 'Uncertainty draws' "
    "on the Plan sheet; 0 = no uncertainty ranges)"
)
QUIET_HELP = "print nothing but errors (default: progress messages and a closing summary)"
FORCE_HELP = (
    "replace files of the earlier pack that were changed since prepkit wrote them, such as "
    "an annotated results.xlsx (default: stop and name them); files prepkit did not write are "
    "never replaced"
)


class Formatter(argparse.RawDescriptionHelpFormatter):
    """Help with the examples and exit codes as written, and no line broken at a hyphen."""

    def _split_lines(self, text: str, width: int) -> list[str]:
        return textwrap.wrap(" ".join(text.split()), width, break_on_hyphens=False,
                             break_long_words=False)


def para(text: str) -> str:
    """``text`` wrapped to 79 columns, never at a hyphen."""
    return textwrap.fill(text, 79, break_on_hyphens=False, break_long_words=False)


def epilog(examples: str, codes: str | None = None) -> str:
    """Examples, then the exit codes (``codes``, or the usual ones)."""
    return f"{examples}\n\n{exit_codes() if codes is None else codes}"
