"""Typed results of the uncertainty ensemble, and the names of what it reports."""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Literal

import pandas as pd

from prepkit.scenarios.runs import ByScenario
from prepkit.uncertainty.decide_results import DecisionResults

Variant = Literal["with", "without"]

DEFAULT_QUANTILES: tuple[float, ...] = (0.05, 0.25, 0.5, 0.75, 0.95)
"""Quantiles reported by default (the median is always added): the outer pair bounds the ranges
the pack quotes (9 in 10 futures), the inner pair the middle half drawn in the fan charts."""

FAN_QUANTILES: tuple[float, float] = (0.25, 0.75)
"""Inner band of the fan charts, when reported: the middle half of the futures [fraction]."""

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
    "ward_days_strained_days",
    "icu_days_strained_days",
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
    "shortage_deaths_persons",
    "shortage_deaths_with_surge_persons",
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
    ``_qNN`` (``q05``, ``q25``, ``q50``, ``q75``, ``q95`` by default); the median ``q50`` is
    always there.

    Attributes
    ----------
    scenario, variant : str, and {"with", "without"}
        Scenario name, and whether its interventions are in force.
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
class UncertaintyResults(ByScenario[ScenarioUncertainty]):
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
    decisions : DecisionResults or None
        The decide-by dates (:func:`prepkit.uncertainty.decide.decide_plan`),
        when they were searched.
    """

    draws: int
    seed: int
    quantiles: tuple[float, ...]
    dimensions: tuple[str, ...]
    scenarios: tuple[ScenarioUncertainty, ...]
    seconds: float
    decisions: DecisionResults | None = None

    @staticmethod
    def name_of(item: ScenarioUncertainty) -> str:
        """Scenario name of an item."""
        return item.scenario
