"""Decide-by dates: the latest decisions that keep demand within beds in enough futures.

Rules in words
--------------
*Now* is the last observed date, or day 0 when nothing is observed. A
scenario's *moved measures* are those it starts on a date after now; measures
that started on or before now are in force already, and measures that start
on a signal (occupancy, admissions) keep their signal. The moved measures move
together: the first of them starts on the searched day ``s`` and the others
keep their planned spacing after it; end dates move with them, lengths stay.
The decision comes ``ceil(delay)`` days before ``s`` (the plan's days from
decision to effect) and cannot be before now.

For each searched start the scenario runs through the ensemble's compiled
loop with the same sampled futures at every start (common draws), and each
future is *within beds* at a level when its outbreak demand (catchment share x
census) never exceeds the beds of that level on any day of the horizon:

* conventional: the staffed beds not used by other patients
  (:func:`prepkit.metrics.beds.bed_supply`);
* contingency: the same plus the surge beds, taken as open in time.

The chance of staying within beds is the share of futures within beds. It
need not fall steadily as the start moves later: measures with an end date or
a length that start too early can end before the wave, so there may be a
window of starts that work, with a first as well as a last day. The search
evaluates starts every :data:`GRID_STEP_DAYS` days from day 0 to the last
day on which any future is still before its peak without the moved measures
(a later start cannot lower a peak that has passed), then finds both edges
of the latest window whose chance is at least the plan's share to the day by
bisection between evaluated starts. The level reported is the first of
conventional, contingency at which such a window exists.

Signal: for each future the latest decision day that keeps it within beds is
the latest evaluated start that does, less the delay; the highest 7-day
average of new admissions (the residents' admissions of the last 7 days,
divided by 7) it reaches on or before that day is the level at which acting
still works for that future. The signal is the highest level that at least
the plan's share of futures reach in time: acting when the 7-day average first
reaches it keeps that share within beds (when the window has a first day, not
before that day).

Surge beds: with the measures as planned, surge beds ordered on day ``o`` take
patients from ``o + ceil(days to open)``. A future needs them from the first
day its demand exceeds the conventional beds (ward or ICU), and they are
enough when its demand never exceeds the contingency beds; its latest order
day is that first day less the days to open. The latest order date is the
latest day on which at least the plan's share of futures are still in time.

References
----------
Hick J.L., Barbera J.A., Kelen G.D. (2009). Refining surge capacity:
conventional, contingency, and crisis capacity. Disaster Med Public Health
Prep 3(S1):S59-S67. doi:10.1097/DMP.0b013e31819f1ae2
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from concurrent.futures import Executor
from dataclasses import replace
from datetime import timedelta

import numpy as np
from numpy.typing import NDArray

from prepkit.base.blas import one_blas_thread
from prepkit.plan import Intervention, Plan, Scenario
from prepkit.scenarios.runs import compile_scenario
from prepkit.simulation.draw_values import DrawValues, with_fitted
from prepkit.simulation.inputs import validate_plan
from prepkit.uncertainty.decide_results import (
    BED_LEVELS,
    BedLevel,
    DecisionResults,
    MeasureDecision,
    MeasureVerdict,
    ScenarioDecisions,
    SearchPoint,
)
from prepkit.uncertainty.decide_rules import (
    edge,
    seven_day_average,
    signal_level,
    surge_decision,
    within_beds,
)
from prepkit.uncertainty.draws import DrawSeries, mode_values, values_from
from prepkit.uncertainty.ensemble import simulate_draws
from prepkit.uncertainty.fields import sample_quantiles, scenario_fields
from prepkit.uncertainty.run import draw_values

__all__ = [
    "GRID_STEP_DAYS",
    "SEARCH_DRAWS",
    "decide_plan",
    "decide_scenario",
    "moved_plan",
    "now_day",
]

SEARCH_DRAWS = 200
"""Futures per searched start [count] (at most the plan's draws): the chance of staying
within beds near 90% then has a sampling error of about 2 percentage points."""

GRID_STEP_DAYS = 7
"""Days between the starts of the coarse pass [days]."""


# --------------------------------------------------------------------------- the rules


def now_day(plan: Plan) -> int:
    """The day decisions are counted from: the last observed date, else day 0 [days]."""
    return max((plan.day_of(o.date) for o in plan.observed), default=0)


def _measure_roles(plan: Plan, scenario: Scenario, now: int
                   ) -> tuple[tuple[str, ...], tuple[str, ...], tuple[str, ...]]:
    """The scenario's measures as (moved, in force, on a signal)."""
    moved, in_force, on_signal = [], [], []
    for name in scenario.interventions:
        start = plan.intervention(name).start
        if start.kind != "date" or start.date is None:
            on_signal.append(name)
        elif plan.day_of(start.date) > now:
            moved.append(name)
        else:
            in_force.append(name)
    return tuple(moved), tuple(in_force), tuple(on_signal)


def _first_start(plan: Plan, moved: Sequence[str]) -> int:
    """Planned start of the first moved measure [days since day 0]."""
    days = []
    for name in moved:
        date = plan.intervention(name).start.date
        assert date is not None
        days.append(plan.day_of(date))
    return min(days)


def _shifted(item: Intervention, days: int) -> Intervention:
    """The measure with its start date, and its end date if it has one, ``days`` later."""
    step = timedelta(days=days)
    assert item.start.date is not None
    start = replace(item.start, date=item.start.date + step)
    end = item.end
    if end.kind == "date" and end.date is not None:
        end = replace(end, date=end.date + step)
    return replace(item, start=start, end=end)


def moved_plan(plan: Plan, moved: Sequence[str], start_day: int) -> Plan:
    """The plan with the moved measures' first start on ``start_day`` [days since day 0].

    The other moved measures keep their spacing after the first; end dates
    move with their starts, lengths and the other measures stay.
    """
    if not moved:
        return plan
    shift = int(start_day) - _first_start(plan, moved)
    names = set(moved)
    return replace(plan, interventions=tuple(
        _shifted(item, shift) if item.name in names else item for item in plan.interventions
    ))


def _values(plan: Plan, scenario: Scenario, draws: int, seed: int) -> DrawValues:
    """The searched futures: a Latin hypercube of ``draws``, or the central run when 0."""
    if draws > 0:
        return draw_values(plan, scenario, sample_quantiles(plan, draws, seed))
    fields = scenario_fields(plan, scenario)
    values = values_from(mode_values(fields, 1), 1)
    return values if plan.fitted is None else with_fitted(values, plan.fitted)


class _Search:
    """Evaluated starts of one scenario, each run once."""

    def __init__(self, plan: Plan, scenario: Scenario, moved: tuple[str, ...],
                 values: DrawValues) -> None:
        self.plan, self.scenario, self.moved, self.values = plan, scenario, moved, values
        self.within: dict[int, dict[BedLevel, NDArray[np.bool_]]] = {}
        self.runs: dict[int, DrawSeries] = {}

    def run(self, start_day: int) -> DrawSeries:
        """The futures with the moved measures' first start on ``start_day``."""
        if start_day not in self.runs:
            plan = moved_plan(self.plan, self.moved, start_day)
            model = compile_scenario(plan, self.scenario, True)
            got = simulate_draws(model, plan, self.values, what="decide-by future")
            self.runs[start_day] = got
            self.within[start_day] = within_beds(plan, got)
        return self.runs[start_day]

    def share(self, start_day: int, level: BedLevel) -> float:
        """Share of futures within the beds of ``level`` [fraction]."""
        self.run(start_day)
        return float(self.within[start_day][level].mean())


def decide_scenario(plan: Plan, scenario: Scenario | str, *, draws: int | None = None,
                    seed: int | None = None) -> ScenarioDecisions:
    """The decide-by dates of one scenario (see the module's rules).

    Parameters
    ----------
    plan : Plan
        The plan (a fitted plan searches its fitted futures).
    scenario : Scenario or str
        The scenario or its name.
    draws : int, optional
        Futures per evaluated start [count]; default the plan's draws, at
        most :data:`SEARCH_DRAWS`; 0 searches the central run alone.
    seed : int, optional
        Seed of the futures; default the plan's.

    Returns
    -------
    ScenarioDecisions
    """
    chosen = plan.scenario(scenario) if isinstance(scenario, str) else scenario
    target = plan.decide_by.within_beds_share
    lead = math.ceil(plan.decide_by.delay_days - 1e-9)
    count = min(plan.details.draws, SEARCH_DRAWS) if draws is None else int(draws)
    values = _values(plan, chosen, count, plan.details.seed if seed is None else int(seed))
    now = now_day(plan)
    horizon = plan.details.horizon_days
    moved, in_force, on_signal = _measure_roles(plan, chosen, now)
    search = _Search(plan, chosen, moved, values)

    if not moved:
        as_planned = search.run(0)
        shares = {level: search.share(0, level) for level in BED_LEVELS}
        return ScenarioDecisions(
            scenario=chosen.name, moved=(), in_force=in_force, on_signal=on_signal,
            planned_decision_day=None, measures=MeasureDecision(verdict="no_measures"),
            surge=surge_decision(plan, as_planned, target, now), share_as_planned=shares,
            share_now=shares, share_never=shares, points=(), runs=len(search.runs),
        )

    planned = _first_start(plan, moved)
    never = horizon + lead + 1
    earliest = now + lead
    last_peak = int(search.run(never).peak_days[:, :2].max())
    reach = min(horizon, max(last_peak, earliest, planned))
    for day in (planned, earliest, *range(0, reach + 1, GRID_STEP_DAYS), reach):
        search.run(int(day))
    measures = _measure_decision(search, target, lead, earliest, never)
    if measures.earliest_decision_day is not None and measures.earliest_decision_day <= now:
        measures = replace(measures, earliest_decision_day=None)
    if measures.verdict == "date" and measures.level is not None:
        average = seven_day_average(search.run(never).get("admissions_per_day"))
        within = {day: got[measures.level] for day, got in search.within.items()}
        signal = signal_level(within, lead, average, target, now)
        measures = replace(measures, signal_admissions_per_day=signal)
    points = tuple(
        SearchPoint(decision_day=day - lead, start_day=day,
                    within_share={level: float(got[level].mean()) for level in BED_LEVELS})
        for day, got in sorted(search.within.items()) if day < never
    )
    return ScenarioDecisions(
        scenario=chosen.name, moved=moved, in_force=in_force, on_signal=on_signal,
        planned_decision_day=planned - lead, measures=measures,
        surge=surge_decision(plan, search.run(planned), target, now),
        share_as_planned={level: search.share(planned, level) for level in BED_LEVELS},
        share_now={level: search.share(earliest, level) for level in BED_LEVELS},
        share_never={level: search.share(never, level) for level in BED_LEVELS},
        points=points, runs=len(search.runs),
    )


def _measure_decision(search: _Search, target: float, lead: int, earliest: int,
                      never: int) -> MeasureDecision:
    """The verdict on the moved measures: the latest window of starts at each level.

    A date from now at the conventional level comes first, then one at the
    contingency level, then a date that has passed (conventional, then
    contingency).
    """
    passed: list[MeasureDecision] = []
    for level in BED_LEVELS:
        if search.share(never, level) >= target - 1e-12:
            return MeasureDecision(verdict="not_needed", level=level)

        def ok(day: int, level: BedLevel = level) -> bool:
            return search.share(day, level) >= target - 1e-12

        evaluated = sorted(day for day in search.within if day < never)
        good = [day for day in evaluated if ok(day)]
        if not good:
            continue
        last = good[-1]
        after = [day for day in evaluated if day > last]
        latest = edge(ok, last, after[0]) if after else last
        before = [day for day in evaluated if day < last and not ok(day)]
        first = edge(ok, last, before[-1]) if before else None
        verdict: MeasureVerdict = "date" if latest >= earliest else "too_late"
        found = MeasureDecision(
            verdict=verdict, level=level, latest_decision_day=latest - lead,
            earliest_decision_day=None if first is None else first - lead,
            share_at_latest=search.share(latest, level))
        if verdict == "date":
            return found
        passed.append(found)
    return passed[0] if passed else MeasureDecision(verdict="not_enough")


# --------------------------------------------------------------------------- every scenario


@one_blas_thread
def decide_plan(plan: Plan, *, draws: int | None = None, executor: Executor | None = None,
                progress: Callable[[int, int], None] | None = None) -> DecisionResults:
    """The decide-by dates of every scenario of a plan.

    Parameters
    ----------
    plan : Plan
        The plan (checked first).
    draws : int, optional
        Futures per evaluated start (see :func:`decide_scenario`).
    executor : concurrent.futures.Executor, optional
        Runs one task per scenario (a Dask cluster, for example); None runs
        them here, one after another.
    progress : callable, optional
        Gets ``(scenarios_done, scenarios_total)``.

    Returns
    -------
    DecisionResults
    """
    validate_plan(plan)
    count = min(plan.details.draws, SEARCH_DRAWS) if draws is None else int(draws)
    total = len(plan.scenarios)
    done: list[ScenarioDecisions] = []
    if executor is None:
        for scenario in plan.scenarios:
            done.append(decide_scenario(plan, scenario, draws=count))
            if progress is not None:
                progress(len(done), total)
    else:
        futures = [executor.submit(decide_scenario, plan, scenario, draws=count)
                   for scenario in plan.scenarios]
        for future in futures:
            done.append(future.result())
            if progress is not None:
                progress(len(done), total)
    return DecisionResults(
        now_day=now_day(plan), target_share=plan.decide_by.within_beds_share,
        delay_days=math.ceil(plan.decide_by.delay_days - 1e-9), draws=max(count, 1),
        scenarios=tuple(done),
    )
