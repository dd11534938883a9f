"""Planning metrics on hand-made daily series.

Expected values are worked by hand from the definitions (days over capacity,
unmet bed-days as the sum of daily shortfalls, available beds = staffed beds x
(1 - baseline occupancy)): common practice, no source. Surge tiers follow Hick,
Barbera & Kelen 2009, Disaster Med Public Health Prep 3:S59.
"""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd
from factories import make_bands, make_capacity
from numpy.testing import assert_allclose

from prepkit.metrics.absence import recent_sum, working_age_weights
from prepkit.metrics.beds import days_over_capacity, largest_shortfall, unmet_bed_days
from prepkit.metrics.capacity import add_capacity_columns, first_exceedance_date, surge_schedule
from prepkit.metrics.peaks import peak
from prepkit.plan import AgeBand

DATES = pd.date_range("2025-01-01", periods=6, freq="D", name="date")
DEMAND = pd.Series([0.0, 5.0, 12.0, 15.0, 9.0, 4.0], index=DATES)


def test_capacity_gap_metrics() -> None:
    # Arithmetic definitions of the brief (common practice, no source).
    assert peak(DEMAND) == (15.0, dt.date(2025, 1, 4))
    assert first_exceedance_date(DEMAND, 10.0) == dt.date(2025, 1, 3)
    assert days_over_capacity(DEMAND, 10.0) == 2
    assert_allclose(unmet_bed_days(DEMAND, 10.0), 2.0 + 5.0)
    assert_allclose(largest_shortfall(DEMAND, 10.0), 5.0)
    assert first_exceedance_date(DEMAND, 20.0) is None
    assert peak(DEMAND * 0.0) == (0.0, None)


def test_surge_opens_after_delay_and_stays_open() -> None:
    available, trigger, opening = surge_schedule(DEMAND, 10.0, 6.0, 0.8, 1.5)
    assert trigger == dt.date(2025, 1, 3)  # 12 >= 0.8 x 10
    assert opening == dt.date(2025, 1, 5)  # ceil(1.5) = 2 days later
    assert_allclose(available.to_numpy(), [10, 10, 10, 10, 16, 16])
    _, trigger, opening = surge_schedule(DEMAND, 100.0, 6.0, 0.8, 1.0)
    assert trigger is None and opening is None


def test_capacity_columns_use_catchment_and_baseline() -> None:
    capacity = make_capacity(ward_beds=50, ward_baseline_occupancy=0.8, catchment_share=0.5,
                             surge_ward_beds=10, surge_days_to_open=0.0,
                             surge_trigger_occupancy=1.0)
    daily = pd.DataFrame({"ward_census_persons": DEMAND * 2, "icu_census_persons": DEMAND * 0},
                         index=DATES)
    out = add_capacity_columns(daily, capacity)
    assert_allclose(out["ward_demand_beds"], DEMAND)
    assert_allclose(out["ward_available_beds"], 10.0)
    assert_allclose(out["ward_available_with_surge_beds"], [10, 10, 20, 20, 20, 20])
    assert_allclose(out["ward_unmet_with_surge_beds"], 0.0)
    assert_allclose(out["ward_occupancy_share"], DEMAND / 10.0)


def test_working_age_overlap_and_open_band() -> None:
    bands = make_bands((1.0,) * 8)  # 0-9, ..., 60-69, 70+
    weights = working_age_weights(bands, 18, 64, 10)
    assert_allclose(weights, [0.0, 0.2, 1.0, 1.0, 1.0, 1.0, 0.5, 0.0])
    top = working_age_weights((AgeBand(label="60+", lower_age=60, upper_age=None, people=1.0),),
                              18, 64, 10)
    assert_allclose(top, [0.5])  # open band taken as 10 years wide


def test_recent_sum_counts_fractional_day() -> None:
    values = np.array([[1.0, 2.0, 4.0, 8.0]])  # days on the last axis
    assert_allclose(recent_sum(values, 2.5)[0], [1.0, 3.0, 6.5, 13.0])
    assert_allclose(recent_sum(values, 0.0), 0.0)
