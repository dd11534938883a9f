"""Write the planning workbook: the blank template, or one filled from a plan.

Every sheet name, label, unit, header and guidance text comes from
:mod:`prepkit.workbook.schema`; this module only decides where things go and
how they look. The layout follows the rules in the schema's module docstring,
so :mod:`prepkit.workbook.reader` can read back what is written here, and
what a planner makes of it after inserting rows or moving columns.

Look and feel: input cells carry a light fill *and* a dotted border (so they
stand out in grayscale print too) and are the only unlocked cells. Sheets are
protected without a password, so planners can unprotect them; inserting rows,
formatting, sorting and filtering stay allowed while protected.
"""

from __future__ import annotations

import datetime as dt
import io
import math
import os
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Literal

from openpyxl import Workbook
from openpyxl.cell.cell import Cell, MergedCell
from openpyxl.styles import Alignment, Border, Font, PatternFill, Protection, Side
from openpyxl.utils import get_column_letter
from openpyxl.utils.datetime import to_excel
from openpyxl.worksheet.datavalidation import DataValidation
from openpyxl.worksheet.hyperlink import Hyperlink
from openpyxl.worksheet.protection import SheetProtection
from openpyxl.worksheet.table import Table as ExcelTable
from openpyxl.worksheet.table import TableStyleInfo
from openpyxl.worksheet.worksheet import Worksheet

from prepkit import __version__
from prepkit.base.sheet_text import mark_text_cell, safe_cell_text
from prepkit.errors import OutputError
from prepkit.pipeline.outputs import normalise_xlsx, source_date
from prepkit.plan import Intervention, Level, Plan, Range3
from prepkit.workbook import schema
from prepkit.workbook.cells import EARLIEST_DATE, LATEST_DATE, normalise_key
from prepkit.workbook.field_types import Field, Table
from prepkit.workbook.instructions import (
    INSTRUCTIONS_CAUTION,
    INSTRUCTIONS_HOW,
    INSTRUCTIONS_HOW_HEADING,
    INSTRUCTIONS_PURPOSE,
    INSTRUCTIONS_SHEETS_HEADING,
    INSTRUCTIONS_TITLE,
    MATRIX_NOTE,
    MATRIX_TITLE,
    NOTE_HELP,
)
from prepkit.workbook.schema import (
    FIELDS_BY_NAME,
    MATRIX_FIELDS,
    MAX_BANDS,
    MAX_TEXT_LENGTH,
    TABLES,
)
from prepkit.workbook.sheets import (
    BAND_HEADER,
    CENTRAL_HEADER,
    GUIDANCE_HEADER,
    HIGH_HEADER,
    INSTRUCTIONS_SHEET,
    ITEM_HEADER,
    LOW_HEADER,
    MATRIX_SHEETS,
    NOTE_HEADER,
    SHEET_ORDER,
    SHEET_PURPOSE,
    START_CHOICES,
    UNIT_HEADER,
    VALUE_HEADER,
)

__all__ = ["build_workbook", "write_workbook", "share_format", "HEADER_ROW"]

# ---- Layout ----------------------------------------------------------------------------------

TITLE_ROW = 1
PURPOSE_ROW = 2
#: Row of the first header on every data sheet (rows above hold the title).
HEADER_ROW = 4
_NOTE_WIDTH = 34.0
_ITEM_WIDTH = 40.0
_VALUE_WIDTH = 14.0
_UNIT_WIDTH = 12.0
_GUIDANCE_WIDTH = 70.0
_LINE_HEIGHT = 15.0  # [points] one line of 11-point text
_MAX_ROW_LINES = 6  # taller notes stay readable in the cell itself

# ---- Look (our own calm palette; each fill differs from white in grayscale) -------------------

_INPUT_FILL = PatternFill("solid", fgColor="E4EEF3")  # pale blue-grey, ~92% luminance
_HEADER_FILL = PatternFill("solid", fgColor="C9D3DB")  # grey-blue, ~81% luminance
_DOTTED = Side(style="dotted", color="5B6B78")
_INPUT_BORDER = Border(left=_DOTTED, right=_DOTTED, top=_DOTTED, bottom=_DOTTED)
_HEADER_BORDER = Border(bottom=Side(style="thin", color="44505A"))
_TITLE_FONT = Font(bold=True, size=14)
_HEADER_FONT = Font(bold=True)
_HEADING_FONT = Font(bold=True, size=12)
_CAUTION_FONT = Font(bold=True, italic=True)
_MUTED_FONT = Font(italic=True, color="44505A")
_WRAP = Alignment(wrap_text=True, vertical="top")
_TOP = Alignment(vertical="top")
_UNLOCKED = Protection(locked=False)

_SHARE_FORMAT = "0.0%"
_DATE_FORMAT = "yyyy-mm-dd"
_TEXT_FORMAT = "@"
_COUNT_UNITS = frozenset({"beds", "devices", "draws", "persons"})

# Excel's limits on data-validation texts [characters].
_PROMPT_TITLE_MAX = 32
_PROMPT_MAX = 255
_ERROR_MAX = 225


# ---- Public ----------------------------------------------------------------------------------

def write_workbook(
    path: str | os.PathLike[str],
    plan: Plan | None = None,
    notes: Mapping[str, str] | None = None,
) -> None:
    """Write the planning workbook.

    Parameters
    ----------
    path : str or path-like
        Where to write the ``.xlsx`` file; an existing file is replaced.
    plan : Plan or None
        Values to fill in; None writes the blank template.
    notes : mapping of str to str or None
        Text for the "Source or note" column, keyed by canonical field name
        (items, or every row of a table) or ``"<field name>@<row key>"``
        (one row of a table: a band label, measure, scenario or ISO date).

    Raises
    ------
    ValueError
        When a note names an unknown field or row.
    prepkit.errors.OutputError
        When the file cannot be written.
    """
    workbook = build_workbook(plan, notes)
    # Same plan and SOURCE_DATE_EPOCH give the same bytes: fixed document
    # dates and zip time stamps.
    stamp = source_date().replace(tzinfo=None, microsecond=0)
    workbook.properties.created = stamp
    workbook.properties.modified = stamp
    workbook.properties.creator = f"prepkit {__version__}"
    buffer = io.BytesIO()
    workbook.save(buffer)
    data = normalise_xlsx(buffer.getvalue(), modified=source_date())
    try:
        Path(os.fspath(path)).write_bytes(data)
    except OSError as exc:
        raise OutputError(f"could not write the workbook {os.fspath(path)!r}: {exc}") from exc


def build_workbook(plan: Plan | None = None, notes: Mapping[str, str] | None = None) -> Workbook:
    """The planning workbook in memory (see :func:`write_workbook`)."""
    content = _Content.from_plan(plan)
    note_cells = _Notes(notes or {}, content)
    workbook = Workbook()
    first = workbook.active
    assert first is not None
    workbook.remove(first)
    _write_instructions(workbook.create_sheet(INSTRUCTIONS_SHEET))
    for sheet in SHEET_ORDER:
        ws = workbook.create_sheet(sheet)
        if sheet in MATRIX_SHEETS.values():
            setting = next(s for s, name in MATRIX_SHEETS.items() if name == sheet)
            _write_matrix(ws, setting, content)
        else:
            _write_data_sheet(ws, sheet, content, note_cells)
        _protect(ws)
    return workbook


def share_format(value: object) -> str:
    """Percent format that shows a share without hiding its digits.

    ``"0%"`` for whole percentages, ``"0.0%"`` otherwise; ``"0.0##%"`` only
    for values that would round away at one decimal (e.g. 0.05%).
    """
    if not isinstance(value, int | float) or isinstance(value, bool) or not math.isfinite(value):
        return _SHARE_FORMAT
    percent = 100 * value
    if abs(percent - round(percent)) < 1e-9:
        return "0%"
    if abs(10 * percent - round(10 * percent)) < 1e-9:
        return _SHARE_FORMAT
    return "0.0##%"


# ---- Plan -> cell values ---------------------------------------------------------------------

Row = dict[str, object]
AnyCell = Cell | MergedCell
_DVType = Literal["whole", "decimal", "list", "date", "textLength"]
_DVOperator = Literal["between", "lessThanOrEqual", "greaterThanOrEqual"]


@dataclass(frozen=True)
class _Content:
    """What goes into the cells: item values and table rows, by canonical name."""

    items: dict[str, object]
    rows: dict[str, list[Row]]
    band_labels: tuple[str, ...]
    matrices: dict[str, tuple[tuple[float, ...], ...]] | None

    @classmethod
    def from_plan(cls, plan: Plan | None) -> _Content:
        if plan is None:
            return cls(items={}, rows={name: [] for name in TABLES}, band_labels=(),
                       matrices=None)
        items: dict[str, object] = {}
        groups = {
            "details": plan.details, "mixing": plan.contacts, "disease": plan.disease,
            "severity": plan.severity, "capacity": plan.capacity, "workforce": plan.workforce,
        }
        for f in schema.FIELDS:
            if f.table is None:
                value = getattr(groups[f.name.split(".")[0]], f.attribute)
                items[f.name] = schema.choice_shown(f, value) if f.choices else value
        labels = tuple(b.label for b in plan.bands)
        rows: dict[str, list[Row]] = {
            "bands": [
                {"band.label": b.label, "band.lower_age": b.lower_age,
                 "band.upper_age": b.upper_age, "band.people": b.people,
                 "band.high_risk_share": b.high_risk_share}
                for b in plan.bands
            ],
            "band_contacts": _contact_rows(plan, labels),
            "band_disease": [
                {"band_disease.band": label,
                 "band_disease.symptomatic_share": plan.disease.symptomatic_share[i],
                 "band_disease.relative_susceptibility":
                     plan.disease.relative_susceptibility[i],
                 "band_disease.prior_immunity": plan.disease.prior_immunity[i]}
                for i, label in enumerate(labels)
            ],
            "band_severity": [
                {"band_severity.band": label, **{
                    f.name: getattr(plan.severity, f.attribute)[i]
                    for f in schema.table_fields("band_severity") if f.attribute != "band"
                }}
                for i, label in enumerate(labels)
            ],
            "measures": [_measure_row(m, labels) for m in plan.interventions],
            "scenarios": [
                {"scenario.name": s.name,
                 "scenario.transmissibility_level": schema.choice_shown(
                     FIELDS_BY_NAME["scenario.transmissibility_level"], s.transmissibility_level),
                 "scenario.severity_level": schema.choice_shown(
                     FIELDS_BY_NAME["scenario.severity_level"], s.severity_level),
                 "scenario.interventions": s.interventions,
                 "scenario.description": s.description}
                for s in plan.scenarios
            ],
            "observed": [
                {"observed.date": o.date, "observed.admissions": o.admissions,
                 "observed.ward_census": o.ward_census, "observed.icu_census": o.icu_census}
                for o in plan.observed
            ],
        }
        matrices = None
        if plan.contacts.matrices is not None:
            matrices = {str(k): v for k, v in plan.contacts.matrices.items()}
        return cls(items=items, rows=rows, band_labels=labels, matrices=matrices)


def _contact_rows(plan: Plan, labels: Sequence[str]) -> list[Row]:
    contacts = plan.contacts
    rows: list[Row] = []
    for i, label in enumerate(labels):
        row: Row = {"band_contacts.band": label}
        if contacts.mean_daily is not None:
            row["band_contacts.mean_daily"] = contacts.mean_daily[i]
        if contacts.setting_shares is not None:
            for setting, share in contacts.setting_shares[i].items():
                row[f"band_contacts.{setting}_share"] = share
        rows.append(row)
    return rows


def _measure_row(m: Intervention, labels: Sequence[str]) -> Row:
    f = FIELDS_BY_NAME
    row: Row = {
        "measure.name": m.name,
        "measure.kind": schema.choice_shown(f["measure.kind"], m.kind),
        "measure.start_rule": schema.choice_shown(f["measure.start_rule"], m.start.kind),
        "measure.end_rule": schema.choice_shown(f["measure.end_rule"], m.end.kind),
        "measure.compliance": m.compliance,
    }
    if m.start.kind == "date":
        row["measure.start_date"] = m.start.date
    else:
        row["measure.start_level"] = m.start.level
    row["measure.end_date"] = m.end.date
    row["measure.duration_days"] = m.end.duration_days
    row["measure.release_level"] = m.end.level
    for setting, kept in m.contacts_kept.items():
        row[f"measure.{setting}_kept"] = kept
    if m.vaccination is not None:
        v = m.vaccination
        row.update({
            "measure.doses_per_day": v.doses_per_day,
            "measure.priority": tuple(labels[i] for i in v.priority),
            "measure.uptake_ceiling": v.uptake_ceiling,
            "measure.efficacy_infection": v.efficacy_infection,
            "measure.efficacy_severe": v.efficacy_severe,
            "measure.days_to_protection": v.days_to_protection,
        })
    if m.isolation is not None:
        row["measure.isolated_share"] = m.isolation.isolated_share
        row["measure.days_from_onset"] = m.isolation.days_from_onset
    return row


def _row_key(table: Table, row: Row) -> str:
    """Key of a table row as text (band label, name or ISO date), as note keys give it."""
    return schema.format_value(FIELDS_BY_NAME[table.key], row.get(table.key))


# ---- Notes -----------------------------------------------------------------------------------

class _Notes:
    """Resolves note keys to the item rows and table rows they belong to."""

    def __init__(self, notes: Mapping[str, str], content: _Content) -> None:
        self.items: dict[str, str] = {}
        self.rows: dict[tuple[str, int], list[tuple[Field, str]]] = {}
        unknown: list[str] = []
        for key, text in notes.items():
            name, _, row_key = key.partition("@")
            f = FIELDS_BY_NAME.get(name)
            if f is None:
                unknown.append(key)
            elif f.table is None:
                if row_key:
                    unknown.append(key)
                else:
                    self.items[name] = str(text)
            else:
                matches = [
                    i for i, row in enumerate(content.rows[f.table])
                    if not row_key
                    or normalise_key(_row_key(TABLES[f.table], row)) == normalise_key(row_key)
                ]
                if row_key and not matches:
                    unknown.append(key)
                for i in matches:
                    self.rows.setdefault((f.table, i), []).append((f, str(text)))
        if unknown:
            raise ValueError("notes name no field or row of the workbook: " + ", ".join(unknown))

    def row_text(self, table: str, index: int) -> str:
        """Note of one table row: texts in order, each after the labels it concerns."""
        by_text: dict[str, list[str]] = {}
        for f, text in self.rows.get((table, index), []):
            labels = by_text.setdefault(text, [])
            if f.name != TABLES[table].key:
                labels.append(f.label)
        parts = [f"{', '.join(labels)}: {text}" if labels else text
                 for text, labels in by_text.items()]
        return " ".join(parts)


# ---- Cell helpers ----------------------------------------------------------------------------

def _header(cell: AnyCell, text: str) -> None:
    cell.value = text
    cell.font = _HEADER_FONT
    cell.fill = _HEADER_FILL
    cell.border = _HEADER_BORDER
    cell.alignment = _WRAP


def _input(cell: AnyCell, number_format: str, value: object = None) -> None:
    cell.fill = _INPUT_FILL
    cell.border = _INPUT_BORDER
    cell.protection = _UNLOCKED
    cell.number_format = number_format
    cell.alignment = _TOP
    if isinstance(value, str):
        mark_text_cell(cell, safe_cell_text(value))  # type: ignore[arg-type]
    elif value is not None:
        cell.value = value  # type: ignore[assignment]


def _number_format(f: Field) -> str:
    if f.type == "share":
        return _SHARE_FORMAT
    if f.type == "date":
        return _DATE_FORMAT
    if f.type in ("text", "list", "choice"):
        return _TEXT_FORMAT
    if f.type == "integer":
        return "#,##0" if f.unit in _COUNT_UNITS else "0"
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


def _fill_input(cell: AnyCell, f: Field, value: object, as_share: bool = False) -> None:
    stored = _cell_value(f, value)
    fmt = _number_format(f)
    if stored is not None and (f.type == "share" or as_share):
        fmt = share_format(stored)
    _input(cell, fmt, stored)


def _level_value(value: object, level: Level) -> object:
    """Value of one level; Low and High stay blank for a point value."""
    if isinstance(value, Range3):
        if level != "central" and value.is_point:
            return None
        return value.at(level)
    return value if level == "central" else None


def _guidance(f: Field) -> str:
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


class _Validations:
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
        promptTitle=_clip(f.label, _PROMPT_TITLE_MAX),
        prompt=_clip(_guidance(f), _PROMPT_MAX),
        errorTitle=_clip(f.label, _PROMPT_TITLE_MAX),
        error=_clip(f"Expected {f.expected()}.", _ERROR_MAX),
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

def _protect(ws: Worksheet) -> None:
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


def _title(ws: Worksheet, title: str, purpose: str) -> None:
    ws.cell(TITLE_ROW, 1, title).font = _TITLE_FONT
    cell = ws.cell(PURPOSE_ROW, 1, purpose)
    cell.font = _MUTED_FONT


def _page(ws: Worksheet, orientation: Literal["portrait", "landscape"]) -> None:
    """Print setup: one page wide, as many pages tall as needed."""
    ws.page_setup.orientation = orientation
    ws.page_setup.fitToWidth = 1
    ws.page_setup.fitToHeight = 0
    if ws.sheet_properties.pageSetUpPr is not None:
        ws.sheet_properties.pageSetUpPr.fitToPage = True


def _write_instructions(ws: Worksheet) -> None:
    ws.column_dimensions["A"].width = 24
    ws.column_dimensions["B"].width = 100
    ws.cell(1, 1, INSTRUCTIONS_TITLE).font = _TITLE_FONT
    row = 3
    row = _paragraph(ws, row, INSTRUCTIONS_PURPOSE) + 1
    ws.cell(row, 1, INSTRUCTIONS_HOW_HEADING).font = _HEADING_FONT
    row += 1
    for text in INSTRUCTIONS_HOW:
        row = _paragraph(ws, row, "\u2022 " + text)
    row += 1
    ws.cell(row, 1, INSTRUCTIONS_SHEETS_HEADING).font = _HEADING_FONT
    row += 1
    for sheet in SHEET_ORDER:
        name = ws.cell(row, 1, sheet)
        name.hyperlink = Hyperlink(ref=name.coordinate, location=f"'{sheet}'!A1")
        name.font = Font(underline="single", color="1F4E79")
        name.alignment = _TOP
        purpose = ws.cell(row, 2, SHEET_PURPOSE[sheet])
        purpose.alignment = _WRAP
        ws.row_dimensions[row].height = _LINE_HEIGHT * _lines(SHEET_PURPOSE[sheet], 100)
        row += 1
    row += 1
    _paragraph(ws, row, INSTRUCTIONS_CAUTION, font=_CAUTION_FONT)
    _page(ws, "portrait")
    _protect(ws)


def _paragraph(ws: Worksheet, row: int, text: str, font: Font | None = None) -> int:
    cell = ws.cell(row, 1, text)
    cell.alignment = _WRAP
    if font is not None:
        cell.font = font
    ws.merge_cells(start_row=row, start_column=1, end_row=row, end_column=2)
    ws.row_dimensions[row].height = _LINE_HEIGHT * _lines(text, 124)
    return row + 1


def _lines(text: str, width: float) -> int:
    """Lines a wrapped text takes in a column of ``width`` characters (a rough count)."""
    return min(_MAX_ROW_LINES, max(1, math.ceil(len(text) / max(1.0, 0.95 * width - 2))))


def _write_data_sheet(ws: Worksheet, sheet: str, content: _Content, notes: _Notes) -> None:
    _title(ws, sheet, SHEET_PURPOSE[sheet])
    validations = _Validations(ws)
    row = HEADER_ROW
    widths: dict[int, float] = {}
    freeze = f"A{HEADER_ROW + 1}"
    if schema.sheet_fields(sheet):
        row = _write_items(ws, sheet, row, content, notes, validations, widths)
        row += 1
    tables = [t for t in TABLES.values() if t.sheet == sheet]
    for table in tables:
        freeze = f"B{row + 1}"
        row = _write_table(ws, table, row, content, notes, validations, widths)
        row += 1
    for col, width in widths.items():
        ws.column_dimensions[get_column_letter(col)].width = width
    ws.freeze_panes = freeze
    _page(ws, "landscape")


def _write_items(
    ws: Worksheet,
    sheet: str,
    row: int,
    content: _Content,
    notes: _Notes,
    validations: _Validations,
    widths: dict[int, float],
) -> int:
    uncertain = schema.sheet_has_uncertain_items(sheet)
    levels: tuple[Level, ...] = ("low", "central", "high") if uncertain else ("central",)
    value_heads = [LOW_HEADER, CENTRAL_HEADER, HIGH_HEADER] if uncertain else [VALUE_HEADER]
    heads = [ITEM_HEADER, *value_heads, UNIT_HEADER, GUIDANCE_HEADER, NOTE_HEADER]
    for col, text in enumerate(heads, start=1):
        _header(ws.cell(row, col), text)
    n_values = len(levels)
    _widen(widths, 1, _ITEM_WIDTH)
    for col in range(2, 2 + n_values):
        _widen(widths, col, _VALUE_WIDTH)
    _widen(widths, 2 + n_values, _UNIT_WIDTH)
    _widen(widths, 3 + n_values, _GUIDANCE_WIDTH)
    _widen(widths, 4 + n_values, _NOTE_WIDTH)
    for f in schema.sheet_fields(sheet):
        row += 1
        label = ws.cell(row, 1, f.label)
        label.alignment = _WRAP
        value = content.items.get(f.name)
        for offset, level in enumerate(levels):
            cell = ws.cell(row, 2 + offset)
            if f.uncertain or level == "central":
                _fill_input(cell, f, _level_value(value, level))
                validations.add(f, cell.coordinate)
        unit = ws.cell(row, 2 + n_values, f.unit)
        unit.alignment = _TOP
        guidance = ws.cell(row, 3 + n_values, _guidance(f))
        guidance.alignment = _WRAP
        guidance.font = _MUTED_FONT
        note_text = notes.items.get(f.name, "")
        note = ws.cell(row, 4 + n_values)
        _input(note, _TEXT_FORMAT, note_text or None)
        note.alignment = _WRAP
        validations.add_note(note.coordinate)
        ws.row_dimensions[row].height = _LINE_HEIGHT * max(
            _lines(_guidance(f), _GUIDANCE_WIDTH), _lines(note_text, _NOTE_WIDTH),
            _lines(f.label, _ITEM_WIDTH))
    return row + 1


def _write_table(
    ws: Worksheet,
    table: Table,
    row: int,
    content: _Content,
    notes: _Notes,
    validations: _Validations,
    widths: dict[int, float],
) -> int:
    columns = list(schema.table_columns(table.name))
    header_row = row
    header_lines = 1
    for col, (f, level) in enumerate(columns, start=1):
        _header(ws.cell(header_row, col), schema.header_text(f, level))
        _widen(widths, col, f.width)
        header_lines = max(header_lines, _lines(schema.header_text(f, level), f.width))
    ws.row_dimensions[header_row].height = _LINE_HEIGHT * header_lines
    note_col = len(columns) + 1
    _header(ws.cell(header_row, note_col), NOTE_HEADER)
    _widen(widths, note_col, _NOTE_WIDTH)
    rows = _table_rows(table, content)
    n_rows = max(table.template_rows, len(rows))
    for i in range(n_rows):
        r = header_row + 1 + i
        values = rows[i] if i < len(rows) else {}
        for col, (f, level) in enumerate(columns, start=1):
            value = _level_value(values.get(f.name), level)
            as_share = f.name in _LEVEL_FIELDS and _is_occupancy(values)
            _fill_input(ws.cell(r, col), f, value, as_share=as_share)
        note_text = notes.row_text(table.name, i)
        note = ws.cell(r, note_col)
        _input(note, _TEXT_FORMAT, note_text or None)
        if note_text:
            note.alignment = _WRAP
            ws.row_dimensions[r].height = _LINE_HEIGHT * _lines(note_text, _NOTE_WIDTH)
    last = header_row + n_rows
    for col, (f, _level) in enumerate(columns, start=1):
        letter = get_column_letter(col)
        validations.add(f, f"{letter}{header_row + 1}:{letter}{last}")
    note_letter = get_column_letter(note_col)
    validations.add_note(f"{note_letter}{header_row + 1}:{note_letter}{last}")
    ref = f"A{header_row}:{get_column_letter(note_col)}{last}"
    excel_table = ExcelTable(displayName=table.excel_name, ref=ref)
    excel_table.tableStyleInfo = TableStyleInfo(
        name="TableStyleLight1", showRowStripes=False, showColumnStripes=False,
        showFirstColumn=False, showLastColumn=False,
    )
    ws.add_table(excel_table)
    return last + 1


_LEVEL_FIELDS = frozenset({"measure.start_level", "measure.release_level"})


def _is_occupancy(row: Row) -> bool:
    shown = row.get("measure.start_rule")
    if not isinstance(shown, str):
        return False
    canonical = START_CHOICES.get(shown, "")
    return canonical.endswith("_occupancy")


def _table_rows(table: Table, content: _Content) -> list[Row]:
    rows = content.rows.get(table.name, [])
    if table.per_band and not rows and content.band_labels:
        return [{table.key: label} for label in content.band_labels]
    return rows


def _widen(widths: dict[int, float], col: int, width: float) -> None:
    widths[col] = max(widths.get(col, 0.0), width)


def _write_matrix(ws: Worksheet, setting: str, content: _Content) -> None:
    sheet = MATRIX_SHEETS[setting]
    f = MATRIX_FIELDS[setting]
    ws.cell(TITLE_ROW, 1, MATRIX_TITLE).font = _HEADING_FONT
    ws.cell(PURPOSE_ROW, 1, SHEET_PURPOSE[sheet]).font = _MUTED_FONT
    ws.cell(PURPOSE_ROW + 1, 1, MATRIX_NOTE).font = _MUTED_FONT
    header_row = HEADER_ROW + 1
    labels = content.band_labels
    size = max(MAX_BANDS, len(labels))
    _header(ws.cell(header_row, 1), BAND_HEADER)
    ws.column_dimensions["A"].width = 12
    label_field = FIELDS_BY_NAME[TABLES["bands"].key]
    values = content.matrices.get(setting) if content.matrices else None
    for j in range(size):
        label = labels[j] if j < len(labels) else None
        head = ws.cell(header_row, 2 + j)
        _input(head, _TEXT_FORMAT, label)
        head.font = _HEADER_FONT
        side = ws.cell(header_row + 1 + j, 1)
        _input(side, _TEXT_FORMAT, label)
        side.font = _HEADER_FONT
        ws.column_dimensions[get_column_letter(2 + j)].width = f.width
    for i in range(size):
        for j in range(size):
            value = None
            if values is not None and i < len(values) and j < len(values[i]):
                value = values[i][j]
            _input(ws.cell(header_row + 1 + i, 2 + j), "General", value)
    last_col = get_column_letter(1 + size)
    last_row = header_row + size
    labels_dv = _Validations(ws)
    labels_dv.add(label_field, f"B{header_row}:{last_col}{header_row}")
    labels_dv.add(label_field, f"A{header_row + 1}:A{last_row}")
    labels_dv.add(f, f"B{header_row + 1}:{last_col}{last_row}")
    ws.freeze_panes = f"B{header_row + 1}"
    _page(ws, "landscape")
