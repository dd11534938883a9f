"""Demand against capacity in the single run: daily columns, bed and ventilator metrics.

The rules (available beds, surge opening, shortfalls) are those of
:mod:`prepkit.metrics.beds`, which the ensemble uses too; here they are
applied to one run's daily series and turned into dates.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

import numpy as np
import pandas as pd

from prepkit.metrics.beds import (
    bed_supply,
    days_over_capacity,
    first_over_day,
    largest_shortfall,
    outbreak_demand,
    surge_available,
    surge_opening,
    unmet_bed_days,
    unmet_beds,
    unserved_patients,
)
from prepkit.metrics.peaks import date_of_day, peak
from prepkit.plan import Capacity


@dataclass(frozen=True, kw_only=True)
class BedMetrics:
    """Demand against capacity for one bed type (ward or ICU).

    ``days_over_capacity_days`` are the days demand is above the available
    beds (occupancy above 100% of staffed beds); ``days_strained_days`` the
    days occupancy is above 75% of them (rules of :mod:`prepkit.metrics.beds`);
    ``strain_headroom_beds`` the outbreak patients that fit before it is
    (0 when other patients alone fill 75% or more) [beds]. The unserved
    patients are those who need a bed of this type and do not get one,
    without and with surge beds [persons].
    """

    peak_census_persons: float
    peak_demand_beds: float
    peak_date: dt.date | None
    available_beds: float
    surge_beds: float
    first_over_capacity_date: dt.date | None
    days_over_capacity_days: int
    days_strained_days: int
    strain_headroom_beds: float
    unmet_bed_days: float
    largest_shortfall_beds: float
    surge_trigger_date: dt.date | None
    surge_open_date: dt.date | None
    first_over_capacity_with_surge_date: dt.date | None
    days_over_capacity_with_surge_days: int
    unmet_bed_days_with_surge: float
    largest_shortfall_with_surge_beds: float
    unserved_patients_persons: float
    unserved_patients_with_surge_persons: float

    @property
    def always_strained(self) -> bool:
        """True when other patients alone fill 75% or more of the staffed beds.

        Then any outbreak patient makes them more than 75% full, and the days
        of strain say nothing the days with outbreak patients do not.
        """
        return self.strain_headroom_beds <= 0.0


@dataclass(frozen=True, kw_only=True)
class VentilatorMetrics:
    """Outbreak ICU patients on a ventilator against the ventilators available."""

    peak_demand_devices: float
    peak_date: dt.date | None
    available_devices: int | None
    first_short_date: dt.date | None
    days_short_days: int
    largest_shortfall_devices: float


def first_exceedance_date(demand: pd.Series, available: pd.Series | float) -> dt.date | None:
    """First date demand is above the available beds, or None."""
    return date_of_day(demand.index, int(first_over_day(demand, available)))


def surge_schedule(
    demand: pd.Series,
    available_beds: float,
    surge_beds: float,
    trigger_share: float,
    days_to_open: float,
) -> tuple[pd.Series, dt.date | None, dt.date | None]:
    """Available beds with surge beds opened after the trigger (rule of :func:`surge_opening`).

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
    rule = (float(available_beds), float(surge_beds), trigger_share, days_to_open)
    trigger_day, open_day = surge_opening(demand, *rule)
    with_surge = pd.Series(surge_available(demand, *rule), index=demand.index)
    return (
        with_surge,
        date_of_day(demand.index, int(trigger_day)),
        date_of_day(demand.index, int(open_day)),
    )


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
    for kind, (available, surge) in bed_supply(capacity).items():
        demand = outbreak_demand(out[f"{kind}_census_persons"], capacity)
        with_surge = surge_available(
            demand, available, surge, capacity.surge_trigger_occupancy,
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
        days_short_days=int(days_over_capacity(demand, have)),
        largest_shortfall_devices=float(largest_shortfall(demand, have)),
    )


def bed_metrics(
    daily: pd.DataFrame, kind: str, available_beds: float, surge_beds: float,
    trigger_share: float, days_to_open: float, strain_limit: float, patients: float,
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
    strain_limit : float
        Demand above which the day is strained (:func:`~prepkit.metrics.beds.strain_limits`)
        [beds].
    patients : float
        Patients these hospitals receive who need this bed type
        (:func:`~prepkit.metrics.beds.bed_patients`) [persons].

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
    needed = float(demand.sum())
    unmet = float(unmet_bed_days(demand, available_beds))
    unmet_surge = float(unmet_bed_days(demand, with_surge))
    return BedMetrics(
        peak_census_persons=float(census.max()) if not census.empty else 0.0,
        peak_demand_beds=peak_demand,
        peak_date=peak_date,
        available_beds=float(available_beds),
        surge_beds=float(surge_beds),
        first_over_capacity_date=first_exceedance_date(demand, available_beds),
        days_over_capacity_days=int(days_over_capacity(demand, available_beds)),
        days_strained_days=int(days_over_capacity(demand, strain_limit)),
        strain_headroom_beds=max(0.0, float(strain_limit)),
        unmet_bed_days=unmet,
        largest_shortfall_beds=float(largest_shortfall(demand, available_beds)),
        surge_trigger_date=trigger_date,
        surge_open_date=open_date,
        first_over_capacity_with_surge_date=first_exceedance_date(demand, with_surge),
        days_over_capacity_with_surge_days=int(days_over_capacity(demand, with_surge)),
        unmet_bed_days_with_surge=unmet_surge,
        largest_shortfall_with_surge_beds=float(largest_shortfall(demand, with_surge)),
        unserved_patients_persons=float(unserved_patients(unmet, needed, patients)),
        unserved_patients_with_surge_persons=float(unserved_patients(unmet_surge, needed,
                                                                      patients)),
    )
