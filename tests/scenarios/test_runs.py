"""Public engine API: wiring, daily decisions, levels and validation."""

from __future__ import annotations

import dataclasses
import datetime as dt

import numpy as np
import pytest
from factories import (
    DAY0,
    banded_plan,
    contact_measure,
    make_plan,
    make_workforce,
    scenario,
)
from numpy.testing import assert_allclose

from prepkit.errors import ModelError
from prepkit.plan import End, Range3, Start
from prepkit.scenarios.runs import run_plan, run_scenario, transmissibility_table
from prepkit.simulation.compile import seasonal_peak_day


@pytest.fixture(scope="module")
def plan_results():  # type: ignore[no-untyped-def]
    plan = banded_plan(10, horizon=240)
    return plan, run_plan(plan)


def test_every_scenario_runs_with_and_without(plan_results) -> None:  # type: ignore[no-untyped-def]
    plan, results = plan_results
    assert [r.scenario.name for r in results] == [s.name for s in plan.scenarios]
    for item in results:
        for run in (item.with_interventions, item.without_interventions):
            assert len(run.daily) == 240
            assert run.daily.index[0].date() == DAY0
            assert len(run.daily_by_band) == 240 * 10
            total = run.metrics.total
            assert_allclose(run.daily["admissions_per_day"].sum(), total.admissions_persons,
                            rtol=1e-9)
            assert_allclose(
                run.daily_by_band.groupby("band")["hospital_deaths_per_day"].sum().sum(),
                total.hospital_deaths_persons, rtol=1e-9,
            )
        assert item.without_interventions.variant == "without"
        assert not any(c.startswith("active_") for c in item.without_interventions.daily)
        effect = item.effect
        assert_allclose(
            effect.averted_admissions_persons,
            item.without_interventions.metrics.total.admissions_persons
            - item.with_interventions.metrics.total.admissions_persons,
        )
    assert results["no measures"].effect.averted_hospital_deaths_persons == 0.0
    assert results["all measures"].effect.ward_peak_reduction_beds > 0.0


def test_trigger_start_and_release_follow_previous_day(plan_results) -> None:  # type: ignore[no-untyped-def]
    _, results = plan_results
    daily = results["all measures"].with_interventions.daily
    on = daily["active_distancing"].to_numpy()
    share = daily["ward_occupancy_share"].to_numpy()
    starts = np.flatnonzero(on[1:] & ~on[:-1]) + 1
    stops = np.flatnonzero(~on[1:] & on[:-1]) + 1
    assert starts.size >= 1
    assert np.all(share[starts - 1] >= 0.5)  # start level, previous day's demand
    assert np.all(share[stops - 1] < 0.2)  # release level
    first = starts[0]
    assert np.all(share[: first - 1] < 0.5)
    school = daily["active_school_closure"].to_numpy()
    assert school.sum() == 42 and school[40] and not school[39] and not school[82]
    assert_allclose(daily["school_closure_intensity_share"][school], 0.9 * 0.9)


def test_duration_ended_trigger_fires_once() -> None:
    measure = contact_measure("brake", kept={"community": 0.2}, start=Start(
        kind="admissions", level=5.0), end=End(kind="duration", duration_days=10.5))
    plan = make_plan(r0=3.0, symptomatic_share=0.5, admitted_share=0.05, horizon=200,
                     interventions=(measure,))
    daily = run_scenario(plan, "base").daily
    on = daily["active_brake"].to_numpy()
    assert on.sum() == 11
    first = int(np.argmax(on))
    assert on[first : first + 11].all()
    assert daily["admissions_per_day"].iloc[first - 1] >= 5.0
    assert daily["admissions_per_day"].iloc[first - 2] < 5.0
    assert (daily["admissions_per_day"].iloc[first + 11 :] >= 5.0).any()  # would re-fire


def test_doubling_time_levels_are_inverted() -> None:
    plan = make_plan(doubling_time=Range3(low=3.0, central=5.0, high=8.0))
    table = transmissibility_table(plan)
    assert_allclose(table["high"].doubling_time_days, 3.0, rtol=1e-9)
    assert_allclose(table["low"].doubling_time_days, 8.0, rtol=1e-9)
    assert table["low"].r0 < table["central"].r0 < table["high"].r0


def test_r_effective_day0_uses_prior_immunity_and_season() -> None:
    plan = make_plan(r0=2.0, prior_immunity=0.25, seasonal_amplitude=0.2,
                     seasonal_peak=dt.date(1999, 3, 2), initial_infections=0.0)
    figures = transmissibility_table(plan)["central"]
    season = 1 + 0.2 * np.cos(2 * np.pi * (0 - 60) / 365.25)
    assert_allclose(figures.r0, 2.0, rtol=1e-12)
    assert_allclose(figures.r_effective_day0, 2.0 * 0.75 * season, rtol=1e-12)


def test_seasonal_peak_day_in_year_of_or_after_day0() -> None:
    assert seasonal_peak_day(dt.date(2025, 1, 1), dt.date(1990, 1, 15)) == 14.0
    assert seasonal_peak_day(dt.date(2025, 6, 1), dt.date(1990, 1, 15)) == 228.0
    assert seasonal_peak_day(dt.date(2025, 1, 1), dt.date(2024, 2, 29)) == 58.0


def test_overrides_replace_picked_values() -> None:
    plan = make_plan(r0=2.0, latent_days=3.0, infectious_stages=1, horizon=30)
    run = run_scenario(plan, "base", overrides={"latent_period_days": 5.0})
    assert_allclose(run.transmissibility.mean_generation_time_days, 5.0 + 4.0, rtol=1e-10)
    with pytest.raises(ModelError):
        run_scenario(plan, "base", overrides={"no_such_field": 1.0})


def test_carers_follow_school_closure_intensity() -> None:
    closure = contact_measure("schools", kept={"school": 0.2}, compliance=0.5,
                              start=Start(kind="date", date=DAY0))
    plan = make_plan(populations=(1e5, 1e5, 1e5), r0=0.5, initial_infections=0.0, horizon=10,
                     interventions=(closure,), workforce=make_workforce(
                         working_age_min=10, working_age_max=24, employed_share=0.5,
                         carer_share_school_closure=0.1))
    daily = run_scenario(plan, "base").daily
    workers = 0.5 * (1e5 + 0.5 * 1e5)
    assert_allclose(daily["workers_persons"], workers)
    assert_allclose(daily["absence_share"], 0.1 * 0.5 * 0.8, rtol=1e-12)


def test_validation_errors() -> None:
    with pytest.raises(ModelError, match="admitted share"):
        run_plan(make_plan(symptomatic_share=0.1, admitted_share=0.2))
    bad = make_plan(scenarios=(scenario("s", ("missing",)),))
    with pytest.raises(ModelError, match="missing"):
        run_plan(bad)
    dated_release = contact_measure(end=End(kind="release", level=0.1))
    with pytest.raises(ModelError, match="release"):
        run_plan(make_plan(interventions=(dated_release,)))
    flapping = contact_measure(start=Start(kind="admissions", level=1.0),
                               end=End(kind="release", level=2.0))
    with pytest.raises(ModelError, match="release level"):
        run_plan(make_plan(interventions=(flapping,)))
    plan = make_plan()
    with pytest.raises(ModelError):
        run_scenario(plan, "nope")
    seasonal = dataclasses.replace(plan, disease=dataclasses.replace(
        plan.disease, seasonal_amplitude=1.2, seasonal_peak=DAY0))
    with pytest.raises(ModelError, match="seasonal"):
        run_plan(seasonal)
