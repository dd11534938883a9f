"""Counters and the printed report of a whole-job fuzz run (``benchmarks/fuzz_pipeline.py``)."""

from __future__ import annotations

import re
from collections import Counter
from dataclasses import dataclass, field
from typing import TYPE_CHECKING

from fuzz_checks import JobResult, failed

if TYPE_CHECKING:
    from fuzz_pipeline import Settings


@dataclass
class Tally:
    """Counters of a fuzz run; each case is counted once in ``workbooks`` and one outcome."""

    workbooks: int = 0
    unsaveable: int = 0
    read_ok: int = 0
    refused: int = 0
    model_ok: int = 0
    model_refused: int = 0
    tracebacks: int = 0
    hangs: int = 0
    nonfinite: int = 0
    negative: int = 0
    nonconserved: int = 0
    ensembles: int = 0
    seconds: float = 0.0
    slowest: tuple[float, int] = (0.0, -1)
    traceback_stages: Counter[str] = field(default_factory=Counter)
    refusals: Counter[str] = field(default_factory=Counter)
    tags_all: Counter[str] = field(default_factory=Counter)
    tags_bad: Counter[str] = field(default_factory=Counter)
    findings: Counter[str] = field(default_factory=Counter)
    shown: list[str] = field(default_factory=list)

    def add(self, index: int, result: JobResult, tags: list[str]) -> None:
        """Count one case."""
        if result.outcome == "unsaveable":
            self.unsaveable += 1
            return
        self.workbooks += 1
        self.slowest = max(self.slowest, (result.seconds, index))
        self.read_ok += result.outcome != "refused" and result.stage != "read"
        self.refused += result.outcome == "refused"
        self.model_ok += result.outcome == "model_ok"
        self.model_refused += result.outcome == "model_refused"
        self.tracebacks += result.outcome == "traceback"
        self.hangs += result.outcome == "hang"
        self.ensembles += result.ensemble and result.outcome == "model_ok"
        if result.outcome == "model_refused":
            head = result.message.split(";")[0][:90]
            self.refusals[re.sub(r"\bband \S+$|\bband \S+(?=[ ,])", "band ...", head)] += 1
        if result.outcome in ("traceback", "hang"):
            self.traceback_stages[f"{result.outcome} at {result.stage}"] += 1
        bad_numbers = bool(result.nonfinite or result.negative)
        self.nonfinite += bad_numbers
        self.negative += bool(result.negative)
        self.nonconserved += bool(result.nonconserved)
        if result.stage != "read":
            self.tags_all.update(set(tags))
        self.findings.update({_finding(text) for text in
                              result.nonfinite + result.negative + result.nonconserved})
        if failed(result) and result.stage != "read":
            self.tags_bad.update(set(tags))
            if len(self.shown) < 5:
                first = (result.nonfinite + result.negative + result.nonconserved
                         + [result.message.strip().splitlines()[-1] if result.message else ""])
                self.shown.append(f"case {index}: {result.outcome} at {result.stage}: {first[0]}")

    def last_line(self) -> str:
        """The one-line summary."""
        return (f"fuzz: workbooks={self.workbooks} read_ok={self.read_ok} refused={self.refused} "
                f"model_ok={self.model_ok} model_refused={self.model_refused} "
                f"tracebacks={self.tracebacks} hangs={self.hangs} nonfinite={self.nonfinite} "
                f"nonconserved={self.nonconserved} seconds={self.seconds:.0f}")

    def report(self, settings: Settings, workers: int) -> list[str]:
        """Every figure of the run, one line each, the last line last."""
        per = 1000 * self.seconds / max(1, self.workbooks + self.unsaveable)
        lines = [
            f"mutated workbooks:   {self.workbooks} (seed {settings.seed}; bases "
            f"{', '.join(settings.bases)}); not saveable by openpyxl, skipped: {self.unsaveable}",
            f"read as plans:       {self.read_ok}; refused by the reader: {self.refused}",
            f"finished the job:    {self.model_ok} (of which {self.ensembles} with an ensemble "
            f"of {settings.ensemble_draws} draws); refused by the model: {self.model_refused}",
            f"tracebacks, hangs:   {self.tracebacks}, {self.hangs} (time limit "
            f"{settings.timeout_s:g} s) {dict(self.traceback_stages) or ''}",
            f"non-finite results:  {self.nonfinite} (of which {self.negative} below zero); "
            f"not conserved: {self.nonconserved}",
            f"slowest case:        {self.slowest[0]:.1f} s (case {self.slowest[1]})",
            f"run time:            {self.seconds:.0f} s ({per:.0f} ms per workbook, "
            f"{workers} worker(s))",
        ]
        lines += [f"model refusal ({n}): {text}" for text, n in self.refusals.most_common(6)]
        lines += [f"first failure: {text}" for text in self.shown]
        for text, n in self.findings.most_common(8):
            lines.append(f"found in {n} case(s): {text}")
        for tag, n in self.tags_bad.most_common(10):
            lines.append(f"input in failing cases: {tag} in {n} of them "
                         f"({self.tags_all[tag]} of the {self.read_ok} plans that read)")
        if self.shown:
            lines.append(f"failing workbooks and notes: {settings.out}")
        return [*lines, self.last_line()]


def _finding(text: str) -> str:
    """A finding without its scenario name and figures, for counting alike ones together."""
    text = re.sub(r"^'.*?' (with|without|effect)(: | )", "", text)
    return re.sub(r" \(\d+ values\)$| down to .*$| = .*$| by up to .*$| on \d+ day.*$", "",
                  text)
