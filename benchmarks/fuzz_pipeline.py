"""Fuzz the whole job: mutated workbooks through reading, checking, the model and the summary.

Each case starts from a valid base workbook (the two sample workbooks and
the two fixture plans of the tests) and applies one to six range mutations
(``benchmarks/fuzz_cells.py``: inputs moved across their documented ranges,
extremes and Low/High columns included) and, in a share of the cases, one or
two layout-breaking mutations of the reader fuzzer
(``benchmarks/fuzz_workbooks.py``). Every workbook that reads goes through
``prepkit check``'s description, :func:`prepkit.scenarios.runs.run_plan` and
:func:`prepkit.pipeline.summary.summary_dict`, and a share of them through a small
uncertainty ensemble (``benchmarks/fuzz_checks.py``). Each case runs in a
worker process under a time limit; a case over it is a hang, its worker is
killed and replaced.

Counted: tracebacks (any exception that is not a prepkit error, a worker
that dies, an input file changed), hangs, non-finite results (NaN, infinity
or a value below zero beyond the tolerance) and non-conserved results
(people in all compartments, deaths included, not adding up to the
population). The workbook of each such case is saved under ``--out`` with a
text file naming the changes and the finding.

Case ``i`` of seed ``s`` is the same workbook on every machine and with any
number of workers. Usage::

    .venv/bin/python benchmarks/fuzz_pipeline.py --count 2000 --workers 2 --seed 20270101

``--first K`` starts at case K, so a long run can be split over several sittings: runs of
``--first 0 --count 5000`` and ``--first 5000 --count 5000`` cover the same 10,000 workbooks
as one run of ``--count 10000``.

The last line reads ``fuzz: workbooks=<n> read_ok=.. refused=.. model_ok=..
model_refused=.. tracebacks=.. hangs=.. nonfinite=.. nonconserved=.. seconds=..``.
"""

from __future__ import annotations

import argparse
import multiprocessing
import os
import random
import shutil
import sys
import tempfile
import time
from collections.abc import Callable, Iterator, Sequence
from dataclasses import dataclass, field
from multiprocessing.connection import wait
from pathlib import Path
from typing import Any

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
for _folder in (HERE, ROOT / "tests", ROOT / "tests" / "workbook"):
    if str(_folder) not in sys.path:
        sys.path.insert(0, str(_folder))

#: Thread settings for a fuzzing run, set by :func:`main` only (never at import, so a test
#: process that imports this module keeps its own numba and BLAS threads): one thread per
#: worker, since the workers are the parallelism and competing threads make each case many
#: times slower.
THREAD_SETTINGS = ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS",
                   "NUMBA_NUM_THREADS")

from fuzz_cells import Base, Change, load_bases, range_changes  # noqa: E402
from fuzz_checks import JobResult, failed, run_job  # noqa: E402
from fuzz_tally import Tally  # noqa: E402
from fuzz_workbooks import random_mutation  # noqa: E402
from test_workbook_fuzz import mutated_file  # noqa: E402

BASES = ("vellmora_city", "tamsett_hollow", "small_plan", "small_matrix_plan")
WEIGHTS = {"vellmora_city": 3, "tamsett_hollow": 3, "small_plan": 2, "small_matrix_plan": 2}
BREAK_SHARE = 0.25
"""Share of cases that also get layout-breaking mutations [fraction]."""


@dataclass(frozen=True)
class Settings:
    """What every case needs to rebuild its workbook and run it."""

    seed: int
    bases: tuple[str, ...] = BASES
    ensemble_share: float = 0.1
    ensemble_draws: int = 8
    timeout_s: float = 120.0
    out: Path = Path("fuzz-failures")


@dataclass(frozen=True)
class Case:
    """One mutated workbook: its base, its changes, and whether it gets an ensemble."""

    index: int
    base: Base
    changes: tuple[Change, ...]
    ensemble: bool


def make_case(settings: Settings, bases: Sequence[Base], index: int) -> Case:
    """Case ``index`` of the run; the same for the same seed, whoever builds it."""
    rng = random.Random(f"{settings.seed}:{index}")
    base = rng.choices(list(bases), [WEIGHTS.get(b.name, 1) for b in bases])[0]
    changes: list[Change] = []
    for _ in range(rng.choice((1, 1, 2, 2, 3, 4, 6))):
        changes += range_changes(rng, base)
    if rng.random() < BREAK_SHARE:
        for _ in range(rng.randint(1, 2)):
            m = random_mutation(rng)
            changes.append(Change(mutation=m, text=f"break: {m.kind} sheet {m.sheet} cell "
                                                   f"{m.pick}/{m.other} value {m.value!r:.60}"))
    return Case(index=index, base=base, changes=tuple(changes),
                ensemble=rng.random() < settings.ensemble_share)


def run_case(case: Case, settings: Settings, folder: Path,
             on_stage: Callable[[str], None] | None = None) -> JobResult:
    """Build the case's workbook in ``folder`` and run the job on it."""
    started = time.perf_counter()
    path = mutated_file(case.base.data, [c.mutation for c in case.changes], folder)
    if path is None:
        result = JobResult(outcome="unsaveable", stage="write")
    else:
        result = run_job(path, ensemble_draws=settings.ensemble_draws if case.ensemble else 0,
                         on_stage=on_stage)
    result.seconds = time.perf_counter() - started
    if result.seconds > settings.timeout_s:
        result.outcome, result.message = "hang", f"took {result.seconds:.1f} s"
    if path is not None and failed(result):
        save_failure(case, result, path, settings.out)
    return result


def save_failure(case: Case, result: JobResult, path: Path, out: Path) -> None:
    """Keep the workbook and a note of the changes and the finding in ``out``."""
    out.mkdir(parents=True, exist_ok=True)
    kind = result.outcome if result.outcome in ("traceback", "hang") else (
        "nonfinite" if result.nonfinite or result.negative else "nonconserved")
    stem = out / f"case-{case.index:06d}-{kind}"
    shutil.copyfile(path, stem.with_suffix(".xlsx"))
    lines = [f"case {case.index} from {case.base.name}; outcome {result.outcome} at stage "
             f"{result.stage}; {result.seconds:.1f} s", "changes:"]
    lines += [f"  {c.text}" for c in case.changes]
    for title, items in (("non-finite", result.nonfinite), ("negative", result.negative),
                         ("not conserved", result.nonconserved)):
        lines += [f"{title}:"] + [f"  {item}" for item in items[:20]] if items else []
    if result.message:
        lines += ["message:", result.message]
    stem.with_suffix(".txt").write_text("\n".join(lines) + "\n", encoding="utf-8")


# ---- running cases ------------------------------------------------------------------------

OnResult = Callable[[int, JobResult, list[str]], None]
"""Called with the case index, its result and the tags of its range mutations."""


def _tags(case: Case) -> list[str]:
    return [c.tag for c in case.changes if c.tag]


def _serve(conn: Any, settings: Settings) -> None:
    """Worker process: build the bases, then run each case index sent until told to stop."""
    bases = load_bases(settings.bases, ROOT / "sample_workbooks")
    with tempfile.TemporaryDirectory(prefix="prepkit-fuzz-") as tmp:
        try:
            conn.send("ready")
            while (index := conn.recv()) is not None:
                case = make_case(settings, bases, index)
                result = run_case(case, settings, Path(tmp),
                                  on_stage=lambda stage: conn.send(("stage", stage)))
                conn.send((index, result, _tags(case)))
        except (EOFError, BrokenPipeError):
            pass  # the parent stopped; so do we


def run_cases(settings: Settings, cases: range, workers: int, on_result: OnResult) -> None:
    """Run the cases numbered in ``cases``, in this process (``workers=0``) or in worker processes.

    In this process the time limit is applied after the fact (a case over it
    counts as a hang); in workers, an overdue case is killed at the limit.
    """
    if workers <= 0:
        bases = load_bases(settings.bases, ROOT / "sample_workbooks")
        with tempfile.TemporaryDirectory(prefix="prepkit-fuzz-") as tmp:
            for index in cases:
                case = make_case(settings, bases, index)
                on_result(index, run_case(case, settings, Path(tmp)), _tags(case))
        return
    _Pool(settings, workers).run(cases, on_result)


@dataclass
class _Worker:
    process: Any
    conn: Any
    ready: bool = False
    index: int | None = None
    stage: str = "read"
    deadline: float = 0.0


@dataclass
class _Pool:
    settings: Settings
    size: int
    workers: list[_Worker] = field(default_factory=list)
    bases: tuple[Base, ...] | None = None

    def start(self) -> _Worker:
        ctx = multiprocessing.get_context("spawn")
        parent, child = ctx.Pipe()
        process = ctx.Process(target=_serve, args=(child, self.settings), daemon=True)
        process.start()
        child.close()
        return _Worker(process=process, conn=parent)

    def run(self, cases: range, on_result: OnResult) -> None:
        todo: Iterator[int] = iter(cases)
        unassigned = left = len(cases)
        try:
            while left:
                while len(self.workers) < min(self.size, unassigned):
                    self.workers.append(self.start())
                for w in self.workers:
                    if w.ready and w.index is None and (index := next(todo, None)) is not None:
                        w.index, w.stage = index, "read"
                        w.deadline = time.monotonic() + self.settings.timeout_s
                        w.conn.send(index)
                        unassigned -= 1
                busy = [w.deadline for w in self.workers if w.index is not None]
                wait_s = max(0.0, min(busy) - time.monotonic()) if busy else 5.0
                for conn in wait([w.conn for w in self.workers], min(wait_s, 5.0)):
                    w = next(w for w in self.workers if w.conn is conn)
                    try:
                        message = w.conn.recv()
                    except (EOFError, OSError):
                        left -= self.replace(w, on_result, "traceback", "the worker process "
                                             f"died (exit code {w.process.exitcode})")
                        continue
                    if message == "ready":
                        w.ready = True
                    elif message[0] == "stage":
                        w.stage = message[1]
                    else:
                        w.index = None
                        on_result(*message)
                        left -= 1
                for w in list(self.workers):
                    if w.index is not None and time.monotonic() > w.deadline:
                        left -= self.replace(w, on_result, "hang", "over the time limit of "
                                             f"{self.settings.timeout_s:g} s")
        finally:
            for w in self.workers:
                if w.index is None and w.ready:
                    w.conn.send(None)
                else:
                    w.process.kill()  # busy or starting: only left so when interrupted
            for w in self.workers:
                w.process.join(timeout=10)
                if w.process.is_alive():
                    w.process.kill()

    def replace(self, w: _Worker, on_result: OnResult, outcome: str, message: str) -> int:
        """Kill a worker (another starts when cases remain), record its case, save its workbook."""
        w.process.kill()
        w.process.join()
        if w.index is None:
            raise RuntimeError(f"a fuzz worker stopped before taking a case: {message}")
        self.workers.remove(w)
        if self.bases is None:
            self.bases = load_bases(self.settings.bases, ROOT / "sample_workbooks")
        case = make_case(self.settings, self.bases, w.index)
        result = JobResult(outcome=outcome, stage=w.stage, message=message,
                           seconds=self.settings.timeout_s if outcome == "hang" else 0.0)
        with tempfile.TemporaryDirectory(prefix="prepkit-fuzz-") as tmp:
            path = mutated_file(case.base.data, [c.mutation for c in case.changes], Path(tmp))
            if path is not None:
                save_failure(case, result, path, self.settings.out)
        on_result(w.index, result, _tags(case))
        return 1


def fuzz(settings: Settings, count: int, workers: int,
         progress: Callable[[Tally], None] | None = None, first: int = 0) -> Tally:
    """Run ``count`` cases from case number ``first`` on and count what happened.

    Runs over consecutive ranges of one seed add up to one run over their union.
    """
    tally = Tally()
    started = time.perf_counter()

    def on_result(index: int, result: JobResult, tags: list[str]) -> None:
        tally.add(index, result, tags)
        tally.seconds = time.perf_counter() - started
        if progress is not None:
            progress(tally)

    run_cases(settings, range(first, first + count), workers, on_result)
    tally.seconds = time.perf_counter() - started
    return tally


def main(argv: list[str] | None = None) -> int:
    for name in THREAD_SETTINGS:
        os.environ.setdefault(name, "1")
    parser = argparse.ArgumentParser(description=(__doc__ or "").splitlines()[0])
    parser.add_argument("--count", type=int, default=2000, help="mutated workbooks to try")
    parser.add_argument("--seed", type=int, default=20270101, help="random seed")
    parser.add_argument("--first", type=int, default=0,
                        help="number of the first case (to continue an earlier run of the seed)")
    parser.add_argument("--workers", type=int, default=2,
                        help="worker processes (0 runs every case in this process)")
    parser.add_argument("--timeout", type=float, default=120.0,
                        help="time limit of one case [s]; a case over it is a hang")
    parser.add_argument("--out", type=Path, default=Path("fuzz-failures"),
                        help="folder for the workbooks of failing cases")
    parser.add_argument("--bases", default=",".join(BASES), help="base workbooks, comma separated")
    parser.add_argument("--ensemble-share", type=float, default=0.1,
                        help="share of cases that also run the uncertainty ensemble [fraction]")
    parser.add_argument("--draws", type=int, default=8, help="ensemble draws per scenario variant")
    args = parser.parse_args(argv)
    settings = Settings(seed=args.seed, bases=tuple(args.bases.split(",")),
                        ensemble_share=args.ensemble_share, ensemble_draws=args.draws,
                        timeout_s=args.timeout, out=args.out)
    step = max(1, args.count // 20)

    def progress(tally: Tally) -> None:
        done = tally.workbooks + tally.unsaveable
        if done % step == 0:
            print(f"... {done} of {args.count}: {tally.last_line()[6:]}", file=sys.stderr,
                  flush=True)

    tally = fuzz(settings, args.count, args.workers, progress, first=args.first)
    print("\n".join(tally.report(settings, args.workers)))
    return 1 if tally.tracebacks or tally.hangs or tally.nonfinite or tally.nonconserved else 0


if __name__ == "__main__":
    raise SystemExit(main())
