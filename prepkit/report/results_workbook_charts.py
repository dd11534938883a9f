"""The Daily sheets of ``results.xlsx`` and the native Excel line charts drawn from them.

Each scenario has a Daily sheet with its measures and one without; the
Charts sheet holds, per scenario, a ward and an ICU chart of demand
(with and without measures) against the available beds, with and without
surge beds. The charts refer to the Daily sheets' cells, so a planner can
restyle them or copy them into slides and they follow any edit of the data.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

import numpy as np
from openpyxl.chart import LineChart, Reference, Series
from openpyxl.chart.data_source import NumFmt
from openpyxl.worksheet.pagebreak import Break
from openpyxl.worksheet.worksheet import Worksheet

from prepkit.report.results_workbook_columns_scenarios import DAILY
from prepkit.report.results_workbook_layout import (
    PageInfo,
    finish_sheet,
    header_row,
    put,
    table_name,
    title_cell,
)
from prepkit.report.style import OKABE_ITO

__all__ = ["CHART_ROWS", "DAILY_HEADER_ROW", "charts_sheet", "daily_column", "daily_sheet"]

#: Header row of the Daily sheets (the title is in row 1).
DAILY_HEADER_ROW = 3
#: Rows of the Charts sheet given to one scenario's pair of charts.
CHART_ROWS = 19
#: Scenarios whose charts share a printed page.
CHARTS_PER_PAGE = 2
#: Last column of the Charts sheet's print area (two charts side by side).
CHARTS_LAST_COLUMN = 22
_SERIES = [c.name for c in DAILY.columns[2:]]


def daily_column(name: str) -> int:
    """Column number (from 1) of a daily series on the Daily sheets.

    Parameters
    ----------
    name : str
        Series name, as in ``daily-series.csv``.

    Returns
    -------
    int
        Its column.
    """
    return 3 + _SERIES.index(name)


def daily_sheet(ws: Worksheet, page: PageInfo, number: int, scenario: str, variant: str,
                daily: Any) -> int:
    """Write one Daily sheet.

    Parameters
    ----------
    ws : openpyxl.worksheet.worksheet.Worksheet
        The empty sheet.
    page : PageInfo
        Page information of the run.
    number : int
        Scenario number, from 1.
    scenario : str
        Scenario name.
    variant : str
        "with measures" or "without measures".
    daily : pandas.DataFrame
        The run's daily series (index ``date``).

    Returns
    -------
    int
        The last data row.
    """
    subject = f"Scenario {number}: {scenario}, {variant}"
    title_cell(ws, subject, size="normal")
    header_row(ws, DAILY_HEADER_ROW, DAILY)
    names = [n for n in _SERIES if n in daily.columns]
    values = daily[names].to_numpy(dtype=float) if names else np.empty((len(daily), 0))
    columns = [daily_column(n) for n in names]
    formats = [DAILY.columns[c - 1].number_format for c in columns]
    date_format, day_format = DAILY.columns[0].number_format, DAILY.columns[1].number_format
    row_number = DAILY_HEADER_ROW
    for i, stamp in enumerate(daily.index):
        row_number += 1
        put(ws, row_number, 1, stamp.date(), date_format)
        put(ws, row_number, 2, i, day_format)
        for col, fmt, value in zip(columns, formats, values[i].tolist(), strict=True):
            put(ws, row_number, col, value if math.isfinite(value) else None, fmt)
    finish_sheet(ws, page, subject=f"{subject}: daily series",
                 title_rows=(DAILY_HEADER_ROW, DAILY_HEADER_ROW), last_row=row_number,
                 last_col=len(DAILY.columns), freeze=f"C{DAILY_HEADER_ROW + 1}",
                 table=table_name("Daily", number, variant.split()[0]))
    return row_number



def _line(series: Any, color: str, dash: str | None, width_pt: float) -> None:
    props = series.graphicalProperties
    props.line.solidFill = color.lstrip("#")
    props.line.width = int(width_pt * 12700)  # [EMU]
    if dash:
        props.line.dashStyle = dash
    series.marker.symbol = "none"
    series.smooth = False


def _chart(title: str, kind: str, with_ws: Worksheet, without_ws: Worksheet, last_row: int,
           has_measures: bool) -> LineChart:
    chart = LineChart()
    chart.title = title
    chart.y_axis.title = "Beds"
    chart.y_axis.numFmt = NumFmt(formatCode="#,##0", sourceLinked=False)
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
    chart.width = 17  # [cm]
    first = DAILY_HEADER_ROW + 1

    def ref(ws: Worksheet, name: str) -> Reference:
        col = daily_column(name)
        return Reference(ws, min_col=col, min_row=first, max_row=last_row)

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
    chart.set_categories(Reference(with_ws, min_col=1, min_row=first, max_row=last_row))
    return chart


def charts_sheet(ws: Worksheet, page: PageInfo,
                 scenarios: Sequence[tuple[str, bool, Worksheet, Worksheet, int]]) -> None:
    """Fill the Charts sheet: a ward and an ICU chart per scenario, two scenarios a page.

    Parameters
    ----------
    ws : openpyxl.worksheet.worksheet.Worksheet
        The empty Charts sheet.
    page : PageInfo
        Page information of the run.
    scenarios : sequence of tuple
        Per scenario: name, whether it has measures, its Daily sheets with
        and without measures, and their last data row.
    """
    title_cell(ws, "Bed demand against available beds, by scenario (data on the Daily sheets)",
               size="normal")
    for number, (name, has_measures, with_ws, without_ws, last) in enumerate(scenarios, start=1):
        anchor_row = 3 + (number - 1) * CHART_ROWS
        for col, (kind, label) in zip(("A", "L"), (("ward", "Ward"), ("icu", "ICU")),
                                      strict=True):
            chart = _chart(f"{number}. {name}: {label} beds", kind, with_ws, without_ws, last,
                           has_measures)
            ws.add_chart(chart, f"{col}{anchor_row}")
        if number % CHARTS_PER_PAGE == 0 and number < len(scenarios):
            ws.row_breaks.append(Break(id=2 + number * CHART_ROWS))
    finish_sheet(ws, page, subject="Charts: bed demand against available beds",
                 title_rows=(1, 1), last_row=2 + max(1, len(scenarios)) * CHART_ROWS,
                 last_col=CHARTS_LAST_COLUMN, freeze="A2")
