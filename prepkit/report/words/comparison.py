"""The scenario comparison and transmissibility tables."""

from __future__ import annotations

import datetime as dt
import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

from prepkit.metrics.core import BedMetrics, ScenarioMetrics
from prepkit.plan import LEVELS, Plan
from prepkit.report.words.formatting import (
    BED_NOUNS,
    LEVEL_WORDS,
    BedKind,
    format_date,
    format_decimal,
    format_number,
    format_percent,
)
from prepkit.report.words.scenario_text import bed_shortfall
from prepkit.report.words.views import ScenarioView
from prepkit.scenarios.runs import PlanResults


@dataclass(frozen=True, kw_only=True)
class TableRow:
    """One row of a table: a label, its cells and an optional group heading.

    Parameters
    ----------
    label : str
        Row heading.
    cells : tuple of str
        Cell texts.
    group : bool
        True for a group-heading row spanning the table (``cells`` empty).
    """

    label: str
    cells: tuple[str, ...] = ()
    group: bool = False


@dataclass(frozen=True, kw_only=True)
class ComparisonTable:
    """The scenario comparison for up to four scenarios.

    Parameters
    ----------
    scenarios : tuple of str
        Scenario names, each spanning two columns (with, without measures).
    rows : tuple of TableRow
        Metric rows.
    year : int
        Year of dates printed without one.
    """

    scenarios: tuple[str, ...]
    rows: tuple[TableRow, ...]
    year: int


def format_table_date(day: dt.date | None, year: int) -> str:
    """A date in a table: ``27 Feb`` in the table's year, ``3 Jan 2028`` otherwise, ``–`` for none.

    Parameters
    ----------
    day : datetime.date or None
        The date.
    year : int
        The year the table's caption names.

    Returns
    -------
    str
        The short date.
    """
    if day is None:
        return "–"
    return format_date(day, year=day.year != year)


def _bed_rows(
    kind: BedKind, pairs: Sequence[tuple[BedMetrics, BedMetrics]], year: int
) -> list[TableRow]:
    title, noun = BED_NOUNS[kind]
    first = pairs[0][0]
    surge = first.available_beds + first.surge_beds
    head = (
        f"{title} beds: {format_number(first.available_beds)} available"
        + (f", {format_number(surge)} with surge beds" if first.surge_beds > 0 else "")
    )

    def cells(fn: Any) -> tuple[str, ...]:
        return tuple(text for pair in pairs for text in (fn(pair[0]), fn(pair[1])))

    # days more than 75% full, unless other patients alone fill that much (then it is every day)
    strained = [] if first.always_strained else [
        TableRow(label="Days more than 75% full [days]",
                 cells=cells(lambda b: f"{b.days_strained_days:,}"))]
    return [
        TableRow(label=head, group=True),
        TableRow(label="Peak demand [beds]",
                 cells=cells(lambda b: format_number(b.peak_demand_beds))),
        TableRow(label="Date of peak", cells=cells(lambda b: format_table_date(b.peak_date, year))),
        TableRow(label="First day short",
                 cells=cells(lambda b: format_table_date(b.first_over_capacity_date, year))),
        *strained,
        TableRow(label="Days short [days]",
                 cells=cells(lambda b: f"{b.days_over_capacity_days:,}")),
        TableRow(label="Days short with surge [days]",
                 cells=cells(lambda b: f"{b.days_over_capacity_with_surge_days:,}")),
        TableRow(label="Largest shortfall [beds]",
                 cells=cells(lambda b: f"{bed_shortfall(b):,}")),
        TableRow(label="Unmet bed-days [bed-days]",
                 cells=cells(lambda b: format_number(b.unmet_bed_days))),
    ]


def _ventilator_rows(available: int | None, cells: Any) -> list[TableRow]:
    head = (
        f"Ventilators: {available:,} available" if available is not None
        else "Ventilators: number available not given"
    )
    rows = [
        TableRow(label=head, group=True),
        TableRow(label="Needed at the peak [devices]",
                 cells=cells(lambda m: format_number(m.ventilators.peak_demand_devices))),
    ]
    if available is not None:
        rows.append(TableRow(label="Days short [days]",
                             cells=cells(lambda m: f"{m.ventilators.days_short_days:,}")))
    return rows


def comparison_tables(
    views: Sequence[ScenarioView], year: int, per_table: int = 4
) -> tuple[ComparisonTable, ...]:
    """The scenario comparison, split into tables of up to ``per_table`` scenarios.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.
    year : int
        Year of dates printed without one (the year of day 0).
    per_table : int, optional
        Most scenarios per table (two columns each); the scenarios are
        spread evenly over as few tables as that allows.

    Returns
    -------
    tuple of ComparisonTable
        The tables; every cell is formatted with the functions of this
        module.
    """
    tables = []
    count = math.ceil(len(views) / per_table) if views else 0
    size = math.ceil(len(views) / count) if count else 0
    for start in range(0, len(views), max(size, 1)):
        chunk = views[start : start + size]
        metrics = [(v.with_metrics, v.without_metrics) for v in chunk]

        def cells(fn: Any, metrics: list[tuple[ScenarioMetrics, ScenarioMetrics]] = metrics) -> (
            tuple[str, ...]
        ):
            return tuple(text for pair in metrics for text in (fn(pair[0]), fn(pair[1])))

        rows = _bed_rows("ward", [(a.ward, b.ward) for a, b in metrics], year)
        rows += _bed_rows("icu", [(a.icu, b.icu) for a, b in metrics], year)
        rows += _ventilator_rows(metrics[0][0].ventilators.available_devices, cells)
        rows += [
            TableRow(label="People", group=True),
            TableRow(label="Peak admissions [per day]",
                     cells=cells(lambda m: format_number(m.peak_admissions_per_day))),
            TableRow(label="Hospital admissions [persons]",
                     cells=cells(lambda m: format_number(m.total.admissions_persons))),
            TableRow(label="ICU admissions [persons]",
                     cells=cells(lambda m: format_number(m.total.icu_admissions_persons))),
            TableRow(label="Deaths in hospital care [persons]",
                     cells=cells(lambda m: format_number(m.total.hospital_deaths_persons))),
            TableRow(label="Additional deaths when beds run short [persons]",
                     cells=cells(lambda m: format_number(m.shortage_deaths_persons))),
            TableRow(label="Residents infected [%]",
                     cells=cells(lambda m: format_percent(m.infection_attack_share))),
            TableRow(label="Peak workforce absence [%]",
                     cells=cells(lambda m: format_percent(m.peak_absence_share))),
        ]
        tables.append(
            ComparisonTable(scenarios=tuple(v.name for v in chunk), rows=tuple(rows), year=year)
        )
    return tuple(tables)


MEASURE_NAMES = {
    "r0": "R0",
    "doubling_time": "Doubling time [days]",
    "growth_rate": "Growth rate [per day]",
}


def transmissibility_rows(plan: Plan, results: PlanResults) -> tuple[TableRow, ...]:
    """The transmissibility table: one row per level.

    Parameters
    ----------
    plan : Plan
        The plan.
    results : PlanResults
        Its results (``transmissibility_by_level``).

    Returns
    -------
    tuple of TableRow
        Cells: value given in the workbook, R0, growth rate [per day],
        doubling time [days], mean generation time [days], effective R on
        day 0.
    """
    rows = []
    for level in LEVELS:
        t = results.transmissibility_by_level.get(level)
        if t is None:
            continue
        given = (
            format_decimal(t.given_value, 3)
            if t.measure == "growth_rate"
            else format_decimal(t.given_value, 2)
        )
        rows.append(
            TableRow(
                label=LEVEL_WORDS[level],
                cells=(
                    f"{MEASURE_NAMES.get(t.measure, t.measure)} {given}",
                    format_decimal(t.r0, 2),
                    format_decimal(t.growth_rate_per_day, 3),
                    format_decimal(t.doubling_time_days, 1),
                    format_decimal(t.mean_generation_time_days, 1),
                    format_decimal(t.r_effective_day0, 2),
                ),
            )
        )
    return tuple(rows)

