"""Tables of the ensemble of one scenario variant: quantile bands, exceedance, peaks, summary.

Outputs in words
----------------
Per scenario and variant: quantile bands of the daily ward and ICU census
and bed demand, daily admissions and absence share; the share of draws whose
demand is above the available beds on each day and on any day (without and
with surge beds); quantiles and a day-by-day count of the peak dates;
quantiles of peak demand, unmet bed-days, admissions and deaths; and a
one-at-a-time tornado (:mod:`prepkit.uncertainty.tornado`).
"""

from __future__ import annotations

import datetime as dt
import math
import time
from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np
import pandas as pd
from numpy.typing import NDArray

from prepkit.errors import ModelError
from prepkit.plan import Plan
from prepkit.scenarios.runs import ScenarioRun
from prepkit.simulation.compile import CompiledModel
from prepkit.simulation.draw_values import DrawValues
from prepkit.uncertainty.draw_metrics import draw_scalars, peak_days, run_values
from prepkit.uncertainty.draws import DrawSeries, FieldRange
from prepkit.uncertainty.fields import outcome_values
from prepkit.uncertainty.results import (
    BAND_SERIES,
    PEAK_SERIES,
    SUMMARY_METRICS,
    EnsembleResult,
    quantile_label,
)


def reported_quantiles(quantiles: Sequence[float]) -> tuple[float, ...]:
    """The quantiles to report, ascending, the median added [fraction]."""
    qs = tuple(sorted(set(float(q) for q in quantiles) | {0.5}))
    if any(not 0.0 <= q <= 1.0 for q in qs):
        raise ModelError(f"quantiles must be in [0, 1], found {list(quantiles)}")
    return qs


def quantiles_of(values: NDArray[Any], qs: Sequence[float], axis: int = 0) -> NDArray[np.float64]:
    """Quantiles ``qs`` of ``values`` along ``axis``."""
    return np.asarray(np.quantile(values, list(qs), axis=axis), dtype=np.float64)


def date_or_none(day0: dt.date, day: float) -> dt.date | None:
    """The date of a day index, None for a negative or non-finite one."""
    if day < 0 or not math.isfinite(day):
        return None
    return day0 + dt.timedelta(days=int(day))


def daily_bands(
    runs: DrawSeries, arrays: Mapping[str, Any], qs: Sequence[float], catch: float,
    dates: pd.DatetimeIndex,
) -> pd.DataFrame:
    """Quantile bands of the daily series (:data:`~prepkit.uncertainty.results.BAND_SERIES`)."""
    labels = [quantile_label(q) for q in qs]
    columns: dict[str, Any] = {}
    for kind in ("ward", "icu"):
        census_q = quantiles_of(runs.get(f"{kind}_census_persons"), qs)
        for j, label in enumerate(labels):
            columns[f"{kind}_demand_beds_{label}"] = census_q[j] * catch
        for j, label in enumerate(labels):
            columns[f"{kind}_census_persons_{label}"] = census_q[j]
    for name, block in (
        ("admissions_per_day", runs.get("admissions_per_day")),
        ("absence_share", arrays["absence_share"]),
    ):
        band = quantiles_of(block, qs)
        for j, label in enumerate(labels):
            columns[f"{name}_{label}"] = band[j]
    ordered = [f"{s}_{label}" for s in BAND_SERIES for label in labels]
    daily = pd.DataFrame({key: columns[key] for key in ordered}, index=dates)
    daily["ward_available_beds"] = arrays["ward_available"]
    daily["icu_available_beds"] = arrays["icu_available"]
    return daily


def exceedance_tables(
    arrays: Mapping[str, Any], dates: pd.DatetimeIndex
) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Share of draws over capacity on each day, and on any day [fraction]."""
    exceedance = pd.DataFrame(
        {
            "ward_exceedance_probability": arrays["ward_over"].mean(axis=0),
            "ward_exceedance_with_surge_probability": arrays["ward_over_surge"].mean(axis=0),
            "icu_exceedance_probability": arrays["icu_over"].mean(axis=0),
            "icu_exceedance_with_surge_probability": arrays["icu_over_surge"].mean(axis=0),
        },
        index=dates,
    )
    exceedance_any = pd.DataFrame(
        {
            "any_day_probability": [
                float(arrays["ward_over"].any(axis=1).mean()),
                float(arrays["icu_over"].any(axis=1).mean()),
            ],
            "any_day_with_surge_probability": [
                float(arrays["ward_over_surge"].any(axis=1).mean()),
                float(arrays["icu_over_surge"].any(axis=1).mean()),
            ],
        },
        index=pd.Index(["ward", "icu"], name="bed_type"),
    )
    return exceedance, exceedance_any


def summary_table(
    scalars: Mapping[str, Any], reference: Mapping[str, float], qs: Sequence[float]
) -> pd.DataFrame:
    """Mean, quantiles and the single run of every summary metric."""
    labels = [quantile_label(q) for q in qs]
    summary_rows = {}
    for name in SUMMARY_METRICS:
        values_of = np.asarray(scalars[name], dtype=np.float64)
        stats: dict[str, Any] = {"mean": float(values_of.mean())}
        stats.update(dict(zip(labels, quantiles_of(values_of, qs).tolist(), strict=True)))
        stats["scenario_run"] = float(reference[name])
        summary_rows[name] = stats
    summary = pd.DataFrame.from_dict(summary_rows, orient="index")
    summary.index.name = "metric"
    return summary


def peak_date_tables(
    peaks: Mapping[str, NDArray[np.int64]], run_dates: Mapping[str, dt.date | None],
    qs: Sequence[float], day0: dt.date, dates: pd.DatetimeIndex,
) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Quantiles of the peak dates (observed draw dates) and the draws peaking on each day."""
    labels = [quantile_label(q) for q in qs]
    days = len(dates)
    date_rows = {}
    histogram = {}
    for name in PEAK_SERIES:
        chosen_days = peaks[name][peaks[name] >= 0]
        row: dict[str, Any] = {}
        if chosen_days.size:
            found = np.quantile(chosen_days, list(qs), method="inverted_cdf")
            row.update({label: date_or_none(day0, float(v)) for label, v in
                        zip(labels, found, strict=True)})
        else:
            row.update({label: None for label in labels})
        row["draws_with_peak_count"] = int(chosen_days.size)
        row["scenario_run_date"] = run_dates[name]
        date_rows[name] = row
        histogram[f"{name}_peak_draws_count"] = np.bincount(chosen_days, minlength=days)[:days]
    peak_dates = pd.DataFrame.from_dict(date_rows, orient="index").astype(object)
    peak_dates.index.name = "series"
    return peak_dates, pd.DataFrame(histogram, index=dates)


def per_draw_table(
    model: CompiledModel, fields: Sequence[Any], sample: NDArray[np.float64],
    values: DrawValues, runs: DrawSeries, peaks: Mapping[str, NDArray[np.int64]],
    scalars: Mapping[str, Any], day0: dt.date,
) -> pd.DataFrame:
    """One row per draw: quantiles, inputs, beta, substeps, peak dates and summary metrics."""
    per_draw: dict[str, Any] = {}
    for item in fields:
        per_draw[f"{item.key}_quantile"] = sample[:, item.column]
    per_draw["transmissibility_value"] = values.transmissibility_value
    per_draw["latent_period_days"] = values.latent_period_days
    per_draw["infectious_period_days"] = values.infectious_period_days
    if model.with_interventions:
        for name, comp in values.compliance.items():
            per_draw[f"compliance[{name}]"] = comp
        if "vaccination" in model.intervention_kinds:
            per_draw["efficacy_infection"] = values.efficacy_infection
            per_draw["efficacy_severe"] = values.efficacy_severe
    per_draw["beta_per_contact"] = runs.beta
    per_draw["substeps_per_day"] = runs.substeps
    for name in PEAK_SERIES:
        per_draw[f"{name}_peak_date"] = [date_or_none(day0, float(v)) for v in peaks[name]]
    for name in SUMMARY_METRICS:
        per_draw[name] = scalars[name]
    return pd.DataFrame(per_draw, index=pd.RangeIndex(sample.shape[0], name="draw"))


def sampling_table(plan: Plan, fields: Sequence[FieldRange]) -> pd.DataFrame:
    """One row per field and band: the distribution each is drawn from."""
    labels = [b.label for b in plan.bands]
    rows = []
    for item in fields:
        bands = labels if item.per_band else ["all"]
        for i, band in enumerate(bands):
            low, mode, high = float(item.low[i]), float(item.mode[i]), float(item.high[i])
            rows.append({
                "field": item.key,
                "label": item.label,
                "unit": item.unit,
                "band": band,
                "distribution": "point" if low == high else "PERT",
                "low": low,
                "mode": mode,
                "high": high,
            })
    return pd.DataFrame(
        rows, columns=["field", "label", "unit", "band", "distribution", "low", "mode", "high"]
    )


def _run_dates(
    scenario_run: ScenarioRun | None, baseline_days: Mapping[str, int], day0: dt.date
) -> dict[str, dt.date | None]:
    if scenario_run is None:
        return {k: date_or_none(day0, v) for k, v in baseline_days.items()}
    m = scenario_run.metrics
    return {
        "ward_demand": m.ward.peak_date,
        "icu_demand": m.icu.peak_date,
        "admissions": m.peak_admissions_date,
    }


def ensemble_result(
    plan: Plan, model: CompiledModel, *, scenario: str, fields: Sequence[Any],
    sample: NDArray[np.float64], values: DrawValues, runs: DrawSeries,
    swings: tuple[pd.DataFrame, pd.DataFrame, dict[str, float], dict[str, int]],
    quantiles: tuple[float, ...], seed: int, scenario_run: ScenarioRun | None, started: float,
) -> EnsembleResult:
    """Every table of the ensemble of one scenario variant from its draws and tornado."""
    scalars, arrays = draw_scalars(plan, runs, outcome_values(fields, sample, sample.shape[0]))
    catch = plan.capacity.catchment_share
    day0 = plan.details.day0
    dates = pd.date_range(pd.Timestamp(day0), periods=model.horizon_days, freq="D", name="date")
    tornado_icu, tornado_unmet, baseline, baseline_days = swings
    reference = run_values(scenario_run) if scenario_run is not None else baseline
    exceedance, exceedance_any = exceedance_tables(arrays, dates)
    peaks = peak_days(runs, catch)
    peak_dates, peak_hist = peak_date_tables(
        peaks, _run_dates(scenario_run, baseline_days, day0), quantiles, day0, dates
    )
    return EnsembleResult(
        scenario=scenario,
        variant="with" if model.with_interventions else "without",
        draws=sample.shape[0],
        seed=seed,
        quantiles=quantiles,
        daily=daily_bands(runs, arrays, quantiles, catch, dates),
        exceedance=exceedance,
        exceedance_any_day=exceedance_any,
        summary=summary_table(scalars, reference, quantiles),
        peak_dates=peak_dates,
        peak_date_histogram=peak_hist,
        tornado_peak_icu=tornado_icu,
        tornado_unmet=tornado_unmet,
        per_draw=per_draw_table(model, fields, sample, values, runs, peaks, scalars, day0),
        sampling=sampling_table(plan, fields),
        seconds=time.perf_counter() - started,
    )
