"""The results workbook (``results.xlsx``) a planner can read, print, filter and chart.

Sheets, in order:

* **About**: what the workbook is, the run's provenance, the caution, and
  a guide to the other sheets.
* **Summary**: one row per scenario and variant with the headline figures;
  prints on one page for a meeting.
* **Effect of measures**: without minus with, per scenario.
* **Beds in detail**: every ward and ICU figure, one row per scenario,
  variant and bed type.
* **Totals and peaks**: infections, illness, admissions, deaths, bed-days,
  doses and workforce absence.
* **Uncertainty**, **Chance of running short**, **Sensitivity**: the
  uncertainty ensemble, when the plan runs one
  (:mod:`prepkit.report.results_workbook_uncertainty`).
* **Charts**: native Excel line charts of ward and ICU demand against the
  available beds, one pair per scenario, drawn from the daily sheets.
* **Daily N with** / **Daily N without**: the daily series of scenario N.
* **Transmissibility**: R0, growth rate, doubling and generation time per
  level.
* **Inputs**: every input read from the planning workbook, with its sheet
  and cell.
* **Column guide**: every column of every sheet with the name of the same
  figures in the CSV and JSON files, its unit and its meaning.

Every column is declared once, in
:mod:`prepkit.report.results_workbook_columns`; every sheet is finished by
:func:`prepkit.report.results_workbook_layout.finish_sheet` (print setup,
frozen panes, Excel table). Text that came from the planning workbook is
written with :func:`prepkit.report.safety.write_text_cell`, so a label such
as ``=HYPERLINK(...)`` stays text. The file is byte-reproducible: the
document dates come from the run time and the zip entries get a fixed time
stamp (:func:`prepkit.base.files.normalise_xlsx`).
"""

from __future__ import annotations

import datetime as dt
import io
from collections.abc import Iterator, Sequence
from typing import Any

from openpyxl import Workbook
from openpyxl.styles import Alignment
from openpyxl.worksheet.worksheet import Worksheet

from prepkit.base.files import normalise_xlsx
from prepkit.plan import LEVELS, Plan
from prepkit.report import results_workbook_columns_scenarios as cols
from prepkit.report.results_workbook_charts import charts_sheet, daily_sheet
from prepkit.report.results_workbook_columns import DAYS, GUIDE, KEYS, GuideRow, SheetColumns
from prepkit.report.results_workbook_layout import (
    BOLD,
    PageInfo,
    finish_sheet,
    header_row,
    put,
    table_name,
    title_cell,
)
from prepkit.report.results_workbook_uncertainty import SheetWriter, uncertainty_sheets
from prepkit.report.safety import write_text_cell, write_text_row
from prepkit.report.words.assumptions import shown_value
from prepkit.report.words.formatting import LEVEL_WORDS
from prepkit.report.words.leader import CAUTION_LINE, DECISIONS_LINE
from prepkit.scenarios.runs import PlanResults, ScenarioResults, ScenarioRun

__all__ = [
    "SHEET_GUIDE",
    "daily_sheet_name",
    "normalise_xlsx",
    "results_workbook",
    "results_workbook_bytes",
    "uncertainty_sheets",
]

VARIANT_WORDS = {"with": "with measures", "without": "without measures"}
BED_WORDS = {"ward": "Ward", "icu": "ICU"}
_WRAP = Alignment(wrap_text=True, vertical="top")

#: What each sheet holds, for the About sheet (Daily sheets under one entry).
SHEET_GUIDE: dict[str, str] = {
    "Summary": "Headline figures per scenario, with and without its measures.",
    "Effect of measures": "What each scenario's measures change (without minus with).",
    "Beds in detail": "Every ward and ICU figure: surge beds, first day short, shortfalls.",
    "Totals and peaks": "Infections, illness, admissions, deaths, bed-days, doses, absence.",
    "Uncertainty": "Mean, percentiles and the single run of each figure over the plausible "
                   "futures.",
    "Chance of running short": "Share of the plausible futures in which beds run short.",
    "Sensitivity": "Which inputs move peak ICU demand and unmet bed-days the most.",
    "Charts": "Ward and ICU demand against available beds; restyle freely.",
    "Daily N with / without": "Daily series of scenario N (every series is in "
                              "daily-series.csv).",
    "Transmissibility": "R0, growth rate, doubling and generation time per level.",
    "Inputs": "Every input read from the planning workbook, with its sheet and cell.",
    "Column guide": "Every column: its unit, meaning and name in the CSV and JSON files.",
}


def daily_sheet_name(number: int, variant: str) -> str:
    """Name of a daily sheet: ``Daily 2 with`` or ``Daily 2 without``.

    Scenario names are the planner's free text, so they go in the sheet's
    title row and page header, not its name (Excel limits names to 31
    characters and bans some).

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


def _value(obj: Any, path: str) -> Any:
    """The attribute at a dotted path: ``ward.peak_date`` of a ScenarioMetrics."""
    for part in path.split("."):
        obj = getattr(obj, part)
    return obj


def _variants(results: PlanResults) -> Iterator[tuple[int, ScenarioResults, str, ScenarioRun]]:
    for number, item in enumerate(results.scenarios, start=1):
        for variant in ("with", "without"):
            yield number, item, variant, item.variant(variant)


def _keys(ws: Worksheet, row: int, number: int, name: str, variant: str) -> None:
    write_text_cell(ws, row, 1, name)
    put(ws, row, 2, number, DAYS)
    write_text_cell(ws, row, 3, VARIANT_WORDS[variant])


def _per_variant(ws: Worksheet, page: PageInfo, results: PlanResults,
                 columns: SheetColumns, subject: str) -> list[GuideRow]:
    """A sheet with one row per scenario and variant, figures from ScenarioMetrics."""
    header_row(ws, 1, columns)
    figures = columns.columns[len(KEYS):]
    row = 1
    for number, item, variant, run in _variants(results):
        row += 1
        _keys(ws, row, number, item.scenario.name, variant)
        for col, c in enumerate(figures, start=len(KEYS) + 1):
            put(ws, row, col, _value(run.metrics, c.name), c.number_format)
    finish_sheet(ws, page, subject=subject, title_rows=(1, 1), last_row=row,
                 last_col=len(columns.columns), freeze="D2", table=table_name(ws.title))
    return columns.guide_rows()


def _beds(ws: Worksheet, page: PageInfo, results: PlanResults) -> list[GuideRow]:
    columns = cols.BEDS
    header_row(ws, 1, columns)
    figures = columns.columns[len(KEYS) + 1:]
    row = 1
    for number, item, variant, run in _variants(results):
        for kind in ("ward", "icu"):
            row += 1
            _keys(ws, row, number, item.scenario.name, variant)
            write_text_cell(ws, row, 4, BED_WORDS[kind])
            beds = getattr(run.metrics, kind)
            for col, c in enumerate(figures, start=len(KEYS) + 2):
                put(ws, row, col, _value(beds, c.name), c.number_format)
    finish_sheet(ws, page, subject="Ward and ICU beds in detail", title_rows=(1, 1),
                 last_row=row, last_col=len(columns.columns), freeze="E2",
                 table=table_name("Beds in detail"))
    return columns.guide_rows()


def _effects(ws: Worksheet, page: PageInfo, results: PlanResults) -> list[GuideRow]:
    columns = cols.EFFECT
    header_row(ws, 1, columns)
    row = 1
    for number, item in enumerate(results.scenarios, start=1):
        row += 1
        write_text_cell(ws, row, 1, item.scenario.name)
        put(ws, row, 2, number, DAYS)
        write_text_cell(ws, row, 3, "; ".join(item.scenario.interventions) or "none")
        for col, c in enumerate(columns.columns[3:], start=4):
            put(ws, row, col, _value(item.effect, c.name), c.number_format)
    finish_sheet(ws, page, subject="Effect of measures: without minus with", title_rows=(1, 1),
                 last_row=row, last_col=len(columns.columns), freeze="C2",
                 table=table_name("Effect of measures"))
    return columns.guide_rows()


def _transmissibility(ws: Worksheet, page: PageInfo, results: PlanResults) -> list[GuideRow]:
    columns = cols.TRANSMISSIBILITY
    header_row(ws, 1, columns)
    row = 1
    for level in LEVELS:
        t = results.transmissibility_by_level.get(level)
        if t is None:
            continue
        row += 1
        given_as, given_format = cols.MEASURE_FORMATS.get(t.measure, (t.measure, "0.00"))
        write_text_cell(ws, row, 1, LEVEL_WORDS[level])
        write_text_cell(ws, row, 2, given_as)
        put(ws, row, 3, float(t.given_value), given_format)
        for col, c in enumerate(columns.columns[3:], start=4):
            value = getattr(t, c.name)
            put(ws, row, col, None if value is None else float(value), c.number_format)
    finish_sheet(ws, page, subject="Transmissibility at each level", title_rows=(1, 1),
                 last_row=row, last_col=len(columns.columns), freeze="B2",
                 table=table_name("Transmissibility"))
    return columns.guide_rows()


def _inputs(ws: Worksheet, page: PageInfo, plan: Plan) -> list[GuideRow]:
    columns = cols.INPUTS
    header_row(ws, 1, columns)
    for row, record in enumerate(plan.source.inputs, start=2):
        write_text_row(ws, row, [record.sheet, record.cell, record.label,
                                 shown_value(record), record.unit,
                                 "yes" if record.defaulted else ""])
    finish_sheet(ws, page, subject="Every input of the planning workbook", title_rows=(1, 1),
                 last_row=len(plan.source.inputs) + 1, last_col=len(columns.columns),
                 freeze="C2", table=table_name("Inputs"))
    return columns.guide_rows()


def _column_guide(ws: Worksheet, page: PageInfo, rows: Sequence[GuideRow]) -> None:
    columns = GUIDE
    header_row(ws, 1, columns)
    for row, texts in enumerate(rows, start=2):
        write_text_row(ws, row, texts)
    finish_sheet(ws, page, subject="Column guide: units, meanings and names in the files",
                 title_rows=(1, 1), last_row=len(rows) + 1, last_col=len(columns.columns),
                 freeze="C2", table=table_name("Column guide"))


def _about(ws: Worksheet, page: PageInfo, plan: Plan, generated: dt.datetime,
           sheets: Sequence[str]) -> None:
    d = plan.details
    title_cell(ws, f"{d.title}: results")
    rows = [
        ("Jurisdiction", d.jurisdiction),
        ("Prepared by", d.prepared_by),
        ("Run", generated.astimezone(dt.UTC).strftime("%Y-%m-%d %H:%M:%S UTC")),
        ("Software", f"prepkit {page.version}"),
        ("Planning workbook", plan.source.path.replace("\\", "/").rsplit("/", 1)[-1]),
        ("Its SHA-256", plan.source.sha256),
        ("Random seed", str(d.seed)),
        ("Caution", f"{CAUTION_LINE} {DECISIONS_LINE}"),
        ("Numbers", "Beds, people and bed-days are shown whole, on the Daily sheets with one "
                    "decimal; shares as percentages. The cells hold the model's figures "
                    "unrounded."),
    ]
    for i, (key, value) in enumerate(rows, start=3):
        write_text_cell(ws, i, 1, key).font = BOLD
        write_text_cell(ws, i, 2, value).alignment = _WRAP
    start = len(rows) + 4
    write_text_cell(ws, start, 1, "Sheets").font = BOLD
    listed = [s for s in SHEET_GUIDE if s in sheets or (s.startswith("Daily") and any(
        n.startswith("Daily") for n in sheets))]
    for i, name in enumerate(listed, start=start + 1):
        write_text_cell(ws, i, 1, name)
        write_text_cell(ws, i, 2, SHEET_GUIDE[name]).alignment = _WRAP
    ws.column_dimensions["A"].width = 24
    ws.column_dimensions["B"].width = 100
    finish_sheet(ws, page, subject="About these results", title_rows=(1, 1),
                 last_row=start + len(listed), last_col=2, freeze="A2")


def results_workbook(
    plan: Plan,
    results: PlanResults,
    *,
    version: str,
    generated: dt.datetime,
    extra_sheets: Sequence[SheetWriter] = (),
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
        Writers of further sheets (the uncertainty sheets of
        :func:`uncertainty_sheets`), called in order after the Totals and
        peaks sheet with the workbook and the page information; each
        returns its rows of the Column guide.

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
    page = PageInfo.of(plan, version, generated)
    about = wb.active
    assert about is not None
    about.title = "About"
    guide: list[GuideRow] = []
    guide += _per_variant(wb.create_sheet("Summary"), page, results, cols.SUMMARY,
                          "Summary: headline figures by scenario")
    guide += _effects(wb.create_sheet("Effect of measures"), page, results)
    guide += _beds(wb.create_sheet("Beds in detail"), page, results)
    guide += _per_variant(wb.create_sheet("Totals and peaks"), page, results, cols.TOTALS,
                          "Totals and peaks by scenario")
    for add in extra_sheets:
        guide += add(wb, page)
    charts_ws = wb.create_sheet("Charts")
    pairs = []
    for number, item in enumerate(results.scenarios, start=1):
        with_ws = wb.create_sheet(daily_sheet_name(number, "with"))
        without_ws = wb.create_sheet(daily_sheet_name(number, "without"))
        name = item.scenario.name
        last = daily_sheet(with_ws, page, number, name, VARIANT_WORDS["with"],
                           item.with_interventions.daily)
        daily_sheet(without_ws, page, number, name, VARIANT_WORDS["without"],
                    item.without_interventions.daily)
        pairs.append((name, bool(item.scenario.interventions), with_ws, without_ws, last))
    charts_sheet(charts_ws, page, pairs)
    if results.scenarios:
        guide += cols.DAILY.guide_rows()
    guide += _transmissibility(wb.create_sheet("Transmissibility"), page, results)
    guide += _inputs(wb.create_sheet("Inputs"), page, plan)
    _column_guide(wb.create_sheet("Column guide"), page, guide)
    _about(about, page, plan, generated, wb.sheetnames)
    return wb


def results_workbook_bytes(
    plan: Plan,
    results: PlanResults,
    *,
    version: str,
    generated: dt.datetime,
    extra_sheets: Sequence[SheetWriter] = (),
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
        Writers of further sheets.

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


