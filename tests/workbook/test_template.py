"""The template writer: layout from the schema, validation, protection, round trips."""

from __future__ import annotations

import io
import shutil
import subprocess
from pathlib import Path
from typing import Any

import openpyxl
import pytest
from openpyxl.workbook.workbook import Workbook
from openpyxl.worksheet.worksheet import Worksheet

from prepkit.errors import OutputError
from prepkit.plan import Plan
from prepkit.workbook import schema
from prepkit.workbook.instructions import (
    INSTRUCTIONS_CAUTION,
    INSTRUCTIONS_PURPOSE,
    MATRIX_NOTE,
    MATRIX_TITLE,
)
from prepkit.workbook.reader import read_plan
from prepkit.workbook.schema import FIELDS_BY_NAME, TABLES, header_text, table_columns
from prepkit.workbook.sheets import (
    BAND_HEADER,
    CENTRAL_HEADER,
    GUIDANCE_HEADER,
    HIGH_HEADER,
    HOSPITALS,
    INSTRUCTIONS_SHEET,
    ITEM_HEADER,
    KIND_CHOICES,
    LOW_HEADER,
    MATRIX_SHEETS,
    MEASURES,
    NOTE_HEADER,
    PLAN,
    POPULATION,
    SCENARIOS,
    SEVERITY,
    SHEET_ORDER,
    SHEET_PURPOSE,
    UNIT_HEADER,
    VALUE_HEADER,
)
from prepkit.workbook.template import build_workbook, write_workbook
from prepkit.workbook.template_style import HEADER_ROW, share_format


def _load(path: Path) -> Workbook:
    return openpyxl.load_workbook(path)


def _find(ws: Worksheet, text: str) -> tuple[int, int]:
    for row in ws.iter_rows():
        for cell in row:
            if cell.value == text:
                return cell.row, cell.column
    raise AssertionError(f"{text!r} not on {ws.title}")


def _find_last(ws: Worksheet, text: str) -> tuple[int, int]:
    found = [(c.row, c.column) for row in ws.iter_rows() for c in row if c.value == text]
    assert found, f"{text!r} not on {ws.title}"
    return found[-1]


def _item_row(ws: Worksheet, label: str) -> int:
    return _find(ws, label)[0]


def _inputs(ws: Worksheet) -> list[Any]:
    return [cell for row in ws.iter_rows() for cell in row
            if cell.protection is not None and not cell.protection.locked]


def _snapshot(wb: Workbook) -> dict[str, object]:
    """Every cell value and number format, validation and table ref, by sheet."""
    shot: dict[str, object] = {}
    for ws in wb.worksheets:
        cells = {(c.coordinate): (c.value, c.number_format, bool(c.protection.locked))
                 for row in ws.iter_rows() for c in row
                 if c.value is not None or c.number_format != "General"}
        validations = sorted(
            (dv.type or "", dv.operator or "", dv.formula1 or "", dv.formula2 or "",
             str(dv.sqref), dv.prompt or "", dv.error or "")
            for dv in ws.data_validations.dataValidation
        )
        tables = dict(ws.tables.items())  # name -> ref
        shot[ws.title] = (cells, validations, tables, ws.freeze_panes,
                          bool(ws.protection.sheet))
    return shot


# ---- Blank template -----------------------------------------------------------------------

def test_template_sheets_follow_the_schema_order_after_the_instructions(
        template_path: Path) -> None:
    wb = _load(template_path)
    assert wb.sheetnames == [INSTRUCTIONS_SHEET, *SHEET_ORDER]


def test_instructions_sheet_explains_the_workbook(template_path: Path) -> None:
    ws = _load(template_path)[INSTRUCTIONS_SHEET]
    text = "\n".join(str(c.value) for row in ws.iter_rows() for c in row if c.value)
    assert INSTRUCTIONS_PURPOSE in text
    for sheet in SHEET_ORDER:
        assert sheet in text
        assert SHEET_PURPOSE[sheet] in text
    assert "25%" in text and "0.25" in text and "2027-01-15" in text
    assert "Low or High" in text
    assert INSTRUCTIONS_CAUTION in text


def test_item_block_headers_and_units_come_from_the_schema(template_path: Path) -> None:
    wb = _load(template_path)
    for sheet in SHEET_ORDER:
        fields = schema.sheet_fields(sheet)
        if not fields:
            continue
        ws = wb[sheet]
        row, col = _find(ws, ITEM_HEADER)
        heads = [ws.cell(row, c).value for c in range(col, col + 7)]
        if schema.sheet_has_uncertain_items(sheet):
            assert heads == [ITEM_HEADER, LOW_HEADER, CENTRAL_HEADER,
                             HIGH_HEADER, UNIT_HEADER, GUIDANCE_HEADER,
                             NOTE_HEADER]
            unit_col = col + 4
        else:
            assert heads[:5] == [ITEM_HEADER, VALUE_HEADER, UNIT_HEADER,
                                 GUIDANCE_HEADER, NOTE_HEADER]
            unit_col = col + 2
        for f in fields:
            r = _item_row(ws, f.label)
            assert (ws.cell(r, unit_col).value or "") == f.unit, f.name
            assert f.help in str(ws.cell(r, unit_col + 1).value)


def test_tables_are_excel_tables_with_schema_headers_and_template_rows(
        template_path: Path) -> None:
    wb = _load(template_path)
    for name, table in TABLES.items():
        ws = wb[table.sheet]
        assert table.excel_name in ws.tables, name
        ref = ws.tables[table.excel_name].ref
        first, last = ref.split(":")
        top = int("".join(ch for ch in first if ch.isdigit()))
        bottom = int("".join(ch for ch in last if ch.isdigit()))
        assert bottom - top == table.template_rows
        heads = [c.value for c in ws[top] if c.value is not None]
        assert heads == [header_text(f, lv) for f, lv in table_columns(name)] + [
            NOTE_HEADER]


def test_every_input_cell_has_a_data_validation_with_guidance(template_path: Path) -> None:
    wb = _load(template_path)
    for ws in wb.worksheets[1:]:
        covered: dict[str, Any] = {}
        for dv in ws.data_validations.dataValidation:
            for cell_range in dv.sqref.ranges:
                for row in ws.iter_rows(min_row=cell_range.min_row, max_row=cell_range.max_row,
                                        min_col=cell_range.min_col, max_col=cell_range.max_col):
                    for cell in row:
                        covered[cell.coordinate] = dv
        inputs = _inputs(ws)
        assert inputs, ws.title
        for cell in inputs:
            dv = covered.get(cell.coordinate)
            assert dv is not None, f"{ws.title}!{cell.coordinate}"
            assert dv.prompt and dv.error, f"{ws.title}!{cell.coordinate}"


def test_validations_match_field_types(template_path: Path) -> None:
    wb = _load(template_path)
    by_prompt_title = {}
    for ws in wb.worksheets:
        for dv in ws.data_validations.dataValidation:
            by_prompt_title[(ws.title, dv.promptTitle)] = dv
    kind = by_prompt_title[(MEASURES, "Kind")]
    assert kind.type == "list"
    assert kind.formula1 == '"' + ",".join(KIND_CHOICES) + '"'
    share = by_prompt_title[(SEVERITY, "ICU share of admissions")]
    assert (share.type, share.operator, share.formula1, share.formula2) == (
        "decimal", "between", "0", "1")
    assert "a share between 0 and 1" in share.error
    beds = by_prompt_title[(HOSPITALS, "Staffed ward beds")]
    assert (beds.type, beds.formula1, beds.formula2) == ("whole", "0", "1000000")
    day0 = by_prompt_title[(PLAN, "Day 0 date")]
    assert day0.type == "date"


def test_share_inputs_are_percent_formatted_and_dates_date_formatted(
        template_path: Path) -> None:
    wb = _load(template_path)
    ws = wb[HOSPITALS]
    r = _item_row(ws, FIELDS_BY_NAME["capacity.ward_baseline_occupancy"].label)
    assert "%" in ws.cell(r, 2).number_format
    ws = wb[PLAN]
    r = _item_row(ws, FIELDS_BY_NAME["details.day0"].label)
    assert ws.cell(r, 2).number_format == "yyyy-mm-dd"
    ws = wb[POPULATION]
    assert ws.cell(HEADER_ROW + 1, 1).number_format == "@"  # band labels stay text


def test_sheets_are_protected_without_password_but_allow_rows_format_sort_filter(
        template_path: Path) -> None:
    wb = _load(template_path)
    for ws in wb.worksheets:
        p = ws.protection
        assert p.sheet, ws.title
        assert not p.password
        assert p.insertRows is False and p.formatCells is False
        assert p.sort is False and p.autoFilter is False


def test_labels_are_locked_and_inputs_unlocked_with_a_fill(template_path: Path) -> None:
    ws = _load(template_path)[PLAN]
    r = _item_row(ws, "Jurisdiction")
    assert ws.cell(r, 1).protection.locked
    value = ws.cell(r, 2)
    assert not value.protection.locked
    rgb = str(value.fill.fgColor.rgb)[-6:]
    red, green, blue = (int(rgb[i:i + 2], 16) for i in (0, 2, 4))
    luminance = (0.299 * red + 0.587 * green + 0.114 * blue) / 255
    assert 0.8 < luminance < 0.95  # light, yet visible in grayscale
    assert value.border.left.style == "dotted"


def test_data_sheets_have_frozen_headers_and_schema_widths(template_path: Path) -> None:
    wb = _load(template_path)
    for sheet in SHEET_ORDER:
        assert wb[sheet].freeze_panes is not None, sheet
    ws = wb[SCENARIOS]
    description = FIELDS_BY_NAME["scenario.description"]
    _, col = _find(ws, header_text(description))
    letter = openpyxl.utils.get_column_letter(col)
    assert ws.column_dimensions[letter].width == description.width


def test_matrix_sheets_explain_rows_and_columns_and_leave_labels_blank(
        template_path: Path) -> None:
    wb = _load(template_path)
    for sheet in MATRIX_SHEETS.values():
        ws = wb[sheet]
        assert ws.cell(1, 1).value == MATRIX_TITLE
        texts = [c.value for row in ws.iter_rows(max_row=4) for c in row if c.value]
        assert MATRIX_NOTE in texts
        r, c = _find(ws, BAND_HEADER)
        assert ws.cell(r, c + 1).value is None
        assert not ws.cell(r, c + 1).protection.locked


def test_blank_template_survives_an_openpyxl_load_save_round_trip(
        template_path: Path, tmp_path: Path) -> None:
    first = _load(template_path)
    again = tmp_path / "again.xlsx"
    first.save(again)
    assert _snapshot(_load(again)) == _snapshot(_load(template_path))


def test_filled_workbook_survives_an_openpyxl_load_save_round_trip(
        plan_path: Path, tmp_path: Path) -> None:
    again = tmp_path / "again.xlsx"
    _load(plan_path).save(again)
    assert _snapshot(_load(again)) == _snapshot(_load(plan_path))


# ---- Filled workbook ----------------------------------------------------------------------

def test_filled_workbook_holds_the_plan_values(plan_path: Path, plan: Plan) -> None:
    wb = _load(plan_path)
    ws = wb[PLAN]
    assert ws.cell(_item_row(ws, "Jurisdiction"), 2).value == plan.details.jurisdiction
    ws = wb[POPULATION]
    labels = [ws.cell(HEADER_ROW + 1 + i, 1).value for i in range(len(plan.bands))]
    assert labels == [b.label for b in plan.bands]


def test_band_keyed_tables_are_prefilled_with_band_labels(plan_path: Path, plan: Plan) -> None:
    wb = _load(plan_path)
    for name, table in TABLES.items():
        if not table.per_band:
            continue
        ws = wb[table.sheet]
        r, c = _find(ws, header_text(FIELDS_BY_NAME[table.key]))
        found = [ws.cell(r + 1 + i, c).value for i in range(len(plan.bands))]
        assert found == [b.label for b in plan.bands], name


def test_notes_go_to_the_source_or_note_column(tmp_path: Path, plan: Plan) -> None:
    path = tmp_path / "notes.xlsx"
    write_workbook(path, plan, {
        "details.jurisdiction": "Made up.",
        "band.people@18-64": "Census table 1.",
        "band_severity.icu_share": "Same for all.",
        "measure.compliance@Vaccine": "Guess.",
    })
    wb = _load(path)
    ws = wb[PLAN]
    r = _item_row(ws, "Jurisdiction")
    _, note_col = _find(ws, NOTE_HEADER)
    assert ws.cell(r, note_col).value == "Made up."
    ws = wb[POPULATION]
    _, note_col = _find(ws, NOTE_HEADER)
    assert ws.cell(HEADER_ROW + 2, note_col).value == "People: Census table 1."
    assert ws.cell(HEADER_ROW + 1, note_col).value is None
    ws = wb[SEVERITY]
    r, note_col = _find_last(ws, NOTE_HEADER)
    notes = [ws.cell(r + 1 + i, note_col).value for i in range(3)]
    assert notes == ["ICU share of admissions: Same for all."] * 3
    ws = wb[MEASURES]
    r, note_col = _find(ws, NOTE_HEADER)
    assert ws.cell(r + 2, note_col).value == "Compliance: Guess."


def test_notes_naming_unknown_fields_or_rows_are_refused(tmp_path: Path, plan: Plan) -> None:
    with pytest.raises(ValueError, match="no.such"):
        write_workbook(tmp_path / "x.xlsx", plan, {"no.such": "x"})
    with pytest.raises(ValueError, match="band.people@99"):
        write_workbook(tmp_path / "x.xlsx", plan, {"band.people@99": "x"})


def test_write_to_a_missing_folder_raises_output_error(tmp_path: Path) -> None:
    with pytest.raises(OutputError):
        write_workbook(tmp_path / "missing" / "x.xlsx")


@pytest.mark.parametrize(("value", "fmt"), [
    (0.25, "0%"), (0.125, "0.0%"), (0.0005, "0.0##%"), (None, "0.0%"), (1.0, "0%"),
])
def test_share_format_keeps_the_digits_of_a_share(value: float | None, fmt: str) -> None:
    assert share_format(value) == fmt


def test_build_workbook_saves_to_memory() -> None:
    buffer = io.BytesIO()
    build_workbook().save(buffer)
    assert buffer.getvalue()[:2] == b"PK"


# ---- A spreadsheet program ----------------------------------------------------------------

_SOFFICE = shutil.which("soffice") or shutil.which("libreoffice")


@pytest.mark.skipif(_SOFFICE is None, reason="LibreOffice (soffice) is not installed")
@pytest.mark.slow
def test_spreadsheet_program_opens_and_resaves_the_workbooks(
        template_path: Path, plan_path: Path, plan: Plan, tmp_path: Path) -> None:
    out = tmp_path / "converted"
    out.mkdir()
    profile = tmp_path / "profile"
    for path in (template_path, plan_path):
        subprocess.run(
            [str(_SOFFICE), f"-env:UserInstallation=file://{profile}", "--headless",
             "--convert-to", "xlsx", "--outdir", str(out), str(path)],
            check=True, capture_output=True, timeout=180,
        )
    blank = _load(out / template_path.name)
    assert blank.sheetnames == [INSTRUCTIONS_SHEET, *SHEET_ORDER]
    assert {t for ws in blank.worksheets for t in ws.tables} == {
        t.excel_name for t in TABLES.values()}
    resaved = read_plan(out / plan_path.name)
    from dataclasses import replace

    from prepkit.plan.records import Source
    assert replace(resaved, source=Source()) == plan


def test_template_bytes_are_reproducible(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    # Same schema and SOURCE_DATE_EPOCH give the same bytes (common practice, no source:
    # reproducible-builds convention for SOURCE_DATE_EPOCH).
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1796083200")
    first, second = tmp_path / "a.xlsx", tmp_path / "b.xlsx"
    write_workbook(first)
    write_workbook(second)
    assert first.read_bytes() == second.read_bytes()
