"""Planning metrics of one scenario variant: burden, peaks, bed gaps, absence, effects.

Every function here is pure: it takes daily series (pandas objects indexed
by date, one row per day) and returns numbers, dates or new series. Stocks
such as the ward census are the value at the end of each day (a midnight
census); flows such as admissions are the amount during the day.

The definitions of bed demand, available beds, surge opening and unmet
bed-days are in :mod:`prepkit.metrics.beds`, those of workforce absence in
:mod:`prepkit.metrics.absence`: the single run and the ensemble both use
those functions.
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Mapping
from dataclasses import dataclass

import pandas as pd

from prepkit.metrics.beds import bed_patients, bed_supply, shortage_deaths, strain_limits
from prepkit.metrics.capacity import BedMetrics, VentilatorMetrics, bed_metrics, ventilator_metrics
from prepkit.metrics.peaks import peak
from prepkit.metrics.resources import ResourceGap, resource_gaps
from prepkit.plan import Capacity, Supplies


@dataclass(frozen=True, kw_only=True)
class BurdenTotals:
    """Cumulative burden over the whole run.

    Infections include the day-0 seed infections.
    """

    infections_persons: float
    symptomatic_cases_persons: float
    admissions_persons: float
    icu_admissions_persons: float
    hospital_deaths_persons: float
    doses_given_doses: float
    ward_bed_days: float
    icu_bed_days: float


@dataclass(frozen=True, kw_only=True)
class ScenarioMetrics:
    """Metrics of one scenario variant.

    ``total.hospital_deaths_persons`` are the deaths in hospital care, as if
    every patient had a bed; ``shortage_deaths_persons`` the additional deaths
    when beds run short (``_with_surge``: once surge beds are open), rule of
    :func:`prepkit.metrics.beds.shortage_deaths`. ``resources`` is the need
    against supply of beds at three levels and after staff absence,
    ventilators, oxygen, protective equipment and mortuary spaces
    (:func:`prepkit.metrics.resources.resource_gaps`).
    """

    total: BurdenTotals
    by_band: Mapping[str, BurdenTotals]
    infection_attack_share: float
    symptomatic_attack_share: float
    ward: BedMetrics
    icu: BedMetrics
    peak_infections_per_day: float
    peak_infections_date: dt.date | None
    peak_admissions_per_day: float
    peak_admissions_date: dt.date | None
    peak_absence_share: float
    peak_absence_date: dt.date | None
    ventilators: VentilatorMetrics
    shortage_deaths_persons: float
    shortage_deaths_with_surge_persons: float
    resources: tuple[ResourceGap, ...] = ()


@dataclass(frozen=True, kw_only=True)
class InterventionEffect:
    """Scenario with interventions compared with the same scenario without them.

    Positive reductions and averted numbers mean the interventions helped;
    a positive delay means the peak came later. Percentages are None when
    the peak without interventions is zero, delays when either peak is.
    """

    ward_peak_reduction_beds: float
    ward_peak_reduction_share: float | None
    ward_peak_delay_days: int | None
    icu_peak_reduction_beds: float
    icu_peak_reduction_share: float | None
    icu_peak_delay_days: int | None
    averted_infections_persons: float
    averted_symptomatic_cases_persons: float
    averted_admissions_persons: float
    averted_icu_admissions_persons: float
    averted_hospital_deaths_persons: float
    averted_shortage_deaths_persons: float
    averted_ward_unmet_bed_days: float
    averted_icu_unmet_bed_days: float
    averted_ward_unmet_bed_days_with_surge: float
    averted_icu_unmet_bed_days_with_surge: float


def scenario_metrics(
    daily: pd.DataFrame,
    totals: BurdenTotals,
    totals_by_band: Mapping[str, BurdenTotals],
    population: float,
    capacity: Capacity,
    extra_fatality: Mapping[str, float],
    supplies: Supplies | None = None,
) -> ScenarioMetrics:
    """All metrics of one scenario variant.

    Parameters
    ----------
    daily : pandas.DataFrame
        Daily series with capacity and absence columns.
    totals : BurdenTotals
        Whole-population totals.
    totals_by_band : mapping of str to BurdenTotals
        Totals by band label.
    population : float
        Total population [persons].
    capacity : Capacity
        Hospital capacity.
    extra_fatality : mapping of str to float
        Added chance of death without a bed, by bed type (``"ward"``,
        ``"icu"``) [fraction].
    supplies : Supplies, optional
        Staff and supplies; with them (and the columns of
        :func:`prepkit.metrics.resources.add_resource_columns` in ``daily``)
        the metrics hold the resource gaps.

    Returns
    -------
    ScenarioMetrics
        The metrics.
    """
    supply = bed_supply(capacity)
    strain = strain_limits(capacity)
    patients = bed_patients(totals.admissions_persons, totals.icu_admissions_persons, capacity)
    ward = bed_metrics(daily, "ward", *supply["ward"], capacity.surge_trigger_occupancy,
                       capacity.surge_days_to_open, strain["ward"], float(patients["ward"]))
    icu = bed_metrics(daily, "icu", *supply["icu"], capacity.surge_trigger_occupancy,
                      capacity.surge_days_to_open, strain["icu"], float(patients["icu"]))
    unserved = {"ward": ward.unserved_patients_persons, "icu": icu.unserved_patients_persons}
    unserved_surge = {"ward": ward.unserved_patients_with_surge_persons,
                      "icu": icu.unserved_patients_with_surge_persons}
    inf_peak, inf_date = peak(daily["infections_per_day"])
    adm_peak, adm_date = peak(daily["admissions_per_day"])
    abs_peak, abs_date = peak(daily["absence_share"])
    return ScenarioMetrics(
        total=totals,
        by_band=dict(totals_by_band),
        infection_attack_share=totals.infections_persons / population,
        symptomatic_attack_share=totals.symptomatic_cases_persons / population,
        ward=ward,
        icu=icu,
        peak_infections_per_day=inf_peak,
        peak_infections_date=inf_date,
        peak_admissions_per_day=adm_peak,
        peak_admissions_date=adm_date,
        peak_absence_share=abs_peak,
        peak_absence_date=abs_date,
        ventilators=ventilator_metrics(daily, capacity),
        shortage_deaths_persons=float(shortage_deaths(unserved, extra_fatality)),
        shortage_deaths_with_surge_persons=float(shortage_deaths(unserved_surge, extra_fatality)),
        resources=() if supplies is None else resource_gaps(daily, capacity, supplies),
    )


def _reduction(with_peak: float, without_peak: float) -> tuple[float, float | None]:
    cut = without_peak - with_peak
    return cut, (cut / without_peak if without_peak > 0.0 else None)


def _delay(with_date: dt.date | None, without_date: dt.date | None) -> int | None:
    if with_date is None or without_date is None:
        return None
    return (with_date - without_date).days


def intervention_effect(with_: ScenarioMetrics, without: ScenarioMetrics) -> InterventionEffect:
    """Compare a scenario with and without its interventions.

    Parameters
    ----------
    with_, without : ScenarioMetrics
        Metrics with and without interventions.

    Returns
    -------
    InterventionEffect
        Peak reductions [beds and percent], peak delays [days] and averted
        burden [persons, bed-days].
    """
    ward_cut, ward_pct = _reduction(with_.ward.peak_demand_beds, without.ward.peak_demand_beds)
    icu_cut, icu_pct = _reduction(with_.icu.peak_demand_beds, without.icu.peak_demand_beds)
    a, b = with_.total, without.total
    return InterventionEffect(
        ward_peak_reduction_beds=ward_cut,
        ward_peak_reduction_share=ward_pct,
        ward_peak_delay_days=_delay(with_.ward.peak_date, without.ward.peak_date),
        icu_peak_reduction_beds=icu_cut,
        icu_peak_reduction_share=icu_pct,
        icu_peak_delay_days=_delay(with_.icu.peak_date, without.icu.peak_date),
        averted_infections_persons=b.infections_persons - a.infections_persons,
        averted_symptomatic_cases_persons=b.symptomatic_cases_persons
        - a.symptomatic_cases_persons,
        averted_admissions_persons=b.admissions_persons - a.admissions_persons,
        averted_icu_admissions_persons=b.icu_admissions_persons - a.icu_admissions_persons,
        averted_hospital_deaths_persons=b.hospital_deaths_persons - a.hospital_deaths_persons,
        averted_shortage_deaths_persons=(without.shortage_deaths_persons
                                         - with_.shortage_deaths_persons),
        averted_ward_unmet_bed_days=without.ward.unmet_bed_days - with_.ward.unmet_bed_days,
        averted_icu_unmet_bed_days=without.icu.unmet_bed_days - with_.icu.unmet_bed_days,
        averted_ward_unmet_bed_days_with_surge=without.ward.unmet_bed_days_with_surge
        - with_.ward.unmet_bed_days_with_surge,
        averted_icu_unmet_bed_days_with_surge=without.icu.unmet_bed_days_with_surge
        - with_.icu.unmet_bed_days_with_surge,
    )
