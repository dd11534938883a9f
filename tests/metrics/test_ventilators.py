"""Ventilators: demand from ICU demand, against the ventilators the workbook gives."""

from __future__ import annotations

import dataclasses
import datetime as dt

import numpy as np
import pandas as pd
from conftest import small_plan
from numpy.testing import assert_allclose

from prepkit.metrics.core import ventilator_metrics
from prepkit.report.words.formatting import format_days
from prepkit.report.words.scenario_text import ventilator_sentence
from prepkit.scenarios.runs import run_scenario


def _daily(values: list[float]) -> pd.DataFrame:
    index = pd.date_range("2027-01-01", periods=len(values), freq="D")
    return pd.DataFrame({"ventilator_demand_devices": values}, index=index)


def test_hand_worked_days_short_and_largest_gap() -> None:
    # Hand-worked (common practice, no source): 4 ventilators against demand 2, 5, 7, 3.
    capacity = dataclasses.replace(small_plan().capacity, ventilators=4)
    vent = ventilator_metrics(_daily([2.0, 5.0, 7.0, 3.0]), capacity)
    assert vent.peak_demand_devices == 7.0 and vent.peak_date == dt.date(2027, 1, 3)
    assert vent.days_short_days == 2 and vent.first_short_date == dt.date(2027, 1, 2)
    assert vent.largest_shortfall_devices == 3.0
    none = ventilator_metrics(_daily([2.0, 5.0]), dataclasses.replace(capacity, ventilators=None))
    assert none.days_short_days == 0 and none.available_devices is None


def test_ventilator_days_follow_icu_bed_days() -> None:
    # Little 1961, Oper Res 9:383: device-days = ICU bed-days x share ventilated (x catchment).
    plan = small_plan()
    plan = dataclasses.replace(
        plan, capacity=dataclasses.replace(plan.capacity, ventilated_icu_share=0.4,
                                           ventilators=3)
    )
    run = run_scenario(plan, "No measures", with_interventions=False)
    daily = run.daily
    assert_allclose(daily["ventilator_demand_devices"].sum(),
                    0.4 * daily["icu_demand_beds"].sum(), rtol=1e-12)
    assert_allclose(run.metrics.ventilators.peak_demand_devices,
                    0.4 * run.metrics.icu.peak_demand_beds, rtol=1e-12)
    over = int(np.sum(daily["ventilator_demand_devices"].to_numpy() > 3.0))
    assert run.metrics.ventilators.days_short_days == over
    sentence = ventilator_sentence(run.metrics.ventilators)
    if over:
        assert sentence.startswith(f"Ventilators run short on {format_days(over)}")
    assert "3 available" in sentence
