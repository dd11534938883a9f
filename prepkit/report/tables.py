"""The daily series as CSV, with a data dictionary.

``daily-series.csv`` is in long form: one row per scenario, variant and
day, so it filters and pivots easily in a spreadsheet or a script. Column
names carry their unit (``_per_day``, ``_persons``, ``_beds``, ``_share``);
:data:`DAILY_COLUMNS` says what each one means, and
``daily-series-columns.csv`` writes that out beside the data.

A CSV file has no cell types, so text that a spreadsheet program could run
as a formula (a scenario named ``=HYPERLINK(...)``) is neutralised with
:func:`prepkit.report.safety.safe_csv_text`. Numbers are written with eight
significant digits, dates as ISO 8601, flags as 0 or 1, and missing or
infinite values as empty fields. The files are UTF-8 with a byte order mark,
so spreadsheet programs read accented names correctly.
"""

from __future__ import annotations

import csv
import io
import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from typing import Literal

import numpy as np
import pandas as pd

from prepkit.fitting.project import FitOutcome
from prepkit.fitting.summary import FIT_DAILY_COLUMNS, fit_daily_rows
from prepkit.plan import Plan
from prepkit.plan.resources import STOCK_ITEMS
from prepkit.report.changes import CHANGE_KEYS, PackChanges
from prepkit.report.safety import safe_csv_text
from prepkit.scenarios.runs import PlanResults
from prepkit.uncertainty.decide_results import DecisionResults
from prepkit.uncertainty.decide_summary import SEARCH_KEYS, search_rows
from prepkit.uncertainty.results import UncertaintyResults

__all__ = [
    "DAILY_COLUMNS",
    "KEY_COLUMNS",
    "Column",
    "columns_csv",
    "csv_number",
    "daily_csv",
    "daily_rows",
    "uncertainty_daily_csv",
]


@dataclass(frozen=True)
class Column:
    """One column of the daily series.

    Parameters
    ----------
    name : str
        Column name, as in :attr:`prepkit.scenarios.runs.ScenarioRun.daily`.
    unit : str
        Unit in words.
    meaning : str
        What the column holds.
    """

    name: str
    unit: str
    meaning: str


#: Columns identifying a row.
KEY_COLUMNS: tuple[Column, ...] = (
    Column("scenario", "text", "Scenario name as in the workbook."),
    Column("variant", "text", "'with measures' or 'without measures'."),
    Column("date", "date (YYYY-MM-DD)", "Calendar day."),
    Column("day", "days", "Days since day 0 of the plan."),
)

_STOCK_NOUNS = {"gowns": "Gowns", "gloves": "Glove pairs", "respirators": "Respirators"}

#: The daily columns written, in order.
DAILY_COLUMNS: tuple[Column, ...] = (
    Column("infections_per_day", "persons per day", "New infections during the day."),
    Column("symptomatic_onsets_per_day", "persons per day", "People whose symptoms start."),
    Column("admissions_per_day", "persons per day", "Residents admitted to hospital."),
    Column("icu_admissions_per_day", "persons per day", "Admissions that go to ICU."),
    Column("hospital_deaths_per_day", "persons per day",
           "Deaths in hospital care (ward and ICU) during the day, as if every patient had a "
           "bed."),
    Column("doses_per_day", "doses per day", "Vaccine doses given."),
    Column("ward_census_persons", "persons", "Residents in ward beds at the end of the day."),
    Column("icu_census_persons", "persons", "Residents in ICU beds at the end of the day."),
    Column("ward_demand_beds", "beds",
           "Ward beds needed by outbreak patients: census x share admitted to these hospitals."),
    Column("ward_available_beds", "beds",
           "Staffed ward beds not needed by other patients (no surge beds)."),
    Column("ward_available_with_surge_beds", "beds",
           "Available ward beds plus surge beds once open."),
    Column("ward_unmet_beds", "beds", "Ward demand above the available beds (0 if none)."),
    Column("ward_unmet_with_surge_beds", "beds",
           "Ward demand above the available beds with surge beds (0 if none)."),
    Column("ward_occupancy_share", "fraction", "Ward demand / available ward beds."),
    Column("icu_demand_beds", "beds", "ICU beds needed by outbreak patients."),
    Column("icu_available_beds", "beds", "Staffed ICU beds not needed by other patients."),
    Column("icu_available_with_surge_beds", "beds",
           "Available ICU beds plus surge beds once open."),
    Column("icu_unmet_beds", "beds", "ICU demand above the available beds (0 if none)."),
    Column("icu_unmet_with_surge_beds", "beds",
           "ICU demand above the available beds with surge beds (0 if none)."),
    Column("icu_occupancy_share", "fraction", "ICU demand / available ICU beds."),
    Column("cumulative_infections_persons", "persons", "Infections so far, day-0 seeds included."),
    Column("cumulative_symptomatic_persons", "persons", "Symptomatic illnesses so far."),
    Column("cumulative_admissions_persons", "persons", "Admissions so far."),
    Column("cumulative_icu_admissions_persons", "persons", "ICU admissions so far."),
    Column("cumulative_hospital_deaths_persons", "persons",
           "Deaths in hospital care so far."),
    Column("cumulative_doses", "doses", "Vaccine doses given so far."),
    Column("susceptible_persons", "persons", "People who can still be infected."),
    Column("protected_persons", "persons", "People protected by vaccine."),
    Column("recovered_persons", "persons", "People recovered and immune."),
    Column("absent_workers_persons", "persons", "Workers off work: ill, or caring for children."),
    Column("absence_share", "fraction", "Absent workers / all workers."),
    Column("school_closure_intensity_share", "fraction",
           "How fully schools are closed (0 open, 1 fully closed)."),
    *(Column(f"{kind}_{what}_beds", "beds", f"{words} {noun} beds.")
      for kind, noun in (("ward", "ward"), ("icu", "ICU"))
      for what, words in (
          ("available_crisis", "Available beds plus surge and crisis-space"),
          ("staffed_after_absence", "Staffed (for all patients) after staff absence,"),
          ("available_after_absence", "Available to outbreak patients after staff absence,"))),
    Column("oxygen_need_lpm", "litres per minute",
           "Oxygen flow outbreak ward and ICU patients on oxygen need."),
    *(Column(f"{item}_{what}", unit, f"{_STOCK_NOUNS[item]} {words}.")
      for item in STOCK_ITEMS
      for what, unit, words in (
          ("use_items_per_day", "items per day", "used by outbreak patients during the day"),
          ("stock_items", "items", "left at the end of the day (blank: no stock given)"))),
    Column("shortage_deaths_per_day", "persons per day",
           "Additional deaths when beds run short, spread over the days beds are short."),
    Column("mortuary_in_use_spaces", "spaces",
           "Mortuary spaces taken by outbreak deaths at these hospitals."),
)

VARIANT_WORDS = {"with": "with measures", "without": "without measures"}


def csv_number(value: object) -> str:
    """A number as written to the CSV.

    Parameters
    ----------
    value : object
        A number or a boolean.

    Returns
    -------
    str
        Eight significant digits (``302.03752``); ``1``/``0`` for flags;
        ``""`` for NaN or infinity.
    """
    if isinstance(value, bool | np.bool_):
        return "1" if value else "0"
    number = float(value)  # type: ignore[arg-type]
    if not math.isfinite(number):
        return ""
    if number == 0.0:
        return "0"
    return format(number, ".8g")


def daily_rows(results: PlanResults) -> Iterable[list[str]]:
    """Rows of ``daily-series.csv`` after the header, as text.

    Parameters
    ----------
    results : PlanResults
        Results of every scenario.

    Yields
    ------
    list of str
        One row per scenario, variant and day.
    """
    names = [c.name for c in DAILY_COLUMNS]
    variants: tuple[Literal["with", "without"], ...] = ("with", "without")
    for item in results.scenarios:
        scenario = safe_csv_text(item.scenario.name)
        for variant in variants:
            daily = item.variant(variant).daily
            present = [n for n in names if n in daily.columns]
            values = daily[present].to_numpy(dtype=np.float64)
            dates = [pd.Timestamp(d).date() for d in daily.index]
            start = dates[0] if dates else None
            for i, day in enumerate(dates):
                row = dict(zip(present, values[i], strict=True))
                yield [
                    scenario,
                    VARIANT_WORDS[variant],
                    day.isoformat(),
                    str((day - start).days if start else 0),
                    *(csv_number(row[n]) if n in row else "" for n in names),
                ]


def _csv_bytes(header: Sequence[str], rows: Iterable[Sequence[str]]) -> bytes:
    buffer = io.StringIO(newline="")
    writer = csv.writer(buffer, lineterminator="\r\n")
    writer.writerow(header)
    writer.writerows(rows)
    return buffer.getvalue().encode("utf-8-sig")


def daily_csv(results: PlanResults) -> bytes:
    """``daily-series.csv``: every daily series of every scenario and variant.

    Parameters
    ----------
    results : PlanResults
        Results of every scenario.

    Returns
    -------
    bytes
        UTF-8 CSV text (with a byte order mark), CRLF line ends.
    """
    header = [c.name for c in KEY_COLUMNS] + [c.name for c in DAILY_COLUMNS]
    return _csv_bytes(header, daily_rows(results))


def columns_csv() -> bytes:
    """``daily-series-columns.csv``: name, unit and meaning of each column.

    Returns
    -------
    bytes
        UTF-8 CSV text (with a byte order mark).
    """
    rows = [[c.name, c.unit, c.meaning] for c in (*KEY_COLUMNS, *DAILY_COLUMNS)]
    return _csv_bytes(["column", "unit", "meaning"], rows)


def uncertainty_daily_csv(uncertainty: UncertaintyResults | None) -> bytes | None:
    """``uncertainty-daily.csv``: daily quantile bands and chances of running short.

    Parameters
    ----------
    uncertainty : prepkit.uncertainty.results.UncertaintyResults or None
        The ensemble.

    Returns
    -------
    bytes or None
        Long-form CSV (one row per scenario, variant and day; the band and
        probability columns named as in the ensemble's tables, units in the
        names), or None when there is no ensemble.
    """
    if uncertainty is None or not uncertainty.scenarios:
        return None
    scenarios = uncertainty.scenarios
    first = uncertainty.scenarios[0].with_interventions
    band_names = [str(c) for c in first.daily.columns]
    chance_names = [str(c) for c in first.exceedance.columns]
    header = ["scenario", "variant", "date", *band_names, *chance_names]

    def rows() -> Iterable[list[str]]:
        for item in scenarios:
            scenario = safe_csv_text(item.scenario)
            for variant in ("with", "without"):
                result = item.variant(variant)
                joined = result.daily.join(result.exceedance, how="left")
                values = joined[band_names + chance_names].to_numpy(dtype=np.float64)
                for i, stamp in enumerate(joined.index):
                    yield [
                        scenario,
                        VARIANT_WORDS[variant],
                        pd.Timestamp(stamp).date().isoformat(),
                        *(csv_number(v) for v in values[i]),
                    ]

    return _csv_bytes(header, rows())


def fit_daily_csv(plan: Plan, fit: FitOutcome | None) -> bytes | None:
    """``fit-daily.csv``: the observed figures beside the fitted model, day by day.

    Parameters
    ----------
    plan : Plan
        The plan (day 0 and the observed figures).
    fit : FitOutcome or None
        What came of the fit.

    Returns
    -------
    bytes or None
        One row per fitted day, the columns of
        :data:`prepkit.fitting.summary.FIT_DAILY_COLUMNS`; None without a fit report.
    """
    rows = fit_daily_rows(fit, plan)
    if not rows:
        return None
    keys = [key for key, _ in FIT_DAILY_COLUMNS]
    return _csv_bytes(keys, ([row["date"], *("" if row[k] is None else csv_number(row[k])
                                            for k in keys[1:])]
                             for row in rows))


def decide_csv(plan: Plan, decisions: DecisionResults | None) -> bytes | None:
    """``decide-by.csv``: every start the decide-by search tried, with its chance within beds.

    One row per scenario and tried date, the columns of
    :data:`prepkit.uncertainty.decide_summary.SEARCH_KEYS` (shares as fractions); None
    without a search or when no scenario had measures to move.
    """
    if decisions is None:
        return None
    rows = search_rows(plan, decisions)
    if not rows:
        return None
    return _csv_bytes(list(SEARCH_KEYS), (
        [row["scenario"], row["decision_date"], row["start_date"],
         csv_number(row["within_beds_share_conventional"]),
         csv_number(row["within_beds_share_contingency"])]
        for row in rows))


def changes_csv(changes: PackChanges | None) -> bytes | None:
    """``changes-since-last-pack.csv``: every input that changed, one row per cell.

    The columns of :data:`prepkit.report.changes.CHANGE_KEYS`, values as the
    pack shows them; None without an earlier pack, when it kept no inputs or
    when no input changed.
    """
    if changes is None or not changes.inputs:
        return None
    return _csv_bytes(list(CHANGE_KEYS), ([safe_csv_text(value) for value in c.row().values()]
                                          for c in changes.inputs))


#: Columns of ``resources.csv`` and the results workbook's sheet "What runs short", in order.
RESOURCE_KEYS: tuple[str, ...] = (
    "scenario", "variant", "resource", "unit", "supply", "peak_need", "peak_need_date",
    "first_short_date", "days_short_days", "largest_gap",
)


def resource_rows(results: PlanResults) -> list[dict[str, object]]:
    """Every resource's need against supply, per scenario and variant (keys :data:`RESOURCE_KEYS`).

    Dates are ISO strings, a supply not given is None; the figures are those of
    :func:`prepkit.metrics.resources.resource_gaps`.
    """
    rows: list[dict[str, object]] = []
    variants: tuple[Literal["with", "without"], ...] = ("with", "without")
    for item in results.scenarios:
        for variant in variants:
            run = item.with_interventions if variant == "with" else item.without_interventions
            for gap in run.metrics.resources:
                rows.append({
                    "scenario": item.scenario.name, "variant": VARIANT_WORDS[variant],
                    "resource": gap.resource, "unit": gap.unit, "supply": gap.supply,
                    "peak_need": gap.peak_need,
                    "peak_need_date": None if gap.peak_need_date is None
                    else gap.peak_need_date.isoformat(),
                    "first_short_date": None if gap.first_short_date is None
                    else gap.first_short_date.isoformat(),
                    "days_short_days": gap.days_short_days, "largest_gap": gap.largest_gap,
                })
    return rows


def resources_csv(results: PlanResults) -> bytes:
    """``resources.csv``: :func:`resource_rows` as text (a supply not given is blank)."""
    def cell(value: object) -> str:
        if value is None:
            return ""
        if isinstance(value, str):
            return safe_csv_text(value)
        return csv_number(value)

    return _csv_bytes(list(RESOURCE_KEYS), ([cell(row[key]) for key in RESOURCE_KEYS]
                                            for row in resource_rows(results)))
