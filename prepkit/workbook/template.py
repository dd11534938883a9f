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

import io
import math
import os
from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path

from openpyxl import Workbook
from openpyxl.styles import Font
from openpyxl.utils import get_column_letter
from openpyxl.worksheet.hyperlink import Hyperlink
from openpyxl.worksheet.table import Table as ExcelTable
from openpyxl.worksheet.table import TableStyleInfo
from openpyxl.worksheet.worksheet import Worksheet

from prepkit import __version__
from prepkit.base.files import normalise_xlsx, source_date
from prepkit.errors import OutputError
from prepkit.plan import Level, Plan
from prepkit.workbook import schema
from prepkit.workbook.field_types import Table
from prepkit.workbook.instructions import (
    INSTRUCTIONS_CAUTION,
    INSTRUCTIONS_HOW,
    INSTRUCTIONS_HOW_HEADING,
    INSTRUCTIONS_PURPOSE,
    INSTRUCTIONS_SHEETS_HEADING,
    INSTRUCTIONS_TITLE,
    MATRIX_NOTE,
    MATRIX_TITLE,
)
from prepkit.workbook.schema import (
    FIELDS_BY_NAME,
    MATRIX_FIELDS,
    MAX_BANDS,
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
from prepkit.workbook.template_content import Row, SheetContent, SheetNotes
from prepkit.workbook.template_style import (
    CAUTION_FONT,
    GUIDANCE_WIDTH,
    HEADER_FONT,
    HEADER_ROW,
    HEADING_FONT,
    ITEM_WIDTH,
    LINE_HEIGHT,
    MAX_ROW_LINES,
    MUTED_FONT,
    NOTE_WIDTH,
    PURPOSE_ROW,
    TEXT_FORMAT,
    TITLE_FONT,
    TITLE_ROW,
    TOP,
    UNIT_WIDTH,
    VALUE_WIDTH,
    WRAP,
    Validations,
    fill_input,
    guidance_text,
    header_cell,
    input_cell,
    level_value,
    page_setup,
    protect,
    title_rows,
)

__all__ = ["build_workbook", "write_workbook"]

# ---- Layout ----------------------------------------------------------------------------------

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
    content = SheetContent.from_plan(plan)
    note_cells = SheetNotes(notes or {}, content)
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
        protect(ws)
    return workbook


def _write_instructions(ws: Worksheet) -> None:
    ws.column_dimensions["A"].width = 24
    ws.column_dimensions["B"].width = 100
    ws.cell(1, 1, INSTRUCTIONS_TITLE).font = TITLE_FONT
    row = 3
    row = _paragraph(ws, row, INSTRUCTIONS_PURPOSE) + 1
    ws.cell(row, 1, INSTRUCTIONS_HOW_HEADING).font = HEADING_FONT
    row += 1
    for text in INSTRUCTIONS_HOW:
        row = _paragraph(ws, row, "\u2022 " + text)
    row += 1
    ws.cell(row, 1, INSTRUCTIONS_SHEETS_HEADING).font = HEADING_FONT
    row += 1
    for sheet in SHEET_ORDER:
        name = ws.cell(row, 1, sheet)
        name.hyperlink = Hyperlink(ref=name.coordinate, location=f"'{sheet}'!A1")
        name.font = Font(underline="single", color="1F4E79")
        name.alignment = TOP
        purpose = ws.cell(row, 2, SHEET_PURPOSE[sheet])
        purpose.alignment = WRAP
        ws.row_dimensions[row].height = LINE_HEIGHT * _lines(SHEET_PURPOSE[sheet], 100)
        row += 1
    row += 1
    _paragraph(ws, row, INSTRUCTIONS_CAUTION, font=CAUTION_FONT)
    page_setup(ws, "portrait")
    protect(ws)


def _paragraph(ws: Worksheet, row: int, text: str, font: Font | None = None) -> int:
    cell = ws.cell(row, 1, text)
    cell.alignment = WRAP
    if font is not None:
        cell.font = font
    ws.merge_cells(start_row=row, start_column=1, end_row=row, end_column=2)
    ws.row_dimensions[row].height = LINE_HEIGHT * _lines(text, 124)
    return row + 1


def _lines(text: str, width: float) -> int:
    """Lines a wrapped text takes in a column of ``width`` characters (a rough count)."""
    return min(MAX_ROW_LINES, max(1, math.ceil(len(text) / max(1.0, 0.95 * width - 2))))


@dataclass(frozen=True)
class _SheetOut:
    """What the blocks of one data sheet are written with: the sheet, its content and notes."""

    ws: Worksheet
    content: SheetContent
    notes: SheetNotes
    validations: Validations
    widths: dict[int, float]


def _write_data_sheet(ws: Worksheet, sheet: str, content: SheetContent, notes: SheetNotes) -> None:
    title_rows(ws, sheet, SHEET_PURPOSE[sheet])
    out = _SheetOut(ws=ws, content=content, notes=notes, validations=Validations(ws), widths={})
    row = HEADER_ROW
    freeze = f"A{HEADER_ROW + 1}"
    if schema.sheet_fields(sheet):
        row = _write_items(out, sheet, row)
        row += 1
    tables = [t for t in TABLES.values() if t.sheet == sheet]
    for table in tables:
        freeze = f"B{row + 1}"
        row = _write_table(out, table, row)
        row += 1
    for col, width in out.widths.items():
        ws.column_dimensions[get_column_letter(col)].width = width
    ws.freeze_panes = freeze
    page_setup(ws, "landscape")


def _write_items(out: _SheetOut, sheet: str, row: int) -> int:
    ws, content, notes, validations, widths = (
        out.ws, out.content, out.notes, out.validations, out.widths)
    uncertain = schema.sheet_has_uncertain_items(sheet)
    levels: tuple[Level, ...] = ("low", "central", "high") if uncertain else ("central",)
    value_heads = [LOW_HEADER, CENTRAL_HEADER, HIGH_HEADER] if uncertain else [VALUE_HEADER]
    heads = [ITEM_HEADER, *value_heads, UNIT_HEADER, GUIDANCE_HEADER, NOTE_HEADER]
    for col, text in enumerate(heads, start=1):
        header_cell(ws.cell(row, col), text)
    n_values = len(levels)
    _widen(widths, 1, ITEM_WIDTH)
    for col in range(2, 2 + n_values):
        _widen(widths, col, VALUE_WIDTH)
    _widen(widths, 2 + n_values, UNIT_WIDTH)
    _widen(widths, 3 + n_values, GUIDANCE_WIDTH)
    _widen(widths, 4 + n_values, NOTE_WIDTH)
    for f in schema.sheet_fields(sheet):
        row += 1
        label = ws.cell(row, 1, f.label)
        label.alignment = WRAP
        value = content.items.get(f.name)
        for offset, level in enumerate(levels):
            cell = ws.cell(row, 2 + offset)
            if f.uncertain or level == "central":
                fill_input(cell, f, level_value(value, level))
                validations.add(f, cell.coordinate)
        unit = ws.cell(row, 2 + n_values, f.unit)
        unit.alignment = TOP
        guidance = ws.cell(row, 3 + n_values, guidance_text(f))
        guidance.alignment = WRAP
        guidance.font = MUTED_FONT
        note_text = notes.items.get(f.name, "")
        note = ws.cell(row, 4 + n_values)
        input_cell(note, TEXT_FORMAT, note_text or None)
        note.alignment = WRAP
        validations.add_note(note.coordinate)
        ws.row_dimensions[row].height = LINE_HEIGHT * max(
            _lines(guidance_text(f), GUIDANCE_WIDTH), _lines(note_text, NOTE_WIDTH),
            _lines(f.label, ITEM_WIDTH))
    return row + 1


def _write_table(out: _SheetOut, table: Table, row: int) -> int:
    ws, content, notes, validations, widths = (
        out.ws, out.content, out.notes, out.validations, out.widths)
    columns = list(schema.table_columns(table.name))
    header_row = row
    header_lines = 1
    for col, (f, level) in enumerate(columns, start=1):
        header_cell(ws.cell(header_row, col), schema.header_text(f, level))
        _widen(widths, col, f.width)
        header_lines = max(header_lines, _lines(schema.header_text(f, level), f.width))
    ws.row_dimensions[header_row].height = LINE_HEIGHT * header_lines
    note_col = len(columns) + 1
    header_cell(ws.cell(header_row, note_col), NOTE_HEADER)
    _widen(widths, note_col, NOTE_WIDTH)
    rows = _table_rows(table, content)
    n_rows = max(table.template_rows, len(rows))
    for i in range(n_rows):
        r = header_row + 1 + i
        values = rows[i] if i < len(rows) else {}
        for col, (f, level) in enumerate(columns, start=1):
            value = level_value(values.get(f.name), level)
            as_share = f.name in _LEVEL_FIELDS and _is_occupancy(values)
            fill_input(ws.cell(r, col), f, value, as_share=as_share)
        note_text = notes.row_text(table.name, i)
        note = ws.cell(r, note_col)
        input_cell(note, TEXT_FORMAT, note_text or None)
        if note_text:
            note.alignment = WRAP
            ws.row_dimensions[r].height = LINE_HEIGHT * _lines(note_text, NOTE_WIDTH)
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


def _table_rows(table: Table, content: SheetContent) -> list[Row]:
    rows = content.rows.get(table.name, [])
    if table.per_band and not rows and content.band_labels:
        return [{table.key: label} for label in content.band_labels]
    return rows


def _widen(widths: dict[int, float], col: int, width: float) -> None:
    widths[col] = max(widths.get(col, 0.0), width)


def _write_matrix(ws: Worksheet, setting: str, content: SheetContent) -> None:
    sheet = MATRIX_SHEETS[setting]
    f = MATRIX_FIELDS[setting]
    ws.cell(TITLE_ROW, 1, MATRIX_TITLE).font = HEADING_FONT
    ws.cell(PURPOSE_ROW, 1, SHEET_PURPOSE[sheet]).font = MUTED_FONT
    ws.cell(PURPOSE_ROW + 1, 1, MATRIX_NOTE).font = MUTED_FONT
    header_row = HEADER_ROW + 1
    labels = content.band_labels
    size = max(MAX_BANDS, len(labels))
    header_cell(ws.cell(header_row, 1), BAND_HEADER)
    ws.column_dimensions["A"].width = 12
    label_field = FIELDS_BY_NAME[TABLES["bands"].key]
    values = content.matrices.get(setting) if content.matrices else None
    for j in range(size):
        label = labels[j] if j < len(labels) else None
        head = ws.cell(header_row, 2 + j)
        input_cell(head, TEXT_FORMAT, label)
        head.font = HEADER_FONT
        side = ws.cell(header_row + 1 + j, 1)
        input_cell(side, TEXT_FORMAT, label)
        side.font = HEADER_FONT
        ws.column_dimensions[get_column_letter(2 + j)].width = f.width
    for i in range(size):
        for j in range(size):
            value = None
            if values is not None and i < len(values) and j < len(values[i]):
                value = values[i][j]
            input_cell(ws.cell(header_row + 1 + i, 2 + j), "General", value)
    last_col = get_column_letter(1 + size)
    last_row = header_row + size
    labels_dv = Validations(ws)
    labels_dv.add(label_field, f"B{header_row}:{last_col}{header_row}")
    labels_dv.add(label_field, f"A{header_row + 1}:A{last_row}")
    labels_dv.add(f, f"B{header_row + 1}:{last_col}{last_row}")
    ws.freeze_panes = f"B{header_row + 1}"
    page_setup(ws, "landscape")
