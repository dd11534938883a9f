"""The reader: round trips, tolerated layout changes, value forms and bad files."""

from __future__ import annotations

import dataclasses
import datetime as dt
import hashlib
import os
import re
import zipfile
from pathlib import Path

import openpyxl
import pytest
from conftest import Editor

from prepkit.errors import WorkbookError
from prepkit.plan import Contacts, Plan
from prepkit.plan.records import Source
from prepkit.workbook import read_plan, read_plan_with_warnings, schema, write_workbook
from prepkit.workbook.describe import describe_plan, describe_problems
from prepkit.workbook.schema import FIELDS_BY_NAME, header_text
from prepkit.workbook.sheets import (
    DISEASE,
    DISEASE_BY_AGE,
    HOSPITALS,
    MEASURES,
    OBSERVED,
    PLAN,
    POPULATION,
    SCENARIOS,
    SEVERITY,
    SHEET_ORDER,
    WORKFORCE,
)


def _without_source(plan: Plan) -> Plan:
    return dataclasses.replace(plan, source=Source())


def _file_error(path: Path) -> WorkbookError:
    with pytest.raises(WorkbookError) as caught:
        read_plan(path)
    return caught.value


# ---- Round trips --------------------------------------------------------------------------

def test_filled_workbook_reads_back_as_the_same_plan(plan_path: Path, plan: Plan) -> None:
    read, warnings = read_plan_with_warnings(plan_path)
    assert _without_source(read) == plan
    assert warnings == ()


def test_contact_matrices_read_back_in_band_order(tmp_path: Path, plan: Plan) -> None:
    matrices = {
        setting: tuple(tuple(float(i + j + k) for j in range(3)) for i in range(3))
        for k, setting in enumerate(("home", "school", "work", "community"))
    }
    with_matrices = dataclasses.replace(
        plan, contacts=Contacts(matrices=matrices, assortativity=0.4))  # type: ignore[arg-type]
    path = tmp_path / "m.xlsx"
    write_workbook(path, with_matrices)
    assert _without_source(read_plan(path)) == with_matrices


def test_source_names_the_file_its_hash_and_every_input(plan_path: Path) -> None:
    read = read_plan(plan_path)
    assert read.source.path == os.fspath(plan_path)
    assert read.source.sha256 == hashlib.sha256(plan_path.read_bytes()).hexdigest()
    records = {(r.name, r.label): r for r in read.source.inputs}
    icu = records[("band_severity.icu_share", "ICU share of admissions, band 65+")]
    assert icu.sheet == SEVERITY and re.fullmatch(r"[A-Z]+\d+", icu.cell)
    assert icu.value == "25% (low 20%, high 30%)" and icu.unit == "%"
    assert ("details.jurisdiction", "Jurisdiction") in records
    assert ("measure.priority", "Band order, measure Vaccine") in records
    assert records[("measure.kind", "Kind, measure Vaccine")].value == "Vaccination"
    level = records[("measure.start_level", "Start level, measure Isolation")]
    assert (level.value, level.unit) == ("80%", "%")
    # Only the empty list and text of the first scenario cannot be written into a cell.
    assert {r.label for r in read.source.inputs if r.defaulted} == {
        "Measures applied, scenario No measures", "Description, scenario No measures"}


def test_blank_cell_with_default_uses_it_and_records_defaulted(editor: Editor) -> None:
    editor.item(HOSPITALS, "Surge trigger").value = None
    read, _ = editor.read()
    assert read.capacity.surge_trigger_occupancy == FIELDS_BY_NAME[
        "capacity.surge_trigger_occupancy"].default
    record = next(r for r in read.source.inputs if r.name == "capacity.surge_trigger_occupancy")
    assert record.defaulted and record.value == "85%"


def test_blank_low_and_high_equal_central(editor: Editor) -> None:
    editor.item(DISEASE, "R0", "low").value = None
    editor.item(DISEASE, "R0", "high").value = None
    read, _ = editor.read()
    assert read.disease.r0 is not None and read.disease.r0.is_point
    assert read.disease.r0.central == 2.2


def test_observed_sheet_may_be_deleted(editor: Editor) -> None:
    del editor.wb[OBSERVED]
    read, _ = editor.read()
    assert read.observed == ()


# ---- Layout changes planners make ---------------------------------------------------------

# openpyxl moves cells but not table ranges when inserting rows; a spreadsheet program
# moves both. The reader reads by header, so the stale range does not matter here.
@pytest.mark.filterwarnings("ignore:File may not be readable")
def test_inserted_rows_are_tolerated(editor: Editor, plan: Plan) -> None:
    editor.wb[PLAN].insert_rows(3, amount=2)
    editor.wb[POPULATION].insert_rows(6)
    editor.wb[SEVERITY].insert_rows(6)
    read, _ = editor.read()
    assert _without_source(read) == plan


def test_item_rows_may_be_moved(editor: Editor, plan: Plan) -> None:
    ws = editor.wb[HOSPITALS]
    first, second = 5, 9
    for col in range(1, 7):
        a, b = ws.cell(first, col), ws.cell(second, col)
        a.value, b.value = b.value, a.value
        a.number_format, b.number_format = b.number_format, a.number_format
    read, _ = editor.read()
    assert _without_source(read) == plan


def test_band_rows_may_be_in_any_order(editor: Editor, plan: Plan) -> None:
    for sheet in (POPULATION, SEVERITY, DISEASE_BY_AGE):
        ws = editor.wb[sheet]
        label = header_text(FIELDS_BY_NAME["band.label"])
        head = max(c.row for row in ws.iter_rows() for c in row if c.value == label)
        first, last = head + 1, head + 3
        for col in range(1, ws.max_column + 1):
            a, b = ws.cell(first, col), ws.cell(last, col)
            a.value, b.value = b.value, a.value
            a.number_format, b.number_format = b.number_format, a.number_format
    read, _ = editor.read()
    assert _without_source(read) == plan


def test_table_columns_may_be_reordered(editor: Editor, plan: Plan) -> None:
    ws = editor.wb[MEASURES]
    head = 4
    for a_col, b_col in ((1, 5), (2, 20), (3, 4)):
        for row in range(head, head + 6):
            a, b = ws.cell(row, a_col), ws.cell(row, b_col)
            a.value, b.value = b.value, a.value
            a.number_format, b.number_format = b.number_format, a.number_format
    read, _ = editor.read()
    assert _without_source(read) == plan


def test_extra_sheets_and_columns_are_ignored(editor: Editor, plan: Plan) -> None:
    extra = editor.wb.create_sheet("My notes", 1)
    extra["A1"] = "Item"
    extra["B1"] = "Value"
    extra["A2"] = "Jurisdiction"
    extra["B2"] = "Somewhere else"
    editor.wb[SCENARIOS].cell(4, 30, "My own column")
    editor.wb[SCENARIOS].cell(5, 30, 12345)
    read, _ = editor.read()
    assert _without_source(read) == plan


# ---- Value forms --------------------------------------------------------------------------

@pytest.mark.parametrize("value", ["25%", " 25 % ", 0.25, "0.25"])
def test_shares_accept_percent_text_or_fractions(editor: Editor, value: object) -> None:
    cell = editor.item(WORKFORCE, "Working-age people in work")
    cell.value = value
    cell.number_format = "General"
    read, _ = editor.read()
    assert read.workforce.employed_share == pytest.approx(0.25, abs=1e-12)


def test_percent_formatted_number_is_a_share(editor: Editor) -> None:
    cell = editor.item(WORKFORCE, "Working-age people in work")
    cell.value = 0.3
    cell.number_format = "0%"
    read, _ = editor.read()
    assert read.workforce.employed_share == 0.3


def test_bare_number_above_one_is_not_a_share(editor: Editor) -> None:
    cell = editor.item(WORKFORCE, "Working-age people in work")
    cell.value = 25
    cell.number_format = "General"
    problem = editor.only_problem()
    assert (problem.sheet, problem.cell) == (WORKFORCE, cell.coordinate)
    assert str(problem).endswith(
        "expected a share between 0 and 1 (e.g. 25% or 0.25), found 25 (did you mean 25%? Type "
        "25% or 0.25)")


def test_dates_accept_iso_text(editor: Editor) -> None:
    cell = editor.item(PLAN, "Day 0 date")
    cell.value = "2027-01-04"
    cell.number_format = "@"
    read, _ = editor.read()
    assert read.details.day0 == dt.date(2027, 1, 4)


def test_dates_refuse_other_text(editor: Editor) -> None:
    cell = editor.item(PLAN, "Day 0 date")
    cell.value = "04/01/2027"
    problem = editor.only_problem()
    assert problem.cell == cell.coordinate
    assert problem.found == '"04/01/2027"'


@pytest.mark.parametrize(("text", "people"), [("1,200", 1200.0), ("1200", 1200.0),
                                               (" 12000.5 ", 12000.5)])
def test_numbers_accept_plain_and_comma_thousands_text(
        editor: Editor, text: str, people: float) -> None:
    editor.table(POPULATION, "People [persons]", "65+").value = text
    read, _ = editor.read()
    assert read.bands[-1].people == people


@pytest.mark.parametrize("text", ["nan", "inf", "-Infinity", "1e999", "1,2", "twelve"])
def test_numbers_refuse_nan_infinity_and_words(editor: Editor, text: str) -> None:
    cell = editor.table(POPULATION, "People [persons]", "65+")
    cell.value = text
    problem = editor.only_problem()
    assert (problem.sheet, problem.cell) == (POPULATION, cell.coordinate)


def test_choices_ignore_case_and_spacing(editor: Editor) -> None:
    editor.table(SCENARIOS, "Severity", "No measures").value = "  high "
    read, _ = editor.read()
    assert read.scenario("No measures").severity_level == "high"


def test_scenario_measures_may_be_split_on_commas(editor: Editor) -> None:
    editor.table(SCENARIOS, "Measures applied", "All measures").value = (
        "Vaccine, isolation")
    read, _ = editor.read()
    assert read.scenario("All measures").interventions == ("Vaccine", "Isolation")


def test_formula_without_saved_result_is_reported_by_cell(editor: Editor) -> None:
    cell = editor.item(HOSPITALS, "Staffed ward beds")
    cell.value = "=B4*2"
    problem = editor.only_problem()
    assert (problem.sheet, problem.cell) == (HOSPITALS, cell.coordinate)
    assert problem.expected == "a value"
    assert problem.found.startswith("a formula with no saved result (=B4*2)")
    assert "open and save the file in a spreadsheet program, or type the value" in problem.found


def test_formula_with_saved_result_uses_the_result(editor: Editor, tmp_path: Path) -> None:
    cell = editor.item(HOSPITALS, "Staffed ward beds")
    cell.value = "=200*2"
    path = editor.save()
    patched = tmp_path / "patched.xlsx"
    with zipfile.ZipFile(path) as src, zipfile.ZipFile(patched, "w") as dst:
        for info in src.infolist():
            data = src.read(info.filename)
            data = data.replace(b"<f>200*2</f><v />", b"<f>200*2</f><v>400</v>")
            dst.writestr(info, data)
    assert read_plan(patched).capacity.ward_beds == 400


def test_text_label_turned_into_a_date_gets_a_hint(editor: Editor) -> None:
    cell = editor.table(SEVERITY, "Band", "0-17")
    cell.value = dt.datetime(2027, 9, 5)
    problems = editor.problems()
    first = next(p for p in problems if p.cell == cell.coordinate)
    assert "format the cell as Text" in first.found


def test_long_text_is_refused_with_its_length(editor: Editor) -> None:
    cell = editor.item(PLAN, "Jurisdiction")
    cell.value = "x" * 5000
    problem = editor.only_problem()
    assert problem.found == "text of 5000 characters"


# ---- Whole-sheet and block problems -------------------------------------------------------

def test_missing_required_sheet_is_one_problem(editor: Editor) -> None:
    del editor.wb[HOSPITALS]
    problems = editor.problems()
    assert [(p.sheet, p.cell) for p in problems] == [(HOSPITALS, "")]


def test_missing_item_row_with_default_warns_and_uses_default(editor: Editor) -> None:
    ws = editor.wb[WORKFORCE]
    row = editor.item(WORKFORCE, "Days off per illness").row
    ws.delete_rows(row)
    read, warnings = editor.read()
    assert read.workforce.days_absent_per_illness == 5.0
    assert [(w.sheet, w.field) for w in warnings] == [(WORKFORCE, "Days off per illness")]


def test_missing_required_item_row_is_an_error(editor: Editor) -> None:
    row = editor.item(PLAN, "Jurisdiction").row
    editor.wb[PLAN].delete_rows(row)
    problem = editor.only_problem()
    assert (problem.sheet, problem.field) == (PLAN, "Jurisdiction")
    assert "no row labelled 'Jurisdiction'" in problem.found


def test_unknown_item_label_with_a_value_warns(editor: Editor) -> None:
    ws = editor.wb[PLAN]
    ws.cell(30, 1, "Budget holder")
    ws.cell(30, 2, "Someone")
    _, warnings = editor.read()
    assert [(w.sheet, w.cell) for w in warnings] == [(PLAN, "A30")]


def test_missing_table_header_is_reported(editor: Editor) -> None:
    ws = editor.wb[SCENARIOS]
    ws.cell(4, 1).value = "Name"
    problems = editor.problems()
    assert (problems[0].sheet, problems[0].field) == (SCENARIOS, "Scenario")


def test_blank_template_lists_every_required_blank_with_its_cell(template_path: Path) -> None:
    error = _file_error(template_path)
    where = {(p.sheet, p.cell) for p in error.problems}
    for sheet, label in ((PLAN, "Jurisdiction"), (PLAN, "Prepared by"),
                         (PLAN, "Day 0 date"), (HOSPITALS, "Staffed ward beds"),
                         (HOSPITALS, "Staffed ICU beds"),
                         (DISEASE, "Latent period"), (DISEASE, "Infectious period")):
        wb = openpyxl.load_workbook(template_path)
        ws = wb[sheet]
        row = next(c.row for c in ws["A"] if c.value == label)
        col = 3 if schema.sheet_has_uncertain_items(sheet) else 2
        assert (sheet, ws.cell(row, col).coordinate) in where, label
    assert (POPULATION, "A5") in where
    assert (SCENARIOS, "A5") in where
    assert all(p.sheet and p.cell for p in error.problems)


def test_problems_are_in_sheet_then_row_order(editor: Editor) -> None:
    editor.item(HOSPITALS, "Staffed ICU beds").value = -1
    editor.item(PLAN, "Days to look ahead").value = 0
    editor.item(HOSPITALS, "Staffed ward beds").value = "many"
    problems = editor.problems()
    order = [SHEET_ORDER.index(p.sheet) for p in problems]
    assert order == sorted(order)
    rows = [int(p.cell[1:]) for p in problems if p.sheet == HOSPITALS]
    assert rows == sorted(rows)


# ---- Bad files ----------------------------------------------------------------------------

def _one_file_problem(path: Path) -> str:
    error = _file_error(path)
    assert len(error.problems) == 1
    problem = error.problems[0]
    assert (problem.sheet, problem.cell) == ("", "")
    return problem.found


def test_missing_path_is_a_workbook_error(tmp_path: Path) -> None:
    found = _one_file_problem(tmp_path / "nope.xlsx")
    assert found.startswith("no file at")  # not wrapped in a second message
    assert "expected" not in found


def test_directory_is_a_workbook_error(tmp_path: Path) -> None:
    assert "folder" in _one_file_problem(tmp_path)


def test_empty_file_is_a_workbook_error(tmp_path: Path) -> None:
    path = tmp_path / "empty.xlsx"
    path.write_bytes(b"")
    assert "empty" in _one_file_problem(path)


SAVE_AS_XLSX = "open it in a spreadsheet program and save it as an Excel workbook (.xlsx)"


@pytest.mark.parametrize("name", ["data.xlsx", "data.csv", "data.txt", "data"])
def test_csv_is_named_as_csv_whatever_its_extension(tmp_path: Path, name: str) -> None:
    path = tmp_path / name
    path.write_text("Item,Value\nJurisdiction,Tamsett Hollow\nDays to look ahead,200\n")
    assert _one_file_problem(path) == (
        f"a CSV file (plain text, values separated by commas), not a workbook; {SAVE_AS_XLSX}")


@pytest.mark.parametrize(("data", "words"), [
    ("Band;People\n0-17;21000\n18-64;60500\n".encode("cp1252"), "semicolons"),
    ("Band\tPeople\n0\u201317\t21000\n".encode("utf-16"), "tabs"),  # Excel's Unicode text
    ("\ufeffBand,People\n0-17,21000\n".encode(), "commas"),
    (b"Band,Notes\n65+,\"caf\xe9, parks\"\n", "commas"),  # Latin-1, a quoted comma
])
def test_csv_in_other_encodings_and_delimiters_is_named_as_csv(
    tmp_path: Path, data: bytes, words: str
) -> None:
    path = tmp_path / "export.xlsx"
    path.write_bytes(data)
    assert _one_file_problem(path).startswith(f"a CSV file (plain text, values separated by "
                                              f"{words})")


def test_long_csv_cut_mid_line_is_still_named_as_csv(tmp_path: Path) -> None:
    path = tmp_path / "daily.csv"
    path.write_text("day,admissions\n" + "".join(f"{d},{d * 3 % 17}\n" for d in range(9000)))
    assert _one_file_problem(path).startswith("a CSV file")


def test_other_text_files_are_named_for_what_they_are(tmp_path: Path) -> None:
    page = tmp_path / "plan.xls"
    page.write_text("<!DOCTYPE html><html><body><table></table></body></html>")
    assert _one_file_problem(page) == f"a web page (HTML), not a workbook; {SAVE_AS_XLSX}"
    notes = tmp_path / "notes.xlsx"
    notes.write_text("Plan for the winter.\nCall the hospital on Monday.\n")
    assert _one_file_problem(notes) == f"a text file, not a workbook; {SAVE_AS_XLSX}"


def test_random_bytes_are_a_workbook_error(tmp_path: Path) -> None:
    path = tmp_path / "noise.xlsx"
    path.write_bytes(bytes(range(256)) * 4)
    assert "another format" in _one_file_problem(path)


def test_encrypted_or_old_excel_file_is_a_workbook_error(tmp_path: Path) -> None:
    path = tmp_path / "locked.xlsx"
    path.write_bytes(b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1" + b"\x00" * 600)
    assert "password-protected" in _one_file_problem(path)


def test_truncated_workbook_is_a_workbook_error(plan_path: Path, tmp_path: Path) -> None:
    path = tmp_path / "cut.xlsx"
    path.write_bytes(plan_path.read_bytes()[:3000])
    assert "damaged" in _one_file_problem(path)


def test_zip_that_is_not_a_workbook_is_a_workbook_error(tmp_path: Path) -> None:
    path = tmp_path / "other.xlsx"
    with zipfile.ZipFile(path, "w") as archive:
        archive.writestr("readme.txt", "hello")
    assert "not an Excel workbook" in _one_file_problem(path)


def test_workbook_with_broken_parts_is_a_workbook_error(tmp_path: Path) -> None:
    path = tmp_path / "broken.xlsx"
    with zipfile.ZipFile(path, "w") as archive:
        archive.writestr("xl/workbook.xml", "<not really xml")
    assert "cannot be opened" in _one_file_problem(path)


def test_reading_leaves_the_file_bytes_and_mtime_unchanged(plan_path: Path) -> None:
    before = plan_path.read_bytes()
    mtime = plan_path.stat().st_mtime_ns
    read_plan(plan_path)
    assert plan_path.read_bytes() == before
    assert plan_path.stat().st_mtime_ns == mtime


def test_failed_read_leaves_the_file_unchanged(template_path: Path) -> None:
    before = template_path.read_bytes()
    mtime = template_path.stat().st_mtime_ns
    _file_error(template_path)
    assert template_path.read_bytes() == before
    assert template_path.stat().st_mtime_ns == mtime


# ---- Summaries ----------------------------------------------------------------------------

def test_describe_plan_summarises_the_plan(plan_path: Path) -> None:
    read, warnings = read_plan_with_warnings(plan_path)
    text = describe_plan(read, warnings)
    assert "Test jurisdiction" in text
    assert "2027-01-04" in text and "200 days" in text
    assert "95,000 people" in text
    assert "simple form" in text
    assert "R0 2.2 (low 1.8, high 2.6)" in text
    assert "School closure: fewer contacts, starts on 2027-02-01; lasts 42 days" in text
    assert "Isolation: isolation of cases, starts when ward occupancy reaches 80%; ends when " \
           "the level falls to 50%" in text
    assert "All measures: transmissibility high, severity low" in text
    assert "Observed rows: 3 (daily figures)" in text
    assert "No warnings." in text


def test_describe_problems_lists_each_problem_under_a_count(template_path: Path) -> None:
    error = _file_error(template_path)
    lines = describe_problems(error).splitlines()
    assert len(error.problems) > 1
    assert lines[0] == f"{len(error.problems)} problems found; the workbook cannot be used yet:"
    assert lines[1:] == [f"  {p}" for p in error.problems]


@pytest.mark.filterwarnings("ignore:File may not be readable")
def test_observed_sheet_without_its_header_is_ignored_with_a_warning(editor: Editor) -> None:
    ws = editor.wb[OBSERVED]
    ws.delete_rows(next(c.row for c in ws["A"] if c.value == "Date"))
    read, warnings = editor.read()
    assert read.observed == ()
    assert [(w.sheet, w.field) for w in warnings] == [(OBSERVED, "Date")]


def test_opendocument_file_is_a_workbook_error(tmp_path: Path) -> None:
    path = tmp_path / "sheet.xlsx"
    with zipfile.ZipFile(path, "w") as archive:
        archive.writestr("mimetype", "application/vnd.oasis.opendocument.spreadsheet")
        archive.writestr("content.xml", "<x/>")
    assert "OpenDocument" in _one_file_problem(path)
