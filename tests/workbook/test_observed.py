"""The Observed sheet: local admissions, beds in use, deaths and test positivity, daily or weekly.

Each check reads an edited workbook back and asserts the problem names the
sheet and cell, what was expected and what was found (common practice, no
source: the project's rule for workbook messages).
"""

from __future__ import annotations

import dataclasses
import datetime as dt
from pathlib import Path
from typing import Any

import pytest
from conftest import Editor, small_plan

from prepkit.errors import Problem
from prepkit.plan import FitSettings, Range3
from prepkit.plan.records import Observation, admissions_per_day
from prepkit.workbook.reader import read_plan_with_warnings
from prepkit.workbook.sheets import ITEM_HEADER, OBSERVED
from prepkit.workbook.template import write_workbook

OBS = OBSERVED


def _at(problems: tuple[Problem, ...], cell: Any) -> list[Problem]:
    return [p for p in problems if (p.sheet, p.cell) == (cell.parent.title, cell.coordinate)]


def _only_at(editor: Editor, cell: Any) -> Problem:
    problems = editor.problems()
    assert [(p.sheet, p.cell) for p in problems] == [(OBS, cell.coordinate)], problems
    return problems[0]


def test_every_observed_figure_and_the_period_survive_a_round_trip(tmp_path: Path) -> None:
    plan = small_plan()
    week = dt.timedelta(days=7)
    first = dt.date(2027, 1, 10)
    observed = (
        Observation(date=first, admissions=21.0, icu_admissions=3.0, ward_census=12.0,
                    icu_census=2.0, deaths=1.0, positive_share=0.085),
        Observation(date=first + week, admissions=34.0, icu_admissions=None, ward_census=None,
                    icu_census=4.0, deaths=None, positive_share=0.12),
        Observation(date=first + 3 * week, admissions=None, icu_admissions=5.0,
                    ward_census=30.0, icu_census=None, deaths=2.0, positive_share=None),
    )
    plan = dataclasses.replace(
        plan, observed=observed,
        details=dataclasses.replace(plan.details, observed_period="weekly"))
    path = tmp_path / "weekly.xlsx"
    write_workbook(path, plan)
    read, warnings = read_plan_with_warnings(path)
    assert warnings == ()
    assert read.details.observed_period == "weekly"
    assert read.observed == observed


@pytest.mark.filterwarnings("ignore:File may not be readable")
def test_an_observed_sheet_without_the_period_block_means_daily_figures(editor: Editor) -> None:
    # A workbook from before the period existed: the Observed sheet holds only its table.
    ws = editor.wb[OBS]
    header = next(c.row for c in ws["A"] if c.value == ITEM_HEADER)
    table = next(c.row for c in ws["A"] if c.value == "Date")
    ws.delete_rows(header, table - header)
    read, warnings = editor.read()
    assert warnings == ()
    assert read.details.observed_period == "daily"
    assert read.fit == FitSettings()  # fit when there are enough figures, no change date
    assert len(read.observed) == 3


@pytest.mark.filterwarnings("ignore:File may not be readable")
def test_an_observed_sheet_from_before_the_fit_settings_reads_with_their_defaults(
    editor: Editor,
) -> None:
    ws = editor.wb[OBS]
    first = editor.item(OBS, "Use the figures to").row
    ws.delete_rows(first, 4)
    read, warnings = editor.read()
    assert read.fit == FitSettings()
    assert {w.field for w in warnings} == {
        "Use the figures to", "Spread after that day, relative to before",
        "Infections at day 0 may be off by a factor of"}
    assert all("default" in w.expected for w in warnings)


def test_the_fit_settings_survive_a_round_trip(tmp_path: Path) -> None:
    plan = small_plan()
    fit = FitSettings(method="draw", change_date=dt.date(2027, 1, 11),
                      change_factor=Range3(low=0.3, central=0.6, high=1.1),
                      initial_infections_factor=20.0)
    path = tmp_path / "fit.xlsx"
    write_workbook(path, dataclasses.replace(plan, fit=fit))
    read, _ = read_plan_with_warnings(path)
    assert read.fit == fit


def test_a_change_date_must_lie_inside_the_observed_dates(editor: Editor) -> None:
    cell = editor.item(OBS, "Spread changed on")
    cell.value = dt.date(2027, 1, 10)  # the first observed date: nothing before it to compare
    editor.item(OBS, "Spread after that day, relative to before", "low").value = 0.3
    editor.item(OBS, "Spread after that day, relative to before", "high").value = 1.2
    got = _only_at(editor, cell)
    assert got.expected.startswith("a date after the first observed date (2027-01-10) and at "
                                   "most the last (2027-01-12)")


def test_a_change_date_needs_a_range_for_the_change(editor: Editor) -> None:
    editor.item(OBS, "Spread changed on").value = dt.date(2027, 1, 11)
    high = editor.item(OBS, "Spread after that day, relative to before", "high")
    got = _only_at(editor, high)
    assert got.expected.startswith("Low and High of the change")
    assert got.found == "Low = High = 1"


def test_a_change_date_is_not_checked_when_the_figures_are_only_drawn(editor: Editor) -> None:
    editor.item(OBS, "Use the figures to").value = "Only draw them"
    editor.item(OBS, "Spread changed on").value = dt.date(2027, 1, 11)
    read, warnings = editor.read()
    assert read.fit.method == "draw" and warnings == ()


def test_observed_dates_must_be_in_order(editor: Editor) -> None:
    editor.table(OBS, "Date", dt.date(2027, 1, 10)).value = dt.date(2027, 1, 13)
    cell = editor.table(OBS, "Date", dt.date(2027, 1, 11))
    got = _only_at(editor, cell)
    assert got.expected == "dates in order, earliest first"
    assert got.found == f"2027-01-11 after 2027-01-13 (row {cell.row - 1})"


def test_observed_dates_must_lie_within_the_plan(editor: Editor) -> None:
    # Day 0 of the test plan is 2027-01-04 and it runs 200 days.
    early = editor.table(OBS, "Date", dt.date(2027, 1, 10))
    early.value = dt.date(2026, 12, 31)
    got = _only_at(editor, early)
    assert got.expected == "a date within the plan, from day 0 (2027-01-04) to 2027-07-23"
    assert "2026-12-31" in got.found


def test_weekly_totals_are_one_row_a_week(editor: Editor) -> None:
    editor.item(OBS, "Figures are").value = "Weekly totals"
    problems = editor.problems()
    assert len(problems) == 2  # 2027-01-11 and 2027-01-12 are 1 day after the row before
    assert {p.cell for p in problems} == {
        editor.table(OBS, "Date", dt.date(2027, 1, d)).coordinate for d in (11, 12)}
    assert all(p.expected.startswith("weekly totals one row a week") for p in problems)
    assert problems[0].found == "2027-01-11, 1 day after 2027-01-10"


def test_weekly_totals_may_skip_a_week(editor: Editor) -> None:
    editor.item(OBS, "Figures are").value = "Weekly totals"
    editor.table(OBS, "Date", dt.date(2027, 1, 11)).value = dt.date(2027, 1, 17)
    editor.table(OBS, "Date", dt.date(2027, 1, 12)).value = dt.date(2027, 1, 31)
    read, warnings = editor.read()
    assert read.details.observed_period == "weekly"
    assert warnings == ()


def test_icu_admissions_cannot_exceed_all_admissions(editor: Editor) -> None:
    cell = editor.table(OBS, "Of which straight to ICU [persons]", dt.date(2027, 1, 12))
    cell.value = 5
    got = _only_at(editor, cell)
    assert got.expected == "at most the new admissions of that row (3)"
    assert got.found == "5"


def test_more_patients_than_beds_plus_surge_is_a_warning_and_the_plan_is_used(
    editor: Editor,
) -> None:
    # 400 ward beds + 50 surge beds in the test plan.
    cell = editor.table(OBS, "Ward patients [persons]", dt.date(2027, 1, 11))
    cell.value = 460
    read, warnings = editor.read()
    assert [(w.sheet, w.cell, w.severity) for w in warnings] == [(OBS, cell.coordinate, "warning")]
    assert warnings[0].expected.startswith("at most the ward beds plus surge beds (450)")
    assert read.observed[1].ward_census == 460.0


@pytest.mark.parametrize(("value", "found"), [(-2, "-2"), ("many", '"many"')])
def test_counts_must_be_numbers_of_at_least_zero(editor: Editor, value: object,
                                                 found: str) -> None:
    cell = editor.table(OBS, "Deaths in hospital [persons]", dt.date(2027, 1, 12))
    cell.value = value
    got = _only_at(editor, cell)
    assert got.expected == "a number of at least 0"
    assert found in got.found


def test_every_observed_problem_is_reported_at_once(editor: Editor) -> None:
    bad_icu = editor.table(OBS, "Of which straight to ICU [persons]", dt.date(2027, 1, 12))
    bad_icu.value = 9
    bad_share = editor.table(OBS, "Tests positive [%]", dt.date(2027, 1, 10))
    bad_share.value = 1.7
    early = editor.table(OBS, "Date", dt.date(2027, 1, 11))
    early.value = dt.date(2027, 1, 1)
    problems = editor.problems()
    assert {p.cell for p in problems} >= {bad_icu.coordinate, bad_share.coordinate,
                                          early.coordinate}


def test_weekly_admissions_are_drawn_as_the_daily_mean_of_their_week() -> None:
    # Hand-worked: 70 admissions in the week ending 2027-01-17 are 10 a day, drawn on the
    # middle day of that week (2027-01-14); daily figures are drawn as they are.
    rows = [Observation(date=dt.date(2027, 1, 17), admissions=70.0),
            Observation(date=dt.date(2027, 1, 24), ward_census=5.0)]
    assert admissions_per_day(rows, "weekly") == [(dt.date(2027, 1, 14), 10.0)]
    assert admissions_per_day(rows, "daily") == [(dt.date(2027, 1, 17), 70.0)]
