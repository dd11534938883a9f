"""Build the two demo planning workbooks of prepkit.

Both places are invented: Vellmora, a mid-size city of about 250,000 people,
and Tamsett Hollow, a small town of about 8,000. Every figure is invented for
the demo; where a figure sits inside a published range the "Source or note"
cell of the workbook says so.

Scenario names and descriptions, and every note that quotes a figure of the
plan, are written by the functions of the "Story" section from the same
objects the plan holds (dates from the measures' ``date`` values, doses from
their numbers), so the words cannot drift from the figures.

Run from the repository root::

    .venv/bin/python sample_workbooks/build_samples.py [OUTDIR]

The plans are built as :class:`prepkit.plan.Plan` objects first
(:func:`vellmora_plan`, :func:`tamsett_hollow_plan`) so the tests can check
them without reading a workbook back.
"""

from __future__ import annotations

import os
import sys
from collections.abc import Sequence
from pathlib import Path

HERE = Path(__file__).resolve().parent
if str(HERE) not in sys.path:  # the parts below, also when this file is loaded by path
    sys.path.insert(0, str(HERE))

from sample_story import DAY0, admitted_per_ill, icu_share_overall  # noqa: E402
from sample_tamsett import tamsett_hollow_notes, tamsett_hollow_plan  # noqa: E402
from sample_vellmora import vellmora_notes, vellmora_plan  # noqa: E402

VELLMORA_FILE = "vellmora_city.xlsx"
TAMSETT_FILE = "tamsett_hollow.xlsx"

#: Document date stored in the sample workbooks (2026-12-01 00:00 UTC).
SAMPLE_DATE_EPOCH = 1_796_083_200

__all__ = [
    "DAY0", "SAMPLE_DATE_EPOCH", "admitted_per_ill", "build", "icu_share_overall", "main",
    "tamsett_hollow_notes", "tamsett_hollow_plan", "vellmora_notes", "vellmora_plan",
]


def build(outdir: Path = HERE) -> list[Path]:
    """Write both workbooks into ``outdir``; returns their paths."""
    from prepkit.workbook.template import write_workbook

    outdir.mkdir(parents=True, exist_ok=True)
    written = []
    for filename, make, notes in (
        (VELLMORA_FILE, vellmora_plan, vellmora_notes),
        (TAMSETT_FILE, tamsett_hollow_plan, tamsett_hollow_notes),
    ):
        plan = make()
        path = outdir / filename
        write_workbook(path, plan, notes(plan))
        written.append(path)
    return written


def main(argv: Sequence[str] | None = None) -> int:
    args = list(sys.argv[1:] if argv is None else argv)
    outdir = Path(args[0]) if args else HERE
    # A fixed document date, so rebuilding unchanged plans gives identical files.
    os.environ.setdefault("SOURCE_DATE_EPOCH", str(SAMPLE_DATE_EPOCH))
    for path in build(outdir):
        print(f"wrote {path}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())

