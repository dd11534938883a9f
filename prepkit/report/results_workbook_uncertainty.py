"""The uncertainty sheets of ``results.xlsx``: Uncertainty, Chance of running short, Sensitivity.

:func:`uncertainty_sheets` turns an ensemble into sheet writers for
:func:`prepkit.report.results_workbook.results_workbook`. Each writer adds
its sheet, finishes it like every other sheet (print setup, frozen panes,
Excel table) and returns its rows of the Column guide. The columns and the
metrics are declared in
:mod:`prepkit.report.results_workbook_columns_uncertainty`.
"""

from __future__ import annotations

import datetime as dt
import math
from collections.abc import Callable
from typing import Any

import numpy as np
from openpyxl import Workbook
from openpyxl.worksheet.worksheet import Worksheet

from prepkit.report.results_workbook_columns import DAYS, GuideRow
from prepkit.report.results_workbook_columns_uncertainty import (
    CHANCE,
    INPUT_UNITS,
    METRIC_BY_NAME,
    SENSITIVITY,
    uncertainty_columns,
)
from prepkit.report.results_workbook_layout import (
    PageInfo,
    finish_sheet,
    header_row,
    put,
    table_name,
    title_cell,
)
from prepkit.report.safety import write_text_cell, write_text_row

__all__ = ["SheetWriter", "frame_value", "uncertainty_sheets"]

#: A writer of one sheet: adds it to the workbook and returns its Column guide rows.
SheetWriter = Callable[[Workbook, PageInfo], list[GuideRow]]

#: Header row of the uncertainty sheets (a sentence on what they show is in row 1).
HEADER_ROW = 3

_VARIANTS = (("with", "with measures"), ("without", "without measures"))
_BEDS = {"ward": "Ward", "icu": "ICU"}

def frame_value(value: Any) -> Any:
    """A cell value from a pandas cell: dates as dates, NaN and None as empty.

    Parameters
    ----------
    value : object
        Value read from a DataFrame.

    Returns
    -------
    object
        A date, text, bool, finite float, or None.
    """
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


def _keys(ws: Worksheet, row: int, number: int, name: str, variant: str) -> None:
    write_text_cell(ws, row, 1, name)
    put(ws, row, 2, number, DAYS)
    write_text_cell(ws, row, 3, variant)


def _summary_sheet(uncertainty: Any, wb: Workbook, page: PageInfo) -> list[GuideRow]:
    ws = wb.create_sheet("Uncertainty")
    columns = uncertainty_columns(tuple(float(q) for q in uncertainty.quantiles))
    title_cell(ws, f"{int(uncertainty.draws):,} plausible futures per scenario and variant "
                   f"(random seed {uncertainty.seed}): how each figure spreads across them, and "
                   "the single scenario run for comparison", size="normal")
    header_row(ws, HEADER_ROW, columns)
    stats = [c.name for c in columns.columns[5:]]
    row = HEADER_ROW
    for number, item in enumerate(uncertainty.scenarios, start=1):
        for variant, variant_words in _VARIANTS:
            for metric, values in item.variant(variant).summary.iterrows():
                declared = METRIC_BY_NAME[str(metric)]
                row += 1
                _keys(ws, row, number, item.scenario, variant_words)
                write_text_row(ws, row, [declared.label, declared.unit], start_col=4)
                for col, stat in enumerate(stats, start=6):
                    put(ws, row, col, frame_value(values.get(stat)), declared.number_format)
    finish_sheet(ws, page, subject="Uncertainty: the spread of each figure",
                 title_rows=(HEADER_ROW, HEADER_ROW), last_row=row,
                 last_col=len(columns.columns), freeze=f"E{HEADER_ROW + 1}",
                 table=table_name("Uncertainty"))
    metric_rows: list[GuideRow] = [
        ("Uncertainty", f"Metric: {m.label}", columns.file, m.name, m.unit, m.meaning)
        for m in METRIC_BY_NAME.values()
    ]
    return columns.guide_rows() + metric_rows


def _chance_sheet(uncertainty: Any, wb: Workbook, page: PageInfo) -> list[GuideRow]:
    ws = wb.create_sheet("Chance of running short")
    title_cell(ws, "Chance that beds run short on at least one day, over the plausible futures",
               size="normal")
    header_row(ws, HEADER_ROW, CHANCE)
    figures = CHANCE.columns[4:]
    row = HEADER_ROW
    for number, item in enumerate(uncertainty.scenarios, start=1):
        for variant, variant_words in _VARIANTS:
            any_day = item.variant(variant).exceedance_any_day
            for bed, values in any_day.iterrows():
                row += 1
                _keys(ws, row, number, item.scenario, variant_words)
                write_text_cell(ws, row, 4, _BEDS.get(str(bed), str(bed)))
                for col, c in enumerate(figures, start=5):
                    field = c.name.removeprefix("<beds>_")
                    put(ws, row, col, frame_value(values.get(field)), c.number_format)
    finish_sheet(ws, page, subject="Chance of running short of beds",
                 title_rows=(HEADER_ROW, HEADER_ROW), last_row=row,
                 last_col=len(CHANCE.columns), freeze=f"E{HEADER_ROW + 1}",
                 table=table_name("Chance of running short"))
    return CHANCE.guide_rows()


def _input_unit(unit: str, per_band: bool) -> tuple[str, str]:
    """Words and number format of a sensitivity input's unit."""
    words, number_format = INPUT_UNITS.get(unit, (unit, "0.000"))
    return (f"{words}, by age band" if per_band else words), number_format


def _sensitivity_sheet(uncertainty: Any, wb: Workbook, page: PageInfo) -> list[GuideRow]:
    ws = wb.create_sheet("Sensitivity")
    title_cell(ws, "One input at a time at each end of its range, every other input at its most "
                   "likely value", size="normal")
    header_row(ws, HEADER_ROW, SENSITIVITY)
    figures = SENSITIVITY.columns[5:]
    row = HEADER_ROW
    for number, item in enumerate(uncertainty.scenarios, start=1):
        for variant, variant_words in _VARIANTS:
            result = item.variant(variant)
            unmet = {str(r["field"]): r for _, r in result.tornado_unmet.iterrows()}
            for _, r in result.tornado_peak_icu.iterrows():
                row += 1
                per_band = bool(r.get("per_band", False))
                unit_words, input_format = _input_unit(str(r["unit"]), per_band)
                # The two tornado tables, by their key in summary.json.
                tables = {"tornado_peak_icu_demand": r,
                          "tornado_unmet_bed_days": unmet.get(str(r["field"]))}
                _keys(ws, row, number, item.scenario, variant_words)
                write_text_row(ws, row, [str(r["label"]), unit_words], start_col=4)
                for col, c in enumerate(figures, start=6):
                    table, _, field = c.name.partition("[].")
                    source = tables[table]
                    value = None if source is None else frame_value(source.get(field))
                    put(ws, row, col, value, c.number_format or input_format)
    finish_sheet(ws, page, subject="Sensitivity: which inputs matter most",
                 title_rows=(HEADER_ROW, HEADER_ROW), last_row=row,
                 last_col=len(SENSITIVITY.columns), freeze=f"E{HEADER_ROW + 1}",
                 table=table_name("Sensitivity"))
    return SENSITIVITY.guide_rows()


def uncertainty_sheets(uncertainty: Any) -> tuple[SheetWriter, ...]:
    """Sheet writers for the uncertainty ensemble, for ``extra_sheets``.

    Parameters
    ----------
    uncertainty : prepkit.uncertainty.results.UncertaintyResults or None
        The ensemble; None or an empty one gives no sheets.

    Returns
    -------
    tuple of callable
        Writers of the sheets "Uncertainty" (mean, percentiles and single
        run of every metric per scenario and variant), "Chance of running
        short" (the share of futures short of beds on any day) and
        "Sensitivity" (the one-at-a-time swings).
    """
    if uncertainty is None or not getattr(uncertainty, "scenarios", ()):
        return ()

    def summary(wb: Workbook, page: PageInfo) -> list[GuideRow]:
        return _summary_sheet(uncertainty, wb, page)

    def chance(wb: Workbook, page: PageInfo) -> list[GuideRow]:
        return _chance_sheet(uncertainty, wb, page)

    def sensitivity(wb: Workbook, page: PageInfo) -> list[GuideRow]:
        return _sensitivity_sheet(uncertainty, wb, page)

    return (summary, chance, sensitivity)
