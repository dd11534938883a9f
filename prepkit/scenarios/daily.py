"""Daily series, long by-band table, totals and metrics of one simulated run.

Flows (``*_per_day``) are amounts during the day, the differences of the
cumulative counters at the day's ends; stocks (``*_persons``, ``*_beds``)
are end-of-day values. Metrics are those of :mod:`prepkit.metrics.core`.
"""

from __future__ import annotations

import re
from typing import Any

import numpy as np
import pandas as pd
from numpy.typing import NDArray

from prepkit.metrics.absence import add_absence_columns
from prepkit.metrics.beds import bed_patients, no_bed_extra_fatality
from prepkit.metrics.capacity import add_capacity_columns
from prepkit.metrics.core import BurdenTotals, ScenarioMetrics, scenario_metrics
from prepkit.metrics.resources import add_resource_columns
from prepkit.plan import SETTINGS, Plan
from prepkit.simulation.compile import CompiledModel
from prepkit.simulation.layout import (
    BLK_A,
    BLK_C,
    BLK_CUM_ADM,
    BLK_CUM_DOSE,
    BLK_CUM_ICU,
    BLK_CUM_INF,
    BLK_CUM_ONSET,
    BLK_D,
    BLK_E,
    BLK_EV,
    BLK_ICU_DAYS,
    BLK_P,
    BLK_R,
    BLK_S,
    BLK_V,
    BLK_V0,
    BLK_W,
    BLK_WARD_DAYS,
    BLK_Y,
    IT_ISO_SYMPTOMATIC,
    IT_MULTIPLIER,
    IT_SCHOOL_CLOSURE,
    KIND_CONTACTS,
    KIND_ISOLATION,
)
from prepkit.simulation.simulate import Trajectory

FLOW_BLOCKS: dict[str, int] = {
    "infections_per_day": BLK_CUM_INF,
    "symptomatic_onsets_per_day": BLK_CUM_ONSET,
    "admissions_per_day": BLK_CUM_ADM,
    "icu_admissions_per_day": BLK_CUM_ICU,
    "hospital_deaths_per_day": BLK_D,
    "doses_per_day": BLK_CUM_DOSE,
}
"""Daily flows and the cumulative block each is the daily difference of."""

STOCK_BLOCKS: dict[str, tuple[int, ...]] = {
    "susceptible_persons": (BLK_S,),
    "dosed_unprotected_persons": (BLK_V0,),
    "protected_persons": (BLK_V,),
    "latent_persons": (BLK_E, BLK_EV),
    "asymptomatic_infectious_persons": (BLK_A,),
    "symptomatic_at_home_persons": (BLK_Y,),
    "waiting_for_admission_persons": (BLK_P,),
    "ward_census_persons": (BLK_W,),
    "icu_census_persons": (BLK_C,),
    "recovered_persons": (BLK_R,),
    "cumulative_infections_persons": (BLK_CUM_INF,),
    "cumulative_symptomatic_persons": (BLK_CUM_ONSET,),
    "cumulative_admissions_persons": (BLK_CUM_ADM,),
    "cumulative_icu_admissions_persons": (BLK_CUM_ICU,),
    "cumulative_hospital_deaths_persons": (BLK_D,),
    "cumulative_doses": (BLK_CUM_DOSE,),
}
"""End-of-day stocks and the blocks summed into each."""

FINAL_BLOCKS: dict[str, int] = {
    "infections_persons": BLK_CUM_INF,
    "symptomatic_cases_persons": BLK_CUM_ONSET,
    "admissions_persons": BLK_CUM_ADM,
    "icu_admissions_persons": BLK_CUM_ICU,
    "hospital_deaths_persons": BLK_D,
    "doses_given_doses": BLK_CUM_DOSE,
    "ward_bed_days": BLK_WARD_DAYS,
    "icu_bed_days": BLK_ICU_DAYS,
}
"""Totals (:class:`prepkit.metrics.core.BurdenTotals` fields) and their counter blocks."""


def column_slug(name: str) -> str:
    """Snake-case form of an intervention name for column names."""
    slug = re.sub(r"[^0-9a-z]+", "_", name.lower()).strip("_")
    return slug or "unnamed"


def _activity_columns(model: CompiledModel, active: NDArray[np.bool_]) -> dict[str, Any]:
    days = active.shape[0]
    itab = model.itab
    columns: dict[str, Any] = {}
    multipliers = np.ones((days, len(SETTINGS)))
    school = np.zeros(days)
    isolation = np.ones(days)
    for r, _ in enumerate(model.intervention_names):
        on = active[:, r]
        kind = int(itab[r, 0])
        if kind == KIND_CONTACTS:
            rows = itab[r, IT_MULTIPLIER : IT_MULTIPLIER + len(SETTINGS)]
            multipliers = np.where(on[:, None], multipliers * rows[None, :], multipliers)
            school = np.where(on, np.maximum(school, itab[r, IT_SCHOOL_CLOSURE]), school)
        elif kind == KIND_ISOLATION:
            isolation = np.where(on, isolation * itab[r, IT_ISO_SYMPTOMATIC], isolation)
    for s, setting in enumerate(SETTINGS):
        columns[f"contacts_multiplier_{setting}"] = multipliers[:, s]
    columns["school_closure_intensity_share"] = school
    columns["isolation_multiplier_symptomatic"] = isolation
    used: set[str] = set()
    for r, name in enumerate(model.intervention_names):
        key = f"active_{column_slug(name)}"
        while key in used:
            key += "_"
        used.add(key)
        columns[key] = active[:, r].copy()
    return columns


def _band_series(
    model: CompiledModel, states: NDArray[np.float64]
) -> tuple[dict[str, NDArray[np.float64]], dict[str, NDArray[np.float64]]]:
    """Flows and stocks by day and band, shape (days, bands)."""
    layout = model.layout

    def band(block: int) -> NDArray[np.float64]:
        return layout.block_total(states, block)

    flows = {key: np.diff(band(block), axis=0) for key, block in FLOW_BLOCKS.items()}
    stocks = {}
    for key, blocks in STOCK_BLOCKS.items():
        total = band(blocks[0])
        for block in blocks[1:]:
            total = total + band(block)
        stocks[key] = total[1:]
    return flows, stocks


def _by_band_table(
    plan: Plan, dates: pd.DatetimeIndex, series: dict[str, NDArray[np.float64]]
) -> pd.DataFrame:
    """Long format: one row per day and band (columns ``date``, ``band``)."""
    labels = [b.label for b in plan.bands]
    nb = len(labels)
    long: dict[str, Any] = {
        "date": np.repeat(dates.to_numpy(), nb),
        "band": np.tile(np.array(labels, dtype=object), len(dates)),
    }
    for key, value in series.items():
        long[key] = value.reshape(-1)
    return pd.DataFrame(long)


def _totals(
    plan: Plan, model: CompiledModel, final: NDArray[np.float64]
) -> tuple[BurdenTotals, dict[str, BurdenTotals]]:
    """Whole-population totals and totals by band label at the end of the run."""
    layout = model.layout
    finals = {key: final[layout.stage(block)] for key, block in FINAL_BLOCKS.items()}
    totals = BurdenTotals(**{k: float(v.sum()) for k, v in finals.items()})
    by_label = {
        b.label: BurdenTotals(**{k: float(v[i]) for k, v in finals.items()})
        for i, b in enumerate(plan.bands)
    }
    return totals, by_label


def run_outputs(
    plan: Plan, model: CompiledModel, trajectory: Trajectory
) -> tuple[pd.DataFrame, pd.DataFrame, ScenarioMetrics]:
    """Daily series, the long by-band table and the metrics of a simulated run.

    Parameters
    ----------
    plan : Plan
        The plan.
    model : CompiledModel
        The compiled run.
    trajectory : Trajectory
        Its simulated states.

    Returns
    -------
    daily : pandas.DataFrame
        One row per day (index ``date``), capacity and absence columns included.
    daily_by_band : pandas.DataFrame
        One row per day and band.
    metrics : ScenarioMetrics
        Totals, peaks, capacity gaps and absence.
    """
    states = trajectory.states
    days = states.shape[0] - 1
    dates = pd.date_range(pd.Timestamp(plan.details.day0), periods=days, freq="D", name="date")
    flows, stocks = _band_series(model, states)
    columns: dict[str, Any] = {key: value.sum(axis=1) for key, value in flows.items()}
    columns.update({key: value.sum(axis=1) for key, value in stocks.items()})
    columns["season_multiplier"] = np.array([model.season(float(d)) for d in range(days)])
    columns.update(_activity_columns(model, trajectory.active))
    daily = pd.DataFrame(columns, index=dates)
    daily = add_capacity_columns(daily, plan.capacity)
    daily = add_absence_columns(
        daily, flows["symptomatic_onsets_per_day"], model.population, plan.bands, plan.workforce,
    )
    totals, by_label = _totals(plan, model, states[-1])
    extra = no_bed_extra_fatality(plan.severity)
    patients = bed_patients(totals.admissions_persons, totals.icu_admissions_persons,
                            plan.capacity)
    daily = add_resource_columns(daily, plan.capacity, plan.supplies, extra,
                                 {kind: float(value) for kind, value in patients.items()})
    metrics = scenario_metrics(daily, totals, by_label, plan.population, plan.capacity,
                               extra, plan.supplies)
    return daily, _by_band_table(plan, dates, {**flows, **stocks}), metrics
