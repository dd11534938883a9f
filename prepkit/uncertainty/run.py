"""Uncertainty ensemble: sampled inputs, percentile bands, exceedance, peak timing, tornado.

Sampling rules in words
-----------------------
* Every input the plan gives as Low / Central / High is drawn from a
  beta-PERT distribution on its range with the Central value as the mode
  (lambda = 4: ``alpha = 1 + 4 (c - a) / (b - a)``,
  ``beta = 1 + 4 (b - c) / (b - a)``, mean ``(a + 4 c + b) / 6``). When
  Low = High the input is fixed at Central (a point mass).
* The uncertain fields are: the transmissibility measure the plan gives (R0,
  doubling time or growth rate), the latent and infectious period means,
  and per band the symptomatic share, the admitted share, the ICU share of
  admissions, the ward stay and the ICU stay; for each intervention its
  compliance, and for each vaccination its efficacy against infection and
  against admission.
* Range around the scenario's levels: transmissibility and the two severity
  shares (admitted, ICU) are drawn around the scenario's level, not over the
  whole range. A "low" level draws from [Low, Central] with mode Low,
  "central" from [Low, High] with mode Central, "high" from [Central, High]
  with mode High. "High transmissibility" means the *short* doubling time,
  so for a doubling time the levels are read inverted ("high"
  transmissibility draws doubling times from [Low, Central] with mode Low).
  Every other field is drawn over its full Low-High range with mode Central.
* One Latin hypercube (McKay, Beckman & Conover 1979) with one dimension per
  field, seeded with the plan's seed, gives every draw one quantile per
  field; the quantile goes through the PERT inverse distribution function.
  A per-band field uses one quantile for all its bands (comonotone: a draw
  with long ward stays has long stays in every band).
* The same quantiles serve every scenario and both variants (with and
  without interventions), so differences between them are not sampling
  noise. Intervention fields have no effect on the runs without
  interventions.
* Consistency: a drawn admitted share above the drawn symptomatic share is
  cut to it (as in every run); a drawn efficacy against admission below the
  drawn efficacy against infection is raised to it.

Outputs in words
----------------
Per scenario and variant: quantile bands of the daily ward and ICU census
and bed demand, daily admissions and absence share; the share of draws whose
demand is above the available beds on each day and on any day (without and
with surge beds); quantiles and a day-by-day count of the peak dates;
quantiles of peak demand, unmet bed-days, admissions and deaths; and a
one-at-a-time tornado: each uncertain field at the two ends of the range it
is drawn from, all other fields at their modes (the scenario's own run), on
the peak ICU demand and on the unmet bed-days (ward plus ICU, without surge).

References
----------
Malcolm D.G., Roseboom J.H., Clark C.E., Fazar W. (1959). Application of a
technique for research and development program evaluation. Operations
Research 7:646-669. doi:10.1287/opre.7.5.646

Vose D. (2008). Risk Analysis: A Quantitative Guide, 3rd ed. Wiley
(the modified PERT with a shape parameter lambda; from memory).

McKay M.D., Beckman R.J., Conover W.J. (1979). A comparison of three methods
for selecting values of input variables in the analysis of output from a
computer code. Technometrics 21:239-245. doi:10.2307/1268522
"""

from __future__ import annotations

import datetime as dt
import math
import os
import sys
import time
from collections.abc import Callable, Iterator, Mapping, Sequence
from concurrent.futures import Executor, Future, as_completed
from dataclasses import dataclass
from typing import Any, Literal

import numpy as np
import pandas as pd
from numpy.typing import NDArray

from prepkit.errors import ModelError
from prepkit.metrics.core import recent_sum
from prepkit.plan import Plan, Scenario
from prepkit.scenarios.runs import PlanResults, ScenarioRun, compile_scenario
from prepkit.simulation.compile import CompiledModel
from prepkit.simulation.inputs import validate_plan
from prepkit.uncertainty.ensemble import (
    DEFAULT_BLOCKS,
    ENSEMBLE_MIN_SUBSTEPS,
    FINAL_NAMES,
    DrawSeries,
    DrawValues,
    employed_weights,
    simulate_draws,
)
from prepkit.uncertainty.fields import (
    UncertainField,
    plan_dimensions,
    sample_quantiles,
    scenario_fields,
)

__all__ = [
    "DEFAULT_QUANTILES",
    "SUMMARY_METRICS",
    "EnsembleResult",
    "ScenarioUncertainty",
    "UncertaintyResults",
    "draw_values",
    "quantile_label",
    "run_ensemble",
    "run_uncertainty",
    "uncertainty_summary_dict",
]

Variant = Literal["with", "without"]
Progress = Callable[[int, int], None] | bool | None

DEFAULT_QUANTILES: tuple[float, ...] = (0.05, 0.5, 0.95)
"""Quantiles reported by default (the median is always added)."""

UNCERTAINTY_SUMMARY_VERSION = 2  # 2: deaths keys say "hospital_deaths"
"""Bumped when keys of :func:`uncertainty_summary_dict` are renamed or removed."""

SUMMARY_METRICS: tuple[str, ...] = (
    "peak_ward_demand_beds",
    "peak_icu_demand_beds",
    "peak_ward_census_persons",
    "peak_icu_census_persons",
    "peak_admissions_per_day",
    "peak_absence_share",
    "ward_days_over_capacity_days",
    "icu_days_over_capacity_days",
    "ward_days_over_capacity_with_surge_days",
    "icu_days_over_capacity_with_surge_days",
    "ward_unmet_bed_days",
    "icu_unmet_bed_days",
    "total_unmet_bed_days",
    "ward_unmet_bed_days_with_surge",
    "icu_unmet_bed_days_with_surge",
    "total_unmet_bed_days_with_surge",
    "infections_persons",
    "symptomatic_cases_persons",
    "admissions_persons",
    "icu_admissions_persons",
    "hospital_deaths_persons",
    "ward_bed_days",
    "icu_bed_days",
)
"""Per-draw outputs summarised by quantiles (names carry units)."""

BAND_SERIES: tuple[str, ...] = (
    "ward_demand_beds",
    "icu_demand_beds",
    "ward_census_persons",
    "icu_census_persons",
    "admissions_per_day",
    "absence_share",
)
"""Daily series given as quantile bands."""

PEAK_SERIES: tuple[str, ...] = ("ward_demand", "icu_demand", "admissions")
"""Series whose peak dates are reported."""


# --------------------------------------------------------------------------- sampling


class _ValueCache:
    """PERT values of a field, computed once per (column, range) and shared by scenarios."""

    def __init__(self, quantiles: NDArray[np.float64]) -> None:
        self.quantiles = quantiles
        self.store: dict[tuple[Any, ...], NDArray[np.float64]] = {}

    def values(self, item: UncertainField) -> NDArray[np.float64]:
        key = (item.column, item.per_band, item.low.tobytes(), item.mode.tobytes(),
               item.high.tobytes())
        if key not in self.store:
            self.store[key] = item.values(self.quantiles[:, item.column])
        return self.store[key]


def draw_values(
    plan: Plan,
    scenario: Scenario | str,
    quantiles: NDArray[np.float64],
    *,
    cache: _ValueCache | None = None,
) -> DrawValues:
    """Map Latin hypercube quantiles to the scenario's input values.

    Parameters
    ----------
    plan : Plan
        The plan.
    scenario : Scenario or str
        The scenario.
    quantiles : ndarray, shape (draws, dimensions)
        From :func:`sample_quantiles`.
    cache : optional
        Shares PERT values between scenarios of one run.

    Returns
    -------
    DrawValues
        One row per draw.
    """
    fields = scenario_fields(plan, scenario)
    store = cache or _ValueCache(quantiles)
    return _values_from({item.key: store.values(item) for item in fields}, quantiles.shape[0])


def _mode_values(fields: Sequence[UncertainField], count: int) -> dict[str, NDArray[np.float64]]:
    out = {}
    for item in fields:
        block = np.repeat(item.mode[None, :], count, axis=0)
        out[item.key] = block if item.per_band else block[:, 0]
    return out


def _values_from(got: Mapping[str, NDArray[np.float64]], count: int) -> DrawValues:
    compliance = {
        key[len("compliance["):-1]: np.array(value)
        for key, value in got.items()
        if key.startswith("compliance[")
    }
    ve_inf = next((v for k, v in got.items() if k.startswith("efficacy_infection[")), None)
    ve_sev = next((v for k, v in got.items() if k.startswith("efficacy_severe[")), None)
    ve_inf = np.zeros(count) if ve_inf is None else np.array(ve_inf)
    ve_sev = np.zeros(count) if ve_sev is None else np.maximum(ve_sev, ve_inf)
    return DrawValues(
        transmissibility_value=np.array(got["transmissibility"]),
        latent_period_days=np.array(got["latent_period_days"]),
        infectious_period_days=np.array(got["infectious_period_days"]),
        symptomatic_share=np.array(got["symptomatic_share"]),
        admitted_share=np.array(got["admitted_share"]),
        icu_share=np.array(got["icu_share"]),
        ward_stay_days=np.array(got["ward_stay_days"]),
        icu_stay_days=np.array(got["icu_stay_days"]),
        efficacy_infection=ve_inf,
        efficacy_severe=ve_sev,
        compliance=compliance,
    )


# --------------------------------------------------------------------------- outputs


def quantile_label(q: float) -> str:
    """Column suffix of a quantile: 0.05 -> ``"q05"``, 0.5 -> ``"q50"``, 0.025 -> ``"q02_5"``."""
    pct = 100.0 * float(q)
    if abs(pct - round(pct)) < 1e-9:
        return f"q{int(round(pct)):02d}"
    whole = int(math.floor(pct))
    rest = f"{pct - whole:.6f}".rstrip("0")[2:]
    return f"q{whole:02d}_{rest}"


@dataclass(frozen=True, kw_only=True, eq=False)
class EnsembleResult:
    """The uncertainty ensemble of one scenario variant.

    All tables use column names with units. Quantile columns end in
    ``_qNN`` (``q05``, ``q50``, ``q95`` by default); the median ``q50`` is
    always there.

    Attributes
    ----------
    scenario : str
        Scenario name.
    variant : {"with", "without"}
        With or without the scenario's interventions.
    draws : int
        Number of draws [count].
    seed : int
        Random seed of the Latin hypercube.
    quantiles : tuple of float
        Quantiles reported [fraction], ascending.
    daily : pandas.DataFrame
        Index ``date``; quantile bands ``{series}_{qNN}`` of
        ``ward_demand_beds``, ``icu_demand_beds``, ``ward_census_persons``,
        ``icu_census_persons``, ``admissions_per_day`` and ``absence_share``;
        also ``ward_available_beds`` and ``icu_available_beds`` (without
        surge) for drawing the capacity line.
    exceedance : pandas.DataFrame
        Index ``date``; share of draws whose demand is above the available
        beds that day: ``ward_exceedance_probability``,
        ``ward_exceedance_with_surge_probability``,
        ``icu_exceedance_probability``,
        ``icu_exceedance_with_surge_probability`` [fraction].
    exceedance_any_day : pandas.DataFrame
        Index ``bed_type`` (``ward``, ``icu``); columns
        ``any_day_probability`` and ``any_day_with_surge_probability``:
        share of draws above capacity on at least one day [fraction].
    summary : pandas.DataFrame
        Index ``metric`` (:data:`SUMMARY_METRICS`, names with units);
        columns ``mean``, the quantile columns and ``scenario_run`` (the
        single run of the scenario, for comparison).
    peak_dates : pandas.DataFrame
        Index ``series`` (``ward_demand``, ``icu_demand``, ``admissions``);
        quantile columns holding dates (``datetime.date``, None when no
        draw has a peak), ``draws_with_peak_count`` and
        ``scenario_run_date``. Quantiles of dates are observed draw dates
        (inverted distribution function).
    peak_date_histogram : pandas.DataFrame
        Index ``date``; ``{series}_peak_draws_count``: draws whose peak falls
        on each day (sums to ``draws_with_peak_count``).
    tornado_peak_icu : pandas.DataFrame
        One row per uncertain field, largest swing first: ``field``,
        ``label``, ``unit``, ``per_band``, ``input_low``, ``input_high``
        (None for per-band fields), ``peak_icu_demand_at_low_beds``,
        ``peak_icu_demand_at_high_beds``, ``peak_icu_demand_baseline_beds``,
        ``swing_beds``.
    tornado_unmet : pandas.DataFrame
        The same for ward plus ICU unmet bed-days without surge:
        ``unmet_bed_days_at_low``, ``unmet_bed_days_at_high``,
        ``unmet_bed_days_baseline``, ``swing_bed_days``.
    per_draw : pandas.DataFrame
        One row per draw (index ``draw``): the sampled quantile of every
        field (``{key}_quantile``), the scalar inputs, beta, the most RK4
        substeps taken on one day (``substeps_per_day``), peak dates and
        every :data:`SUMMARY_METRICS` value.
    sampling : pandas.DataFrame
        One row per field and band: ``field``, ``label``, ``unit``,
        ``band`` (``"all"`` for scalar fields), ``distribution`` (``PERT`` or
        ``point``), ``low``, ``mode``, ``high``.
    seconds : float
        Wall time of the ensemble [s].
    """

    scenario: str
    variant: Variant
    draws: int
    seed: int
    quantiles: tuple[float, ...]
    daily: pd.DataFrame
    exceedance: pd.DataFrame
    exceedance_any_day: pd.DataFrame
    summary: pd.DataFrame
    peak_dates: pd.DataFrame
    peak_date_histogram: pd.DataFrame
    tornado_peak_icu: pd.DataFrame
    tornado_unmet: pd.DataFrame
    per_draw: pd.DataFrame
    sampling: pd.DataFrame
    seconds: float


@dataclass(frozen=True, kw_only=True, eq=False)
class ScenarioUncertainty:
    """Both variants of one scenario's ensemble."""

    scenario: str
    with_interventions: EnsembleResult
    without_interventions: EnsembleResult

    def variant(self, name: Variant) -> EnsembleResult:
        """The ensemble with (``"with"``) or without (``"without"``) interventions."""
        return self.with_interventions if name == "with" else self.without_interventions


@dataclass(frozen=True, kw_only=True, eq=False)
class UncertaintyResults:
    """Ensembles of every scenario of a plan.

    Attributes
    ----------
    draws : int
        Draws per scenario variant [count]; 0 when the ensemble is off.
    seed : int
        Random seed.
    quantiles : tuple of float
        Quantiles reported [fraction].
    dimensions : tuple of str
        Latin hypercube dimensions (field keys).
    scenarios : tuple of ScenarioUncertainty
        In plan order; empty when ``draws`` is 0.
    seconds : float
        Wall time [s].
    """

    draws: int
    seed: int
    quantiles: tuple[float, ...]
    dimensions: tuple[str, ...]
    scenarios: tuple[ScenarioUncertainty, ...]
    seconds: float

    def __getitem__(self, name: str) -> ScenarioUncertainty:
        for item in self.scenarios:
            if item.scenario == name:
                return item
        raise KeyError(name)

    def __iter__(self) -> Iterator[ScenarioUncertainty]:
        return iter(self.scenarios)

    def __len__(self) -> int:
        return len(self.scenarios)


def _surge_available(
    demand: NDArray[np.float64], available: float, surge: float, trigger: float,
    days_to_open: float,
) -> NDArray[np.float64]:
    """Available beds per draw and day, surge included.

    The rule of :func:`prepkit.metrics.core.surge_schedule`, for many draws at once.
    """
    n, days = demand.shape
    if available <= 0.0:
        reached = demand > 0.0
    else:
        reached = demand >= trigger * available
    hit = reached.any(axis=1)
    first = np.argmax(reached, axis=1)
    opening = first + int(math.ceil(max(days_to_open, 0.0)))
    opening = np.where(hit & (surge > 0.0), opening, days)
    open_now = np.arange(days)[None, :] >= opening[:, None]
    return available + surge * open_now


def _bed_outputs(
    census: NDArray[Any], catchment: float, available: float, surge: float, trigger: float,
    days_to_open: float,
) -> dict[str, NDArray[Any]]:
    demand = census.astype(np.float64) * catchment
    with_surge = _surge_available(demand, available, surge, trigger, days_to_open)
    over = demand > available
    over_surge = demand > with_surge
    return {
        "over": over,
        "over_surge": over_surge,
        "days_over": over.sum(axis=1),
        "days_over_surge": over_surge.sum(axis=1),
        "unmet": np.clip(demand - available, 0.0, None).sum(axis=1),
        "unmet_surge": np.clip(demand - with_surge, 0.0, None).sum(axis=1),
    }


def _absence(
    plan: Plan, onsets: NDArray[Any], school: NDArray[Any]
) -> NDArray[np.float64]:
    """Absence share per draw and day [fraction].

    As :func:`prepkit.metrics.core.add_absence_columns`.

    ``onsets`` are the employed-weighted symptom onsets per draw and day
    [persons/day], ``school`` the school closure intensity [fraction].
    """
    workforce = plan.workforce
    population = np.array([b.people for b in plan.bands], dtype=np.float64)
    workers = float(np.dot(employed_weights(plan), population))
    if workers <= 0.0:
        return np.zeros(onsets.shape)
    ill = recent_sum(onsets.astype(np.float64).T, workforce.days_absent_per_illness).T
    carers = workforce.carer_share_school_closure * workers * school.astype(np.float64)
    return np.asarray(np.minimum(1.0, (ill + carers) / workers), dtype=np.float64)


SCALAR_CHUNK = 1024
"""Draws post-processed at a time, so that float64 temporaries stay small."""


def _scalars(plan: Plan, draws: DrawSeries) -> tuple[dict[str, NDArray[Any]], dict[str, Any]]:
    """Per-draw scalar outputs, and the daily arrays the bands need (in chunks of draws)."""
    capacity = plan.capacity
    catch = capacity.catchment_share
    n, days = draws.series.shape[1:]
    beds = {
        "ward": (capacity.ward_beds, capacity.ward_baseline_occupancy, capacity.surge_ward_beds),
        "icu": (capacity.icu_beds, capacity.icu_baseline_occupancy, capacity.surge_icu_beds),
    }
    out: dict[str, NDArray[Any]] = {}
    daily: dict[str, Any] = {
        "absence_share": np.empty((n, days), dtype=draws.series.dtype),
    }
    for kind in beds:
        for key in ("over", "over_surge"):
            daily[f"{kind}_{key}"] = np.empty((n, days), dtype=bool)
        for key in ("days_over", "days_over_surge", "unmet", "unmet_surge"):
            out[f"{kind}_{key}"] = np.empty(n, dtype=np.int64 if "days" in key else np.float64)
    peak_absence = np.empty(n)
    onsets = draws.get("worker_onsets_per_day")
    school = draws.get("school_closure_intensity_share")
    for start in range(0, n, SCALAR_CHUNK):
        rows = slice(start, min(n, start + SCALAR_CHUNK))
        for kind, (total, baseline, surge) in beds.items():
            available = float(total) * (1.0 - baseline)
            got = _bed_outputs(
                draws.get(f"{kind}_census_persons")[rows], catch, available, float(surge),
                capacity.surge_trigger_occupancy, capacity.surge_days_to_open,
            )
            for key in ("over", "over_surge"):
                daily[f"{kind}_{key}"][rows] = got[key]
            for key in ("days_over", "days_over_surge", "unmet", "unmet_surge"):
                out[f"{kind}_{key}"][rows] = got[key]
        absence = _absence(plan, onsets[rows], school[rows])
        peak_absence[rows] = absence.max(axis=1)
        daily["absence_share"][rows] = absence

    scalars: dict[str, NDArray[Any]] = {}
    for k, (kind, (total, baseline, _)) in enumerate(beds.items()):
        daily[f"{kind}_available"] = float(total) * (1.0 - baseline)
        scalars[f"peak_{kind}_demand_beds"] = draws.peaks[:, k] * catch
        scalars[f"peak_{kind}_census_persons"] = draws.peaks[:, k]
        scalars[f"{kind}_days_over_capacity_days"] = out[f"{kind}_days_over"]
        scalars[f"{kind}_days_over_capacity_with_surge_days"] = out[f"{kind}_days_over_surge"]
        scalars[f"{kind}_unmet_bed_days"] = out[f"{kind}_unmet"]
        scalars[f"{kind}_unmet_bed_days_with_surge"] = out[f"{kind}_unmet_surge"]
    scalars["total_unmet_bed_days"] = (
        scalars["ward_unmet_bed_days"] + scalars["icu_unmet_bed_days"]
    )
    scalars["total_unmet_bed_days_with_surge"] = (
        scalars["ward_unmet_bed_days_with_surge"] + scalars["icu_unmet_bed_days_with_surge"]
    )
    scalars["peak_admissions_per_day"] = draws.peaks[:, 2]
    scalars["peak_absence_share"] = peak_absence
    for j, name in enumerate(FINAL_NAMES):
        scalars[name] = draws.finals[:, j]
    return scalars, daily


def _quantiles(values: NDArray[Any], qs: Sequence[float], axis: int = 0) -> NDArray[np.float64]:
    return np.asarray(np.quantile(values, list(qs), axis=axis), dtype=np.float64)


def _peak_days(draws: DrawSeries, catch: float) -> dict[str, NDArray[np.int64]]:
    """Peak day per draw, -1 where the series never rises above 0."""
    out = {}
    for k, name in enumerate(PEAK_SERIES):
        scale = catch if k < 2 else 1.0
        valid = draws.peaks[:, k] * scale > 0.0
        out[name] = np.where(valid, draws.peak_days[:, k], -1)
    return out


def _run_values(run: ScenarioRun) -> dict[str, float]:
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
        "ward_bed_days": total.ward_bed_days,
        "icu_bed_days": total.icu_bed_days,
    }


def _tornado(
    plan: Plan,
    model: CompiledModel,
    fields: Sequence[UncertainField],
    min_substeps: int | None,
) -> tuple[pd.DataFrame, pd.DataFrame, dict[str, float], dict[str, int]]:
    """One-at-a-time swings; also returns the baseline run's scalars and peak days."""
    relevant = [
        item for item in fields
        if not item.is_point and (model.with_interventions or not _is_intervention_field(item))
    ]
    count = 1 + 2 * len(relevant)
    got = _mode_values(fields, count)
    for k, item in enumerate(relevant):
        for row, end in ((1 + 2 * k, item.low), (2 + 2 * k, item.high)):
            got[item.key][row] = end if item.per_band else end[0]
    draws = simulate_draws(
        model, plan, _values_from(got, count), min_substeps=min_substeps, blocks=1,
        dtype=np.float64, what="one-input-at-a-time run",
    )
    scalars, _ = _scalars(plan, draws)
    peak_icu = scalars["peak_icu_demand_beds"]
    unmet = scalars["total_unmet_bed_days"]
    rows_icu, rows_unmet = [], []
    for k, item in enumerate(relevant):
        lo, hi = 1 + 2 * k, 2 + 2 * k
        head = {
            "field": item.key,
            "label": item.label,
            "unit": item.unit,
            "per_band": item.per_band,
            "input_low": None if item.per_band else float(item.low[0]),
            "input_high": None if item.per_band else float(item.high[0]),
        }
        rows_icu.append({
            **head,
            "peak_icu_demand_at_low_beds": float(peak_icu[lo]),
            "peak_icu_demand_at_high_beds": float(peak_icu[hi]),
            "peak_icu_demand_baseline_beds": float(peak_icu[0]),
            "swing_beds": float(abs(peak_icu[hi] - peak_icu[lo])),
        })
        rows_unmet.append({
            **head,
            "unmet_bed_days_at_low": float(unmet[lo]),
            "unmet_bed_days_at_high": float(unmet[hi]),
            "unmet_bed_days_baseline": float(unmet[0]),
            "swing_bed_days": float(abs(unmet[hi] - unmet[lo])),
        })
    columns_icu = ["field", "label", "unit", "per_band", "input_low", "input_high",
                   "peak_icu_demand_at_low_beds", "peak_icu_demand_at_high_beds",
                   "peak_icu_demand_baseline_beds", "swing_beds"]
    columns_unmet = columns_icu[:6] + ["unmet_bed_days_at_low", "unmet_bed_days_at_high",
                                       "unmet_bed_days_baseline", "swing_bed_days"]
    icu = pd.DataFrame(rows_icu, columns=columns_icu)
    icu = icu.sort_values("swing_beds", ascending=False, kind="stable").reset_index(drop=True)
    unmet_table = pd.DataFrame(rows_unmet, columns=columns_unmet)
    unmet_table = unmet_table.sort_values(
        "swing_bed_days", ascending=False, kind="stable"
    ).reset_index(drop=True)
    baseline = {key: float(value[0]) for key, value in scalars.items()}
    days = {key: int(value[0]) for key, value in _peak_days(draws, plan.capacity.catchment_share)
            .items()}
    return icu, unmet_table, baseline, days


def _is_intervention_field(item: UncertainField) -> bool:
    return item.key.startswith(("compliance[", "efficacy_"))


def _sampling_table(plan: Plan, fields: Sequence[UncertainField]) -> pd.DataFrame:
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


def _date_or_none(day0: dt.date, day: float) -> dt.date | None:
    if day < 0 or not math.isfinite(day):
        return None
    return day0 + dt.timedelta(days=int(day))


def run_ensemble(
    plan: Plan,
    scenario: Scenario | str,
    with_interventions: bool = True,
    *,
    draws: int | None = None,
    quantiles: Sequence[float] = DEFAULT_QUANTILES,
    seed: int | None = None,
    sample: NDArray[np.float64] | None = None,
    scenario_run: ScenarioRun | None = None,
    min_substeps: int | None = ENSEMBLE_MIN_SUBSTEPS,
    blocks: int = DEFAULT_BLOCKS,
    dtype: type[np.floating[Any]] = np.float32,
    on_block: Callable[[int], None] | None = None,
    _cache: _ValueCache | None = None,
) -> EnsembleResult:
    """Run the uncertainty ensemble of one scenario variant.

    Parameters
    ----------
    plan : Plan
        The plan.
    scenario : Scenario or str
        The scenario or its name.
    with_interventions : bool
        False runs the scenario without its interventions.
    draws : int, optional
        Number of draws [count]; default ``plan.details.draws`` (ignored
        when ``sample`` is given).
    quantiles : sequence of float
        Quantiles to report [fraction]; the median is always added.
    seed : int, optional
        Random seed; default ``plan.details.seed``.
    sample : ndarray, optional
        Latin hypercube quantiles from :func:`sample_quantiles` (shared
        between scenarios by :func:`run_uncertainty`).
    scenario_run : ScenarioRun, optional
        The engine's run of this variant, for the ``scenario_run`` column;
        default the ensemble's own run at the modes.
    min_substeps : int or None
        Fewest RK4 steps per day (see
        :data:`prepkit.uncertainty.ensemble.ENSEMBLE_MIN_SUBSTEPS`); None uses the
        engine's rule.
    blocks : int
        Blocks the draws are run in (progress is reported per block).
    dtype : numpy float type
        Storage type of the daily series per draw.
    on_block : callable, optional
        Called with the number of draws finished after each block.

    Returns
    -------
    EnsembleResult
        Bands, exceedance, peak dates, summary, tornado and per-draw table.

    Raises
    ------
    ModelError
        When the plan cannot be simulated, a range is not ordered, or a draw
        (or a one-input-at-a-time run of the tornado) fails a check of
        :mod:`prepkit.simulation.health`: the error names the draw and its inputs,
        and no result is returned.
    """
    started = time.perf_counter()
    validate_plan(plan)
    chosen = plan.scenario(scenario) if isinstance(scenario, str) else scenario
    used_seed = plan.details.seed if seed is None else int(seed)
    if sample is None:
        count = plan.details.draws if draws is None else int(draws)
        sample = sample_quantiles(plan, count, used_seed)
    n = sample.shape[0]
    qs = tuple(sorted(set(float(q) for q in quantiles) | {0.5}))
    if any(not 0.0 <= q <= 1.0 for q in qs):
        raise ModelError(f"quantiles must be in [0, 1], found {list(quantiles)}")
    labels = [quantile_label(q) for q in qs]

    model = compile_scenario(plan, chosen, with_interventions)
    fields = scenario_fields(plan, chosen)
    values = draw_values(plan, chosen, sample, cache=_cache)
    runs = simulate_draws(
        model, plan, values, min_substeps=min_substeps, blocks=blocks, dtype=dtype,
        on_block=on_block,
    )
    scalars, arrays = _scalars(plan, runs)
    capacity = plan.capacity
    catch = capacity.catchment_share
    days = model.horizon_days
    day0 = plan.details.day0
    dates = pd.date_range(pd.Timestamp(day0), periods=days, freq="D", name="date")

    columns: dict[str, Any] = {}
    for kind in ("ward", "icu"):
        census_q = _quantiles(runs.get(f"{kind}_census_persons"), qs)
        for j, label in enumerate(labels):
            columns[f"{kind}_demand_beds_{label}"] = census_q[j] * catch
        for j, label in enumerate(labels):
            columns[f"{kind}_census_persons_{label}"] = census_q[j]
    for name, block in (
        ("admissions_per_day", runs.get("admissions_per_day")),
        ("absence_share", arrays["absence_share"]),
    ):
        band = _quantiles(block, qs)
        for j, label in enumerate(labels):
            columns[f"{name}_{label}"] = band[j]
    ordered = [f"{s}_{label}" for s in BAND_SERIES for label in labels]
    daily = pd.DataFrame({key: columns[key] for key in ordered}, index=dates)
    daily["ward_available_beds"] = arrays["ward_available"]
    daily["icu_available_beds"] = arrays["icu_available"]

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

    tornado_icu, tornado_unmet, baseline, baseline_days = _tornado(
        plan, model, fields, min_substeps
    )
    reference = _run_values(scenario_run) if scenario_run is not None else baseline

    summary_rows = {}
    for name in SUMMARY_METRICS:
        values_of = np.asarray(scalars[name], dtype=np.float64)
        stats: dict[str, Any] = {"mean": float(values_of.mean())}
        stats.update(dict(zip(labels, _quantiles(values_of, qs).tolist(), strict=True)))
        stats["scenario_run"] = float(reference[name])
        summary_rows[name] = stats
    summary = pd.DataFrame.from_dict(summary_rows, orient="index")
    summary.index.name = "metric"

    peaks = _peak_days(runs, catch)
    if scenario_run is not None:
        m = scenario_run.metrics
        run_dates = {
            "ward_demand": m.ward.peak_date,
            "icu_demand": m.icu.peak_date,
            "admissions": m.peak_admissions_date,
        }
    else:
        run_dates = {k: _date_or_none(day0, v) for k, v in baseline_days.items()}
    date_rows = {}
    histogram = {}
    for name in PEAK_SERIES:
        chosen_days = peaks[name][peaks[name] >= 0]
        row: dict[str, Any] = {}
        if chosen_days.size:
            found = np.quantile(chosen_days, list(qs), method="inverted_cdf")
            row.update({label: _date_or_none(day0, float(v)) for label, v in
                        zip(labels, found, strict=True)})
        else:
            row.update({label: None for label in labels})
        row["draws_with_peak_count"] = int(chosen_days.size)
        row["scenario_run_date"] = run_dates[name]
        date_rows[name] = row
        histogram[f"{name}_peak_draws_count"] = np.bincount(chosen_days, minlength=days)[:days]
    peak_dates = pd.DataFrame.from_dict(date_rows, orient="index").astype(object)
    peak_dates.index.name = "series"
    peak_hist = pd.DataFrame(histogram, index=dates)

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
        per_draw[f"{name}_peak_date"] = [
            _date_or_none(day0, float(v)) for v in peaks[name]
        ]
    for name in SUMMARY_METRICS:
        per_draw[name] = scalars[name]
    table = pd.DataFrame(per_draw, index=pd.RangeIndex(n, name="draw"))

    return EnsembleResult(
        scenario=chosen.name,
        variant="with" if with_interventions else "without",
        draws=n,
        seed=used_seed,
        quantiles=qs,
        daily=daily,
        exceedance=exceedance,
        exceedance_any_day=exceedance_any,
        summary=summary,
        peak_dates=peak_dates,
        peak_date_histogram=peak_hist,
        tornado_peak_icu=tornado_icu,
        tornado_unmet=tornado_unmet,
        per_draw=table,
        sampling=_sampling_table(plan, fields),
        seconds=time.perf_counter() - started,
    )


# --------------------------------------------------------------------------- progress


def _interactive() -> bool:
    """True when a progress bar is welcome: stderr is a terminal and CI is not set."""
    stream = sys.stderr
    return bool(getattr(stream, "isatty", lambda: False)()) and not os.environ.get("CI")


def _progress_ticker(
    progress: Progress, total: int
) -> tuple[Callable[[int], None], Callable[[], None]]:
    """A tick function (draws finished) and a close function for the chosen progress style."""
    if callable(progress):
        report = progress
        done = [0]

        def tick(count: int) -> None:
            done[0] += count
            report(done[0], total)

        return tick, lambda: None
    wanted = _interactive() if progress is None else bool(progress)
    if not wanted or total == 0:
        return (lambda count: None), (lambda: None)
    from tqdm import tqdm

    bar = tqdm(total=total, desc="uncertainty draws", unit="draw", file=sys.stderr,
               leave=False, dynamic_ncols=True)
    return bar.update, bar.close


def run_uncertainty(
    plan: Plan,
    results: PlanResults | None = None,
    *,
    draws: int | None = None,
    quantiles: Sequence[float] = DEFAULT_QUANTILES,
    progress: Progress = None,
    seed: int | None = None,
    min_substeps: int | None = ENSEMBLE_MIN_SUBSTEPS,
    blocks: int = DEFAULT_BLOCKS,
    executor: Executor | None = None,
) -> UncertaintyResults:
    """Run the uncertainty ensemble of every scenario of a plan, with and without interventions.

    Parameters
    ----------
    plan : Plan
        The plan.
    results : PlanResults, optional
        The engine's results of the plan (:func:`prepkit.scenarios.runs.run_plan`);
        when given, their numbers fill the ``scenario_run`` columns.
    draws : int, optional
        Draws per scenario variant [count]; default ``plan.details.draws``.
        0 turns the ensemble off (empty results).
    quantiles : sequence of float
        Quantiles to report [fraction]; the median is always added.
    progress : callable, bool or None
        A callable gets ``(draws_done, draws_total)`` after each block; True
        shows a tqdm bar on stderr; False shows nothing; None (default)
        shows the bar only on an interactive terminal (stderr is a TTY and
        the ``CI`` environment variable is not set).
    seed : int, optional
        Random seed; default ``plan.details.seed``.
    min_substeps : int or None
        Fewest RK4 steps per day; None uses the engine's rule.
    blocks : int
        Blocks per scenario variant (progress granularity).
    executor : concurrent.futures.Executor, optional
        Where to run the scenario variants: for large sweeps, a Dask cluster
        (``dask.distributed.Client(address).get_executor()``) or any other
        executor. Every variant uses the same Latin hypercube sample, so the
        results are the same wherever they run. None runs them here, on
        every core.

    Returns
    -------
    UncertaintyResults
        One :class:`ScenarioUncertainty` per scenario.
    """
    started = time.perf_counter()
    validate_plan(plan)
    count = plan.details.draws if draws is None else int(draws)
    used_seed = plan.details.seed if seed is None else int(seed)
    qs = tuple(sorted(set(float(q) for q in quantiles) | {0.5}))
    dims = plan_dimensions(plan)
    if count <= 0:
        return UncertaintyResults(draws=0, seed=used_seed, quantiles=qs, dimensions=dims,
                                  scenarios=(), seconds=time.perf_counter() - started)
    sample = sample_quantiles(plan, count, used_seed)
    if executor is not None:
        return _run_uncertainty_elsewhere(
            executor, plan, results, sample=sample, seed=used_seed, quantiles=qs, dims=dims,
            min_substeps=min_substeps, blocks=blocks, progress=progress, started=started,
        )
    cache = _ValueCache(sample)
    tick, close = _progress_ticker(progress, count * 2 * len(plan.scenarios))
    out = []
    try:
        for scenario in plan.scenarios:
            pair = {}
            for flag in (True, False):
                run = None
                if results is not None:
                    run = results[scenario.name].variant("with" if flag else "without")
                pair[flag] = run_ensemble(
                    plan, scenario, flag, sample=sample, seed=used_seed, quantiles=qs,
                    scenario_run=run, min_substeps=min_substeps, blocks=blocks,
                    on_block=tick, _cache=cache,
                )
            out.append(ScenarioUncertainty(
                scenario=scenario.name,
                with_interventions=pair[True],
                without_interventions=pair[False],
            ))
    finally:
        close()
    return UncertaintyResults(
        draws=count, seed=used_seed, quantiles=qs, dimensions=dims, scenarios=tuple(out),
        seconds=time.perf_counter() - started,
    )


def _run_uncertainty_elsewhere(
    executor: Executor,
    plan: Plan,
    results: PlanResults | None,
    *,
    sample: NDArray[np.float64],
    seed: int,
    quantiles: tuple[float, ...],
    dims: Any,
    min_substeps: int | None,
    blocks: int,
    progress: Progress,
    started: float,
) -> UncertaintyResults:
    """:func:`run_uncertainty` with one task per scenario variant on ``executor``."""
    count = int(sample.shape[0])
    futures: dict[tuple[str, bool], Future[EnsembleResult]] = {}
    for scenario in plan.scenarios:
        for flag in (True, False):
            run = None
            if results is not None:
                run = results[scenario.name].variant("with" if flag else "without")
            futures[scenario.name, flag] = executor.submit(
                run_ensemble, plan, scenario, flag, sample=sample, seed=seed,
                quantiles=quantiles, scenario_run=run, min_substeps=min_substeps, blocks=blocks,
            )
    tick, close = _progress_ticker(progress, count * len(futures))
    try:
        for _done in as_completed(futures.values()):
            tick(count)
        out = tuple(
            ScenarioUncertainty(
                scenario=scenario.name,
                with_interventions=futures[scenario.name, True].result(),
                without_interventions=futures[scenario.name, False].result(),
            )
            for scenario in plan.scenarios
        )
    finally:
        close()
    return UncertaintyResults(
        draws=count, seed=seed, quantiles=quantiles, dimensions=dims, scenarios=out,
        seconds=time.perf_counter() - started,
    )


# --------------------------------------------------------------------------- JSON


def _plain(value: Any) -> Any:
    """Plain JSON value: ISO dates, None for NaN, infinities and missing values."""
    if value is None:
        return None
    if isinstance(value, pd.Timestamp | dt.datetime):
        return value.date().isoformat()
    if isinstance(value, dt.date):
        return value.isoformat()
    if isinstance(value, bool | np.bool_):
        return bool(value)
    if isinstance(value, int | np.integer):
        return int(value)
    if isinstance(value, float | np.floating):
        number = float(value)
        return number if math.isfinite(number) else None
    if isinstance(value, str):
        return value
    try:
        if pd.isna(value):
            return None
    except (TypeError, ValueError):
        pass
    return value


def _records(frame: pd.DataFrame, index_name: str | None = None) -> list[dict[str, Any]]:
    rows = []
    for key, row in frame.iterrows():
        item = {str(k): _plain(v) for k, v in row.items()}
        if index_name is not None:
            item = {index_name: _plain(key), **item}
        rows.append(item)
    return rows


def _ensemble_dict(result: EnsembleResult, include_daily: bool) -> dict[str, Any]:
    summary = {
        str(metric): {str(k): _plain(v) for k, v in row.items()}
        for metric, row in result.summary.iterrows()
    }
    peak_dates = {
        str(name): {str(k): _plain(v) for k, v in row.items()}
        for name, row in result.peak_dates.iterrows()
    }
    any_day = {
        f"{bed}_{column}": _plain(value)
        for bed, row in result.exceedance_any_day.iterrows()
        for column, value in row.items()
    }
    out: dict[str, Any] = {
        "draws_count": result.draws,
        "summary": summary,
        "exceedance_any_day": any_day,
        "peak_dates": peak_dates,
        "tornado_peak_icu_demand": _records(result.tornado_peak_icu),
        "tornado_unmet_bed_days": _records(result.tornado_unmet),
    }
    if include_daily:
        out["daily"] = _records(result.daily, "date")
        out["exceedance_daily"] = _records(result.exceedance, "date")
    return out


def uncertainty_summary_dict(
    uncertainty: UncertaintyResults, *, include_daily: bool = False
) -> dict[str, Any]:
    """The ensemble as a JSON-serialisable dictionary (for the run's JSON summary).

    Parameters
    ----------
    uncertainty : UncertaintyResults
        From :func:`run_uncertainty`.
    include_daily : bool
        Also include the daily quantile bands and exceedance probabilities
        (long; the CSV files are the better home for them).

    Returns
    -------
    dict
        Keys carry units; dates are ISO strings; NaN and infinities are
        None. ``method`` states the sampling rules in words. Run times are
        left out so that the same plan always gives the same dictionary.
    """
    return {
        "version": UNCERTAINTY_SUMMARY_VERSION,
        "draws_per_scenario_variant_count": uncertainty.draws,
        "seed": uncertainty.seed,
        "quantiles": [float(q) for q in uncertainty.quantiles],
        "dimensions": list(uncertainty.dimensions),
        "method": {
            "distribution": "beta-PERT, lambda 4, mode = Central; point mass when Low = High",
            "design": "Latin hypercube, one dimension per field; per-band fields comonotone",
            "levels": (
                "transmissibility and the admitted and ICU shares are drawn around the "
                "scenario's level: low [Low, Central] mode Low; central [Low, High] mode "
                "Central; high [Central, High] mode High (doubling time read inverted); "
                "every other field over [Low, High] with mode Central"
            ),
            "common_draws": "the same quantiles for every scenario and both variants",
            "tornado": (
                "each field at the two ends of the range it is drawn from, all others at "
                "their modes; outputs peak ICU demand and ward plus ICU unmet bed-days "
                "without surge"
            ),
        },
        "scenarios": [
            {
                "name": item.scenario,
                "with_interventions": _ensemble_dict(item.with_interventions, include_daily),
                "without_interventions": _ensemble_dict(item.without_interventions,
                                                        include_daily),
            }
            for item in uncertainty.scenarios
        ],
    }
