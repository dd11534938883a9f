"""Resources beyond beds, each as daily need against supply.

Staffed beds after absence, crisis beds, oxygen, protective equipment and
mortuary spaces.

Every rule takes one daily series or a draws x days array (the last axis is
days), like :mod:`prepkit.metrics.beds`, whose shortfall rules the gaps reuse.

* **Staffed beds after absence.** Nurses and doctors fall ill and stay home
  to care for children like the rest of the working population (the
  workforce absence share ``a(t)`` of :mod:`prepkit.metrics.absence`).
  With ``S`` staff on duty when none is absent and ``p`` patients per staff
  member, the beds they can staff are ``S (1 - a(t)) p``; the staffed beds
  are the least of the beds and what nurses and doctors can staff. Staff
  not given are exactly those the beds need (``S = beds / p``), so the
  staffed beds fall by the absence share: ``beds x (1 - a(t))``. Care of
  other patients shrinks in step (planned work is put off), so outbreak
  patients get ``staffed x (1 - baseline occupancy)``: the available beds
  fall by the same share as the staffed beds.
* **Three bed levels** (Hick, Barbera & Kelen 2009): conventional = the
  available staffed beds; contingency = plus the surge beds once open;
  crisis = plus the crisis-space beds, opened on the surge beds' schedule
  (:func:`~prepkit.metrics.beds.surge_available` with both).
* **Oxygen** [L/min] = outbreak ward patients x share on oxygen x flow +
  the same for ICU. By Little's law (Little 1961) the litres over the wave
  are patient-days on oxygen x flow x 1,440 minutes.
* **Protective equipment** used per day = ward patient-days x items per ward
  patient-day + the same for ICU. The stock starts at the day-0 figure,
  gains the daily resupply and loses the day's use, never above the day-0
  stock (the stores hold no more) nor below zero; a day is short when the
  stock and that day's delivery do not cover the use (the shortfall is the
  items missing that day).
* **Mortuary spaces** in use = deaths at these hospitals over the last
  ``mortuary_days`` days (a fractional last day counted in part), deaths in
  hospital care plus the additional deaths when beds run short; by Little's
  law the mean spaces in use = deaths per day x days before release.

References
----------
Hick J.L., Barbera J.A., Kelen G.D. (2009). Refining surge capacity:
conventional, contingency, and crisis capacity. Disaster Med. Public Health
Prep. 3(Suppl 1):S59-S67.

Institute of Medicine (2012). Crisis Standards of Care: A Systems Framework
for Catastrophic Disaster Response. National Academies Press.

Little J.D.C. (1961). A proof for the queuing formula L = lambda W.
Operations Research 9:383-387.

Hvarfner A., Al-Djaber A., Ekstrom H., Enarsson M., Castegren M., Baker T.,
Schell C.O. (2022). Oxygen provision to severely ill COVID-19 patients at
the peak of the 2020 pandemic in a Swedish district hospital. PLOS ONE
17(1):e0249984 (mean flow 3.0 L/min to ward patients on oxygen; quotes the
World Health Organization's estimate of 10 L/min for severe patients).
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd
from numpy.typing import ArrayLike, NDArray

from prepkit.metrics.absence import recent_sum
from prepkit.metrics.beds import (
    bed_supply,
    days_over_capacity,
    first_over_day,
    largest_shortfall,
    surge_available,
    unmet_beds,
    unserved_patients,
)
from prepkit.metrics.peaks import date_of_day, peak
from prepkit.plan import Capacity
from prepkit.plan.resources import STOCK_ITEMS, StockItem, Supplies

__all__ = [
    "BED_LEVELS",
    "MINUTES_PER_DAY",
    "ResourceGap",
    "add_resource_columns",
    "mortuary_in_use",
    "oxygen_lpm",
    "resource_gaps",
    "stock_run",
    "staffed_beds",
    "stock_use",
]

MINUTES_PER_DAY = 1440.0
"""Minutes in a day, to turn a flow [L/min] into litres per day."""


def staffed_beds(beds: float, absence_share: ArrayLike,
                 staff: Sequence[tuple[float | None, float]]) -> NDArray[np.float64]:
    """Beds the staff on duty can look after each day [beds], at most ``beds``.

    Parameters
    ----------
    beds : float
        Staffed beds when no one is absent [beds].
    absence_share : array, shape (..., days)
        Share of workers absent [fraction].
    staff : sequence of (float or None, float)
        For each staff group (nurses, doctors): those on duty per shift when
        none is absent [persons] (None: exactly ``beds / patients per
        person``) and patients per person.

    Returns
    -------
    ndarray
        Shaped as ``absence_share``; equal to ``beds`` without absence when
        the staff are not given.
    """
    present = 1.0 - np.clip(np.asarray(absence_share, dtype=np.float64), 0.0, 1.0)
    out = np.full(present.shape, float(beds))
    for on_duty, per_person in staff:
        people = float(beds) / per_person if on_duty is None else float(on_duty)
        out = np.minimum(out, people * present * per_person)
    return out


def oxygen_lpm(ward_patients: ArrayLike, icu_patients: ArrayLike, supplies: Supplies
               ) -> NDArray[np.float64]:
    """Oxygen flow outbreak patients need [litres per minute]."""
    ward = np.asarray(ward_patients, dtype=np.float64)
    icu = np.asarray(icu_patients, dtype=np.float64)
    return np.asarray(ward * supplies.ward_oxygen_share * supplies.ward_oxygen_lpm
                      + icu * supplies.icu_oxygen_share * supplies.icu_oxygen_lpm,
                      dtype=np.float64)


def stock_use(ward_patients: ArrayLike, icu_patients: ArrayLike, item: StockItem
              ) -> NDArray[np.float64]:
    """Items used each day: ward and ICU patient-days x items per patient-day [items/day]."""
    ward = np.asarray(ward_patients, dtype=np.float64)
    icu = np.asarray(icu_patients, dtype=np.float64)
    return np.asarray(ward * item.ward_per_patient_day + icu * item.icu_per_patient_day,
                      dtype=np.float64)


def stock_run(use: ArrayLike, stock: float, resupply_per_day: float
              ) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Stock at the end of each day and the items missing each day.

    Parameters
    ----------
    use : array, shape (..., days)
        Items needed each day [items/day].
    stock : float
        Items in stock on day 0, before its use [items].
    resupply_per_day : float
        Items delivered each day, day 0 included [items/day].

    Returns
    -------
    left, missing : ndarray
        Shaped as ``use``: end-of-day stock, between 0 and the day-0 stock
        (the stores hold no more) [items], and the day's use that stock and
        delivery could not cover [items/day].
    """
    need = np.asarray(use, dtype=np.float64)
    left = np.empty_like(need)
    missing = np.empty_like(need)
    held = np.full(need.shape[:-1], float(stock))
    for day in range(need.shape[-1]):
        have = held + resupply_per_day
        missing[..., day] = np.maximum(0.0, need[..., day] - have)
        # the stores hold at most the day-0 stock: deliveries replace what was used
        held = np.minimum(float(stock), np.maximum(0.0, have - need[..., day]))
        left[..., day] = held
    return left, missing


def mortuary_in_use(deaths_per_day: ArrayLike, days: float) -> NDArray[np.float64]:
    """Mortuary spaces in use: deaths of the last ``days`` days [spaces] (Little's law)."""
    return recent_sum(deaths_per_day, days)


# ---- One run's daily columns and gaps ----------------------------------------------------------

#: Bed levels of the gap table, lowest first (Hick, Barbera & Kelen 2009).
BED_LEVELS: tuple[str, ...] = ("conventional", "contingency", "crisis")


@dataclass(frozen=True, kw_only=True)
class ResourceGap:
    """Daily need against supply of one resource in one run.

    Attributes
    ----------
    resource : str
        Key: ``ward_beds_conventional`` ... ``icu_beds_crisis``,
        ``ward_beds_after_absence``, ``icu_beds_after_absence``,
        ``ventilators``, ``oxygen``, ``gowns``, ``gloves``, ``respirators``,
        ``mortuary``.
    unit : str
        ``beds``, ``devices``, ``L/min``, ``items/day`` or ``spaces``.
    supply : float or None
        What there is: the beds of that level once all are open (available,
        plus surge, plus crisis space; after absence: the available beds with
        every nurse and doctor at work), devices, the flow the site
        delivers, the day-0 stock or the spaces; None when the workbook gives
        none (the resource is not compared).
    peak_need : float
        Largest daily need [unit].
    peak_need_date : datetime.date or None
        Its date.
    first_short_date : datetime.date or None
        First day the need is not met; None when never (or not compared).
    days_short_days : int
        Days the need is not met [days].
    largest_gap : float
        Largest daily shortfall [unit]; for stock, the items missing on the
        worst day.
    """

    resource: str
    unit: str
    supply: float | None
    peak_need: float
    peak_need_date: dt.date | None
    first_short_date: dt.date | None
    days_short_days: int
    largest_gap: float

    @property
    def compared(self) -> bool:
        """True when the workbook gives a supply to compare with."""
        return self.supply is not None


def _gap(index: pd.Index, resource: str, unit: str, supply: float | None, need: ArrayLike,
         short: ArrayLike | None) -> ResourceGap:
    """A gap from the daily need and the daily shortfall (None: not compared)."""
    series = pd.Series(np.asarray(need, dtype=np.float64), index=index)
    top, when = peak(series)
    if short is None or supply is None:
        return ResourceGap(resource=resource, unit=unit, supply=None, peak_need=top,
                           peak_need_date=when, first_short_date=None, days_short_days=0,
                           largest_gap=0.0)
    missing = np.asarray(short, dtype=np.float64)
    # the shortfall against none to spare: the bed rules' first day over, days over, largest
    return ResourceGap(resource=resource, unit=unit, supply=float(supply), peak_need=top,
                       peak_need_date=when,
                       first_short_date=date_of_day(index, int(first_over_day(missing, 0.0))),
                       days_short_days=int(days_over_capacity(missing, 0.0)),
                       largest_gap=float(largest_shortfall(missing, 0.0)))


def _by_kind(capacity: Capacity) -> tuple[dict[str, float], dict[str, float], dict[str, float]]:
    """Staffed beds [beds], the share other patients use [fraction] and crisis beds [beds]."""
    return ({"ward": float(capacity.ward_beds), "icu": float(capacity.icu_beds)},
            {"ward": capacity.ward_baseline_occupancy, "icu": capacity.icu_baseline_occupancy},
            {"ward": float(capacity.crisis_ward_beds), "icu": float(capacity.crisis_icu_beds)})


def _staff(supplies: Supplies, kind: str) -> tuple[tuple[float | None, float], ...]:
    """Nurses and doctors of a bed type: (on duty with none absent, patients each)."""
    return tuple((getattr(supplies, f"{kind}_{noun}s"),
                  getattr(supplies, f"{kind}_patients_per_{noun}"))
                 for noun in ("nurse", "doctor"))


def add_resource_columns(daily: pd.DataFrame, capacity: Capacity, supplies: Supplies,
                         extra_fatality: Mapping[str, float], patients: Mapping[str, float]
                         ) -> pd.DataFrame:
    """Add the daily columns of the resources beyond beds (rules in the module notes).

    Parameters
    ----------
    daily : pandas.DataFrame
        Needs the capacity columns (:func:`~prepkit.metrics.capacity.add_capacity_columns`),
        ``absence_share`` and ``hospital_deaths_per_day``.
    capacity : Capacity
        Beds, surge and crisis beds.
    supplies : Supplies
        Staff, oxygen, protective equipment and mortuary inputs.
    extra_fatality : mapping of str to float
        Added chance of death without a bed, by bed type [fraction].
    patients : mapping of str to float
        Patients these hospitals receive who need each bed type [persons]
        (:func:`~prepkit.metrics.beds.bed_patients`).

    Returns
    -------
    pandas.DataFrame
        A copy with ``{ward,icu}_available_crisis_beds``,
        ``{ward,icu}_staffed_after_absence_beds``,
        ``{ward,icu}_available_after_absence_beds``, ``oxygen_need_lpm``,
        ``{item}_use_items_per_day`` (and ``{item}_stock_items`` when a stock
        is given), ``shortage_deaths_per_day`` and
        ``mortuary_in_use_spaces``.
    """
    out = daily.copy()
    absent = out["absence_share"].to_numpy()
    staffed, baseline, crisis = _by_kind(capacity)
    extra_deaths = np.zeros(len(out))
    for kind, (available, surge) in bed_supply(capacity).items():
        demand = out[f"{kind}_demand_beds"].to_numpy()
        out[f"{kind}_available_crisis_beds"] = surge_available(
            demand, available, surge + crisis[kind], capacity.surge_trigger_occupancy,
            capacity.surge_days_to_open)
        after = staffed_beds(staffed[kind], absent, _staff(supplies, kind))
        out[f"{kind}_staffed_after_absence_beds"] = after
        out[f"{kind}_available_after_absence_beds"] = after * (1.0 - baseline[kind])
        per_day = unserved_patients(out[f"{kind}_unmet_beds"].to_numpy(), float(demand.sum()),
                                    patients[kind])
        extra_deaths = extra_deaths + extra_fatality[kind] * per_day
    ward = out["ward_demand_beds"].to_numpy()
    icu = out["icu_demand_beds"].to_numpy()
    out["oxygen_need_lpm"] = oxygen_lpm(ward, icu, supplies)
    for name in STOCK_ITEMS:
        item = supplies.stock_item(name)
        use = stock_use(ward, icu, item)
        out[f"{name}_use_items_per_day"] = use
        if item.stock is not None:
            out[f"{name}_stock_items"] = stock_run(use, item.stock, item.resupply_per_day)[0]
    out["shortage_deaths_per_day"] = extra_deaths
    deaths_here = out["hospital_deaths_per_day"].to_numpy() * capacity.catchment_share
    out["mortuary_in_use_spaces"] = mortuary_in_use(deaths_here + extra_deaths,
                                                    supplies.mortuary_days)
    return out


def resource_gaps(daily: pd.DataFrame, capacity: Capacity, supplies: Supplies
                  ) -> tuple[ResourceGap, ...]:
    """Every resource's need against supply in one run (the gap table's rows).

    Parameters
    ----------
    daily : pandas.DataFrame
        With the columns of :func:`add_resource_columns`.
    capacity : Capacity
        Beds and ventilators.
    supplies : Supplies
        The other supplies.

    Returns
    -------
    tuple of ResourceGap
        Beds at the three levels and after staff absence (ward, then ICU),
        ventilators, oxygen, each item of protective equipment and mortuary
        spaces; those the workbook gives no supply for are not compared.
    """
    index = daily.index
    rows = []
    staffed, baseline, crisis = _by_kind(capacity)
    for kind, (available, surge) in bed_supply(capacity).items():
        demand = daily[f"{kind}_demand_beds"].to_numpy()
        levels = {"conventional": (f"{kind}_available_beds", available),
                  "contingency": (f"{kind}_available_with_surge_beds", available + surge),
                  "crisis": (f"{kind}_available_crisis_beds", available + surge + crisis[kind])}
        for level in BED_LEVELS:
            column, beds = levels[level]
            rows.append(_gap(index, f"{kind}_beds_{level}", "beds", beds, demand,
                             unmet_beds(demand, daily[column].to_numpy())))
        after = daily[f"{kind}_available_after_absence_beds"].to_numpy()
        at_work = float(staffed_beds(staffed[kind], np.zeros(1), _staff(supplies, kind))[0])
        rows.append(_gap(index, f"{kind}_beds_after_absence", "beds",
                         at_work * (1.0 - baseline[kind]), demand, unmet_beds(demand, after)))
    vent = daily["ventilator_demand_devices"].to_numpy()
    have = None if capacity.ventilators is None else float(capacity.ventilators)
    rows.append(_gap(index, "ventilators", "devices", have, vent,
                     None if have is None else unmet_beds(vent, have)))
    oxygen = daily["oxygen_need_lpm"].to_numpy()
    flow = supplies.oxygen_supply_lpm
    rows.append(_gap(index, "oxygen", "L/min", flow, oxygen,
                     None if flow is None else unmet_beds(oxygen, flow)))
    for name in STOCK_ITEMS:
        item = supplies.stock_item(name)
        use = daily[f"{name}_use_items_per_day"].to_numpy()
        missing = (None if item.stock is None
                   else stock_run(use, item.stock, item.resupply_per_day)[1])
        rows.append(_gap(index, name, "items/day", item.stock, use, missing))
    morgue = daily["mortuary_in_use_spaces"].to_numpy()
    spaces = None if supplies.mortuary_spaces is None else float(supplies.mortuary_spaces)
    rows.append(_gap(index, "mortuary", "spaces", spaces, morgue,
                     None if spaces is None else unmet_beds(morgue, spaces)))
    return tuple(rows)
