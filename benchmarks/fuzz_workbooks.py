"""Fuzz the workbook reader with seeded random mutations of valid workbooks.

Each workbook is a valid filled workbook (simple contacts, contact matrices)
or the blank template, changed by one to five random mutations (cell values
of every kind, swapped cells, deleted or inserted rows and columns, deleted
or renamed sheets; see ``tests/workbook/test_workbook_fuzz.py``). Every outcome must
be a plan that meets the model's invariants or a WorkbookError whose problems
each name a sheet; anything else is counted as unexpected and shown.

Usage::

    .venv/bin/python benchmarks/fuzz_workbooks.py [N] [--seed S]

The last line reads ``fuzz: workbooks=<n> valid=<v> rejected=<r> unexpected=<u>``.
"""

from __future__ import annotations

import argparse
import datetime as dt
import io
import random
import sys
import tempfile
import time
import traceback
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "tests"))
sys.path.insert(0, str(ROOT / "tests" / "workbook"))

from test_workbook_fuzz import (  # noqa: E402  (tests/ is put on the path just above)
    MUTATION_KINDS,
    SPECIAL_VALUES,
    Mutation,
    _matrix_plan,
    _plan,
    base_workbook,
    check_outcome,
    mutated_file,
)

from prepkit.errors import WorkbookError  # noqa: E402
from prepkit.workbook.template import build_workbook  # noqa: E402


def random_value(rng: random.Random) -> object:
    """A value of a random kind, as planners might type or paste it."""
    kind = rng.randrange(7)
    if kind == 0:
        return rng.choice(SPECIAL_VALUES)
    if kind == 1:
        return rng.randint(-10**6, 10**6)
    if kind == 2:
        return rng.choice((-1.0, 1.0)) * 10 ** rng.uniform(-6, 12)
    if kind == 3:
        alphabet = "abc XYZ-+%;,.0123456789\u00e9\u2013"
        return "".join(rng.choice(alphabet) for _ in range(rng.randrange(0, 30)))
    if kind == 4:
        return dt.datetime(2020, 1, 1) + dt.timedelta(days=rng.randint(-50_000, 50_000))
    if kind == 5:
        return rng.random()
    return None


def random_mutation(rng: random.Random) -> Mutation:
    return Mutation(kind=rng.choice(MUTATION_KINDS), sheet=rng.randrange(41),
                    pick=rng.randrange(10_001), other=rng.randrange(10_001),
                    value=random_value(rng))


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("n", nargs="?", type=int, default=2000, help="workbooks to try")
    parser.add_argument("--seed", type=int, default=20270101, help="random seed")
    args = parser.parse_args(argv)
    rng = random.Random(args.seed)

    blank = io.BytesIO()
    build_workbook().save(blank)
    bases = (base_workbook(_plan()), base_workbook(_matrix_plan()), blank.getvalue())
    weights = (6, 3, 1)

    valid = rejected = unexpected = unsaveable = unreadable = 0
    shown = 0
    start = time.perf_counter()
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        for i in range(args.n):
            base = rng.choices(bases, weights)[0]
            changes = [random_mutation(rng) for _ in range(rng.randint(1, 5))]
            path = mutated_file(base, changes, folder)
            if path is None:
                unsaveable += 1
                continue
            try:
                outcome = check_outcome(path)
            except Exception:  # counting every escape is the point of the benchmark
                unexpected += 1
                if shown < 5:
                    shown += 1
                    print(f"--- unexpected exception in workbook {i}: {changes}")
                    traceback.print_exc()
                continue
            if isinstance(outcome, WorkbookError):
                rejected += 1
                if outcome.problems[0].sheet == "":
                    unreadable += 1  # openpyxl wrote a file it cannot load itself
            else:
                valid += 1
    elapsed = time.perf_counter() - start
    tried = valid + rejected + unexpected
    print(f"mutated workbooks: {args.n} (seed {args.seed}); not saveable by openpyxl, "
          f"skipped: {unsaveable}")
    print(f"valid plans:          {valid}")
    print(f"workbook errors:      {rejected} (of which {unreadable} files that openpyxl wrote "
          "but cannot load itself)")
    print(f"unexpected failures:  {unexpected}")
    print(f"run time:             {elapsed:.1f} s ({1000 * elapsed / max(1, args.n):.0f} ms "
          "per workbook)")
    print(f"fuzz: workbooks={tried} valid={valid} rejected={rejected} unexpected={unexpected}")
    return 1 if unexpected else 0


if __name__ == "__main__":
    raise SystemExit(main())
