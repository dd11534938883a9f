"""Alternate text of the charts, written from their data."""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import pandas as pd

from prepkit.report.words.ensemble_format import band_columns, scenario_ensemble, spread_cells
from prepkit.report.words.formatting import (
    BED_NOUNS,
    as_date,
    format_date,
    format_days,
    format_number,
    format_percent,
    when_over,
)
from prepkit.report.words.views import ScenarioView


def demand_alt(view: ScenarioView, observed_days: int = 0) -> str:
    """Alternate text of a scenario's bed-demand chart, written from its data.

    Parameters
    ----------
    view : ScenarioView
        The scenario.
    observed_days : int, optional
        Days of observed figures drawn as points.

    Returns
    -------
    str
        What the chart shows: each panel's peak and date against the
        available (and surge) beds, when demand is above them, and the peak
        without measures.
    """
    parts = [f"Two panels for the scenario {view.name}, ward beds above and ICU beds below."]
    for kind, bed, bed_without in (
        ("ward", view.with_metrics.ward, view.without_metrics.ward),
        ("icu", view.with_metrics.icu, view.without_metrics.icu),
    ):
        title, _ = BED_NOUNS[kind]  # type: ignore[index]
        surge = (
            f" ({format_number(bed.available_beds + bed.surge_beds)} once surge beds open)"
            if bed.surge_beds > 0
            else ""
        )
        text = (
            f"{title} demand with measures peaks at {format_number(bed.peak_demand_beds)} beds "
            f"on {format_date(bed.peak_date)} against {format_number(bed.available_beds)} "
            f"available beds{surge}"
        )
        periods = view.ward_periods if kind == "ward" else view.icu_periods
        if periods:
            text += (
                f"; it is above the available beds, shaded, "
                f"{when_over(periods, view.last_day)}"
            )
        if view.item.scenario.interventions:
            text += (
                f". Without measures it would peak at "
                f"{format_number(bed_without.peak_demand_beds)} beds on "
                f"{format_date(bed_without.peak_date)}"
            )
        parts.append(text + ".")
    if observed_days:
        parts.append(f"Observed patients on {format_days(observed_days)} are drawn as dots.")
    return " ".join(parts)


def gap_alt(views: Sequence[ScenarioView]) -> str:
    """Alternate text of the capacity-gap timeline.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.

    Returns
    -------
    str
        For each scenario, the days ward and ICU beds run short and from
        when.
    """
    parts = ["Timeline of the days on which beds run short, one strip per scenario and bed type."]
    for view in views:
        pieces = []
        for kind, bed in (("ward", view.with_metrics.ward), ("icu", view.with_metrics.icu)):
            _, noun = BED_NOUNS[kind]  # type: ignore[index]
            if bed.days_over_capacity_days:
                pieces.append(
                    f"{noun} beds short on {format_days(bed.days_over_capacity_days)} from "
                    f"{format_date(bed.first_over_capacity_date)} "
                    f"({format_days(bed.days_over_capacity_with_surge_days)} with surge beds)"
                )
        body = "; ".join(pieces) if pieces else "no days short"
        parts.append(f"{view.name}: {body}.")
    return " ".join(parts)


def admissions_alt(views: Sequence[ScenarioView]) -> str:
    """Alternate text of the daily admissions chart.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.

    Returns
    -------
    str
        Each scenario's peak daily admissions and date, with and without
        measures.
    """
    parts = ["Daily hospital admissions, one panel per scenario, with and without measures."]
    for view in views:
        m, w = view.with_metrics, view.without_metrics
        text = (
            f"{view.name}: peak {format_number(m.peak_admissions_per_day)} a day on "
            f"{format_date(m.peak_admissions_date)}"
        )
        if view.item.scenario.interventions:
            text += (
                f" ({format_number(w.peak_admissions_per_day)} on "
                f"{format_date(w.peak_admissions_date)} without measures)"
            )
        parts.append(text + ".")
    return " ".join(parts)


def outcomes_alt(views: Sequence[ScenarioView]) -> str:
    """Alternate text of the total outcomes chart.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.

    Returns
    -------
    str
        Admissions, ICU admissions and deaths by scenario, with and without
        measures.
    """
    parts = [
        "Bar chart of total admissions, ICU admissions and deaths among hospital patients "
        "by scenario."
    ]
    for view in views:
        m, w = view.with_metrics.total, view.without_metrics.total
        parts.append(
            f"{view.name}: {format_number(m.admissions_persons)} admissions, "
            f"{format_number(m.icu_admissions_persons)} ICU admissions and "
            f"{format_number(m.hospital_deaths_persons)} deaths with measures; "
            f"{format_number(w.admissions_persons)}, {format_number(w.icu_admissions_persons)} "
            f"and {format_number(w.hospital_deaths_persons)} without."
        )
    return " ".join(parts)


def absence_alt(views: Sequence[ScenarioView]) -> str:
    """Alternate text of the workforce absence chart.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.

    Returns
    -------
    str
        Each scenario's peak share of workers absent and its date.
    """
    parts = ["Share of workers absent each day, one line per scenario, with measures."]
    for view in views:
        m = view.with_metrics
        parts.append(
            f"{view.name}: peak {format_percent(m.peak_absence_share)} on "
            f"{format_date(m.peak_absence_date)}."
        )
    return " ".join(parts)


def bands_alt(views: Sequence[ScenarioView], uncertainty: Any) -> str:
    """Alternate text of the uncertainty-band chart.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.
    uncertainty : prepkit.uncertainty.run.UncertaintyResults
        The ensemble.

    Returns
    -------
    str
        For each scenario, the range of the ward and ICU peaks.
    """
    q_low, q_mid, q_high = band_columns(uncertainty.quantiles)
    low, high = round(100 * min(uncertainty.quantiles)), round(100 * max(uncertainty.quantiles))
    parts = [
        f"Ward and ICU demand with measures: the middle line is the median of "
        f"{int(uncertainty.draws):,} plausible futures, the band runs from the {low}th to the "
        f"{high}th percentile."
    ]
    for view in views:
        result = scenario_ensemble(uncertainty, view.name)
        if result is None:
            continue
        s = result.with_interventions.summary
        texts = []
        for kind in ("ward", "icu"):
            central, median, spread = spread_cells(
                getattr(view.with_metrics, kind).peak_demand_beds,
                s.loc[f"peak_{kind}_demand_beds"], q_low, q_mid, q_high,
            )
            texts.append(
                f"{BED_NOUNS[kind][1]} peak {spread} beds (median {median}, central run {central})"
            )
        parts.append(f"{view.name}: {'; '.join(texts)}.")
    return " ".join(parts)


def exceedance_alt(views: Sequence[ScenarioView], uncertainty: Any) -> str:
    """Alternate text of the daily exceedance-probability chart.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.
    uncertainty : prepkit.uncertainty.run.UncertaintyResults
        The ensemble.

    Returns
    -------
    str
        For each scenario, the highest daily chance that ward and ICU beds
        run short, and when.
    """
    parts = ["Share of plausible futures in which demand is above the available beds, each day."]
    for view in views:
        result = scenario_ensemble(uncertainty, view.name)
        if result is None:
            continue
        e = result.with_interventions.exceedance
        pieces = []
        for kind, column in (("ward", "ward_exceedance_probability"),
                             ("ICU", "icu_exceedance_probability")):
            series = e[column]
            top = float(series.max()) if len(series) else 0.0
            when = format_date(pd.Timestamp(series.idxmax()).date()) if top > 0 else "no day"
            pieces.append(f"{kind} highest {format_percent(top)} on {when}")
        parts.append(f"{view.name}: " + ", ".join(pieces) + ".")
    return " ".join(parts)


def peak_dates_alt(views: Sequence[ScenarioView], uncertainty: Any) -> str:
    """Alternate text of the peak-date chart.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.
    uncertainty : prepkit.uncertainty.run.UncertaintyResults
        The ensemble.

    Returns
    -------
    str
        For each scenario, the range and median of the ICU peak date.
    """
    q_low, q_mid, q_high = band_columns(uncertainty.quantiles)
    parts = ["When ICU demand peaks across the plausible futures, with measures, by week."]
    for view in views:
        result = scenario_ensemble(uncertainty, view.name)
        if result is None:
            continue
        row = result.with_interventions.peak_dates.loc["icu_demand"]
        low, mid, high = (as_date(row[q]) for q in (q_low, q_mid, q_high))
        if mid is None:
            parts.append(f"{view.name}: no ICU demand.")
            continue
        parts.append(
            f"{view.name}: between {format_date(low)} and {format_date(high)}, median "
            f"{format_date(mid)}."
        )
    return " ".join(parts)


def tornado_alt(name: str, tornado: pd.DataFrame, top: int) -> str:
    """Alternate text of the sensitivity (tornado) chart.

    Parameters
    ----------
    name : str
        Scenario name.
    tornado : pandas.DataFrame
        ``tornado_peak_icu`` of its ensemble with measures.
    top : int
        How many inputs the chart shows.

    Returns
    -------
    str
        The inputs in order of their effect on the ICU peak, with the peak at
        each end of their range.
    """
    rows = tornado.head(top)
    base = float(rows["peak_icu_demand_baseline_beds"].iloc[0]) if len(rows) else 0.0
    parts = [
        f"How the ICU peak of {name} ({format_number(base)} beds at the most likely values) "
        "moves when one input at a time goes to the low or high end of its range, largest "
        "effect first."
    ]
    for _, row in rows.iterrows():
        parts.append(
            f"{row['label']}: {format_number(float(row['peak_icu_demand_at_low_beds']))} at the "
            f"low end, {format_number(float(row['peak_icu_demand_at_high_beds']))} at the high "
            "end."
        )
    return " ".join(parts)

