"""Per-draw metrics from what the ensemble keeps of each draw.

The rules are those of the single run (:mod:`prepkit.metrics.beds`,
:mod:`prepkit.metrics.absence`), applied to draws x days arrays.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

import numpy as np
from numpy.typing import NDArray

from prepkit.metrics.absence import absence, worker_count
from prepkit.metrics.beds import (
    BED_KINDS,
    bed_loads,
    bed_patients,
    bed_supply,
    days_over_capacity,
    extra_fatality_key,
    no_bed_extra_fatality,
    outbreak_demand,
    shortage_deaths,
    strain_limits,
    unserved_patients,
)
from prepkit.plan import Plan
from prepkit.scenarios.runs import ScenarioRun
from prepkit.uncertainty.draws import FINAL_NAMES, DrawSeries
from prepkit.uncertainty.results import PEAK_SERIES

SCALAR_CHUNK = 1024
"""Draws post-processed at a time, so that float64 temporaries stay small."""

_LOADS = ("days_over", "days_over_surge", "unmet", "unmet_surge")


def absence_share(plan: Plan, onsets: NDArray[Any], school: NDArray[Any]) -> NDArray[np.float64]:
    """Absence share per draw and day [fraction] (:func:`prepkit.metrics.absence.absence`).

    ``onsets`` are the employed-weighted symptom onsets per draw and day
    [persons/day], ``school`` the school closure intensity [fraction].
    """
    population = np.array([b.people for b in plan.bands], dtype=np.float64)
    workers = worker_count(plan.bands, population, plan.workforce)
    return absence(onsets, school, workers, plan.workforce)[2]


def _daily_loads(plan: Plan, draws: DrawSeries) -> tuple[dict[str, NDArray[Any]], dict[str, Any]]:
    """Bed loads per draw and the daily arrays the bands need, in chunks of draws."""
    capacity = plan.capacity
    n, days = draws.series.shape[1:]
    beds = bed_supply(capacity)
    strain = strain_limits(capacity)
    out: dict[str, NDArray[Any]] = {"peak_absence": np.empty(n)}
    daily: dict[str, Any] = {
        "absence_share": np.empty((n, days), dtype=draws.series.dtype),
    }
    for kind in beds:
        for key in ("over", "over_surge"):
            daily[f"{kind}_{key}"] = np.empty((n, days), dtype=bool)
        for key in _LOADS:
            out[f"{kind}_{key}"] = np.empty(n, dtype=np.int64 if "days" in key else np.float64)
        out[f"{kind}_strained"] = np.empty(n, dtype=np.int64)
        out[f"{kind}_needed"] = np.empty(n, dtype=np.float64)
    onsets = draws.get("worker_onsets_per_day")
    school = draws.get("school_closure_intensity_share")
    for start in range(0, n, SCALAR_CHUNK):
        rows = slice(start, min(n, start + SCALAR_CHUNK))
        for kind, (available, surge) in beds.items():
            demand = outbreak_demand(draws.get(f"{kind}_census_persons")[rows], capacity)
            got = bed_loads(demand, available, surge, capacity.surge_trigger_occupancy,
                            capacity.surge_days_to_open)
            out[f"{kind}_strained"][rows] = days_over_capacity(demand, strain[kind])
            out[f"{kind}_needed"][rows] = demand.sum(axis=-1)
            for key in ("over", "over_surge"):
                daily[f"{kind}_{key}"][rows] = got[key]
            for key in _LOADS:
                out[f"{kind}_{key}"][rows] = got[key]
        share = absence_share(plan, onsets[rows], school[rows])
        out["peak_absence"][rows] = share.max(axis=1)
        daily["absence_share"][rows] = share
    for kind, (available, _) in beds.items():
        daily[f"{kind}_available"] = available
    return out, daily


def draw_scalars(
    plan: Plan, draws: DrawSeries, outcomes: Mapping[str, NDArray[np.float64]]
) -> tuple[dict[str, NDArray[Any]], dict[str, Any]]:
    """Per-draw scalar outputs and the daily arrays the quantile bands need.

    The scalars are those of :data:`~prepkit.uncertainty.results.SUMMARY_METRICS`;
    the arrays ``absence_share``, ``{kind}_over`` and ``{kind}_over_surge``
    (per draw and day) and ``{kind}_available`` [beds]. ``outcomes`` holds
    the draws' outcome fields by key
    (:func:`prepkit.uncertainty.fields.outcome_values`); an absent key takes
    the plan's Central value.
    """
    out, daily = _daily_loads(plan, draws)
    catch = plan.capacity.catchment_share
    scalars: dict[str, NDArray[Any]] = {}
    for k, kind in enumerate(bed_supply(plan.capacity)):
        scalars[f"peak_{kind}_demand_beds"] = draws.peaks[:, k] * catch
        scalars[f"peak_{kind}_census_persons"] = draws.peaks[:, k]
        scalars[f"{kind}_days_over_capacity_days"] = out[f"{kind}_days_over"]
        scalars[f"{kind}_days_over_capacity_with_surge_days"] = out[f"{kind}_days_over_surge"]
        scalars[f"{kind}_days_strained_days"] = out[f"{kind}_strained"]
        scalars[f"{kind}_unmet_bed_days"] = out[f"{kind}_unmet"]
        scalars[f"{kind}_unmet_bed_days_with_surge"] = out[f"{kind}_unmet_surge"]
    scalars["total_unmet_bed_days"] = (
        scalars["ward_unmet_bed_days"] + scalars["icu_unmet_bed_days"]
    )
    scalars["total_unmet_bed_days_with_surge"] = (
        scalars["ward_unmet_bed_days_with_surge"] + scalars["icu_unmet_bed_days_with_surge"]
    )
    for j, name in enumerate(FINAL_NAMES):
        scalars[name] = draws.finals[:, j]
    patients = bed_patients(scalars["admissions_persons"], scalars["icu_admissions_persons"],
                            plan.capacity)
    central = no_bed_extra_fatality(plan.severity)
    extra = {kind: outcomes.get(extra_fatality_key(kind), central[kind]) for kind in BED_KINDS}
    for suffix, unmet_key in (("", "unmet"), ("_with_surge", "unmet_surge")):
        unserved = {kind: unserved_patients(out[f"{kind}_{unmet_key}"], out[f"{kind}_needed"],
                                            patients[kind]) for kind in BED_KINDS}
        scalars[f"shortage_deaths{suffix}_persons"] = shortage_deaths(unserved, extra)
    scalars["peak_admissions_per_day"] = draws.peaks[:, 2]
    scalars["peak_absence_share"] = out["peak_absence"]
    return scalars, daily


def peak_days(draws: DrawSeries, catch: float) -> dict[str, NDArray[np.int64]]:
    """Peak day per draw, -1 where the series never rises above 0."""
    out = {}
    for k, name in enumerate(PEAK_SERIES):
        scale = catch if k < 2 else 1.0
        valid = draws.peaks[:, k] * scale > 0.0
        out[name] = np.where(valid, draws.peak_days[:, k], -1)
    return out


def run_values(run: ScenarioRun) -> dict[str, float]:
    """The single run's value of every summary metric."""
    m = run.metrics
    total = m.total
    return {
        "peak_ward_demand_beds": m.ward.peak_demand_beds,
        "peak_icu_demand_beds": m.icu.peak_demand_beds,
        "peak_ward_census_persons": m.ward.peak_census_persons,
        "peak_icu_census_persons": m.icu.peak_census_persons,
        "peak_admissions_per_day": m.peak_admissions_per_day,
        "peak_absence_share": m.peak_absence_share,
        "ward_days_over_capacity_days": m.ward.days_over_capacity_days,
        "icu_days_over_capacity_days": m.icu.days_over_capacity_days,
        "ward_days_over_capacity_with_surge_days": m.ward.days_over_capacity_with_surge_days,
        "icu_days_over_capacity_with_surge_days": m.icu.days_over_capacity_with_surge_days,
        "ward_days_strained_days": m.ward.days_strained_days,
        "icu_days_strained_days": m.icu.days_strained_days,
        "ward_unmet_bed_days": m.ward.unmet_bed_days,
        "icu_unmet_bed_days": m.icu.unmet_bed_days,
        "total_unmet_bed_days": m.ward.unmet_bed_days + m.icu.unmet_bed_days,
        "ward_unmet_bed_days_with_surge": m.ward.unmet_bed_days_with_surge,
        "icu_unmet_bed_days_with_surge": m.icu.unmet_bed_days_with_surge,
        "total_unmet_bed_days_with_surge": m.ward.unmet_bed_days_with_surge
        + m.icu.unmet_bed_days_with_surge,
        "infections_persons": total.infections_persons,
        "symptomatic_cases_persons": total.symptomatic_cases_persons,
        "admissions_persons": total.admissions_persons,
        "icu_admissions_persons": total.icu_admissions_persons,
        "hospital_deaths_persons": total.hospital_deaths_persons,
        "shortage_deaths_persons": m.shortage_deaths_persons,
        "shortage_deaths_with_surge_persons": m.shortage_deaths_with_surge_persons,
        "ward_bed_days": total.ward_bed_days,
        "icu_bed_days": total.icu_bed_days,
    }
