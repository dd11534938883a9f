"""The look of the planning workbook's cells: rows, widths, fills, fonts, formats, validations.

Input cells carry a light fill *and* a dotted border (so they stand out in
grayscale print too) and are the only unlocked cells.
"""

from __future__ import annotations

import datetime as dt
import math
from typing import Literal

from openpyxl.cell.cell import Cell, MergedCell
from openpyxl.styles import Alignment, Border, Font, PatternFill, Protection, Side
from openpyxl.utils.datetime import to_excel
from openpyxl.worksheet.datavalidation import DataValidation
from openpyxl.worksheet.protection import SheetProtection
from openpyxl.worksheet.worksheet import Worksheet

from prepkit.base.sheet_text import mark_text_cell, safe_cell_text
from prepkit.plan import Level, Range3
from prepkit.workbook import schema
from prepkit.workbook.field_types import Field
from prepkit.workbook.instructions import NOTE_HELP
from prepkit.workbook.parse import EARLIEST_DATE, LATEST_DATE
from prepkit.workbook.schema import MAX_TEXT_LENGTH
from prepkit.workbook.sheets import NOTE_HEADER

TITLE_ROW = 1
PURPOSE_ROW = 2
#: Row of the first header on every data sheet (rows above hold the title).
HEADER_ROW = 4
NOTE_WIDTH = 34.0
ITEM_WIDTH = 40.0
VALUE_WIDTH = 14.0
UNIT_WIDTH = 12.0
GUIDANCE_WIDTH = 70.0
LINE_HEIGHT = 15.0  # [points] one line of 11-point text
MAX_ROW_LINES = 6  # taller notes stay readable in the cell itself

# ---- Look (our own calm palette; each fill differs from white in grayscale) -------------------

INPUT_FILL = PatternFill("solid", fgColor="E4EEF3")  # pale blue-grey, ~92% luminance
HEADER_FILL = PatternFill("solid", fgColor="C9D3DB")  # grey-blue, ~81% luminance
DOTTED = Side(style="dotted", color="5B6B78")
INPUT_BORDER = Border(left=DOTTED, right=DOTTED, top=DOTTED, bottom=DOTTED)
HEADER_BORDER = Border(bottom=Side(style="thin", color="44505A"))
TITLE_FONT = Font(bold=True, size=14)
HEADER_FONT = Font(bold=True)
HEADING_FONT = Font(bold=True, size=12)
CAUTION_FONT = Font(bold=True, italic=True)
MUTED_FONT = Font(italic=True, color="44505A")
WRAP = Alignment(wrap_text=True, vertical="top")
TOP = Alignment(vertical="top")
UNLOCKED = Protection(locked=False)

SHARE_FORMAT = "0.0%"
DATE_FORMAT = "yyyy-mm-dd"
TEXT_FORMAT = "@"
COUNT_UNITS = frozenset({"beds", "devices", "draws", "persons"})

# Excel's limits on data-validation texts [characters].
PROMPT_TITLE_MAX = 32
PROMPT_MAX = 255
ERROR_MAX = 225

AnyCell = Cell | MergedCell
_DVType = Literal["whole", "decimal", "list", "date", "textLength"]
_DVOperator = Literal["between", "lessThanOrEqual", "greaterThanOrEqual"]


def share_format(value: object) -> str:
    """Percent format that shows a share without hiding its digits.

    ``"0%"`` for whole percentages, ``"0.0%"`` otherwise; ``"0.0##%"`` only
    for values that would round away at one decimal (e.g. 0.05%).
    """
    if not isinstance(value, int | float) or isinstance(value, bool) or not math.isfinite(value):
        return SHARE_FORMAT
    percent = 100 * value
    if abs(percent - round(percent)) < 1e-9:
        return "0%"
    if abs(10 * percent - round(10 * percent)) < 1e-9:
        return SHARE_FORMAT
    return "0.0##%"


# ---- Cell helpers ----------------------------------------------------------------------------

def header_cell(cell: AnyCell, text: str) -> None:
    """Write a header cell: bold, filled, ruled below."""
    cell.value = text
    cell.font = HEADER_FONT
    cell.fill = HEADER_FILL
    cell.border = HEADER_BORDER
    cell.alignment = WRAP


def input_cell(cell: AnyCell, number_format: str, value: object = None) -> None:
    """Make a cell an unlocked input cell (fill, dotted border, format), holding ``value``."""
    cell.fill = INPUT_FILL
    cell.border = INPUT_BORDER
    cell.protection = UNLOCKED
    cell.number_format = number_format
    cell.alignment = TOP
    if isinstance(value, str):
        mark_text_cell(cell, safe_cell_text(value))  # type: ignore[arg-type]
    elif value is not None:
        cell.value = value  # type: ignore[assignment]


def _number_format(f: Field) -> str:
    if f.type == "share":
        return SHARE_FORMAT
    if f.type == "date":
        return DATE_FORMAT
    if f.type in ("text", "list", "choice"):
        return TEXT_FORMAT
    if f.type == "integer":
        return "#,##0" if f.unit in COUNT_UNITS else "0"
    if f.unit == "persons":
        return "#,##0"
    return "General"


def _cell_value(f: Field, value: object) -> object:
    """Python value to store for a field (lists joined, None kept)."""
    if isinstance(value, tuple | list):
        return "; ".join(str(v) for v in value) if value else None
    if isinstance(value, str) and value == "":
        return None
    return value


def fill_input(cell: AnyCell, f: Field, value: object, as_share: bool = False) -> None:
    """Make a cell the input cell of a field, holding a value in the field's format."""
    stored = _cell_value(f, value)
    fmt = _number_format(f)
    if stored is not None and (f.type == "share" or as_share):
        fmt = share_format(stored)
    input_cell(cell, fmt, stored)


def level_value(value: object, level: Level) -> object:
    """Value of one level; Low and High stay blank for a point value."""
    if isinstance(value, Range3):
        if level != "central" and value.is_point:
            return None
        return value.at(level)
    return value if level == "central" else None


def guidance_text(f: Field) -> str:
    """Guidance shown beside a field: its help, with what a blank cell means."""
    text = f.help
    if f.required and f.default is None:
        text += " Required."
    default = f.default
    if default is not None and default != "" and default != ():
        shown = default if isinstance(default, str) else schema.format_value(f, default)
        text += f" If blank: {shown}."
    return text


def _clip(text: str, limit: int) -> str:
    return text if len(text) <= limit else text[: limit - 3] + "..."


class Validations:
    """One data validation per field and sheet, covering all its input cells."""

    def __init__(self, ws: Worksheet) -> None:
        self.ws = ws
        self.by_field: dict[str, DataValidation] = {}
        self.notes: DataValidation | None = None

    def add_note(self, ref: str) -> None:
        """Free-text length limit and guidance on a Source or note cell."""
        if self.notes is None:
            self.notes = DataValidation(
                type="textLength", operator="lessThanOrEqual", formula1=str(MAX_TEXT_LENGTH),
                allow_blank=True, showInputMessage=True, showErrorMessage=True,
                errorStyle="warning", promptTitle=NOTE_HEADER, prompt=NOTE_HELP,
                errorTitle=NOTE_HEADER,
                error=f"Expected some text of at most {MAX_TEXT_LENGTH} characters.",
            )
            self.ws.add_data_validation(self.notes)
        self.notes.add(ref)

    def add(self, f: Field, ref: str) -> None:
        """Validate the cell ``ref`` as an input of the field ``f``."""
        dv = self.by_field.get(f.name)
        if dv is None:
            dv = _validation(f)
            self.ws.add_data_validation(dv)
            self.by_field[f.name] = dv
        dv.add(ref)


def _validation(f: Field) -> DataValidation:
    kind, operator, formula1, formula2 = _validation_rule(f)
    dv = DataValidation(
        type=kind,
        operator=operator,
        formula1=formula1,
        formula2=formula2,
        allow_blank=True,
        showInputMessage=True,
        showErrorMessage=True,
        errorStyle="stop" if f.type == "choice" else "warning",
        promptTitle=_clip(f.label, PROMPT_TITLE_MAX),
        prompt=_clip(guidance_text(f), PROMPT_MAX),
        errorTitle=_clip(f.label, PROMPT_TITLE_MAX),
        error=_clip(f"Expected {f.expected()}.", ERROR_MAX),
    )
    return dv


def _validation_rule(f: Field) -> tuple[_DVType, _DVOperator | None, str, str | None]:
    """(type, operator, formula1, formula2) of a field's data validation."""
    if f.type == "choice":
        return "list", None, '"' + ",".join(f.choices or {}) + '"', None
    if f.type == "date":
        return ("date", "between", _excel_serial(EARLIEST_DATE), _excel_serial(LATEST_DATE))
    if f.type in ("text", "list"):
        return "textLength", "lessThanOrEqual", str(MAX_TEXT_LENGTH), None
    kind: _DVType = "whole" if f.type == "integer" else "decimal"
    low = f.minimum
    high = f.maximum
    if f.type == "share":
        low = 0.0 if low is None else low
        high = 1.0 if high is None else high
    if low is not None and high is not None:
        return kind, "between", _g(low), _g(high)
    if low is not None:
        return kind, "greaterThanOrEqual", _g(low), None
    if high is not None:
        return kind, "lessThanOrEqual", _g(high), None
    return kind, "between", "-1E+300", "1E+300"


def _excel_serial(day: dt.date) -> str:
    return _g(float(to_excel(day)))


def _g(x: float) -> str:
    return f"{x:.15g}"


# ---- Sheets ----------------------------------------------------------------------------------

def protect(ws: Worksheet) -> None:
    """Protect a sheet without a password (inputs stay editable)."""
    # No password: planners may unprotect. Rows may be inserted, cells
    # formatted, tables sorted and filtered while protected.
    ws.protection = SheetProtection(
        sheet=True,
        formatCells=False,
        formatColumns=False,
        formatRows=False,
        insertRows=False,
        sort=False,
        autoFilter=False,
    )


def title_rows(ws: Worksheet, title: str, purpose: str) -> None:
    """Write the title and purpose rows at the top of a sheet."""
    ws.cell(TITLE_ROW, 1, title).font = TITLE_FONT
    cell = ws.cell(PURPOSE_ROW, 1, purpose)
    cell.font = MUTED_FONT


def page_setup(ws: Worksheet, orientation: Literal["portrait", "landscape"]) -> None:
    """Print setup: one page wide, as many pages tall as needed."""
    ws.page_setup.orientation = orientation
    ws.page_setup.fitToWidth = 1
    ws.page_setup.fitToHeight = 0
    if ws.sheet_properties.pageSetUpPr is not None:
        ws.sheet_properties.pageSetUpPr.fitToPage = True
