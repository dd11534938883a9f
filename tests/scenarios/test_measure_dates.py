"""A measure's dates mean what the workbook and the pack say: both ends are days in force."""

from __future__ import annotations

import dataclasses
import datetime as dt

from conftest import small_plan

from prepkit.plan import End, Start
from prepkit.report.words.formatting import format_date, format_period, periods_over
from prepkit.report.words.measures import measure_when
from prepkit.report.words.views import MeasureSpan
from prepkit.scenarios.daily import column_slug
from prepkit.scenarios.runs import run_scenario


def test_a_measure_is_in_force_from_its_start_date_to_its_end_date_inclusive() -> None:
    # Common practice, no source: "from 1 Feb to 14 Feb" includes both days (14 days).
    plan = small_plan()
    first, last = dt.date(2027, 2, 1), dt.date(2027, 2, 14)
    closure = dataclasses.replace(
        plan.interventions[0], start=Start(kind="date", date=first),
        end=End(kind="date", date=last),
    )
    plan = dataclasses.replace(plan, interventions=(closure, *plan.interventions[1:]))
    run = run_scenario(plan, "All measures", with_interventions=True)
    active = run.daily[f"active_{column_slug(closure.name)}"]
    on = [d.date() for d, flag in active.items() if flag > 0.5]
    assert on[0] == first and on[-1] == last and len(on) == 14
    # The measures table and the scenario page's "in force" line give the same last day.
    assert measure_when(closure.start, closure.end).endswith(format_date(last))
    span = MeasureSpan(name=closure.name, periods=periods_over(active, 0.5))
    assert span.text == f"{closure.name}: {format_period(first, last)}"
