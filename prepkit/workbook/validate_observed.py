"""Checks of the Observed table (see :mod:`prepkit.workbook.validate`).

Errors: a date twice, dates out of order, dates outside the plan, weekly rows
not 7 days apart, more ICU admissions than admissions, a change date for the
fit outside the observed dates or without a range for the change. Warning: more
outbreak patients in beds than the beds plus surge beds (the figures may be
right, for example when patients are in corridors or other hospitals' beds
count, but a planner should look).
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Mapping, Sequence

from prepkit.errors import Problem
from prepkit.workbook.cells import Got, Key, TableRow
from prepkit.workbook.validate import duplicate_keys, number_of, problem

__all__ = ["check_observed"]

DAYS_PER_WEEK = 7
"""Days between rows of weekly totals [days]."""


def check_observed(
    rows: Sequence[TableRow],
    items: Mapping[Key, Got],
    day0: dt.date | None,
    horizon: int | None,
) -> list[Problem]:
    """Observed rows: one per date, in order, inside the plan, consistent with each other.

    Parameters
    ----------
    rows : sequence of TableRow
        The Observed table.
    items : mapping
        Item inputs (the period of the figures and the bed counts).
    day0 : datetime.date or None
        Day 0 of the plan, None when unreadable (dates are then not checked
        against the plan).
    horizon : int or None
        Days simulated [days], None when unreadable.

    Returns
    -------
    list of Problem
        Errors and warnings (``severity="warning"``).
    """
    problems = duplicate_keys(rows, "observed.date", "one row per date")
    dated = [(row, row.get("observed.date")) for row in rows
             if isinstance(row.get("observed.date").value, dt.date)]
    problems += _order(dated)
    if day0 is not None and horizon is not None:
        problems += _inside(dated, day0, horizon)
    if items[("details.observed_period", "central")].value == "weekly":
        problems += _weekly(dated)
    for row in rows:
        problems += _icu_within_admissions(row)
        problems += _census_within_beds(row, items)
    problems += _change(dated, items)
    return problems


def _change(dated: Sequence[tuple[TableRow, Got]], items: Mapping[Key, Got]) -> list[Problem]:
    """A change date the fit can use: inside the observed dates, with a range to estimate."""
    got = items.get(("fit.change_date", "central"))
    if got is None or not isinstance(got.value, dt.date) or not dated:
        return []
    if items[("fit.method", "central")].value != "fit":
        return []
    first, last = dated[0][1].value, dated[-1][1].value
    problems = []
    if not first < got.value <= last:  # type: ignore[operator]
        problems.append(problem(
            got, f"a date after the first observed date ({first}) and at most the last "
                 f"({last}): the fit estimates the change from figures on both sides"))
    low = number_of(items[("fit.change_factor", "low")])
    high = number_of(items[("fit.change_factor", "high")])
    if low is not None and high is not None and low == high:
        factor = items[("fit.change_factor", "high")]
        problems.append(problem(
            factor, "Low and High of the change (for example 0.3 and 1.2) when a change "
                    "date is given, so that the fit can estimate it",
            f"Low = High = {low:g}"))
    return problems


def _order(dated: Sequence[tuple[TableRow, Got]]) -> list[Problem]:
    problems = []
    for (before_row, before), (_, got) in zip(dated, dated[1:], strict=False):
        if got.value < before.value:  # type: ignore[operator]
            problems.append(problem(
                got, "dates in order, earliest first",
                f"{got.value} after {before.value} (row {before_row.row})"))
    return problems


def _inside(dated: Sequence[tuple[TableRow, Got]], day0: dt.date, horizon: int) -> list[Problem]:
    last = day0 + dt.timedelta(days=horizon)
    return [
        problem(got, f"a date within the plan, from day 0 ({day0}) to {last}")
        for _, got in dated
        if not day0 <= got.value <= last  # type: ignore[operator]
    ]


def _weekly(dated: Sequence[tuple[TableRow, Got]]) -> list[Problem]:
    problems = []
    for (_, before), (_, got) in zip(dated, dated[1:], strict=False):
        gap = (got.value - before.value).days  # type: ignore[operator]
        if gap > 0 and gap % DAYS_PER_WEEK:
            problems.append(problem(
                got, "weekly totals one row a week, 7 days (or whole weeks) after the row before",
                f"{got.value}, {gap} day{'' if gap == 1 else 's'} after {before.value}"))
    return problems


def _icu_within_admissions(row: TableRow) -> list[Problem]:
    icu = row.get("observed.icu_admissions")
    icu_n, all_n = number_of(icu), number_of(row.get("observed.admissions"))
    if icu_n is None or all_n is None or icu_n <= all_n:
        return []
    return [problem(icu, f"at most the new admissions of that row ({all_n:g})")]


def _census_within_beds(row: TableRow, items: Mapping[Key, Got]) -> list[Problem]:
    problems = []
    for kind, word in (("ward", "ward"), ("icu", "ICU")):
        got = row.get(f"observed.{kind}_census")
        beds = number_of(items[(f"capacity.{kind}_beds", "central")])
        surge = number_of(items[(f"capacity.surge_{kind}_beds", "central")]) or 0.0
        count = number_of(got)
        if count is None or beds is None or count <= beds + surge:
            continue
        problems.append(problem(
            got, f"at most the {word} beds plus surge beds ({beds + surge:g}); check the "
                 "figure, it is used as given", warning=True))
    return problems
