"""The whole-job fuzzer (``benchmarks/fuzz_pipeline.py``) counts what it should.

A short seeded run must add up (every workbook in exactly one outcome) and
reach the model; failures injected into the engine (a NaN, people appearing
from nowhere, a plain exception) and a case over the time limit in a worker
process must each be counted and their workbooks kept. The checks the
fuzzer applies (finite, non-negative, population conserved) are properties
of every compartment model (common practice, no source).
"""

from __future__ import annotations

import math
import re
import sys
from pathlib import Path
from typing import Any

import pytest

BENCHMARKS = Path(__file__).resolve().parents[2] / "benchmarks"
sys.path.insert(0, str(BENCHMARKS))

import fuzz_pipeline as fp  # noqa: E402  (benchmarks/ is put on the path just above)
from fuzz_cells import load_bases  # noqa: E402

import prepkit.scenarios.runs  # noqa: E402

pytestmark = pytest.mark.slow  # runs the whole-job fuzzer

BASES = ("small_plan", "tamsett_hollow")
COUNT = 12
INJECTED = 5
SEED = 5


def _settings(out: Path, **changes: Any) -> fp.Settings:
    values: dict[str, Any] = dict(seed=SEED, bases=BASES, ensemble_share=1.0,
                                  ensemble_draws=4, timeout_s=120.0, out=out)
    values.update(changes)
    return fp.Settings(**values)


def _assert_adds_up(t: fp.Tally, count: int = COUNT) -> None:
    assert t.workbooks + t.unsaveable == count
    assert t.workbooks == t.refused + t.model_ok + t.model_refused + t.tracebacks + t.hangs
    after_read = sum(n for key, n in t.traceback_stages.items() if not key.endswith(" read"))
    assert t.read_ok == t.model_ok + t.model_refused + after_read
    assert t.nonfinite + t.nonconserved <= 2 * t.model_ok
    fields = dict(re.findall(r"(\w+)=(\d+)", t.last_line()))
    assert int(fields["workbooks"]) == t.workbooks and int(fields["hangs"]) == t.hangs
    assert list(fields)[:9] == ["workbooks", "read_ok", "refused", "model_ok", "model_refused",
                                "tracebacks", "hangs", "nonfinite", "nonconserved"]


def test_seeded_run_adds_up_and_reaches_the_model(tmp_path: Path) -> None:
    tally = fp.fuzz(_settings(tmp_path / "failures"), COUNT, workers=0)
    _assert_adds_up(tally)
    assert tally.model_ok >= COUNT // 3  # range mutations keep most plans readable
    assert tally.ensembles >= 1
    assert (tally.tracebacks, tally.hangs, tally.nonfinite, tally.nonconserved) == (0, 0, 0, 0)
    assert not (tmp_path / "failures").exists()
    assert tally.report(_settings(tmp_path), 0)[-1] == tally.last_line()


def test_cases_are_reproducible(tmp_path: Path) -> None:
    settings = _settings(tmp_path)
    bases = load_bases(BASES, BENCHMARKS.parent / "sample_workbooks")
    first = [fp.make_case(settings, bases, i) for i in range(COUNT)]
    again = [fp.make_case(settings, bases, i) for i in range(COUNT)]
    assert [[c.text for c in case.changes] for case in first] == [
        [c.text for c in case.changes] for case in again]
    other = fp.make_case(_settings(tmp_path, seed=SEED + 1), bases, 0)
    assert [c.text for c in other.changes] != [c.text for c in first[0].changes]


def _patched(monkeypatch: pytest.MonkeyPatch, spoil: Any) -> None:
    real = prepkit.scenarios.runs.run_plan

    def run_plan(plan: Any, **kwargs: Any) -> Any:
        results = real(plan, **kwargs)
        spoil(plan, results.scenarios[0].with_interventions.daily)
        return results

    monkeypatch.setattr(prepkit.scenarios.runs, "run_plan", run_plan)


def test_injected_nan_is_counted_as_nonfinite(tmp_path: Path,
                                              monkeypatch: pytest.MonkeyPatch) -> None:
    def spoil(plan: Any, daily: Any) -> None:
        daily.iloc[3, daily.columns.get_loc("ward_demand_beds")] = math.nan

    _patched(monkeypatch, spoil)
    tally = fp.fuzz(_settings(tmp_path / "failures", ensemble_share=0.0), INJECTED, workers=0)
    _assert_adds_up(tally, INJECTED)
    assert tally.model_ok > 0 and tally.nonfinite == tally.model_ok
    assert tally.nonconserved == 0 and tally.tracebacks == 0
    notes = sorted((tmp_path / "failures").glob("*.txt"))
    assert len(notes) == tally.nonfinite
    assert "ward_demand_beds" in notes[0].read_text(encoding="utf-8")


def test_people_from_nowhere_are_counted_as_nonconserved(
        tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    def spoil(plan: Any, daily: Any) -> None:
        daily["susceptible_persons"] += 0.01 * plan.population

    _patched(monkeypatch, spoil)
    tally = fp.fuzz(_settings(tmp_path / "failures", ensemble_share=0.0), INJECTED, workers=0)
    _assert_adds_up(tally, INJECTED)
    assert tally.model_ok > 0 and tally.nonconserved == tally.model_ok
    assert tally.nonfinite == 0


def test_plain_exception_is_a_counted_traceback(tmp_path: Path,
                                                monkeypatch: pytest.MonkeyPatch) -> None:
    def run_plan(plan: Any, **kwargs: Any) -> Any:
        raise RuntimeError("injected fault")

    monkeypatch.setattr(prepkit.scenarios.runs, "run_plan", run_plan)
    tally = fp.fuzz(_settings(tmp_path / "failures"), INJECTED, workers=0)
    _assert_adds_up(tally, INJECTED)
    assert tally.read_ok > 0 and tally.model_ok == tally.model_refused == 0
    assert tally.tracebacks == tally.read_ok == tally.traceback_stages["traceback at model"]
    saved = sorted((tmp_path / "failures").glob("*-traceback.xlsx"))
    assert len(saved) == tally.tracebacks
    note = saved[0].with_suffix(".txt").read_text(encoding="utf-8")
    assert "RuntimeError: injected fault" in note and "changes:" in note


def test_case_over_the_time_limit_in_a_worker_is_killed_and_counted(tmp_path: Path) -> None:
    # The limit is far below what building and reading a workbook takes.
    tally = fp.fuzz(_settings(tmp_path / "failures", timeout_s=0.05), 1, workers=1)
    _assert_adds_up(tally, 1)
    assert tally.hangs == tally.workbooks == 1
    note = next((tmp_path / "failures").glob("*-hang.txt")).read_text(encoding="utf-8")
    assert "over the time limit" in note and note.startswith("case 0 from ")
