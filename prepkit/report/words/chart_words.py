"""Title, caption and alternate text of each chart comparing or showing the scenarios.

One function per chart gives its :class:`ChartWords`; its alternate text, written
from the data, is the function beside it.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from prepkit.report.words.formatting import (
    BED_NOUNS,
    format_date,
    format_days,
    format_number,
    format_percent,
    when_over,
)
from prepkit.report.words.views import ScenarioView


@dataclass(frozen=True, kw_only=True)
class ChartWords:
    """The words of one chart, kept together.

    Parameters
    ----------
    title : str
        Short title.
    caption : str
        Caption printed below the chart.
    alt : str
        Alternate text for readers who cannot see it, written from the data.
    """

    title: str
    caption: str
    alt: str


def demand_words(view: ScenarioView, observed_days: int = 0) -> ChartWords:
    """Title, caption and alternate text of a scenario's bed-demand chart.

    Parameters
    ----------
    view : ScenarioView
        The scenario.
    observed_days : int, optional
        Days of observed figures drawn as points.

    Returns
    -------
    ChartWords
        The chart's words. The alternate text gives each panel's peak and
        date against the available (and surge) beds, when demand is above
        them, and the peak without measures.
    """
    ward = view.with_metrics.ward
    caption = (
        f"Beds needed by outbreak patients in the {view.name} scenario. Shaded: days on which "
        f"demand with measures is above the available beds (beds not needed by other "
        f"patients; {format_number(ward.available_beds)} ward and "
        f"{format_number(view.with_metrics.icu.available_beds)} ICU beds)."
    )
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
    alt = " ".join(parts)
    return ChartWords(
        title=f"Bed demand: {view.name}",
        caption=caption,
        alt=alt,
    )


def gap_words(views: Sequence[ScenarioView]) -> ChartWords:
    """Title, caption and alternate text of the capacity-gap timeline.

    The alternate text gives, for each scenario, the days ward and ICU beds
    run short and from when.
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
    alt = " ".join(parts)
    return ChartWords(
        title="When beds run short",
        caption=(
            "Days on which outbreak patients need more beds than are available, with measures, "
            "for each scenario. Numbers at the right count the days (d)."
        ),
        alt=alt,
    )


def admissions_words(views: Sequence[ScenarioView]) -> ChartWords:
    """Title, caption and alternate text of the daily admissions chart.

    The alternate text gives each scenario's peak daily admissions and date,
    with and without measures.
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
    alt = " ".join(parts)
    return ChartWords(
        title="Daily hospital admissions",
        caption=(
            "New hospital admissions of residents each day, with and without each scenario's "
            "measures. All panels share the same scales."
        ),
        alt=alt,
    )


def outcomes_words(views: Sequence[ScenarioView]) -> ChartWords:
    """Title, caption and alternate text of the total outcomes chart.

    The alternate text gives admissions, ICU admissions and deaths by
    scenario, with and without measures.
    """
    parts = [
        "Bar chart of total admissions, ICU admissions and deaths in hospital care "
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
    alt = " ".join(parts)
    return ChartWords(
        title="Totals over the period",
        caption=(
            "Hospital admissions, ICU admissions and deaths in hospital care over the "
            "whole period, by scenario, with and without measures."
        ),
        alt=alt,
    )


def absence_words(views: Sequence[ScenarioView]) -> ChartWords:
    """Title, caption and alternate text of the workforce absence chart.

    The alternate text gives each scenario's peak share of workers absent
    and its date.
    """
    parts = ["Share of workers absent each day, one line per scenario, with measures."]
    for view in views:
        m = view.with_metrics
        parts.append(
            f"{view.name}: peak {format_percent(m.peak_absence_share)} on "
            f"{format_date(m.peak_absence_date)}."
        )
    alt = " ".join(parts)
    return ChartWords(
        title="Workforce absence",
        caption=(
            "Share of workers off work each day with each scenario's measures: ill workers plus "
            "workers caring for children while schools are closed."
        ),
        alt=alt,
    )
