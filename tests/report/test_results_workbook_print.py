"""results.xlsx reads and prints for people: plain headers, number formats, print setup, tables.

Facts of the file format used here (ECMA-376 Part 1, "Office Open XML File
Formats", 2016, from memory): ``pageSetup`` with ``fitToWidth="1"``
``fitToHeight="0"`` and ``sheetPr/pageSetUpPr fitToPage="1"`` prints one page
wide and as many pages tall as needed (§18.3.1.63, §18.3.1.65); the print
titles and print area are the defined names ``_xlnm.Print_Titles`` and
``_xlnm.Print_Area`` (§18.2.6); in a page header ``&`` starts a code and
``&&`` prints an ampersand (§18.3.1.39). Excel limits a page header or
footer to 255 characters (Microsoft, "Excel specifications and limits",
from memory).
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import io
import re
import shutil
import subprocess
from pathlib import Path
from typing import Any

import openpyxl
import pytest
from test_results_workbook import JURISDICTION, WHEN, Built, built_workbook

from prepkit.report import results_workbook as rw
from prepkit.report.results_workbook_columns import GUIDE, TEXT
from prepkit.report.results_workbook_columns_scenarios import (
    BEDS,
    DAILY,
    EFFECT,
    INPUTS,
    SUMMARY,
    TOTALS,
    TRANSMISSIBILITY,
)
from prepkit.report.results_workbook_columns_uncertainty import CHANCE, SENSITIVITY
from prepkit.scenarios.runs import PlanResults
from prepkit.uncertainty.results import SUMMARY_METRICS

pytestmark = pytest.mark.slow  # prints with LibreOffice

#: What a header cell must not look like: a machine name.
IDENTIFIER = re.compile(r"^[a-z0-9]+(_[a-z0-9]+)+$")
DOTTED = re.compile(r"^\w+(\.\w+)+$")
QUANTILE = re.compile(r"\bq\d\d\b")


@pytest.fixture(scope="module")
def built() -> Built:
    return built_workbook()


@pytest.fixture(scope="module")
def book(built: Built) -> Any:
    return built.book()


def _header_cells(ws: Any) -> list[Any]:
    """The header row of every table on a sheet, and the sheet's title cell."""
    cells = [ws["A1"]]
    for table in ws.tables.values():
        first, last = table.ref.split(":")
        row = int(re.sub(r"[A-Z]+", "", first))
        cells += list(ws[f"{first}:{re.sub(r'[0-9]+', '', last)}{row}"][0])
    return cells


def test_no_header_cell_is_a_machine_name(book: Any) -> None:
    seen = 0
    for ws in book.worksheets:
        for cell in _header_cells(ws):
            text = cell.value
            if text is None:
                continue
            assert isinstance(text, str), (ws.title, cell.coordinate)
            assert not IDENTIFIER.match(text), (ws.title, cell.coordinate, text)
            assert not DOTTED.match(text), (ws.title, cell.coordinate, text)
            assert not QUANTILE.search(text), (ws.title, cell.coordinate, text)
            assert "_" not in text, (ws.title, cell.coordinate, text)
            seen += 1
    assert seen > 150


@pytest.mark.parametrize("columns", [SUMMARY, BEDS, TOTALS, EFFECT, DAILY, TRANSMISSIBILITY,
                                     INPUTS, GUIDE, CHANCE, SENSITIVITY],
                         ids=lambda c: c.sheet)
def test_every_column_of_numbers_says_its_unit(columns: Any) -> None:
    for c in columns.columns:
        if not c.numeric or c.unit in {"date", "whole number", "dimensionless", "as given"}:
            continue
        if c.unit.startswith("unit of the"):  # the unit is in the row's Unit column
            continue
        assert re.search(r"\[[^\]]+\]$", c.header), (columns.sheet, c.header)
        assert c.header.endswith(f"[{c.unit}]") or c.unit == "days", (c.header, c.unit)


def test_every_sheet_prints_landscape_one_page_wide_with_titles_and_area(book: Any,
                                                                          built: Built) -> None:
    paper = {"A4": "9", "Letter": "1"}[built.plan.details.page_size]
    for ws in book.worksheets:
        setup = ws.page_setup
        assert setup.orientation == "landscape", ws.title
        assert (setup.fitToWidth, setup.fitToHeight) == (1, 0), ws.title
        assert ws.sheet_properties.pageSetUpPr.fitToPage, ws.title
        assert str(setup.paperSize) == paper, ws.title
        assert ws.print_title_rows, ws.title
        assert ws.print_area and ws.print_area.startswith(f"'{ws.title}'!$A$1:"), ws.title
        assert ws.freeze_panes not in (None, "A1"), ws.title
        header = ws.oddHeader
        assert header.left.text == JURISDICTION.replace("&", "&&"), ws.title
        assert header.center.text, ws.title
        assert header.right.text == built.plan.details.title
        assert "&P" in ws.oddFooter.right.text and "9.9" in ws.oddFooter.left.text
        total = sum(len(p.text or "") for p in (header.left, header.center, header.right))
        assert total <= 255, ws.title


def test_per_scenario_sheets_name_their_scenario_in_the_page_header(book: Any,
                                                                     built: Built) -> None:
    name = built.plan.scenarios[1].name
    ws = book[rw.daily_sheet_name(2, "without")]
    assert ws.oddHeader.center.text == f"&BScenario 2: {name}, without measures: daily series&B"
    assert ws.print_title_rows == "$3:$3" and ws.freeze_panes == "C4"


def test_tabular_sheets_are_excel_tables_with_unique_names(book: Any) -> None:
    names = []
    for ws in book.worksheets:
        if ws.title in {"About", "Charts"}:
            assert not ws.tables, ws.title
            continue
        assert len(ws.tables) == 1, ws.title
        (table,) = ws.tables.values()
        names.append(table.displayName)
        assert re.fullmatch(r"[A-Za-z][A-Za-z0-9]*", table.displayName), table.displayName
        first, last = table.ref.split(":")
        assert int(re.sub(r"[A-Z]+", "", last)) == ws.max_row, ws.title
        headers = [c.value for c in _header_cells(ws)[1:]]
        assert None not in headers, ws.title
        assert len({str(h).casefold() for h in headers}) == len(headers), ws.title  # as Excel
        assert ws.print_title_rows == f"${first[1:]}:${first[1:]}", ws.title
    assert len(set(names)) == len(names)


def test_every_number_and_date_has_a_number_format(book: Any) -> None:
    counted = 0
    for ws in book.worksheets:
        for row in ws.iter_rows():
            for cell in row:
                value = cell.value
                if isinstance(value, bool) or not isinstance(value, int | float | dt.datetime):
                    continue
                counted += 1
                assert cell.number_format not in ("General", TEXT), (ws.title, cell.coordinate)
                if isinstance(value, dt.datetime):
                    assert "yyyy" in cell.number_format, (ws.title, cell.coordinate)
                if cell.number_format.endswith("%"):
                    assert -1.0 <= value <= 1.0, (ws.title, cell.coordinate, value)  # a fraction
    assert counted > 1000


def test_number_formats_follow_the_units(built: Built, book: Any) -> None:
    formats = {c.header: c.number_format for c in SUMMARY.columns}
    assert formats["Ward peak demand [beds]"] == "#,##0"  # whole beds on the summary
    assert formats["Residents infected [%]"] == "0.0%"
    daily = {c.header: c.number_format for c in DAILY.columns}
    assert daily["Ward demand [beds]"] == "#,##0.0"  # one decimal on the daily model output
    ws = book["Summary"]
    headers = [c.value for c in ws[1]]
    for header, number_format in formats.items():
        col = headers.index(header) + 1
        for row in range(2, ws.max_row + 1):
            if ws.cell(row, col).value is not None and number_format != TEXT:
                assert ws.cell(row, col).number_format == number_format, (header, row)


def test_the_column_guide_explains_every_header_of_every_table(book: Any) -> None:
    guide = book["Column guide"]
    rows = [[c.value for c in r] for r in guide.iter_rows(min_row=2)]
    described = {(r[0], r[1]) for r in rows}
    assert all(r[5] for r in rows), "every row has a meaning"
    for ws in book.worksheets:
        sheet = "Daily N with / without" if ws.title.startswith("Daily ") else ws.title
        for cell in _header_cells(ws)[1:]:
            if ws.title != "Column guide":
                assert (sheet, cell.value) in described, (ws.title, cell.value)
    metrics = [r for r in rows if r[0] == "Uncertainty" and str(r[1]).startswith("Metric: ")]
    assert {r[3] for r in metrics} == set(SUMMARY_METRICS)  # every metric of the ensemble
    assert len(metrics) == len(SUMMARY_METRICS)


def test_page_header_text_from_the_plan_is_escaped_and_kept_short(built: Built) -> None:
    long_name = "Winter & spring wave " * 10
    scenarios = list(built.results.scenarios)
    scenarios[0] = dataclasses.replace(
        scenarios[0], scenario=dataclasses.replace(scenarios[0].scenario, name=long_name))
    results = PlanResults(scenarios=tuple(scenarios),
                          transmissibility_by_level=built.results.transmissibility_by_level)
    wb = openpyxl.load_workbook(io.BytesIO(rw.results_workbook_bytes(
        built.plan, results, version="9.9", generated=WHEN)))
    center = wb[rw.daily_sheet_name(1, "with")].oddHeader.center.text
    assert "Winter && spring" in center and len(center) < 110
    assert "& " not in center.replace("&&", "")


# ---- Printed with LibreOffice --------------------------------------------------------------------

SOFFICE = shutil.which("soffice") or shutil.which("libreoffice")
needs_soffice = pytest.mark.skipif(
    SOFFICE is None or shutil.which("pdftotext") is None,
    reason="LibreOffice (soffice) and pdftotext are needed to print the workbook; CI installs them",
)


def _printed_pages(data: bytes, tmp_path: Path) -> list[str]:
    """Text of each page of the workbook printed to PDF by LibreOffice headless."""
    source = tmp_path / "results.xlsx"
    source.write_bytes(data)
    profile = tmp_path / "profile"
    subprocess.run(
        [str(SOFFICE), f"-env:UserInstallation=file://{profile}", "--headless",
         "--convert-to", "pdf", "--outdir", str(tmp_path), str(source)],
        check=True, capture_output=True, timeout=180,
    )
    text = subprocess.run(["pdftotext", "-layout", str(tmp_path / "results.pdf"), "-"],
                          check=True, capture_output=True, timeout=60).stdout.decode()
    return text.split("\f")


@needs_soffice
def test_libreoffice_prints_the_summary_on_at_most_two_pages(built: Built,
                                                              tmp_path: Path) -> None:
    # Many scenarios: the plan's three, eight times over (48 rows of the Summary); their
    # daily series cut to ten days, which the Summary does not use, to print fewer pages.
    def short(run: Any) -> Any:
        return dataclasses.replace(run, daily=run.daily.iloc[:10])

    scenarios = tuple(
        dataclasses.replace(item, with_interventions=short(item.with_interventions),
                            without_interventions=short(item.without_interventions))
        for item in built.results.scenarios
    )
    results = PlanResults(scenarios=scenarios * 8,
                          transmissibility_by_level=built.results.transmissibility_by_level)
    data = rw.results_workbook_bytes(built.plan, results, version="9.9", generated=WHEN)
    pages = _printed_pages(data, tmp_path)
    summary = [i for i, page in enumerate(pages) if "Summary: headline figures" in page]
    assert 1 <= len(summary) <= 2, summary
    assert summary == list(range(summary[0], summary[0] + len(summary)))
    first = pages[summary[0]]
    assert "Ward peak" in first and "Tamsett Hollow" in first  # titles and page header printed
    assert "Residents" in first  # the last column is on the page: one page wide


def test_letter_paper_and_an_empty_inputs_table(built: Built) -> None:
    plan = dataclasses.replace(
        built.plan,
        details=dataclasses.replace(built.plan.details, page_size="Letter"),
        source=dataclasses.replace(built.plan.source, inputs=()),
    )
    wb = openpyxl.load_workbook(io.BytesIO(rw.results_workbook_bytes(
        plan, built.results, version="9.9", generated=WHEN)))
    assert {str(ws.page_setup.paperSize) for ws in wb.worksheets} == {"1"}  # 1 = Letter
    inputs = wb["Inputs"]
    (table,) = inputs.tables.values()
    assert table.ref == "A1:F2"  # a table keeps one (empty) row below its header
    assert inputs.print_area == "'Inputs'!$A$1:$F$1"
