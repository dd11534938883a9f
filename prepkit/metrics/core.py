"""Planning metrics from the daily series: burden, peaks, bed gaps, absence, effects.

Every function here is pure: it takes daily series (pandas objects indexed
by date, one row per day) and returns numbers, dates or new series. Stocks
such as the ward census are the value at the end of each day (a midnight
census); flows such as admissions are the amount during the day.

Definitions
-----------
* Outbreak bed demand = catchment share x residents' census [beds].
* Available beds = staffed beds x (1 - baseline occupancy) [beds]; with
  surge, the surge beds are added from their opening day on.
* Surge beds of a type open ``ceil(days_to_open)`` days after the first day
  on which demand reaches ``surge_trigger_occupancy`` of the available
  (non-surge) beds, and stay open.
* Unmet bed-days = sum over days of ``max(0, demand - available)`` x 1 day
  (daily resolution); the largest shortfall is its daily maximum.
* Workforce absence: workers are employed people of working age (a band
  partly inside the working ages counts in proportion to the overlap,
  ages assumed uniform in a band; an open top band is taken as
  ``open_band_width_years`` wide). Workers ill at home are those with symptom onset in the last
  ``days_absent_per_illness`` days (a fractional last day counts in
  part); carers are ``carer_share x workers x school closure intensity``.
  The absence share is their sum over the workers, capped at 1.
"""

from __future__ import annotations

import datetime as dt
import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd
from numpy.typing import NDArray

from prepkit.plan import AgeBand
from prepkit.plan.resources import Capacity, Workforce


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
class BedMetrics:
    """Demand against capacity for one bed type (ward or ICU)."""

    peak_census_persons: float
    peak_demand_beds: float
    peak_date: dt.date | None
    available_beds: float
    surge_beds: float
    first_over_capacity_date: dt.date | None
    days_over_capacity_days: int
    unmet_bed_days: float
    largest_shortfall_beds: float
    surge_trigger_date: dt.date | None
    surge_open_date: dt.date | None
    first_over_capacity_with_surge_date: dt.date | None
    days_over_capacity_with_surge_days: int
    unmet_bed_days_with_surge: float
    largest_shortfall_with_surge_beds: float


@dataclass(frozen=True, kw_only=True)
class VentilatorMetrics:
    """Outbreak ICU patients on a ventilator against the ventilators available."""

    peak_demand_devices: float
    peak_date: dt.date | None
    available_devices: int | None
    first_short_date: dt.date | None
    days_short_days: int
    largest_shortfall_devices: float


@dataclass(frozen=True, kw_only=True)
class ScenarioMetrics:
    """Metrics of one scenario variant."""

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
    averted_ward_unmet_bed_days: float
    averted_icu_unmet_bed_days: float
    averted_ward_unmet_bed_days_with_surge: float
    averted_icu_unmet_bed_days_with_surge: float


def _date(stamp: object) -> dt.date:
    return pd.Timestamp(stamp).date()  # type: ignore[arg-type]


def peak(series: pd.Series) -> tuple[float, dt.date | None]:
    """Largest value and the first date it occurs (None when the largest is <= 0).

    Parameters
    ----------
    series : pandas.Series
        Daily values indexed by date.

    Returns
    -------
    tuple
        Peak value (in the series' unit) and its date.
    """
    if series.empty:
        return 0.0, None
    values = series.to_numpy(dtype=np.float64)
    top = int(np.argmax(values))
    value = float(values[top])
    return value, (_date(series.index[top]) if value > 0.0 else None)


def first_exceedance_date(demand: pd.Series, available: pd.Series | float) -> dt.date | None:
    """First date demand is above the available beds, or None."""
    over = (demand - available) > 0.0
    if not bool(over.any()):
        return None
    return _date(over.idxmax())


def days_over_capacity(demand: pd.Series, available: pd.Series | float) -> int:
    """Number of days demand is above the available beds [days]."""
    return int(((demand - available) > 0.0).sum())


def unmet_beds(demand: pd.Series, available: pd.Series | float) -> pd.Series:
    """Daily shortfall ``max(0, demand - available)`` [beds]."""
    return (demand - available).clip(lower=0.0)


def unmet_bed_days(demand: pd.Series, available: pd.Series | float) -> float:
    """Sum of the daily shortfall x 1 day [bed-days]."""
    return float(unmet_beds(demand, available).sum())


def largest_shortfall(demand: pd.Series, available: pd.Series | float) -> float:
    """Largest daily shortfall [beds]."""
    short = unmet_beds(demand, available)
    return float(short.max()) if not short.empty else 0.0


def surge_schedule(
    demand: pd.Series,
    available_beds: float,
    surge_beds: float,
    trigger_share: float,
    days_to_open: float,
) -> tuple[pd.Series, dt.date | None, dt.date | None]:
    """Available beds with surge beds opened after the trigger.

    Parameters
    ----------
    demand : pandas.Series
        Daily outbreak bed demand [beds].
    available_beds : float
        Available beds without surge [beds].
    surge_beds : float
        Surge beds of this type [beds].
    trigger_share : float
        Demand as a share of available beds that starts opening [fraction].
    days_to_open : float
        Days from the trigger until the beds are usable [days]; rounded up
        to whole days.

    Returns
    -------
    available : pandas.Series
        Available beds each day, surge included once open [beds].
    trigger_date, open_date : datetime.date or None
        Day the trigger was reached and day the beds opened (None when not
        reached, or when there are no surge beds for the open date).
    """
    values = demand.to_numpy(dtype=np.float64)
    available = np.full(values.size, float(available_beds))
    reached = values >= trigger_share * available_beds
    if available_beds <= 0.0:
        reached = values > 0.0
    trigger_date = None
    open_date = None
    if reached.any():
        first = int(np.argmax(reached))
        trigger_date = _date(demand.index[first])
        opening = first + int(math.ceil(max(days_to_open, 0.0)))
        if surge_beds > 0.0 and opening < values.size:
            available[opening:] += surge_beds
            open_date = _date(demand.index[opening])
        elif surge_beds > 0.0:
            open_date = trigger_date + dt.timedelta(days=opening - first)
    return pd.Series(available, index=demand.index), trigger_date, open_date


def add_capacity_columns(daily: pd.DataFrame, capacity: Capacity) -> pd.DataFrame:
    """Add demand, available beds, shortfall and occupancy columns for ward and ICU.

    Parameters
    ----------
    daily : pandas.DataFrame
        Needs ``ward_census_persons`` and ``icu_census_persons``.
    capacity : Capacity
        Hospital capacity of the plan.

    Returns
    -------
    pandas.DataFrame
        A copy with ``{ward,icu}_demand_beds``, ``_available_beds``,
        ``_available_with_surge_beds``, ``_unmet_beds``,
        ``_unmet_with_surge_beds`` and ``_occupancy_share`` (demand over
        available beds without surge).
    """
    out = daily.copy()
    kinds = {
        "ward": (capacity.ward_beds, capacity.ward_baseline_occupancy, capacity.surge_ward_beds),
        "icu": (capacity.icu_beds, capacity.icu_baseline_occupancy, capacity.surge_icu_beds),
    }
    for kind, (beds, baseline, surge) in kinds.items():
        demand = out[f"{kind}_census_persons"] * capacity.catchment_share
        available = float(beds) * (1.0 - baseline)
        with_surge, _, _ = surge_schedule(
            demand,
            available,
            float(surge),
            capacity.surge_trigger_occupancy,
            capacity.surge_days_to_open,
        )
        out[f"{kind}_demand_beds"] = demand
        out[f"{kind}_available_beds"] = available
        out[f"{kind}_available_with_surge_beds"] = with_surge
        out[f"{kind}_unmet_beds"] = unmet_beds(demand, available)
        out[f"{kind}_unmet_with_surge_beds"] = unmet_beds(demand, with_surge)
        if available > 0.0:
            out[f"{kind}_occupancy_share"] = demand / available
        else:
            out[f"{kind}_occupancy_share"] = np.where(demand > 0.0, np.inf, 0.0)
    out["ventilator_demand_devices"] = out["icu_demand_beds"] * capacity.ventilated_icu_share
    return out


def ventilator_metrics(daily: pd.DataFrame, capacity: Capacity) -> VentilatorMetrics:
    """Ventilators needed by outbreak ICU patients against those available.

    Demand on a day is ICU demand x the share of ICU patients ventilated
    (a census times a share: by Little's law, Little 1961, Oper Res 9:383,
    the same as ventilated admissions x days on a ventilator when the share
    holds over the stay).

    Parameters
    ----------
    daily : pandas.DataFrame
        Daily series with ``ventilator_demand_devices``.
    capacity : Capacity
        Hospital capacity (ventilators available, if given).

    Returns
    -------
    VentilatorMetrics
        Peak demand [devices] and its date; with ventilators given, the
        first day short, days short [days] and the largest shortfall
        [devices]; without, no days short.
    """
    demand = daily["ventilator_demand_devices"]
    top, when = peak(demand)
    if capacity.ventilators is None:
        return VentilatorMetrics(
            peak_demand_devices=top, peak_date=when, available_devices=None,
            first_short_date=None, days_short_days=0, largest_shortfall_devices=0.0,
        )
    have = float(capacity.ventilators)
    return VentilatorMetrics(
        peak_demand_devices=top, peak_date=when, available_devices=capacity.ventilators,
        first_short_date=first_exceedance_date(demand, have),
        days_short_days=days_over_capacity(demand, have),
        largest_shortfall_devices=largest_shortfall(demand, have),
    )


def working_age_weights(
    bands: Sequence[AgeBand], age_min: int, age_max: int, open_band_years: int
) -> NDArray[np.float64]:
    """Share of each band inside the working ages (ages uniform within a band).

    Parameters
    ----------
    bands : sequence of AgeBand
        Age bands of the plan.
    age_min, age_max : int
        Working ages, inclusive [years].
    open_band_years : int
        Ages an open top band is taken to span [years]
        (:attr:`prepkit.plan.Workforce.open_band_width_years`).

    Returns
    -------
    ndarray
        Per band overlap share [fraction].
    """
    out = np.zeros(len(bands))
    for i, band in enumerate(bands):
        upper = (
            band.lower_age + open_band_years - 1 if band.upper_age is None else band.upper_age
        )
        width = upper - band.lower_age + 1
        overlap = min(upper, age_max) - max(band.lower_age, age_min) + 1
        out[i] = max(0, overlap) / width if width > 0 else 0.0
    return out


def recent_sum(values: NDArray[np.float64], days: float) -> NDArray[np.float64]:
    """Sum of the last ``days`` daily values, the oldest day counted in part.

    Parameters
    ----------
    values : ndarray, shape (T, ...)
        Daily values along the first axis.
    days : float
        Window length [days].

    Returns
    -------
    ndarray
        Same shape; row ``d`` sums rows ``d - ceil(days) + 1 .. d`` with the
        oldest weighted by the fractional part.
    """
    if days <= 0.0:
        return np.zeros_like(values)
    whole = int(math.floor(days))
    frac = days - whole
    kernel = [1.0] * whole + ([frac] if frac > 0.0 else [])
    out = np.zeros_like(values)
    for lag, weight in enumerate(kernel):
        if lag == 0:
            out += weight * values
        elif lag < values.shape[0]:
            out[lag:] += weight * values[:-lag]
    return out


def add_absence_columns(
    daily: pd.DataFrame,
    onsets_by_band: NDArray[np.float64],
    populations: Sequence[float] | NDArray[np.float64],
    bands: Sequence[AgeBand],
    workforce: Workforce,
) -> pd.DataFrame:
    """Add workforce absence columns.

    Parameters
    ----------
    daily : pandas.DataFrame
        Needs ``school_closure_intensity_share``.
    onsets_by_band : ndarray, shape (days, bands)
        Daily symptom onsets [persons/day].
    populations : sequence of float
        Band populations [persons].
    bands : sequence of AgeBand
        Age bands.
    workforce : Workforce
        Workforce inputs.

    Returns
    -------
    pandas.DataFrame
        A copy with ``workers_persons``, ``workers_ill_persons``,
        ``workers_caring_persons``, ``absent_workers_persons`` and
        ``absence_share``.
    """
    out = daily.copy()
    weight = working_age_weights(bands, workforce.working_age_min, workforce.working_age_max,
                                 workforce.open_band_width_years)
    employed = weight * workforce.employed_share
    workers = float(np.dot(employed, np.asarray(populations, dtype=np.float64)))
    ill = recent_sum(onsets_by_band, workforce.days_absent_per_illness) @ employed
    carers = workforce.carer_share_school_closure * workers * out[
        "school_closure_intensity_share"
    ].to_numpy(dtype=np.float64)
    absent = ill + carers
    out["workers_persons"] = workers
    out["workers_ill_persons"] = ill
    out["workers_caring_persons"] = carers
    out["absent_workers_persons"] = absent
    out["absence_share"] = np.minimum(1.0, absent / workers) if workers > 0 else 0.0
    return out


def burden_totals(final: Mapping[str, float]) -> BurdenTotals:
    """Burden totals from final counter values keyed by :class:`BurdenTotals` field."""
    return BurdenTotals(**{k: float(v) for k, v in final.items()})


def bed_metrics(
    daily: pd.DataFrame, kind: str, available_beds: float, surge_beds: float,
    trigger_share: float, days_to_open: float,
) -> BedMetrics:
    """Demand-against-capacity metrics of one bed type.

    Parameters
    ----------
    daily : pandas.DataFrame
        Needs ``{kind}_census_persons`` and ``{kind}_demand_beds``.
    kind : {"ward", "icu"}
        Bed type.
    available_beds, surge_beds : float
        Available (non-surge) and surge beds [beds].
    trigger_share, days_to_open : float
        Surge trigger [fraction] and opening delay [days].

    Returns
    -------
    BedMetrics
        Peaks, first date over capacity, days over, unmet bed-days and
        largest shortfall, without and with surge beds.

    References
    ----------
    Hick J.L., Barbera J.A., Kelen G.D. (2009). Refining surge capacity:
    conventional, contingency, and crisis capacity. Disaster Med. Public
    Health Prep. 3(Suppl 1):S59-S67 (surge beds as a separate tier).
    """
    demand = daily[f"{kind}_demand_beds"]
    census = daily[f"{kind}_census_persons"]
    peak_demand, peak_date = peak(demand)
    with_surge, trigger_date, open_date = surge_schedule(
        demand, available_beds, surge_beds, trigger_share, days_to_open
    )
    return BedMetrics(
        peak_census_persons=float(census.max()) if not census.empty else 0.0,
        peak_demand_beds=peak_demand,
        peak_date=peak_date,
        available_beds=float(available_beds),
        surge_beds=float(surge_beds),
        first_over_capacity_date=first_exceedance_date(demand, available_beds),
        days_over_capacity_days=days_over_capacity(demand, available_beds),
        unmet_bed_days=unmet_bed_days(demand, available_beds),
        largest_shortfall_beds=largest_shortfall(demand, available_beds),
        surge_trigger_date=trigger_date,
        surge_open_date=open_date,
        first_over_capacity_with_surge_date=first_exceedance_date(demand, with_surge),
        days_over_capacity_with_surge_days=days_over_capacity(demand, with_surge),
        unmet_bed_days_with_surge=unmet_bed_days(demand, with_surge),
        largest_shortfall_with_surge_beds=largest_shortfall(demand, with_surge),
    )


def scenario_metrics(
    daily: pd.DataFrame,
    totals: BurdenTotals,
    totals_by_band: Mapping[str, BurdenTotals],
    population: float,
    capacity: Capacity,
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

    Returns
    -------
    ScenarioMetrics
        The metrics.
    """
    ward_available = capacity.ward_beds * (1.0 - capacity.ward_baseline_occupancy)
    icu_available = capacity.icu_beds * (1.0 - capacity.icu_baseline_occupancy)
    inf_peak, inf_date = peak(daily["infections_per_day"])
    adm_peak, adm_date = peak(daily["admissions_per_day"])
    abs_peak, abs_date = peak(daily["absence_share"])
    return ScenarioMetrics(
        total=totals,
        by_band=dict(totals_by_band),
        infection_attack_share=totals.infections_persons / population,
        symptomatic_attack_share=totals.symptomatic_cases_persons / population,
        ward=bed_metrics(
            daily, "ward", ward_available, capacity.surge_ward_beds,
            capacity.surge_trigger_occupancy, capacity.surge_days_to_open,
        ),
        icu=bed_metrics(
            daily, "icu", icu_available, capacity.surge_icu_beds,
            capacity.surge_trigger_occupancy, capacity.surge_days_to_open,
        ),
        peak_infections_per_day=inf_peak,
        peak_infections_date=inf_date,
        peak_admissions_per_day=adm_peak,
        peak_admissions_date=adm_date,
        peak_absence_share=abs_peak,
        peak_absence_date=abs_date,
        ventilators=ventilator_metrics(daily, capacity),
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
        averted_ward_unmet_bed_days=without.ward.unmet_bed_days - with_.ward.unmet_bed_days,
        averted_icu_unmet_bed_days=without.icu.unmet_bed_days - with_.icu.unmet_bed_days,
        averted_ward_unmet_bed_days_with_surge=without.ward.unmet_bed_days_with_surge
        - with_.ward.unmet_bed_days_with_surge,
        averted_icu_unmet_bed_days_with_surge=without.icu.unmet_bed_days_with_surge
        - with_.icu.unmet_bed_days_with_surge,
    )
