"""Columns and rows of the uncertainty sheets of ``results.xlsx``, declared once.

The same declarations as :mod:`prepkit.report.results_workbook_columns`, for
the sheets written when the plan runs an uncertainty ensemble: the
Uncertainty sheet (one row per metric, one column per statistic), the Chance
of running short sheet and the Sensitivity sheet. The metrics are rows, so
each :class:`MetricRow` carries the unit and number format of its figures.
"""

from __future__ import annotations

from dataclasses import dataclass

from prepkit.report.results_workbook_columns import (
    BED_TYPE,
    BY_ROW,
    DAYS,
    DECIMAL_DAYS,
    PERCENT,
    RATE,
    RATIO,
    TEXT,
    WHOLE,
    SheetColumns,
    column,
    key_columns,
)
from prepkit.uncertainty.results import quantile_label
from prepkit.workbook.schema import FIELDS

__all__ = [
    "CHANCE",
    "ENSEMBLE_KEYS",
    "ENSEMBLE_RECORD",
    "INPUT_UNITS",
    "METRIC_BY_NAME",
    "METRIC_ROWS",
    "SENSITIVITY",
    "UNCERTAINTY",
    "MetricRow",
    "percentile_words",
    "uncertainty_columns",
]


def percentile_words(q: float) -> str:
    """Header words of a quantile: 0.05 gives "5th percentile", 0.5 "Median".

    Parameters
    ----------
    q : float
        The quantile [fraction].

    Returns
    -------
    str
        "Median", or the percentile with its English ordinal suffix
        ("1st", "2nd", "3rd", "11th", "2.5th", "95th").
    """
    pct = 100.0 * float(q)
    if abs(pct - 50.0) < 1e-9:
        return "Median"
    if abs(pct - round(pct)) < 1e-9:
        whole = int(round(pct))
        suffix = "th" if 10 <= whole % 100 <= 20 else {1: "st", 2: "nd", 3: "rd"}.get(
            whole % 10, "th")
        return f"{whole}{suffix} percentile"
    return f"{pct:.6f}".rstrip("0").rstrip(".") + "th percentile"


#: Where the ensemble of one scenario variant sits in ``summary.json``.
ENSEMBLE_RECORD = "uncertainty.scenarios[n].<variant>"

#: Scenario, scenario number and measures, named as in the ensemble's part of the JSON.
ENSEMBLE_KEYS = key_columns("uncertainty.scenarios")

_UNCERTAINTY_KEYS = (
    *ENSEMBLE_KEYS,
    column("Metric", f"{ENSEMBLE_RECORD}.summary.<metric>", "text", TEXT,
           "What is measured: <metric> is the name given with each metric further down this "
           "guide.", 40, absolute=True),
    column("Unit", "", "text", TEXT, "Unit of the metric's figures.", 10),
)


def uncertainty_columns(quantiles: tuple[float, ...]) -> SheetColumns:
    """Columns of the Uncertainty sheet for the quantiles an ensemble reports.

    Parameters
    ----------
    quantiles : tuple of float
        The ensemble's quantiles [fraction], ascending.

    Returns
    -------
    SheetColumns
        Scenario, number, measures, metric and unit, then the mean, one
        column per quantile and the single scenario run. Each figure takes
        the number format of its metric's row (:data:`METRIC_ROWS`).
    """
    stats = [
        column("Mean", "mean", "unit of the metric", BY_ROW,
               "Mean over the plausible futures."),
        *(
            column(percentile_words(q), quantile_label(q), "unit of the metric", BY_ROW,
                   f"{100 * q:g}% of the plausible futures are at or below this figure.")
            for q in quantiles
        ),
        column("Central run", "scenario_run", "unit of the metric", BY_ROW,
               "The central run: the scenario run once at its own levels, every other input at "
               "its Central value (as on the Summary sheet and in the briefing pack).", 12),
    ]
    return SheetColumns(sheet="Uncertainty", file="summary.json",
                        prefix=f"{ENSEMBLE_RECORD}.summary.<metric>",
                        columns=(*_UNCERTAINTY_KEYS, *stats))


#: The Uncertainty sheet when the ensemble reports the default quantiles.
UNCERTAINTY = uncertainty_columns((0.05, 0.5, 0.95))


@dataclass(frozen=True, kw_only=True)
class MetricRow:
    """One metric of the Uncertainty sheet (a row rather than a column).

    Parameters
    ----------
    label : str
        Plain words.
    name : str
        Name in :data:`prepkit.uncertainty.results.SUMMARY_METRICS` and in
        ``summary.json``.
    unit : str
        Unit in words.
    number_format : str
        Excel number format of the row's figures.
    meaning : str
        What the metric measures.
    """

    label: str
    name: str
    unit: str
    number_format: str
    meaning: str


def _metric(label: str, name: str, unit: str, number_format: str, meaning: str) -> MetricRow:
    return MetricRow(label=label, name=name, unit=unit, number_format=number_format,
                     meaning=meaning)


METRIC_ROWS: tuple[MetricRow, ...] = (
    _metric("Peak ward demand", "peak_ward_demand_beds", "beds", WHOLE,
            "Most ward beds needed by outbreak patients on one day."),
    _metric("Peak ICU demand", "peak_icu_demand_beds", "beds", WHOLE,
            "Most ICU beds needed by outbreak patients on one day."),
    _metric("Peak ward census", "peak_ward_census_persons", "people", WHOLE,
            "Most residents in ward beds on one day, in any hospital."),
    _metric("Peak ICU census", "peak_icu_census_persons", "people", WHOLE,
            "Most residents in ICU beds on one day, in any hospital."),
    _metric("Peak admissions", "peak_admissions_per_day", "people per day", WHOLE,
            "Most admissions on one day."),
    _metric("Peak workforce absence", "peak_absence_share", "%", PERCENT,
            "Largest share of workers off work on one day."),
    _metric("Days ward beds short", "ward_days_over_capacity_days", "days", DAYS,
            "Days on which ward demand is above the available ward beds."),
    _metric("Days ICU beds short", "icu_days_over_capacity_days", "days", DAYS,
            "Days on which ICU demand is above the available ICU beds."),
    _metric("Days ward beds short with surge beds", "ward_days_over_capacity_with_surge_days",
            "days", DAYS, "The same with surge beds open."),
    _metric("Days ICU beds short with surge beds", "icu_days_over_capacity_with_surge_days",
            "days", DAYS, "The same with surge beds open."),
    _metric("Days ward occupancy above 75%", "ward_days_strained_days", "days", DAYS,
            "Days on which other patients and outbreak patients fill more than 75% of the "
            "staffed ward beds (surge beds not counted)."),
    _metric("Days ICU occupancy above 75%", "icu_days_strained_days", "days", DAYS,
            "Days on which other patients and outbreak patients fill more than 75% of the "
            "staffed ICU beds (surge beds not counted)."),
    _metric("Unmet ward bed-days", "ward_unmet_bed_days", "bed-days", WHOLE,
            "Ward demand above the available beds, added up over the days."),
    _metric("Unmet ICU bed-days", "icu_unmet_bed_days", "bed-days", WHOLE,
            "ICU demand above the available beds, added up over the days."),
    _metric("Unmet ward and ICU bed-days", "total_unmet_bed_days", "bed-days", WHOLE,
            "Ward plus ICU unmet bed-days."),
    _metric("Unmet ward bed-days with surge beds", "ward_unmet_bed_days_with_surge", "bed-days",
            WHOLE, "The same with surge beds open."),
    _metric("Unmet ICU bed-days with surge beds", "icu_unmet_bed_days_with_surge", "bed-days",
            WHOLE, "The same with surge beds open."),
    _metric("Unmet ward and ICU bed-days with surge beds", "total_unmet_bed_days_with_surge",
            "bed-days", WHOLE, "The same with surge beds open."),
    _metric("Infections", "infections_persons", "people", WHOLE,
            "Infections over the period, day-0 infections included."),
    _metric("Illnesses with symptoms", "symptomatic_cases_persons", "people", WHOLE,
            "Infections with symptoms over the period."),
    _metric("Hospital admissions", "admissions_persons", "people", WHOLE,
            "Residents admitted to hospital over the period."),
    _metric("ICU admissions", "icu_admissions_persons", "people", WHOLE,
            "Admissions that go to ICU over the period."),
    _metric("Deaths in hospital care", "hospital_deaths_persons", "people", WHOLE,
            "Deaths in hospital care (ward and ICU) over the period, as if every patient had a "
            "bed."),
    _metric("Additional deaths when beds run short", "shortage_deaths_persons", "people",
            WHOLE, "Patients who need a ward or ICU bed and do not get one, times the extra "
            "chance of death without one; surge beds not counted."),
    _metric("Additional deaths when beds run short, with surge beds",
            "shortage_deaths_with_surge_persons", "people", WHOLE,
            "The same once surge beds are open."),
    _metric("Ward bed-days used", "ward_bed_days", "bed-days", WHOLE,
            "Days spent in ward beds by residents, added up over the period."),
    _metric("ICU bed-days used", "icu_bed_days", "bed-days", WHOLE,
            "Days spent in ICU beds by residents, added up over the period."),
)
METRIC_BY_NAME: dict[str, MetricRow] = {m.name: m for m in METRIC_ROWS}

CHANCE = SheetColumns(
    sheet="Chance of running short", file="summary.json",
    prefix=f"{ENSEMBLE_RECORD}.exceedance_any_day",
    columns=(
        *ENSEMBLE_KEYS,
        BED_TYPE,
        column("Chance of running short [%]", "<beds>_any_day_probability", "%", PERCENT,
               "Share of the plausible futures in which demand is above the available beds on at "
               "least one day.", 12),
        column("Chance of running short with surge beds [%]",
               "<beds>_any_day_with_surge_probability", "%", PERCENT,
               "The same with surge beds open.", 12),
    ),
)

_TORNADO = "tornado_peak_icu_demand[]"
_TORNADO_UNMET = "tornado_unmet_bed_days[]"

SENSITIVITY = SheetColumns(
    sheet="Sensitivity", file="summary.json", prefix=ENSEMBLE_RECORD,
    columns=(
        *ENSEMBLE_KEYS,
        column("Input", f"{_TORNADO}.label", "text", TEXT, "The input moved, all others held at "
               "their most likely values.", 34),
        column("Unit of the input", f"{_TORNADO}.unit", "text", TEXT,
               "Unit of the input's two ends; 'by age band' when each band has its own range "
               "(see the Inputs sheet).", 16),
        column("Input at low end", f"{_TORNADO}.input_low", "unit of the input", BY_ROW,
               "Low end of the range the input is drawn from (blank: differs by age band)."),
        column("Input at high end", f"{_TORNADO}.input_high", "unit of the input", BY_ROW,
               "High end of the range the input is drawn from (blank: differs by age band)."),
        column("Peak ICU demand, input at low end [beds]",
               f"{_TORNADO}.peak_icu_demand_at_low_beds", "beds", WHOLE,
               "Peak ICU demand with the input at its low end.", 12),
        column("Peak ICU demand, input at high end [beds]",
               f"{_TORNADO}.peak_icu_demand_at_high_beds", "beds", WHOLE,
               "Peak ICU demand with the input at its high end.", 12),
        column("Peak ICU demand, every input most likely [beds]",
               f"{_TORNADO}.peak_icu_demand_baseline_beds", "beds", WHOLE,
               "Peak ICU demand with every input at its most likely value.", 12),
        column("Unmet ward and ICU bed-days, input at low end [bed-days]",
               f"{_TORNADO_UNMET}.unmet_bed_days_at_low", "bed-days", WHOLE,
               "Ward plus ICU unmet bed-days, without surge beds, with the input at its low end.",
               13),
        column("Unmet ward and ICU bed-days, input at high end [bed-days]",
               f"{_TORNADO_UNMET}.unmet_bed_days_at_high", "bed-days", WHOLE,
               "The same with the input at its high end.", 13),
        column("Unmet ward and ICU bed-days, every input most likely [bed-days]",
               f"{_TORNADO_UNMET}.unmet_bed_days_baseline", "bed-days", WHOLE,
               "The same with every input at its most likely value.", 13),
    ),
)

#: Number format of a sensitivity input, by its unit in the workbook.
_INPUT_FORMATS: dict[str, str] = {"%": PERCENT, "days": DECIMAL_DAYS, "": RATIO, "per day": RATE}

#: Shown unit and number format of a sensitivity input, by its unit in the ensemble; both
#: come from the declarations of the uncertain workbook fields (``Field.sampled``).
INPUT_UNITS: dict[str, tuple[str, str]] = {
    f.sampled.unit: (f.unit or "no unit", _INPUT_FORMATS[f.unit])
    for f in FIELDS if f.sampled is not None
}
