"""Bed rules shared by the single run and the ensemble: available beds, surge, shortfalls.

Every function takes one daily series or a draws x days array and works on
the last axis (days); stocks are end-of-day values, one value per day.

* Outbreak bed demand = catchment share x residents' census [beds].
* Available beds = staffed beds x (1 - baseline occupancy) [beds]; with
  surge, the surge beds are added from their opening day on.
* Surge beds of a type open ``ceil(days_to_open)`` days after the first day
  on which demand reaches ``surge_trigger_occupancy`` of the available
  (non-surge) beds, and stay open.
* Unmet bed-days = sum over days of ``max(0, demand - available)`` x 1 day
  (daily resolution); the largest shortfall is its daily maximum.
* Patients without a bed: the patients of a bed type (ward-only or ICU
  admissions these hospitals receive) times the share of the bed-days they
  need that are unmet, ``unmet bed-days / needed bed-days`` (0 when none are
  needed). Each unmet bed-day is a day of some patient's stay spent without
  a bed, so the share of bed-days is the share of patients (Little 1961:
  bed-days = patients x mean stay). With no beds every patient goes
  without; with beds to spare none does.
* Additional deaths when beds run short = patients without a ward bed x the
  extra chance of death without one + the same for ICU (the Severity
  sheet's inputs). Deaths in hospital care are the model's, as if every
  patient had a bed; the additional deaths come on top.
* Strain: occupancy = (beds used by other patients + outbreak demand) /
  staffed beds. A day is strained when occupancy is above
  :data:`STRAIN_OCCUPANCY` (75%), that is when demand is above
  ``available - staffed x (1 - 0.75)`` beds; occupancy above 100% is demand
  above the available beds, the days short. Surge beds are not counted
  (French et al. 2021 measured occupancy of the ICU beds a hospital staffs).

References
----------
Hick J.L., Barbera J.A., Kelen G.D. (2009). Refining surge capacity:
conventional, contingency, and crisis capacity. Disaster Med. Public
Health Prep. 3(Suppl 1):S59-S67 (surge beds as a separate tier).

Little J.D.C. (1961). A proof for the queuing formula L = lambda W.
Operations Research 9:383-387.

French G., Hulse M., Nguyen D., et al. (2021). Impact of hospital strain on
excess deaths during the COVID-19 pandemic - United States, July 2020-July
2021. MMWR 70(46):1613-1616 (ICU occupancy above 75% and above 100% were
followed by excess deaths).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from prepkit.plan import Capacity, Severity

BED_KINDS: tuple[str, ...] = ("ward", "icu")
"""Bed types, in the order of every per-type table."""

STRAIN_OCCUPANCY = 0.75
"""Occupancy of staffed beds above which a day counts as strained [fraction] (French et al.
2021, MMWR 70(46):1613: ICU occupancy above 75% was followed by excess deaths two weeks later)."""


def bed_supply(capacity: Capacity) -> dict[str, tuple[float, float]]:
    """Beds available to outbreak patients and surge beds of each type [beds].

    Parameters
    ----------
    capacity : Capacity
        Hospital capacity of the plan.

    Returns
    -------
    dict
        ``{"ward": (available, surge), "icu": (available, surge)}`` with
        available = staffed beds x (1 - baseline occupancy) [beds].
    """
    return {
        "ward": (
            float(capacity.ward_beds) * (1.0 - capacity.ward_baseline_occupancy),
            float(capacity.surge_ward_beds),
        ),
        "icu": (
            float(capacity.icu_beds) * (1.0 - capacity.icu_baseline_occupancy),
            float(capacity.surge_icu_beds),
        ),
    }


def strain_limits(capacity: Capacity) -> dict[str, float]:
    """Outbreak demand above which occupancy passes :data:`STRAIN_OCCUPANCY` of staffed beds [beds].

    ``available - staffed x (1 - STRAIN_OCCUPANCY)``, with available from
    :func:`bed_supply`; negative when the beds used by other patients alone
    fill more than that share (then every day is strained).

    Returns
    -------
    dict
        ``{"ward": limit, "icu": limit}`` [beds].
    """
    staffed = {"ward": float(capacity.ward_beds), "icu": float(capacity.icu_beds)}
    return {kind: available - staffed[kind] * (1.0 - STRAIN_OCCUPANCY)
            for kind, (available, _) in bed_supply(capacity).items()}


def bed_patients(admissions: ArrayLike, icu_admissions: ArrayLike,
                 capacity: Capacity) -> dict[str, Any]:
    """Patients these hospitals receive who need each bed type [persons] (per row of an array).

    Ward: admissions that do not go to ICU; ICU: ICU admissions; both times
    the catchment share. ``admissions`` and ``icu_admissions`` are the
    residents' totals [persons].
    """
    total = np.asarray(admissions, dtype=np.float64)
    icu = np.asarray(icu_admissions, dtype=np.float64)
    share = capacity.catchment_share
    return {"ward": (total - icu) * share, "icu": icu * share}


def unserved_patients(unmet: ArrayLike, needed: ArrayLike, patients: ArrayLike) -> Any:
    """Patients who need a bed and do not get one [persons] (per row of an array).

    Parameters
    ----------
    unmet : float or array
        Unmet bed-days [bed-days].
    needed : float or array
        Bed-days needed: daily demand added up over the days [bed-days].
    patients : float or array
        Patients who need this bed type (:func:`bed_patients`) [persons].

    Returns
    -------
    float or ndarray
        ``patients x unmet / needed``; 0 where no bed-days are needed.
    """
    gap = np.asarray(unmet, dtype=np.float64)
    need = np.asarray(needed, dtype=np.float64)
    with np.errstate(divide="ignore", invalid="ignore"):
        share = np.where(need > 0.0, gap / np.where(need > 0.0, need, 1.0), 0.0)
    return np.asarray(patients, dtype=np.float64) * share


def extra_fatality_key(kind: str) -> str:
    """Severity attribute and ensemble key of the extra chance of death without a ``kind`` bed.

    E.g. ``"icu_no_bed_extra_fatality"``.
    """
    return f"{kind}_no_bed_extra_fatality"


def no_bed_extra_fatality(severity: Severity) -> dict[str, float]:
    """The Central added chance of death without a bed, by bed type [fraction] (the single run)."""
    return {kind: getattr(severity, extra_fatality_key(kind)).central for kind in BED_KINDS}


def shortage_deaths(unserved: Mapping[str, Any], extra_fatality: Mapping[str, Any]) -> Any:
    """Additional deaths when beds run short [persons]: unserved x extra chance, ward plus ICU.

    ``unserved`` and ``extra_fatality`` are keyed by bed type (``"ward"``,
    ``"icu"``): patients without a bed [persons] and the added chance of
    death without one [fraction], floats or one value per draw.
    """
    return sum(np.asarray(unserved[k], dtype=np.float64) * np.asarray(extra_fatality[k])
               for k in BED_KINDS)


def outbreak_demand(census: ArrayLike, capacity: Capacity) -> NDArray[np.float64]:
    """Outbreak bed demand = catchment share x residents' census [beds]."""
    return np.asarray(census, dtype=np.float64) * capacity.catchment_share


def surge_opening(
    demand: ArrayLike, available: float, surge: float, trigger_share: float, days_to_open: float
) -> tuple[NDArray[np.int64], NDArray[np.int64]]:
    """Day the surge trigger is reached and day the surge beds open.

    Parameters
    ----------
    demand : array, shape (..., days)
        Daily outbreak bed demand [beds].
    available : float
        Available beds without surge [beds].
    surge : float
        Surge beds of this type [beds].
    trigger_share : float
        Demand as a share of available beds that starts opening [fraction];
        with no available beds, any demand triggers.
    days_to_open : float
        Days from the trigger until the beds are usable [days]; rounded up.

    Returns
    -------
    trigger_day, open_day : ndarray of int, shape (...)
        Day index of the trigger (-1 when never reached) and of the opening
        (-1 when never reached or without surge beds; may be past the last
        day).
    """
    values = np.asarray(demand, dtype=np.float64)
    if available <= 0.0:
        reached = values > 0.0
    else:
        reached = values >= trigger_share * available
    hit = reached.any(axis=-1)
    first = np.argmax(reached, axis=-1) if reached.shape[-1] else np.zeros(hit.shape, int)
    trigger_day = np.where(hit, first, -1)
    opening = first + int(math.ceil(max(days_to_open, 0.0)))
    open_day = np.where(hit & (surge > 0.0), opening, -1)
    return np.asarray(trigger_day, dtype=np.int64), np.asarray(open_day, dtype=np.int64)


def surge_available(
    demand: ArrayLike, available: float, surge: float, trigger_share: float, days_to_open: float
) -> NDArray[np.float64]:
    """Available beds each day, surge beds included once open [beds], shaped as ``demand``.

    The trigger and opening rule is :func:`surge_opening`.
    """
    values = np.asarray(demand, dtype=np.float64)
    _, open_day = surge_opening(values, available, surge, trigger_share, days_to_open)
    days = values.shape[-1]
    start = np.where(open_day >= 0, open_day, days)
    open_now = np.arange(days) >= np.asarray(start)[..., None]
    return np.asarray(available + surge * open_now, dtype=np.float64)


def over_capacity(demand: ArrayLike, available: ArrayLike) -> NDArray[np.bool_]:
    """True on the days demand is above the available beds."""
    return np.asarray(np.asarray(demand, dtype=np.float64) > np.asarray(available), dtype=bool)


def unmet_beds(demand: ArrayLike, available: ArrayLike) -> NDArray[np.float64]:
    """Daily shortfall ``max(0, demand - available)`` [beds]."""
    gap = np.asarray(demand, dtype=np.float64) - np.asarray(available, dtype=np.float64)
    return np.asarray(np.clip(gap, 0.0, None), dtype=np.float64)


def days_over_capacity(demand: ArrayLike, available: ArrayLike) -> Any:
    """Number of days demand is above the available beds [days] (per row of an array)."""
    return over_capacity(demand, available).sum(axis=-1)


def unmet_bed_days(demand: ArrayLike, available: ArrayLike) -> Any:
    """Sum of the daily shortfall x 1 day [bed-days] (per row of an array)."""
    return unmet_beds(demand, available).sum(axis=-1)


def largest_shortfall(demand: ArrayLike, available: ArrayLike) -> Any:
    """Largest daily shortfall [beds] (per row of an array; 0 without days)."""
    short = unmet_beds(demand, available)
    if short.shape[-1] == 0:
        return np.zeros(short.shape[:-1])
    return short.max(axis=-1)


def first_over_day(demand: ArrayLike, available: ArrayLike) -> Any:
    """First day index demand is above the available beds, -1 when never (per row)."""
    over = over_capacity(demand, available)
    if over.shape[-1] == 0:
        return np.full(over.shape[:-1], -1)
    return np.where(over.any(axis=-1), np.argmax(over, axis=-1), -1)


def bed_loads(
    demand: ArrayLike, available: float, surge: float, trigger_share: float, days_to_open: float
) -> dict[str, Any]:
    """Days over capacity and unmet bed-days without and with surge beds.

    Parameters
    ----------
    demand : array, shape (..., days)
        Daily outbreak bed demand [beds].
    available, surge : float
        Available (non-surge) and surge beds [beds].
    trigger_share, days_to_open : float
        Surge trigger [fraction] and opening delay [days].

    Returns
    -------
    dict
        ``over`` and ``over_surge`` (bool, shaped as ``demand``),
        ``days_over`` and ``days_over_surge`` [days], ``unmet`` and
        ``unmet_surge`` [bed-days] (one per row), and ``with_surge`` (the
        available beds each day with surge [beds]).
    """
    values = np.asarray(demand, dtype=np.float64)
    with_surge = surge_available(values, available, surge, trigger_share, days_to_open)
    over = over_capacity(values, available)
    over_surge = over_capacity(values, with_surge)
    return {
        "with_surge": with_surge,
        "over": over,
        "over_surge": over_surge,
        "days_over": over.sum(axis=-1),
        "days_over_surge": over_surge.sum(axis=-1),
        "unmet": unmet_bed_days(values, available),
        "unmet_surge": unmet_bed_days(values, with_surge),
    }
