"""The review date: its default, its check, the cover and footers, and the run's warning."""

from __future__ import annotations

import dataclasses
import datetime as dt
import json
from pathlib import Path

import pytest
from conftest import Editor, small_plan

from prepkit.pipeline import run as pipeline
from prepkit.plan import Plan
from prepkit.plan.records import Observation
from prepkit.report.words.pack import provenance_line
from prepkit.report.words.review import review_words
from prepkit.workbook.sheets import PLAN

LATE = dt.datetime(2027, 6, 1, tzinfo=dt.UTC)
EARLY = dt.datetime(2026, 12, 1, tzinfo=dt.UTC)


def test_the_default_is_four_weeks_after_the_last_figures_or_day_0() -> None:
    plan = small_plan()
    bare = dataclasses.replace(plan, observed=())
    assert bare.review_date == plan.details.day0 + dt.timedelta(days=28)
    seen = dataclasses.replace(plan, observed=(
        Observation(date=dt.date(2027, 2, 1), admissions=1.0),
        Observation(date=dt.date(2027, 2, 9), admissions=2.0)))
    assert seen.review_date == dt.date(2027, 3, 9)
    given = dataclasses.replace(seen, details=dataclasses.replace(
        seen.details, review_by=dt.date(2027, 2, 20)))
    assert given.review_date == dt.date(2027, 2, 20)


def test_every_footer_says_review_by_and_scenario_not_forecast() -> None:
    plan = dataclasses.replace(small_plan(), observed=())
    line = provenance_line(plan, version="0", generated=EARLY)
    assert "review by 1 Feb 2027: scenario, not forecast" in line
    assert not review_words(plan, EARLY).passed
    late = review_words(plan, LATE)
    assert late.passed and "1 Feb 2027, has passed" in late.caution


def test_a_review_date_before_day_0_is_refused_with_its_cell(editor: Editor) -> None:
    cell = editor.item(PLAN, "Review by")
    cell.value = dt.date(2026, 12, 1)
    problem = editor.only_problem()
    assert problem.sheet == PLAN and problem.cell == cell.coordinate
    assert "a date after day 0 (2027-01-04)" in problem.expected


@pytest.mark.parametrize(("when", "warned"), [(EARLY, False), (LATE, True)])
def test_the_run_warns_once_the_review_date_has_passed(
        plan_path: Path, plan: Plan, tmp_path: Path, monkeypatch: pytest.MonkeyPatch,
        when: dt.datetime, warned: bool) -> None:
    monkeypatch.setenv("SOURCE_DATE_EPOCH", str(int(when.timestamp())))
    said: list[str] = []
    json_path = tmp_path / "summary.json"
    pipeline.run_workbook(plan_path, pipeline.RunOptions(
        outdir=tmp_path / "pack", summary_json=json_path, draws=0, summary_only=True),
        said.append)
    warnings = [m for m in said if m.startswith("Warning: The workbook's review date")]
    assert len(warnings) == (1 if warned else 0), said
    review = json.loads(json_path.read_text())["plan"]["review_by"]
    last = max(o.date for o in plan.observed)
    assert review == (last + dt.timedelta(days=28)).isoformat() == plan.review_date.isoformat()
