"""Additional deaths when beds run short, on hand-worked series.

Rule: patients without a bed = patients x unmet bed-days / bed-days needed (each unmet bed-day is
a day of some stay spent without a bed: bed-days = patients x mean stay, Little J.D.C. 1961,
Operations Research 9:383); additional deaths = patients without a bed x the extra chance of
death without one, ward plus ICU. The two limits the rule must meet: with beds to spare nobody
goes without, with no beds everybody does (common practice, no source); the figures are worked
by hand below.
"""

from __future__ import annotations

import pandas as pd
import pytest
from factories import make_capacity

from prepkit.metrics.beds import bed_patients, shortage_deaths, unserved_patients
from prepkit.metrics.capacity import bed_metrics

DATES = pd.date_range("2027-01-01", periods=5, freq="D", name="date")
#: ICU demand [beds]: 2 + 4 + 6 + 4 + 2 = 18 bed-days needed by 6 patients (mean stay 3 days)
DEMAND = [2.0, 4.0, 6.0, 4.0, 2.0]
PATIENTS = 6.0
EXTRA_ICU, EXTRA_WARD = 0.3, 0.05


def _icu(available: float) -> float:
    daily = pd.DataFrame({"icu_demand_beds": DEMAND, "icu_census_persons": DEMAND}, index=DATES)
    bed = bed_metrics(daily, "icu", available, 0.0, 0.8, 3.0, available, PATIENTS)
    return bed.unserved_patients_persons


def test_with_beds_to_spare_no_patient_goes_without_and_no_death_is_added() -> None:
    assert _icu(1e9) == 0.0
    assert shortage_deaths({"ward": 0.0, "icu": _icu(1e9)},
                           {"ward": EXTRA_WARD, "icu": EXTRA_ICU}) == 0.0


def test_with_no_beds_every_patient_goes_without() -> None:
    # additional deaths = demand (6 ICU patients) x the higher chance: 6 x 0.3 = 1.8
    assert _icu(0.0) == pytest.approx(PATIENTS, rel=1e-12)
    assert shortage_deaths({"ward": 0.0, "icu": _icu(0.0)},
                           {"ward": EXTRA_WARD, "icu": EXTRA_ICU}) == pytest.approx(1.8)


def test_four_beds_leave_a_ninth_of_the_bed_days_and_of_the_patients_without() -> None:
    # 4 ICU beds: short by 2 beds on day 3 only, 2 of the 18 bed-days, so 6 x 2 / 18 = 2/3 of a
    # patient goes without, and 2/3 x 0.3 = 0.2 deaths are added
    assert _icu(4.0) == pytest.approx(2.0 / 3.0, rel=1e-12)
    assert unserved_patients(2.0, 18.0, 6.0) == pytest.approx(2.0 / 3.0)
    assert shortage_deaths({"ward": 0.0, "icu": _icu(4.0)},
                           {"ward": EXTRA_WARD, "icu": EXTRA_ICU}) == pytest.approx(0.2)


def test_ward_and_icu_patients_split_the_admissions_and_add_up() -> None:
    # 100 admissions of which 20 to ICU, half of them to these hospitals: 40 ward, 10 ICU patients;
    # none of them has a bed: 40 x 0.05 + 10 x 0.3 = 5 additional deaths
    capacity = make_capacity(catchment_share=0.5)
    patients = bed_patients(100.0, 20.0, capacity)
    assert patients == {"ward": 40.0, "icu": 10.0}
    assert shortage_deaths(patients, {"ward": EXTRA_WARD, "icu": EXTRA_ICU}) == pytest.approx(5.0)


def test_no_demand_means_nobody_without_a_bed() -> None:
    assert unserved_patients(0.0, 0.0, 0.0) == 0.0
