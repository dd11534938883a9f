"""The results workbook (``results.xlsx``) a planner can filter, chart and restyle.

Sheets, in order:

* **About**: what the workbook is, the run's provenance, the caution, and
  a guide to the other sheets.
* **Summary**: one row per scenario and variant with the headline metrics.
* **Effect of measures**: with minus without, per scenario.
* **Charts**: native Excel line charts of ward and ICU demand against the
  available beds, one pair per scenario, drawn from the daily sheets, so a
  planner can restyle them or copy them into slides.
* **Daily N with** / **Daily N without**: the daily series of scenario N.
* **Transmissibility**: R0, growth rate, doubling and generation time per
  level.
* **Inputs**: every input read from the planning workbook, with its sheet
  and cell.
* **Column guide**: unit and meaning of every daily column.

Text that came from the planning workbook is written with
:func:`prepkit.report.safety.write_text_cell`, so a label such as
``=HYPERLINK(...)`` stays text. The file is byte-reproducible: the document
dates come from :func:`prepkit.outputs.source_date` and the zip entries get
a fixed time stamp.
"""

from __future__ import annotations

import datetime as dt
import io
import math
from collections.abc import Callable, Sequence
from typing import Any

import numpy as np
from openpyxl import Workbook
from openpyxl.chart import LineChart, Reference, Series
from openpyxl.styles import Alignment, Font, PatternFill
from openpyxl.utils import get_column_letter
from openpyxl.worksheet.worksheet import Worksheet

from prepkit.engine import PlanResults
from prepkit.metrics import ScenarioMetrics
from prepkit.outputs import normalise_xlsx
from prepkit.plan import LEVELS, Plan
from prepkit.report import context as words
from prepkit.report.safety import write_text_cell, write_text_row
from prepkit.report.style import OKABE_ITO
from prepkit.report.tables import DAILY_COLUMNS

__all__ = [
    "SUMMARY_COLUMNS",
    "daily_sheet_name",
    "normalise_xlsx",
    "results_workbook",
    "results_workbook_bytes",
    "uncertainty_sheets",
]

_BOLD = Font(bold=True)
_TITLE = Font(bold=True, size=14)
_HEADER_FILL = PatternFill("solid", fgColor="F2F2F2")
_WRAP = Alignment(wrap_text=True, vertical="top")
_DATE_FORMAT = "yyyy-mm-dd"

#: Fixed time stamp of the zip entries (the earliest a zip file can hold).

MetricGetter = Callable[[ScenarioMetrics], Any]

#: Columns of the Summary sheet: header (with unit), value getter, number format.
SUMMARY_COLUMNS: tuple[tuple[str, MetricGetter, str], ...] = (
    ("Ward peak demand [beds]", lambda m: m.ward.peak_demand_beds, "#,##0.0"),
    ("Ward peak date", lambda m: m.ward.peak_date, _DATE_FORMAT),
    ("Ward available beds [beds]", lambda m: m.ward.available_beds, "#,##0.0"),
    ("First day ward short", lambda m: m.ward.first_over_capacity_date, _DATE_FORMAT),
    ("Days ward short [days]", lambda m: m.ward.days_over_capacity_days, "0"),
    ("Days ward short with surge [days]", lambda m: m.ward.days_over_capacity_with_surge_days,
     "0"),
    ("Largest ward shortfall [beds]", lambda m: m.ward.largest_shortfall_beds, "#,##0.0"),
    ("Unmet ward bed-days [bed-days]", lambda m: m.ward.unmet_bed_days, "#,##0"),
    ("Unmet ward bed-days with surge [bed-days]", lambda m: m.ward.unmet_bed_days_with_surge,
     "#,##0"),
    ("ICU peak demand [beds]", lambda m: m.icu.peak_demand_beds, "#,##0.0"),
    ("ICU peak date", lambda m: m.icu.peak_date, _DATE_FORMAT),
    ("ICU available beds [beds]", lambda m: m.icu.available_beds, "#,##0.0"),
    ("First day ICU short", lambda m: m.icu.first_over_capacity_date, _DATE_FORMAT),
    ("Days ICU short [days]", lambda m: m.icu.days_over_capacity_days, "0"),
    ("Days ICU short with surge [days]", lambda m: m.icu.days_over_capacity_with_surge_days,
     "0"),
    ("Largest ICU shortfall [beds]", lambda m: m.icu.largest_shortfall_beds, "#,##0.0"),
    ("Unmet ICU bed-days [bed-days]", lambda m: m.icu.unmet_bed_days, "#,##0"),
    ("Unmet ICU bed-days with surge [bed-days]", lambda m: m.icu.unmet_bed_days_with_surge,
     "#,##0"),
    ("Peak admissions [per day]", lambda m: m.peak_admissions_per_day, "#,##0.0"),
    ("Peak admissions date", lambda m: m.peak_admissions_date, _DATE_FORMAT),
    ("Infections [persons]", lambda m: m.total.infections_persons, "#,##0"),
    ("Symptomatic cases [persons]", lambda m: m.total.symptomatic_cases_persons, "#,##0"),
    ("Admissions [persons]", lambda m: m.total.admissions_persons, "#,##0"),
    ("ICU admissions [persons]", lambda m: m.total.icu_admissions_persons, "#,##0"),
    ("Deaths among hospital patients [persons]",
     lambda m: m.total.hospital_deaths_persons, "#,##0"),
    ("Vaccine doses [doses]", lambda m: m.total.doses_given_doses, "#,##0"),
    ("Residents infected [fraction]", lambda m: m.infection_attack_share, "0.0%"),
    ("Peak workforce absence [fraction]", lambda m: m.peak_absence_share, "0.0%"),
    ("Peak absence date", lambda m: m.peak_absence_date, _DATE_FORMAT),
)

_EFFECT_COLUMNS: tuple[tuple[str, str, str], ...] = (
    ("Ward peak lowered by [beds]", "ward_peak_reduction_beds", "#,##0.0"),
    ("Ward peak lowered by [fraction]", "ward_peak_reduction_share", "0.0%"),
    ("Ward peak delayed by [days]", "ward_peak_delay_days", "0"),
    ("ICU peak lowered by [beds]", "icu_peak_reduction_beds", "#,##0.0"),
    ("ICU peak lowered by [fraction]", "icu_peak_reduction_share", "0.0%"),
    ("ICU peak delayed by [days]", "icu_peak_delay_days", "0"),
    ("Infections averted [persons]", "averted_infections_persons", "#,##0"),
    ("Admissions averted [persons]", "averted_admissions_persons", "#,##0"),
    ("ICU admissions averted [persons]", "averted_icu_admissions_persons", "#,##0"),
    ("Deaths among hospital patients averted [persons]",
     "averted_hospital_deaths_persons", "#,##0"),
    ("Unmet ward bed-days averted [bed-days]", "averted_ward_unmet_bed_days", "#,##0"),
    ("Unmet ICU bed-days averted [bed-days]", "averted_icu_unmet_bed_days", "#,##0"),
)


def daily_sheet_name(number: int, variant: str) -> str:
    """Name of a daily sheet: ``Daily 2 with`` or ``Daily 2 without``.

    Scenario names are the planner's free text, so they go in the sheet's
    title row, not its name (Excel limits names to 31 characters and bans
    some).

    Parameters
    ----------
    number : int
        Scenario number, from 1.
    variant : {"with", "without"}
        With or without measures.

    Returns
    -------
    str
        The sheet name.
    """
    return f"Daily {number} {variant}"


def _put(ws: Worksheet, row: int, col: int, value: Any, number_format: str | None = None) -> None:
    """A number or date cell (text goes through write_text_cell)."""
    if isinstance(value, str):
        write_text_cell(ws, row, col, value)
        return
    if isinstance(value, float) and not math.isfinite(value):
        value = None
    cell = ws.cell(row=row, column=col, value=value)
    if number_format and value is not None:
        cell.number_format = number_format


def _header(ws: Worksheet, row: int, texts: Sequence[str]) -> None:
    write_text_row(ws, row, texts)
    for col in range(1, len(texts) + 1):
        cell = ws.cell(row=row, column=col)
        cell.font = _BOLD
        cell.fill = _HEADER_FILL
        cell.alignment = _WRAP


def _widths(ws: Worksheet, widths: Sequence[float]) -> None:
    for col, width in enumerate(widths, start=1):
        ws.column_dimensions[get_column_letter(col)].width = width


def _about(ws: Worksheet, plan: Plan, version: str, generated: dt.datetime) -> None:
    d = plan.details
    write_text_cell(ws, 1, 1, f"{d.title}: results").font = _TITLE
    rows = [
        ("Jurisdiction", d.jurisdiction),
        ("Prepared by", d.prepared_by),
        ("Run", generated.astimezone(dt.UTC).strftime("%Y-%m-%d %H:%M:%S UTC")),
        ("Software", f"prepkit {version}"),
        ("Planning workbook", plan.source.path.replace("\\", "/").rsplit("/", 1)[-1]),
        ("Its SHA-256", plan.source.sha256),
        ("Random seed", str(d.seed)),
        ("Caution", f"{words.CAUTION_LINE} {words.DECISIONS_LINE}"),
    ]
    for i, (key, value) in enumerate(rows, start=3):
        write_text_cell(ws, i, 1, key).font = _BOLD
        write_text_cell(ws, i, 2, value).alignment = _WRAP
    guide = [
        ("Summary", "Headline figures per scenario, with and without its measures."),
        ("Effect of measures", "What each scenario's measures change (without minus with)."),
        ("Charts", "Ward and ICU demand against available beds; restyle freely."),
        ("Daily N with / without",
         "Daily series of scenario N (every series is in daily-series.csv)."),
        ("Transmissibility", "R0, growth rate, doubling and generation time per level."),
        ("Inputs", "Every input read from the planning workbook, with its sheet and cell."),
        ("Column guide", "Unit and meaning of every daily column."),
    ]
    start = len(rows) + 4
    write_text_cell(ws, start, 1, "Sheets").font = _BOLD
    for i, (name, what) in enumerate(guide, start=start + 1):
        write_text_cell(ws, i, 1, name)
        write_text_cell(ws, i, 2, what)
    _widths(ws, (24, 100))


def _summary(ws: Worksheet, results: PlanResults) -> None:
    headers = ["Scenario", "Number", "Variant"] + [h for h, _, _ in SUMMARY_COLUMNS]
    _header(ws, 1, headers)
    row = 2
    for number, item in enumerate(results.scenarios, start=1):
        for variant, run in (("with measures", item.with_interventions),
                             ("without measures", item.without_interventions)):
            write_text_cell(ws, row, 1, item.scenario.name)
            _put(ws, row, 2, number, "0")
            write_text_cell(ws, row, 3, variant)
            for col, (_, getter, fmt) in enumerate(SUMMARY_COLUMNS, start=4):
                _put(ws, row, col, getter(run.metrics), fmt)
            row += 1
    ws.freeze_panes = "D2"
    _widths(ws, (28, 9, 17, *([14] * len(SUMMARY_COLUMNS))))
    ws.row_dimensions[1].height = 45


def _effects(ws: Worksheet, results: PlanResults) -> None:
    _header(ws, 1, ["Scenario", "Measures"] + [h for h, _, _ in _EFFECT_COLUMNS])
    for row, item in enumerate(results.scenarios, start=2):
        write_text_cell(ws, row, 1, item.scenario.name)
        write_text_cell(ws, row, 2, "; ".join(item.scenario.interventions) or "none")
        for col, (_, key, fmt) in enumerate(_EFFECT_COLUMNS, start=3):
            _put(ws, row, col, getattr(item.effect, key), fmt)
    ws.freeze_panes = "C2"
    _widths(ws, (28, 40, *([14] * len(_EFFECT_COLUMNS))))
    ws.row_dimensions[1].height = 45


_DAILY_HEADER_ROW = 3

#: Daily columns on the Daily sheets: the bed, admission and absence series a
#: planner charts most. Every column is in ``daily-series.csv``.
XLSX_DAILY_COLUMNS: tuple[str, ...] = (
    "admissions_per_day",
    "icu_admissions_per_day",
    "hospital_deaths_per_day",
    "ward_demand_beds",
    "ward_available_beds",
    "ward_available_with_surge_beds",
    "ward_unmet_beds",
    "icu_demand_beds",
    "icu_available_beds",
    "icu_available_with_surge_beds",
    "icu_unmet_beds",
    "cumulative_admissions_persons",
    "cumulative_hospital_deaths_persons",
    "absent_workers_persons",
    "absence_share",
)


def _daily(ws: Worksheet, title: str, daily: Any) -> int:
    """Write one daily sheet; returns the last data row."""
    write_text_cell(ws, 1, 1, title).font = _BOLD
    names = [n for n in XLSX_DAILY_COLUMNS if n in daily.columns]
    _header(ws, _DAILY_HEADER_ROW, ["date", "day", *names])
    values = daily[names].to_numpy(dtype=float)
    values = np.where(np.isfinite(values), values, np.nan)
    dates = [d.date() for d in daily.index]
    for i, day in enumerate(dates):
        ws.append([day, i, *(None if math.isnan(v) else float(v) for v in values[i])])
    last = _DAILY_HEADER_ROW + len(dates)
    for (cell,) in ws.iter_rows(min_row=_DAILY_HEADER_ROW + 1, max_row=last, max_col=1):
        cell.number_format = _DATE_FORMAT
    ws.freeze_panes = ws.cell(row=_DAILY_HEADER_ROW + 1, column=3).coordinate
    _widths(ws, (12, 6, *([13] * len(names))))
    ws.row_dimensions[_DAILY_HEADER_ROW].height = 45
    return last


def _daily_column(name: str) -> int:
    return 3 + XLSX_DAILY_COLUMNS.index(name)


def _line(series: Any, color: str, dash: str | None, width_pt: float) -> None:
    props = series.graphicalProperties
    props.line.solidFill = color.lstrip("#")
    props.line.width = int(width_pt * 12700)
    if dash:
        props.line.dashStyle = dash
    series.marker.symbol = "none"
    series.smooth = False


def _chart(
    title: str,
    kind: str,
    with_ws: Worksheet,
    without_ws: Worksheet,
    last_row: int,
    has_measures: bool,
) -> LineChart:
    chart = LineChart()
    chart.title = title
    chart.y_axis.title = "Beds"
    chart.x_axis.title = "Date"
    dates: Any = chart.x_axis  # a text axis of dates: label about one day a month
    dates.number_format = "d mmm yyyy"
    dates.tickLblSkip = 30
    dates.tickMarkSkip = 30
    chart.x_axis.delete = False
    chart.y_axis.delete = False
    if chart.legend is not None:
        chart.legend.position = "b"
    chart.height = 9  # [cm]
    chart.width = 17
    first = _DAILY_HEADER_ROW

    def ref(ws: Worksheet, name: str) -> Reference:
        col = _daily_column(name)
        return Reference(ws, min_col=col, min_row=first + 1, max_row=last_row)

    demand = Series(ref(with_ws, f"{kind}_demand_beds"),
                    title="Demand with measures" if has_measures else "Demand")
    _line(demand, OKABE_ITO["blue"], None, 2.25)
    chart.series.append(demand)
    if has_measures:
        without = Series(ref(without_ws, f"{kind}_demand_beds"), title="Demand without measures")
        _line(without, OKABE_ITO["vermillion"], "dash", 1.5)
        chart.series.append(without)
    available = Series(ref(with_ws, f"{kind}_available_beds"), title="Available beds")
    _line(available, OKABE_ITO["black"], None, 1.25)
    chart.series.append(available)
    surge = Series(ref(with_ws, f"{kind}_available_with_surge_beds"),
                   title="Available beds with surge beds open")
    _line(surge, "4D4D4D", "sysDot", 1.25)
    chart.series.append(surge)
    chart.set_categories(Reference(with_ws, min_col=1, min_row=first + 1, max_row=last_row))
    return chart


def _transmissibility(ws: Worksheet, results: PlanResults) -> None:
    _header(ws, 1, ["Level", "Measure given", "Value given", "R0", "Growth rate [per day]",
                    "Doubling time [days]", "Mean generation time [days]",
                    "Effective R on day 0"])
    row = 2
    for level in LEVELS:
        t = results.transmissibility_by_level.get(level)
        if t is None:
            continue
        write_text_cell(ws, row, 1, words.LEVEL_WORDS[level])
        write_text_cell(ws, row, 2, t.measure)
        for col, value in enumerate(
            (t.given_value, t.r0, t.growth_rate_per_day, t.doubling_time_days,
             t.mean_generation_time_days, t.r_effective_day0),
            start=3,
        ):
            _put(ws, row, col, None if value is None else float(value), "0.000")
        row += 1
    _widths(ws, (10, 16, 12, 10, 14, 14, 16, 14))
    ws.row_dimensions[1].height = 30


def _inputs(ws: Worksheet, plan: Plan) -> None:
    _header(ws, 1, ["Sheet", "Cell", "Input", "Value", "Unit", "Default used", "Field"])
    for row, record in enumerate(plan.source.inputs, start=2):
        write_text_row(
            ws, row,
            [record.sheet, record.cell, record.label, words.shown_value(record), record.unit,
             "yes" if record.defaulted else "", record.name],
        )
    ws.freeze_panes = "C2"
    ws.auto_filter.ref = f"A1:G{max(1, len(plan.source.inputs) + 1)}"
    _widths(ws, (20, 8, 52, 36, 12, 12, 34))


def _column_guide(ws: Worksheet) -> None:
    _header(ws, 1, ["Column", "Unit", "Meaning"])
    guide = [("date", "date", "Calendar day."), ("day", "days", "Days since day 0.")]
    guide += [(c.name, c.unit, c.meaning) for c in DAILY_COLUMNS if c.name in XLSX_DAILY_COLUMNS]
    for row, texts in enumerate(guide, start=2):
        write_text_row(ws, row, texts)
    _widths(ws, (36, 18, 80))


def results_workbook(
    plan: Plan,
    results: PlanResults,
    *,
    version: str,
    generated: dt.datetime,
    extra_sheets: Sequence[Callable[[Workbook], None]] = (),
) -> Workbook:
    """Build the results workbook in memory.

    Parameters
    ----------
    plan : Plan
        The plan that was run.
    results : PlanResults
        Its results.
    version : str
        prepkit version.
    generated : datetime.datetime
        Run time, stored as the document's creation and modification date.
    extra_sheets : sequence of callable
        Functions adding further sheets (the uncertainty summary), called
        in order after the Summary and Effect sheets are made.

    Returns
    -------
    openpyxl.Workbook
        The workbook, ready to save.
    """
    wb = Workbook()
    stamp = generated.astimezone(dt.UTC).replace(tzinfo=None)
    wb.properties.created = stamp
    wb.properties.modified = stamp
    wb.properties.creator = f"prepkit {version}"
    wb.properties.title = f"{plan.details.title}: results"
    about = wb.active
    assert about is not None
    about.title = "About"
    _about(about, plan, version, generated)
    _summary(wb.create_sheet("Summary"), results)
    _effects(wb.create_sheet("Effect of measures"), results)
    for add in extra_sheets:
        add(wb)
    charts_ws = wb.create_sheet("Charts")
    write_text_cell(charts_ws, 1, 1,
                    "Bed demand against available beds, by scenario (data on the Daily sheets)"
                    ).font = _BOLD
    for number, item in enumerate(results.scenarios, start=1):
        with_ws = wb.create_sheet(daily_sheet_name(number, "with"))
        without_ws = wb.create_sheet(daily_sheet_name(number, "without"))
        name = item.scenario.name
        last = _daily(with_ws, f"Scenario {number}: {name}, with measures",
                      item.with_interventions.daily)
        _daily(without_ws, f"Scenario {number}: {name}, without measures",
               item.without_interventions.daily)
        has_measures = bool(item.scenario.interventions)
        anchor_row = 3 + (number - 1) * 19
        for col, (kind, label) in zip(("A", "L"), (("ward", "Ward"), ("icu", "ICU")),
                                      strict=True):
            chart = _chart(f"{number}. {name}: {label} beds", kind, with_ws, without_ws, last,
                           has_measures)
            charts_ws.add_chart(chart, f"{col}{anchor_row}")
    _transmissibility(wb.create_sheet("Transmissibility"), results)
    _inputs(wb.create_sheet("Inputs"), plan)
    _column_guide(wb.create_sheet("Column guide"))
    return wb


def results_workbook_bytes(
    plan: Plan,
    results: PlanResults,
    *,
    version: str,
    generated: dt.datetime,
    extra_sheets: Sequence[Callable[[Workbook], None]] = (),
) -> bytes:
    """The results workbook as ``.xlsx`` bytes (see :func:`results_workbook`).

    Parameters
    ----------
    plan : Plan
        The plan that was run.
    results : PlanResults
        Its results.
    version : str
        prepkit version.
    generated : datetime.datetime
        Run time.
    extra_sheets : sequence of callable
        Functions adding further sheets.

    Returns
    -------
    bytes
        The file, byte-reproducible for the same inputs and run time.
    """
    wb = results_workbook(plan, results, version=version, generated=generated,
                          extra_sheets=extra_sheets)
    buffer = io.BytesIO()
    wb.save(buffer)
    return normalise_xlsx(buffer.getvalue(), modified=generated)


def _frame_value(value: Any) -> Any:
    """A cell value from a pandas cell: dates as dates, NaN as empty."""
    if value is None:
        return None
    if isinstance(value, dt.datetime):
        return value.date()
    if isinstance(value, dt.date | str):
        return value
    if isinstance(value, bool | np.bool_):
        return bool(value)
    try:
        number = float(value)
    except (TypeError, ValueError):
        return str(value)
    return number if math.isfinite(number) else None


def uncertainty_sheets(uncertainty: Any) -> tuple[Callable[[Workbook], None], ...]:
    """Sheet writers for the uncertainty ensemble, for ``extra_sheets``.

    Parameters
    ----------
    uncertainty : prepkit.uncertainty.UncertaintyResults or None
        The ensemble; None or an empty one gives no sheets.

    Returns
    -------
    tuple of callable
        Writers of the sheets "Uncertainty" (quantiles of every metric per
        scenario and variant, and the chance of running short) and
        "Sensitivity" (the one-at-a-time swings).
    """
    if uncertainty is None or not getattr(uncertainty, "scenarios", ()):
        return ()

    def summary_sheet(wb: Workbook) -> None:
        ws = wb.create_sheet("Uncertainty")
        first = uncertainty.scenarios[0].with_interventions
        stats = [str(c) for c in first.summary.columns]
        write_text_cell(
            ws, 1, 1,
            f"{int(uncertainty.draws):,} plausible futures per scenario and variant "
            f"(seed {uncertainty.seed}); quantiles of each metric and the single scenario run",
        ).font = _BOLD
        _header(ws, 3, ["Scenario", "Variant", "Metric", *stats])
        row = 4
        for item in uncertainty.scenarios:
            for variant in ("with", "without"):
                result = item.variant(variant)
                for metric, values in result.summary.iterrows():
                    write_text_cell(ws, row, 1, item.scenario)
                    write_text_cell(ws, row, 2, f"{variant} measures")
                    write_text_cell(ws, row, 3, str(metric))
                    for col, stat in enumerate(stats, start=4):
                        _put(ws, row, col, _frame_value(values[stat]), "#,##0.00")
                    row += 1
        row += 1
        write_text_cell(ws, row, 1, "Chance that beds run short on at least one day").font = _BOLD
        row += 1
        _header(ws, row, ["Scenario", "Variant", "Bed type", "Without surge [fraction]",
                          "With surge [fraction]"])
        row += 1
        for item in uncertainty.scenarios:
            for variant in ("with", "without"):
                any_day = item.variant(variant).exceedance_any_day
                for bed, values in any_day.iterrows():
                    write_text_row(ws, row, [item.scenario, f"{variant} measures", str(bed)])
                    _put(ws, row, 4, _frame_value(values["any_day_probability"]), "0.0%")
                    _put(ws, row, 5, _frame_value(values["any_day_with_surge_probability"]),
                         "0.0%")
                    row += 1
        ws.freeze_panes = "D4"
        _widths(ws, (28, 17, 40, *([13] * len(stats))))

    def sensitivity_sheet(wb: Workbook) -> None:
        ws = wb.create_sheet("Sensitivity")
        write_text_cell(
            ws, 1, 1,
            "One input at a time at each end of its range, every other input at its most "
            "likely value",
        ).font = _BOLD
        _header(ws, 3, ["Scenario", "Variant", "Input", "Input at low end", "Input at high end",
                        "Peak ICU demand, low end [beds]", "Peak ICU demand, high end [beds]",
                        "Peak ICU demand, most likely [beds]", "Unmet bed-days, low end",
                        "Unmet bed-days, high end"])
        row = 4
        for item in uncertainty.scenarios:
            for variant in ("with", "without"):
                result = item.variant(variant)
                unmet = {
                    str(r["field"]): r for _, r in result.tornado_unmet.iterrows()
                }
                for _, r in result.tornado_peak_icu.iterrows():
                    write_text_row(ws, row, [item.scenario, f"{variant} measures", str(r["label"])])
                    _put(ws, row, 4, _frame_value(r["input_low"]), "0.000")
                    _put(ws, row, 5, _frame_value(r["input_high"]), "0.000")
                    _put(ws, row, 6, _frame_value(r["peak_icu_demand_at_low_beds"]), "#,##0.0")
                    _put(ws, row, 7, _frame_value(r["peak_icu_demand_at_high_beds"]), "#,##0.0")
                    _put(ws, row, 8, _frame_value(r["peak_icu_demand_baseline_beds"]), "#,##0.0")
                    match = unmet.get(str(r["field"]))
                    if match is not None:
                        _put(ws, row, 9, _frame_value(match["unmet_bed_days_at_low"]), "#,##0")
                        _put(ws, row, 10, _frame_value(match["unmet_bed_days_at_high"]), "#,##0")
                    row += 1
        ws.freeze_panes = "D4"
        _widths(ws, (28, 17, 40, 12, 12, 14, 14, 14, 14, 14))

    return (summary_sheet, sensitivity_sheet)
