"""Resources beyond beds: staffed beds after absence, crisis beds, oxygen, stock and mortuary.

Sources: Little 1961, Oper Res 9:383 (L = lambda W: a resource used per
patient-day totals patient-days x rate over a wave; a mortuary holding each
body for W days holds deaths per day x W); Hick, Barbera & Kelen 2009,
Disaster Med Public Health Prep 3:S59 (conventional, contingency and crisis
levels). The stock series and the staffed beds are hand-worked (common
practice, no source).
"""

from __future__ import annotations

import dataclasses
import datetime as dt

import numpy as np
import pandas as pd
import pytest
from conftest import small_plan
from numpy.testing import assert_allclose

from prepkit.metrics.resources import (
    MINUTES_PER_DAY,
    mortuary_in_use,
    oxygen_lpm,
    staffed_beds,
    stock_run,
)
from prepkit.plan.resources import Supplies
from prepkit.scenarios.runs import run_scenario


def test_staffed_beds_equal_the_beds_with_no_one_absent() -> None:
    # Staff not given are exactly those the beds need: no absence, no fewer beds.
    out = staffed_beds(40.0, np.zeros(5), [(None, 5.0), (None, 15.0)])
    assert_allclose(out, 40.0)


def test_staffed_beds_fall_by_the_absence_share() -> None:
    # Hand-worked: 40 beds, 8 nurses at 5 patients each. With 10% and 25% of workers absent,
    # 7.2 and 6 nurses are on duty: 36 and 30 beds, that is 40 x (1 - share).
    share = np.array([0.0, 0.1, 0.25])
    out = staffed_beds(40.0, share, [(None, 5.0), (None, 15.0)])
    assert_allclose(out, [40.0, 36.0, 30.0])
    assert_allclose(out, 40.0 * (1.0 - share))


def test_too_few_nurses_limit_the_beds_before_anyone_is_absent() -> None:
    # Hand-worked: 6 nurses at 5 patients staff 30 of 40 beds; 4 doctors at 15 would staff 60,
    # so the nurses bind; at 50% absence, 3 nurses staff 15 beds and 2 doctors 30.
    out = staffed_beds(40.0, np.array([0.0, 0.5]), [(6.0, 5.0), (4.0, 15.0)])
    assert_allclose(out, [30.0, 15.0])
    # doctors binding: 1 doctor at 15 patients
    assert_allclose(staffed_beds(40.0, np.array([0.0]), [(None, 5.0), (1.0, 15.0)]), [15.0])


def test_the_plan_available_beds_after_absence_fall_by_the_absence_share() -> None:
    # The run's own absence share: available after absence = available x (1 - share) when the
    # staff match the beds (the default).
    plan = small_plan()
    run = run_scenario(plan, "No measures", with_interventions=False)
    daily = run.daily
    for kind in ("ward", "icu"):
        assert_allclose(daily[f"{kind}_available_after_absence_beds"],
                        daily[f"{kind}_available_beds"] * (1.0 - daily["absence_share"]),
                        rtol=1e-12)
    gaps = {g.resource: g for g in run.metrics.resources}
    short = int(np.sum(daily["icu_demand_beds"] > daily["icu_available_after_absence_beds"]))
    assert gaps["icu_beds_after_absence"].days_short_days == short
    assert gaps["icu_beds_after_absence"].days_short_days >= gaps[
        "icu_beds_conventional"].days_short_days


def test_crisis_beds_add_to_the_surge_beds_on_their_schedule() -> None:
    # Hick et al. 2009: crisis capacity lies beyond contingency (surge). With crisis beds the
    # crisis level is never below the contingency level and adds them once surge opens.
    plan = small_plan()
    plan = dataclasses.replace(plan, capacity=dataclasses.replace(
        plan.capacity, surge_icu_beds=2, crisis_icu_beds=3))
    daily = run_scenario(plan, "No measures", with_interventions=False).daily
    surge = daily["icu_available_with_surge_beds"].to_numpy()
    crisis = daily["icu_available_crisis_beds"].to_numpy()
    opened = surge > daily["icu_available_beds"].to_numpy()
    assert opened.any()
    assert_allclose(crisis[opened], surge[opened] + 3.0)
    assert_allclose(crisis[~opened], surge[~opened])


def test_oxygen_over_the_wave_is_patient_days_times_the_flow() -> None:
    # Little 1961: litres = patient-days on oxygen x flow x 1,440 min; patient-days of the
    # wave = the model's ward and ICU bed-days (x the share these hospitals receive).
    plan = small_plan()
    supplies = Supplies(ward_oxygen_share=0.6, ward_oxygen_lpm=3.0, icu_oxygen_share=1.0,
                        icu_oxygen_lpm=10.0)
    plan = dataclasses.replace(plan, supplies=supplies)
    run = run_scenario(plan, "No measures", with_interventions=False)
    litres = run.daily["oxygen_need_lpm"].sum() * MINUTES_PER_DAY
    total = run.metrics.total
    share = plan.capacity.catchment_share
    expected = (total.ward_bed_days * 0.6 * 3.0 + total.icu_bed_days * 10.0) * share
    assert litres == pytest.approx(expected * MINUTES_PER_DAY, rel=1e-2)
    assert_allclose(oxygen_lpm([10.0], [2.0], supplies), [10 * 0.6 * 3 + 2 * 10.0])


def test_stock_runs_down_and_counts_the_missing_items_by_hand() -> None:
    # Hand-worked: 100 in stock, 20 delivered a day, use 50, 50, 50, 10, 80.
    # Day 0: 120 held, 70 left. Day 1: 90, 40 left. Day 2: 60, 10 left. Day 3: 30, 20 left.
    # Day 4: 40 held for 80: 40 missing, 0 left.
    left, missing = stock_run(np.array([50.0, 50.0, 50.0, 10.0, 80.0]), 100.0, 20.0)
    assert_allclose(left, [70.0, 40.0, 10.0, 20.0, 0.0])
    assert_allclose(missing, [0.0, 0.0, 0.0, 0.0, 40.0])
    # The stores hold no more than the day-0 stock: with no use, deliveries do not pile up.
    left, missing = stock_run(np.array([0.0, 0.0, 150.0]), 100.0, 20.0)
    assert_allclose(left, [100.0, 100.0, 0.0])
    assert_allclose(missing, [0.0, 0.0, 30.0])


def test_a_stock_gap_in_the_gap_table() -> None:
    plan = small_plan()
    plan = dataclasses.replace(plan, supplies=Supplies(gowns_stock=50.0,
                                                       gowns_resupply_per_day=5.0))
    run = run_scenario(plan, "No measures", with_interventions=False)
    gaps = {g.resource: g for g in run.metrics.resources}
    use = run.daily["gowns_use_items_per_day"].to_numpy()
    _, missing = stock_run(use, 50.0, 5.0)
    gowns = gaps["gowns"]
    assert gowns.compared and gowns.days_short_days == int(np.sum(missing > 0))
    assert gowns.largest_gap == pytest.approx(missing.max())
    assert not gaps["gloves"].compared and gaps["gloves"].days_short_days == 0
    assert gaps["gloves"].peak_need == pytest.approx(run.daily["gloves_use_items_per_day"].max())


def test_mortuary_holds_deaths_per_day_times_the_days_before_release() -> None:
    # Little 1961: a steady 3 deaths a day kept 7 days each fill 21 spaces; 2.5 days: 7.5.
    deaths = np.full(30, 3.0)
    assert mortuary_in_use(deaths, 7.0)[-1] == pytest.approx(21.0)
    assert mortuary_in_use(deaths, 2.5)[-1] == pytest.approx(7.5)


def test_shortage_deaths_per_day_add_up_to_the_total() -> None:
    # The daily additional deaths spread the total over the days short (one rule, one total).
    plan = small_plan()
    plan = dataclasses.replace(plan, capacity=dataclasses.replace(plan.capacity, icu_beds=1))
    run = run_scenario(plan, "No measures", with_interventions=False)
    assert run.metrics.shortage_deaths_persons > 0
    assert run.daily["shortage_deaths_per_day"].sum() == pytest.approx(
        run.metrics.shortage_deaths_persons, rel=1e-9)


def test_gap_dates_are_the_first_day_short() -> None:
    plan = small_plan()
    plan = dataclasses.replace(plan, capacity=dataclasses.replace(plan.capacity, icu_beds=1))
    run = run_scenario(plan, "No measures", with_interventions=False)
    gap = {g.resource: g for g in run.metrics.resources}["icu_beds_conventional"]
    daily = run.daily
    over = daily.index[daily["icu_demand_beds"] > daily["icu_available_beds"]]
    assert gap.first_short_date == pd.Timestamp(over[0]).date()
    assert isinstance(gap.first_short_date, dt.date)
    assert gap.days_short_days == run.metrics.icu.days_over_capacity_days
