"""Cells, header rows, Excel tables and print setup of ``results.xlsx``.

Every sheet of the results workbook is finished by :func:`finish_sheet`, so
that each one prints the same way: landscape, one page wide and as many
pages tall as it needs, the header rows repeated on every page, the
jurisdiction, the sheet's subject and the report title in the page header,
the run and the page number in the footer, a print area, panes frozen below
the header, and an Excel table (filter buttons, banded rows) over the data.

Text from the planning workbook reaches headers and footers too; there an
``&`` starts a control code, so it is doubled, and each piece is shortened
so that the whole header stays within Excel's 255 characters.
"""

from __future__ import annotations

import datetime as dt
import math
import re
import textwrap
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from openpyxl.styles import Alignment, Font, PatternFill
from openpyxl.utils import get_column_letter
from openpyxl.worksheet.table import Table, TableStyleInfo
from openpyxl.worksheet.worksheet import Worksheet

from prepkit.plan import Plan
from prepkit.report.results_workbook_columns import DATE, TEXT, SheetColumns
from prepkit.report.safety import write_text_cell, write_text_row

__all__ = [
    "BOLD",
    "FONT_NAME",
    "PageInfo",
    "finish_sheet",
    "footer_text",
    "header_row",
    "put",
    "table_name",
    "text_lines",
    "title_cell",
]

#: The workbook's font; named on bold cells too, so that no program falls back to another.
FONT_NAME = "Calibri"
BOLD = Font(name=FONT_NAME, size=11, bold=True)
_TITLE = Font(name=FONT_NAME, size=14, bold=True)
_HEADER_FILL = PatternFill("solid", fgColor="F2F2F2")
_HEADER_ALIGN = Alignment(wrap_text=True, vertical="top")
_WRAPPED = Alignment(wrap_text=True, vertical="top")
_TOP = Alignment(vertical="top")
_TABLE_STYLE = "TableStyleLight1"

#: Height of one line of 11-point text in a row [points].
LINE_HEIGHT_PT = 15.0
#: Characters of text per unit of column width (Calibri 11, whose letters are on
#: average narrower than the digit 0 that sets the unit; a little on the low side, so
#: that a row is made tall enough rather than too short).
CHARS_PER_WIDTH = 1.2
#: The same for bold header text.
BOLD_CHARS_PER_WIDTH = 0.9
#: Longest piece of planner text put in a page header or footer [characters].
HEADER_PIECE_CHARS = 70
#: Excel's limit on a page header or footer [characters].
HEADER_LIMIT_CHARS = 255

_PAPER = {"A4": 9, "Letter": 1}  # Excel paper size codes


@dataclass(frozen=True, kw_only=True)
class PageInfo:
    """What every printed page of the workbook shows around its sheet.

    Parameters
    ----------
    jurisdiction : str
        The plan's jurisdiction.
    title : str
        The plan's report title.
    version : str
        prepkit version.
    run_date : datetime.date
        Day of the run (UTC).
    paper : {"A4", "Letter"}
        Paper size of the plan.
    """

    jurisdiction: str
    title: str
    version: str
    run_date: dt.date
    paper: str

    @classmethod
    def of(cls, plan: Plan, version: str, generated: dt.datetime) -> PageInfo:
        """The page information of a plan's run.

        Parameters
        ----------
        plan : Plan
            The plan that was run.
        version : str
            prepkit version.
        generated : datetime.datetime
            Run time.

        Returns
        -------
        PageInfo
            Jurisdiction, title, version, run day and paper size.
        """
        d = plan.details
        return cls(jurisdiction=d.jurisdiction, title=d.title, version=version,
                   run_date=generated.astimezone(dt.UTC).date(), paper=d.page_size)


def put(ws: Worksheet, row: int, col: int, value: Any, number_format: str) -> None:
    """Write a number, date or text to a cell, with its number format.

    Parameters
    ----------
    ws : openpyxl.worksheet.worksheet.Worksheet
        Sheet.
    row, col : int
        Cell position, from 1.
    value : object
        Number, date, text or None; NaN and infinities are left empty, text
        goes through :func:`prepkit.report.safety.write_text_cell`.
    number_format : str
        Excel number format of a number or date.
    """
    if isinstance(value, str):
        write_text_cell(ws, row, col, value)
        return
    if isinstance(value, dt.datetime):
        value = value.date()
    if isinstance(value, float) and not math.isfinite(value):
        value = None
    if value is None:
        return
    cell = ws.cell(row=row, column=col, value=value)
    if number_format and number_format != TEXT:
        cell.number_format = number_format


def title_cell(ws: Worksheet, text: str, *, size: str = "large") -> None:
    """Write a sheet's title in A1 (bold; large unless ``size`` is "normal").

    Parameters
    ----------
    ws : openpyxl.worksheet.worksheet.Worksheet
        Sheet.
    text : str
        Title text.
    size : {"large", "normal"}
        Font size.
    """
    write_text_cell(ws, 1, 1, text).font = _TITLE if size == "large" else BOLD


def header_row(ws: Worksheet, row: int, columns: SheetColumns | Sequence[str],
               widths: Sequence[float] | None = None) -> None:
    """Write a header row (bold, shaded, wrapped) and set the column widths.

    Parameters
    ----------
    ws : openpyxl.worksheet.worksheet.Worksheet
        Sheet.
    row : int
        Header row, from 1.
    columns : SheetColumns or sequence of str
        The declared columns, or plain header texts with ``widths``.
    widths : sequence of float, optional
        Column widths [characters] when ``columns`` are texts.
    """
    if isinstance(columns, SheetColumns):
        texts, widths = columns.headers, columns.widths
    else:
        texts = list(columns)
        widths = list(widths or [12.0] * len(texts))
    write_text_row(ws, row, texts)
    lines = 1
    for col, (text, width) in enumerate(zip(texts, widths, strict=True), start=1):
        cell = ws.cell(row=row, column=col)
        cell.font = BOLD
        cell.fill = _HEADER_FILL
        cell.alignment = _HEADER_ALIGN
        ws.column_dimensions[get_column_letter(col)].width = width
        lines = max(lines, text_lines(text, width, bold=True))
    ws.row_dimensions[row].height = LINE_HEIGHT_PT * lines + 2


_NAME_PART = re.compile(r"[^A-Za-z0-9]+")


def table_name(*parts: object) -> str:
    """An Excel table name from words: ``("Daily", 2, "with")`` gives ``Daily2With``.

    Parameters
    ----------
    *parts : object
        Words or numbers; anything but letters and digits is dropped.

    Returns
    -------
    str
        Capitalised parts run together, starting with a letter (a valid,
        space-free table name that does not look like a cell reference
        as long as the first part is a word of four letters or more).
    """
    words = [w for p in parts for w in _NAME_PART.split(str(p)) if w]
    return "".join(w[:1].upper() + w[1:] for w in words)


def text_lines(text: str, width: float, *, bold: bool = False) -> int:
    """Lines that a text takes when wrapped in a column.

    Parameters
    ----------
    text : str
        Cell text; line breaks are kept.
    width : float
        Column width [characters of the digit 0].
    bold : bool
        Whether the text is bold (wider letters).

    Returns
    -------
    int
        Number of lines, at least 1.
    """
    chars = max(1, int(width * (BOLD_CHARS_PER_WIDTH if bold else CHARS_PER_WIDTH)))
    return sum(max(1, len(textwrap.wrap(part, width=chars))) for part in text.split("\n"))


def _fit_rows(ws: Worksheet, first: int, last: int, last_col: int) -> None:
    """Wrap long text below the header and make its rows tall enough (no program has to)."""
    widths = [ws.column_dimensions[get_column_letter(c)].width or 8.43
              for c in range(1, last_col + 1)]
    for number, row in enumerate(ws.iter_rows(min_row=first, max_row=last, max_col=last_col),
                                 start=first):
        texts = [(cell, widths[i]) for i, cell in enumerate(row) if isinstance(cell.value, str)]
        lines = max((text_lines(str(cell.value), w) for cell, w in texts), default=1)
        if lines <= 1:
            continue
        for cell in row:
            if cell.value is not None:
                cell.alignment = _WRAPPED if isinstance(cell.value, str) else _TOP
        ws.row_dimensions[number].height = LINE_HEIGHT_PT * lines


def _header_text(text: str, limit: int = HEADER_PIECE_CHARS) -> str:
    """Planner text made safe for a page header: ``&`` doubled, shortened."""
    flat = " ".join(str(text).split())
    if len(flat) > limit:
        flat = flat[: limit - 3].rstrip() + "..."
    return flat.replace("&", "&&")


def footer_text(page: PageInfo) -> str:
    """Left part of every page footer: the software and the day of the run.

    Parameters
    ----------
    page : PageInfo
        The run's page information.

    Returns
    -------
    str
        For example ``prepkit 0.1.0, run of 30 Nov 2026``.
    """
    day = page.run_date
    return f"prepkit {_header_text(page.version, 20)}, run of {day.day} {day:%b %Y}"


def finish_sheet(
    ws: Worksheet,
    page: PageInfo,
    *,
    subject: str,
    title_rows: tuple[int, int],
    last_row: int,
    last_col: int,
    freeze: str,
    table: str | None = None,
) -> None:
    """Print setup, frozen panes and the Excel table of a finished sheet.

    Parameters
    ----------
    ws : openpyxl.worksheet.worksheet.Worksheet
        The sheet, with its cells written.
    page : PageInfo
        Jurisdiction, title, version, run day and paper size.
    subject : str
        What the sheet is about, for the page header (may hold planner
        text such as a scenario name).
    title_rows : tuple of int
        First and last row repeated at the top of every printed page; the
        last one is the header row of the table.
    last_row, last_col : int
        Bottom-right cell of the print area (and of the table).
    freeze : str
        Top-left cell of the scrolling pane (below the header).
    table : str, optional
        Name of the Excel table spanning the header row to ``last_row``;
        no table when None.
    """
    first, header = title_rows
    last_letter = get_column_letter(max(1, last_col))
    bottom = max(last_row, header)
    ws.print_area = f"A1:{last_letter}{bottom}"
    ws.print_title_rows = f"{first}:{header}"
    setup = ws.page_setup
    setup.orientation = "landscape"
    setup.paperSize = _PAPER.get(page.paper, _PAPER["A4"])
    setup.fitToWidth = 1
    setup.fitToHeight = 0
    props = ws.sheet_properties.pageSetUpPr
    if props is not None:
        props.fitToPage = True
    margins = ws.page_margins
    margins.left = margins.right = 0.4  # [inches]
    margins.top = margins.bottom = 0.75
    margins.header = margins.footer = 0.3
    head, foot = ws.oddHeader, ws.oddFooter
    if head is not None and foot is not None:  # openpyxl always makes both
        head.left.text = _header_text(page.jurisdiction)
        head.center.text = "&B" + _header_text(subject, 90) + "&B"
        head.right.text = _header_text(page.title, 60)
        foot.left.text = footer_text(page)
        foot.center.text = "A planning aid, not a forecast."
        foot.right.text = "Page &P of &N"
    ws.freeze_panes = freeze
    _fit_rows(ws, header + 1, bottom, max(1, last_col))
    if table is not None:
        ws.print_options.gridLines = True
        rows = max(bottom, header + 1)  # a table holds at least one row below its header
        item = Table(displayName=table, ref=f"A{header}:{last_letter}{rows}")
        item.tableStyleInfo = TableStyleInfo(name=_TABLE_STYLE, showRowStripes=True,
                                             showColumnStripes=False, showFirstColumn=False,
                                             showLastColumn=False)
        ws.add_table(item)


def write_records(ws: Worksheet, header: int, columns: SheetColumns,
                  rows: Sequence[Mapping[str, Any]]) -> int:
    """Write one record per row below the header row, a cell per declared column.

    Text columns go through :func:`prepkit.report.safety.write_text_row` (None
    becomes empty); ISO date strings in date columns become dates; other
    values are written with their column's number format (:func:`put`).

    Parameters
    ----------
    ws : openpyxl.worksheet.worksheet.Worksheet
        Sheet.
    header : int
        Header row, from 1; the first record goes below it.
    columns : SheetColumns
        The declared columns; each record holds a value under each column's name.
    rows : sequence of mapping
        The records.

    Returns
    -------
    int
        The last row written (``header`` when there are none).
    """
    row = header
    for record in rows:
        row += 1
        for col, c in enumerate(columns.columns, start=1):
            value = record[c.name]
            if c.number_format == TEXT:
                write_text_row(ws, row, ["" if value is None else str(value)], start_col=col)
                continue
            if c.number_format == DATE and isinstance(value, str):
                value = dt.date.fromisoformat(value)
            put(ws, row, col, value, c.number_format)
    return row
