"""The sheet "What runs short" of ``results.xlsx``: need against supply of every resource.

The rows are :func:`prepkit.report.tables.resource_rows`, which ``resources.csv``
holds too; the columns are declared here once, in the order of
:data:`~prepkit.report.tables.RESOURCE_KEYS`.
"""

from __future__ import annotations

from openpyxl import Workbook

from prepkit.report.results_workbook_columns import (
    DATE,
    DAYS,
    TEXT,
    WHOLE,
    GuideRow,
    SheetColumns,
    column,
)
from prepkit.report.results_workbook_layout import (
    PageInfo,
    finish_sheet,
    header_row,
    table_name,
    title_cell,
    write_records,
)
from prepkit.report.results_workbook_uncertainty import SheetWriter
from prepkit.report.tables import RESOURCE_KEYS, resource_rows
from prepkit.scenarios.runs import PlanResults

__all__ = ["RESOURCE_COLUMNS", "resource_sheets"]

HEADER_ROW = 3
"""Header row of the sheet (a sentence on what it shows is in row 1)."""

_RESOURCES = ("ward_beds_conventional, _contingency (with surge beds), _crisis (with crisis "
              "space), _after_absence (staffed beds after staff absence), the same for icu_beds, "
              "ventilators, oxygen, gowns, gloves, respirators, mortuary")

RESOURCE_COLUMNS = SheetColumns(
    sheet="What runs short", file="resources.csv", prefix="",
    columns=(
        column("Scenario", "scenario", "text", TEXT, "Scenario name.", 26),
        column("Variant", "variant", "text", TEXT, "With or without the scenario's measures.", 14),
        column("Resource", "resource", "text", TEXT, _RESOURCES, 26),
        column("Unit", "unit", "text", TEXT, "beds, devices, L/min, items/day or spaces.", 9),
        column("Supply", "supply", "unit", WHOLE,
               "What there is (beds of the level once open, devices, flow, day-0 stock, spaces); "
               "blank when the workbook gives none: not compared."),
        column("Largest need", "peak_need", "unit", WHOLE, "Largest daily need."),
        column("Largest need on", "peak_need_date", "date", DATE, "Its date.", 12),
        column("First day short", "first_short_date", "date", DATE,
               "First day the need is not met (blank: never, or not compared).", 12),
        column("Days short", "days_short_days", "days", DAYS, "Days the need is not met."),
        column("Largest gap", "largest_gap", "unit", WHOLE,
               "Largest daily shortfall; for stock, the items missing on the worst day."),
    ),
)
"""Columns of the sheet, in the order of :data:`RESOURCE_KEYS`."""

assert tuple(c.name for c in RESOURCE_COLUMNS.columns) == RESOURCE_KEYS


def resource_sheets(results: PlanResults) -> tuple[SheetWriter, ...]:
    """The writer of the sheet; none when the runs hold no resource figures."""
    rows = resource_rows(results)
    if not rows:
        return ()

    def sheet(wb: Workbook, page: PageInfo) -> list[GuideRow]:
        ws = wb.create_sheet(RESOURCE_COLUMNS.sheet)
        title_cell(ws, "Need against supply of beds, staff, equipment and supplies, central run",
                   size="normal")
        header_row(ws, HEADER_ROW, RESOURCE_COLUMNS)
        last = write_records(ws, HEADER_ROW, RESOURCE_COLUMNS, rows)
        finish_sheet(ws, page, subject=RESOURCE_COLUMNS.sheet,
                     title_rows=(HEADER_ROW, HEADER_ROW), last_row=last,
                     last_col=len(RESOURCE_COLUMNS.columns), freeze=f"D{HEADER_ROW + 1}",
                     table=table_name(RESOURCE_COLUMNS.sheet))
        return RESOURCE_COLUMNS.guide_rows()

    return (sheet,)
