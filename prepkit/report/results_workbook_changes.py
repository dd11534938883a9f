"""The sheets "Changes" and "Changes, figures" of ``results.xlsx``.

The same rows as the pack's page "What changed since the last pack", the
key ``changes_since_last_pack`` of ``summary.json`` and the file
``changes-since-last-pack.csv`` (:mod:`prepkit.report.changes`); the columns
are declared here once, in the order of :data:`~prepkit.report.changes.CHANGE_KEYS`
and :data:`~prepkit.report.changes.FIGURE_KEYS`.
"""

from __future__ import annotations

from typing import Any

from openpyxl import Workbook

from prepkit.report.changes import CHANGE_KEYS, FIGURE_KEYS, PackChanges
from prepkit.report.results_workbook_columns import TEXT, GuideRow, SheetColumns, column
from prepkit.report.results_workbook_layout import (
    PageInfo,
    finish_sheet,
    header_row,
    table_name,
    title_cell,
    write_records,
)
from prepkit.report.results_workbook_uncertainty import SheetWriter

__all__ = ["CHANGE_COLUMNS", "CHANGES_CSV", "FIGURE_COLUMNS", "changes_sheets"]

#: File of the pack with the input changes (one row per cell).
CHANGES_CSV = "changes-since-last-pack.csv"

HEADER_ROW = 3
"""Header row of both sheets (a sentence on what it shows is in row 1)."""

_AS_SHOWN = "as the pack shows it ('none' when absent)"

CHANGE_COLUMNS = SheetColumns(
    sheet="Changes", file=CHANGES_CSV, prefix="",
    columns=(
        column("Change", "change", "text", TEXT,
               "changed, added (not in the earlier pack) or removed (not in this one).", 10),
        column("Sheet", "sheet", "text", TEXT, "Sheet of the planning workbook.", 16),
        column("Cell", "cell", "text", TEXT, "Cell of the planning workbook.", 7),
        column("Input", "label", "text", TEXT,
               "What the cell holds, with its band, row and level.", 44),
        column("Unit", "unit", "text", TEXT, "Unit of the value.", 10),
        column("Earlier pack", "old_value", "text", TEXT,
               f"Value in the earlier pack, {_AS_SHOWN}.", 16),
        column("This pack", "new_value", "text", TEXT, f"Value in this pack, {_AS_SHOWN}.",
               16),
    ),
)
"""Columns of the "Changes" sheet, in the order of :data:`CHANGE_KEYS`."""

FIGURE_COLUMNS = SheetColumns(
    sheet="Changes, figures", file="summary.json",
    prefix="changes_since_last_pack.headline_figures[n]",
    columns=(
        column("Scenario", "scenario", "text", TEXT, "Scenario name.", 28),
        column("Figure", "figure", "text", TEXT,
               "Headline figure of the central run with the measures.", 36),
        column("Unit", "unit", "text", TEXT, "beds, days, people, date or %.", 8),
        column("Earlier pack", "old_value", "text", TEXT, f"The figure in the earlier pack, "
               f"{_AS_SHOWN}.", 14),
        column("This pack", "new_value", "text", TEXT, f"The figure in this pack, {_AS_SHOWN}.",
               14),
        column("Difference", "difference", "text", TEXT,
               "This pack's figure less the earlier pack's (of the figures as printed).", 14),
    ),
)
"""Columns of the "Changes, figures" sheet, in the order of :data:`FIGURE_KEYS`."""

assert tuple(c.name for c in CHANGE_COLUMNS.columns) == CHANGE_KEYS
assert tuple(c.name for c in FIGURE_COLUMNS.columns) == FIGURE_KEYS


def _sheet(wb: Workbook, page: PageInfo, columns: SheetColumns, title: str,
           rows: list[dict[str, Any]]) -> list[GuideRow]:
    ws = wb.create_sheet(columns.sheet)
    title_cell(ws, title, size="normal")
    header_row(ws, HEADER_ROW, columns)
    last = write_records(ws, HEADER_ROW, columns, rows)
    finish_sheet(ws, page, subject=columns.sheet, title_rows=(HEADER_ROW, HEADER_ROW),
                 last_row=last, last_col=len(columns.columns), freeze=f"A{HEADER_ROW + 1}",
                 table=table_name(columns.sheet) if rows else None)
    return columns.guide_rows()


def changes_sheets(changes: PackChanges | None, since: str) -> tuple[SheetWriter, ...]:
    """Writers of the two sheets; none without an earlier pack or when nothing changed.

    Parameters
    ----------
    changes : PackChanges or None
        The comparison with the earlier pack.
    since : str
        The earlier pack's date as printed.

    Returns
    -------
    tuple of callable
        Sheet writers for ``extra_sheets``.
    """
    if changes is None or not changes.any:
        return ()
    inputs = [c.row() for c in changes.inputs]
    figures = [f.row() for f in changes.figures]

    def input_sheet(wb: Workbook, page: PageInfo) -> list[GuideRow]:
        title = (f"Inputs changed since the pack of {since}" if changes.inputs_kept else
                 f"The pack of {since} kept no inputs to compare")
        return _sheet(wb, page, CHANGE_COLUMNS, title, inputs)

    def figure_sheet(wb: Workbook, page: PageInfo) -> list[GuideRow]:
        return _sheet(wb, page, FIGURE_COLUMNS,
                      f"Headline figures, the pack of {since} and this one", figures)

    return (input_sheet, figure_sheet)
