"""Decide-by dates: the search against hand-worked dates and closed forms."""

from __future__ import annotations

import dataclasses
import datetime as dt
import math

import numpy as np
import pytest
from factories import DAY0, contact_measure, make_capacity, make_plan, scenario
from scipy.optimize import brentq

from prepkit.plan import DecideBy, End, Start
from prepkit.scenarios.runs import run_scenario
from prepkit.uncertainty.decide import decide_scenario, moved_plan
from prepkit.uncertainty.decide_rules import seven_day_average, surge_decision
from prepkit.uncertainty.draws import DrawSeries

STOP = {"home": 0.0, "school": 0.0, "work": 0.0, "community": 0.0}


def wallinga_lipsitch_growth(r0: float, latent: float, infectious: float) -> float:
    # Wallinga & Lipsitch 2007, Proc R Soc B 274:599, R = 1/M(-r); for exponential latent and
    # infectious periods R = (1 + r L)(1 + r D), solved for r.
    return float(brentq(lambda r: (1 + r * latent) * (1 + r * infectious) - r0, 1e-9, 5.0))


def _one_band_plan(icu_beds: int, start_day: int, delay: float) -> object:
    stop = contact_measure("stop", kept=STOP,
                           start=Start(kind="date", date=DAY0 + dt.timedelta(days=start_day)))
    capacity = make_capacity(ward_beds=10**6, icu_beds=icu_beds, ward_baseline_occupancy=0.0,
                             icu_baseline_occupancy=0.0, surge_ward_beds=0, surge_icu_beds=0)
    plan = make_plan(populations=(1e9,), r0=2.0, latent_days=3.0, infectious_days=4.0,
                     admitted_share=0.05, icu_share=0.3, initial_infections=10.0, horizon=200,
                     interventions=(stop,), scenarios=(scenario("act", ["stop"]),),
                     capacity=capacity)
    return dataclasses.replace(plan, decide_by=DecideBy(within_beds_share=0.9,
                                                        delay_days=delay))


def test_latest_start_matches_the_exponential_phase_by_hand() -> None:
    # Hand-worked: in the exponential phase everything grows as exp(r t) (Wallinga & Lipsitch
    # 2007), so stopping spread d days later multiplies the ICU peak that follows by exp(r d).
    # With the peak P_ref after a stop on day s_ref, the latest stop keeping the peak within C
    # beds is s* = s_ref + ln(C / P_ref) / r, and the decision is the delay before it.
    r = wallinga_lipsitch_growth(2.0, 3.0, 4.0)
    s_ref, delay = 40, 3.0
    plan = _one_band_plan(icu_beds=1, start_day=s_ref, delay=delay)
    p_ref = run_scenario(plan, "act").metrics.icu.peak_demand_beds
    icu_beds = 400
    expected_start = s_ref + math.log(icu_beds / p_ref) / r
    assert 60 < expected_start < 150  # inside the exponential phase of a 1e9 population
    plan = _one_band_plan(icu_beds=icu_beds, start_day=s_ref, delay=delay)
    got = decide_scenario(plan, "act", draws=1)
    assert got.measures.verdict == "date"
    assert got.measures.level == "conventional"
    assert got.measures.earliest_decision_day is None
    assert got.measures.latest_decision_day is not None
    assert abs(got.measures.latest_decision_day - (expected_start - delay)) <= 1.0


def test_too_late_and_not_enough_are_said() -> None:
    plan = _one_band_plan(icu_beds=400, start_day=40, delay=3.0)
    got = decide_scenario(plan, "act", draws=1)
    latest = got.measures.latest_decision_day
    assert latest is not None
    # Observed figures up to after the latest decision: the decision is too late.
    from prepkit.plan import Observation

    late = dataclasses.replace(plan, observed=(
        Observation(date=DAY0 + dt.timedelta(days=latest + 5), admissions=1.0),))
    moved = dataclasses.replace(late, interventions=tuple(
        dataclasses.replace(i, start=Start(kind="date", date=DAY0 + dt.timedelta(days=180)))
        for i in late.interventions))
    verdict = decide_scenario(moved, "act", draws=1).measures
    assert verdict.verdict == "too_late"
    assert verdict.latest_decision_day is not None
    assert abs(verdict.latest_decision_day - latest) <= 1
    # Beds so few that even a stop at day 0 overflows them: no date is enough.
    none = _one_band_plan(icu_beds=0, start_day=40, delay=3.0)
    none = dataclasses.replace(none, capacity=dataclasses.replace(none.capacity, icu_beds=0))
    assert decide_scenario(none, "act", draws=1).measures.verdict == "not_enough"


def test_a_window_found_by_search_matches_every_start_tried_one_by_one() -> None:
    # A 60-day halving of contacts lowers the peak most when it covers the peak; started too
    # early it ends before the wave, too late the peak has passed. With beds between the best
    # and the earliest start's peak, the starts that work form a window. The search's window
    # must equal the one found by running every start day on its own (a brute-force scan).
    half = {"home": 0.5, "school": 0.5, "work": 0.5, "community": 0.5}
    stop = contact_measure("stop", kept=half,
                           start=Start(kind="date", date=DAY0 + dt.timedelta(days=30)),
                           end=End(kind="duration", duration_days=60.0))
    plan = _one_band_plan(icu_beds=1, start_day=30, delay=2.0)
    plan = dataclasses.replace(plan, interventions=(stop,),
                               bands=(dataclasses.replace(plan.bands[0], people=2e5),))
    peaks = np.array([
        run_scenario(moved_plan(plan, ("stop",), day), "act").metrics.icu.peak_demand_beds
        for day in range(0, 200)
    ])
    best = float(peaks.min())
    beds = math.floor(best + 0.4 * (peaks[0] - best))
    assert peaks[0] > beds >= best  # the earliest start does not work, the best one does
    works = np.flatnonzero(peaks <= beds)
    capacity = dataclasses.replace(plan.capacity, icu_beds=beds)
    got = decide_scenario(dataclasses.replace(plan, capacity=capacity), "act", draws=1).measures
    assert got.verdict == "date"
    assert got.earliest_decision_day == works.min() - 2
    assert got.latest_decision_day == works.max() - 2


def test_moved_measures_keep_their_spacing_and_lengths() -> None:
    a = contact_measure("a", start=Start(kind="date", date=DAY0 + dt.timedelta(days=20)),
                        end=End(kind="date", date=DAY0 + dt.timedelta(days=50)))
    b = contact_measure("b", start=Start(kind="date", date=DAY0 + dt.timedelta(days=27)),
                        end=End(kind="duration", duration_days=10.0))
    plan = make_plan(interventions=(a, b))
    moved = moved_plan(plan, ("a", "b"), 5)
    assert moved.intervention("a").start.date == DAY0 + dt.timedelta(days=5)
    assert moved.intervention("a").end.date == DAY0 + dt.timedelta(days=35)
    assert moved.intervention("b").start.date == DAY0 + dt.timedelta(days=12)
    assert moved.intervention("b").end.duration_days == 10.0


def test_seven_day_average_by_hand() -> None:
    # Hand-worked trailing means (common practice, no source: 7-day average of admissions).
    series = np.arange(1.0, 11.0)
    got = seven_day_average(series)
    assert got[0] == 1.0
    assert got[6] == pytest.approx(4.0)  # (1 + ... + 7) / 7
    assert got[9] == pytest.approx(7.0)  # (4 + ... + 10) / 7
    assert got[2] == pytest.approx(2.0)  # first days: the days there are


def _series(ward: np.ndarray, icu: np.ndarray) -> DrawSeries:
    n, days = ward.shape
    zeros = np.zeros((n, days))
    return DrawSeries(series=np.stack([ward, icu, zeros, zeros, zeros]),
                      finals=np.zeros((n, 8)),
                      peaks=np.stack([ward.max(1), icu.max(1), zeros.max(1)], axis=1),
                      peak_days=np.zeros((n, 3), dtype=np.int64), beta=np.zeros(n),
                      substeps=np.ones(n, dtype=np.int64))


def test_surge_order_date_by_hand() -> None:
    # Hand-worked: ICU available 10 beds, 5 surge beds, 4 days to open. Future 1 exceeds 10 beds
    # first on day 20 (order by day 16); future 2 on day 30 (order by 26); future 3 never. Two
    # futures in three are in time up to day 26, all three up to day 16.
    capacity = make_capacity(ward_beds=10**6, icu_beds=10, icu_baseline_occupancy=0.0,
                             ward_baseline_occupancy=0.0, surge_icu_beds=5, surge_ward_beds=0,
                             surge_days_to_open=4.0)
    plan = make_plan(capacity=capacity, horizon=60)
    days = np.arange(60)
    icu = np.stack([np.where(days >= 20, 12.0, 5.0), np.where(days >= 30, 14.0, 5.0),
                    np.full(60, 8.0)])
    runs = _series(np.zeros_like(icu), icu)
    two_thirds = surge_decision(plan, runs, 2 / 3, now=0)
    assert two_thirds.verdict == "date" and two_thirds.latest_order_day == 26
    assert surge_decision(plan, runs, 1.0, now=0).latest_order_day == 16
    third = surge_decision(plan, runs, 1 / 3, now=0)
    assert third.verdict == "not_needed"
    assert surge_decision(plan, runs, 2 / 3, now=27).verdict == "too_late"
    # 16 beds needed in future 2: 15 are not enough there, so two in three are in time only
    # up to future 1's day 16.
    icu[1, 40:] = 16.0
    runs = _series(np.zeros_like(icu), icu)
    assert surge_decision(plan, runs, 0.9, now=0).verdict == "not_enough"
    assert surge_decision(plan, runs, 2 / 3, now=0).latest_order_day == 16
