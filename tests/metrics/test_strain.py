"""Days of strain: occupancy of staffed beds above 75% and above 100%, on hand-worked series.

The thresholds are those after which excess deaths followed in French G. et al. (2021),
Impact of hospital strain on excess deaths during the COVID-19 pandemic, MMWR 70(46):1613.
Occupancy = (other patients + outbreak patients) / staffed beds (common practice, no source);
the expected days are counted by hand below.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
from factories import make_capacity

from prepkit.metrics.beds import bed_supply, days_over_capacity, strain_limits
from prepkit.metrics.capacity import bed_metrics

DATES = pd.date_range("2027-01-01", periods=8, freq="D", name="date")
#: ward demand [beds]; 100 staffed ward beds, 60 of them used by other patients
DEMAND = [0.0, 10.0, 15.0, 16.0, 39.0, 40.0, 41.0, 20.0]


def test_strain_limit_and_days_by_hand() -> None:
    capacity = make_capacity(ward_beds=100, ward_baseline_occupancy=0.6)
    available, _ = bed_supply(capacity)["ward"]
    limit = strain_limits(capacity)["ward"]
    # 75% of 100 beds is 75 occupied; 60 are other patients, so 15 outbreak patients reach it
    assert limit == 15.0 and available == 40.0
    # occupancy 60%, 70%, 75% (not above), 76%, 99%, 100% (not above), 101%, 80%
    occupancy = [(60.0 + d) / 100.0 for d in DEMAND]
    assert sum(o > 0.75 for o in occupancy) == 5
    assert days_over_capacity(DEMAND, limit) == 5
    # above 100% is the days short: demand above the 40 available beds, once
    assert sum(o > 1.0 for o in occupancy) == 1 == days_over_capacity(DEMAND, available)


def test_the_single_run_reports_both_thresholds() -> None:
    capacity = make_capacity(ward_beds=100, ward_baseline_occupancy=0.6, surge_ward_beds=0)
    daily = pd.DataFrame({"ward_demand_beds": DEMAND, "ward_census_persons": DEMAND},
                         index=DATES)
    available, surge = bed_supply(capacity)["ward"]
    bed = bed_metrics(daily, "ward", available, surge, 0.8, 3.0, strain_limits(capacity)["ward"],
                      10.0)
    assert (bed.days_strained_days, bed.days_over_capacity_days) == (5, 1)
    assert bed.strain_headroom_beds == 15.0


def test_full_by_other_patients_alone_is_strained_every_day() -> None:
    # 80% of the ICU beds used by other patients: above 75% before any outbreak patient
    capacity = make_capacity(icu_beds=20, icu_baseline_occupancy=0.8)
    limit = strain_limits(capacity)["icu"]
    assert limit < 0.0
    assert days_over_capacity(np.zeros(10), limit) == 10


def test_beds_three_quarters_full_of_other_patients_are_always_strained() -> None:
    # 75% used by other patients: any outbreak patient takes occupancy above 75%; 74% is not yet
    # (at 75% exactly, the 7 days with an outbreak patient; at 80%, all 8 days; at 74%, the days
    # with more than one outbreak patient: demand 10 and above, 7 days)
    for baseline, always, days in ((0.75, True, 7), (0.8, True, 8), (0.74, False, 7)):
        capacity = make_capacity(ward_beds=100, ward_baseline_occupancy=baseline,
                                 surge_ward_beds=0)
        daily = pd.DataFrame({"ward_demand_beds": DEMAND, "ward_census_persons": DEMAND},
                             index=DATES)
        available, surge = bed_supply(capacity)["ward"]
        bed = bed_metrics(daily, "ward", available, surge, 0.8, 3.0,
                          strain_limits(capacity)["ward"], 10.0)
        assert bed.always_strained is always, baseline
        assert bed.days_strained_days == days, baseline
