"""One view per scenario with everything the pack says about it."""

from __future__ import annotations

import datetime as dt
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, replace

import pandas as pd

from prepkit.metrics.capacity import BedMetrics
from prepkit.metrics.core import ScenarioMetrics
from prepkit.plan import Plan
from prepkit.report.observed import ObservedCheck, observed_checks
from prepkit.report.words.ensemble_format import band_columns, scenario_ensemble
from prepkit.report.words.formatting import (
    LEVEL_WORDS,
    Period,
    format_date,
    format_days,
    format_number,
    format_period,
    periods_over,
)
from prepkit.report.words.scenario_text import (
    bed_sentence,
    measures_sentence,
    observed_sentence,
    peak_change,
    surge_sentence,
    ventilator_sentence,
)
from prepkit.scenarios.daily import column_slug
from prepkit.scenarios.runs import PlanResults, ScenarioResults, ScenarioRun
from prepkit.uncertainty.results import UncertaintyResults
from prepkit.uncertainty.run import EnsembleResult


@dataclass(frozen=True, kw_only=True)
class MeasureSpan:
    """When one measure was in force in a run.

    Parameters
    ----------
    name : str
        Measure name.
    periods : tuple of Period
        Days it was active.
    """

    name: str
    periods: tuple[Period, ...]

    @property
    def text(self) -> str:
        """``Schools closed: 12 Feb to 8 Apr 2027`` or ``... : not started``."""
        if not self.periods:
            return f"{self.name}: not started in the period shown"
        spans = "; ".join(format_period(p.start, p.end) for p in self.periods)
        return f"{self.name}: {spans}"


@dataclass(frozen=True, kw_only=True)
class ScenarioView:
    """One scenario with everything the pack says about it.

    Parameters
    ----------
    number : int
        Position in the plan, from 1.
    item : ScenarioResults
        Both runs.
    ward_periods, icu_periods : tuple of Period
        Days over the available beds with measures.
    ward_periods_without, icu_periods_without : tuple of Period
        The same without measures.
    last_day : datetime.date
        Last simulated day.
    measure_spans : tuple of MeasureSpan
        When each measure was in force (with measures).
    observed : tuple of ObservedCheck
        The scenario (with measures) against the latest observed census
        (:func:`with_observations`); empty without observations.
    fitted : bool
        True when the plan is fitted to its observed figures (the scenario
        runs at the fitted spread and severity, not at its levels).
    strain : tuple of (str, str)
        Per bed type (``"ward"``, ``"icu"``), the clause on its days of strain
        for the leader brief (:func:`prepkit.report.words.strain.with_strain`);
        empty when not filled.
    """

    number: int
    item: ScenarioResults
    ward_periods: tuple[Period, ...]
    icu_periods: tuple[Period, ...]
    ward_periods_without: tuple[Period, ...]
    icu_periods_without: tuple[Period, ...]
    last_day: dt.date
    measure_spans: tuple[MeasureSpan, ...] = ()
    observed: tuple[ObservedCheck, ...] = ()
    fitted: bool = False
    strain: tuple[tuple[str, str], ...] = ()

    @property
    def name(self) -> str:
        """Scenario name."""
        return self.item.scenario.name

    @property
    def with_metrics(self) -> ScenarioMetrics:
        """Metrics with measures."""
        return self.item.with_interventions.metrics

    @property
    def without_metrics(self) -> ScenarioMetrics:
        """Metrics without measures."""
        return self.item.without_interventions.metrics

    @property
    def short_of_beds(self) -> bool:
        """True when ward or ICU demand exceeds the available beds with measures."""
        m = self.with_metrics
        return m.ward.days_over_capacity_days > 0 or m.icu.days_over_capacity_days > 0

    @property
    def unmet_bed_days(self) -> float:
        """Ward plus ICU unmet bed-days with measures [bed-days]."""
        m = self.with_metrics
        return m.ward.unmet_bed_days + m.icu.unmet_bed_days

    @property
    def levels_text(self) -> str:
        """``High transmissibility, high severity``, or the fitted spread and severity."""
        s = self.item.scenario
        if self.fitted:
            return "Spread and severity fitted to the local figures"
        return (
            f"{LEVEL_WORDS[s.transmissibility_level]} transmissibility, "
            f"{LEVEL_WORDS[s.severity_level].lower()} severity"
        )

    @property
    def measures_text(self) -> str:
        """The scenario's measures, or ``No measures``."""
        names = self.item.scenario.interventions
        return "; ".join(names) if names else "No measures"

    @property
    def ward_sentence(self) -> str:
        """:func:`bed_sentence` for ward beds with measures."""
        return bed_sentence("ward", self.with_metrics.ward, self.ward_periods, self.last_day)

    @property
    def icu_sentence(self) -> str:
        """:func:`bed_sentence` for ICU beds with measures."""
        return bed_sentence("icu", self.with_metrics.icu, self.icu_periods, self.last_day)

    @property
    def ventilator_sentence(self) -> str:
        """:func:`ventilator_sentence` with measures ("" when none are needed)."""
        return ventilator_sentence(self.with_metrics.ventilators)

    @property
    def surge_sentences(self) -> tuple[str, ...]:
        """:func:`surge_sentence` for both bed types, empty ones dropped."""
        texts = (surge_sentence("ward", self.with_metrics.ward),
                 surge_sentence("icu", self.with_metrics.icu))
        return tuple(t for t in texts if t)

    @property
    def measures_sentence(self) -> str:
        """:func:`measures_sentence` of the scenario."""
        return measures_sentence(self.item)

    @property
    def observed_sentence(self) -> str:
        """:func:`observed_sentence` of the scenario ("" without observations)."""
        return observed_sentence(self.observed)

    @property
    def contradicted(self) -> bool:
        """True when an observed census lies outside the scenario's plausible range."""
        return any(not check.consistent for check in self.observed)


def _active_spans(plan: Plan, run: ScenarioRun, names: Iterable[str]) -> tuple[MeasureSpan, ...]:
    out = []
    for name in names:
        key = f"active_{column_slug(name)}"
        if key not in run.daily.columns:
            continue
        flags = run.daily[key].astype(float)
        out.append(MeasureSpan(name=name, periods=periods_over(flags, 0.5)))
    return tuple(out)


def scenario_views(plan: Plan, results: PlanResults) -> tuple[ScenarioView, ...]:
    """A :class:`ScenarioView` per scenario, in plan order.

    Parameters
    ----------
    plan : Plan
        The plan.
    results : PlanResults
        Its results.

    Returns
    -------
    tuple of ScenarioView
        One per scenario.
    """
    out = []
    for number, item in enumerate(results.scenarios, start=1):
        runs = {"with": item.with_interventions, "without": item.without_interventions}
        found: dict[str, tuple[Period, ...]] = {}
        for variant, run in runs.items():
            for kind in ("ward", "icu"):
                daily = run.daily
                found[f"{kind}_{variant}"] = periods_over(
                    daily[f"{kind}_demand_beds"], daily[f"{kind}_available_beds"]
                )
        daily = item.with_interventions.daily
        last_day = pd.Timestamp(daily.index[-1]).date() if len(daily) else plan.details.day0
        out.append(
            ScenarioView(
                number=number,
                item=item,
                ward_periods=found["ward_with"],
                icu_periods=found["icu_with"],
                ward_periods_without=found["ward_without"],
                icu_periods_without=found["icu_without"],
                last_day=last_day,
                measure_spans=_active_spans(
                    plan, item.with_interventions, item.scenario.interventions
                ),
                fitted=plan.fitted is not None,
            )
        )
    return tuple(out)


def with_observations(
    plan: Plan, views: Sequence[ScenarioView], uncertainty: UncertaintyResults | None = None
) -> tuple[ScenarioView, ...]:
    """The views with each scenario checked against the latest observed census.

    Parameters
    ----------
    plan : Plan
        The plan (its observations).
    views : sequence of ScenarioView
        Every scenario.
    uncertainty : prepkit.uncertainty.results.UncertaintyResults, optional
        The ensemble: its daily bands give each scenario's plausible range;
        without it the range is the central run alone.

    Returns
    -------
    tuple of ScenarioView
        The same views, ``observed`` filled in.
    """
    if not plan.observed:
        return tuple(views)
    columns = ("q05", "q95")
    if uncertainty is not None and uncertainty.scenarios:
        low, _, high = band_columns(uncertainty.quantiles)
        columns = (low, high)
    out = []
    for view in views:
        result = scenario_ensemble(uncertainty, view.name) if uncertainty is not None else None
        bands = result.with_interventions.daily if result is not None else None
        checks = observed_checks(plan, view.item.with_interventions.daily, bands, columns)
        out.append(replace(view, observed=checks))
    return tuple(out)


def _short_date(day: dt.date | None, year: int) -> str:
    """``16 Feb`` in ``year``, ``3 Jan 2028`` in another year."""
    return format_date(day, year=day is not None and day.year != year)


def _bed_cell(bed: BedMetrics, year: int) -> str:
    """A bed type's cell of the leader table: days short and from when, the peak demand."""
    peak = f"peak {format_number(bed.peak_demand_beds, words=True)}"
    if bed.days_over_capacity_days > 0:
        return (f"{format_days(bed.days_over_capacity_days)} short from "
                f"{_short_date(bed.first_over_capacity_date, year)}; {peak}")
    return f"Never short; {peak}"


def brief_cells(view: ScenarioView, year: int) -> tuple[str, ...]:
    """One scenario's row of the leader table, central run with measures.

    Parameters
    ----------
    view : ScenarioView
        The scenario, its strain clauses filled in
        (:func:`prepkit.report.words.strain.with_strain`).
    year : int
        Year of the dates printed without one (the year of day 0).

    Returns
    -------
    tuple of str
        Ward beds, ICU beds, days more than 75% full of each bed type in
        ``view.strain`` and what the measures do; e.g. ``("43 days short
        from 9 Feb; peak 302", "59 days short from 6 Feb; peak 118", "70 (61
        to 77); 80 without measures", "Ward peak 60% lower, 7 days later")``.
    """
    m = view.with_metrics
    effect = view.item.effect
    measures = (peak_change(effect.ward_peak_reduction_share, effect.ward_peak_delay_days,
                            form="cell")
                if view.item.scenario.interventions else "No measures in this scenario")
    strain = tuple(text for _, text in view.strain)
    return (_bed_cell(m.ward, year), _bed_cell(m.icu, year), *strain, measures)


def with_ensembles(
    views: Sequence[ScenarioView], uncertainty: UncertaintyResults
) -> list[tuple[ScenarioView, EnsembleResult]]:
    """Each scenario that has an ensemble, with its ensemble with measures, in view order."""
    out = []
    for view in views:
        item = scenario_ensemble(uncertainty, view.name)
        if item is not None:
            out.append((view, item.with_interventions))
    return out
