"""results.xlsx: sheets, numbers as on the Summary, native charts, inputs echoed as text."""

from __future__ import annotations

import dataclasses
import datetime as dt
import io
import zipfile
from typing import Any

import openpyxl
import pytest
from factories import banded_plan

from prepkit.engine import run_plan
from prepkit.plan import InputRecord, Source
from prepkit.report import results_workbook as rw

WHEN = dt.datetime(2027, 1, 2, 3, 4, 5, tzinfo=dt.UTC)
HOSTILE = '=HYPERLINK("http://example.invalid","click")'


def _hostile_plan() -> Any:
    plan = banded_plan(3, horizon=150)
    scenarios = list(plan.scenarios)
    scenarios[0] = dataclasses.replace(scenarios[0], name=HOSTILE)
    records = (
        InputRecord(sheet="Plan", cell="B5", name="details.jurisdiction", label="Jurisdiction",
                    value="+1+1", unit=""),
        InputRecord(sheet="Scenarios", cell="A5", name="scenario.name", label="Scenario",
                    value=HOSTILE, unit=""),
        InputRecord(sheet="Measures", cell="C7", name="measure.compliance",
                    label="Compliance, measure @x", value="-5", unit="%", defaulted=True),
    )
    return dataclasses.replace(
        plan,
        details=dataclasses.replace(plan.details, jurisdiction="@SUM(1)", title="-2+3"),
        scenarios=tuple(scenarios),
        source=Source(path="/tmp/in.xlsx", sha256="ab" * 32, inputs=records),
    )


@pytest.fixture(scope="module")
def built() -> Any:
    plan = _hostile_plan()
    results = run_plan(plan)
    data = rw.results_workbook_bytes(plan, results, version="9.9", generated=WHEN)
    return plan, results, data


def test_sheets_in_order(built: Any) -> None:
    plan, _, data = built
    wb = openpyxl.load_workbook(io.BytesIO(data))
    expected = ["About", "Summary", "Effect of measures", "Charts"]
    for number in range(1, len(plan.scenarios) + 1):
        expected += [rw.daily_sheet_name(number, "with"), rw.daily_sheet_name(number, "without")]
    expected += ["Transmissibility", "Inputs", "Column guide"]
    assert wb.sheetnames == expected


def test_formula_looking_text_stays_text(built: Any) -> None:
    _, _, data = built
    wb = openpyxl.load_workbook(io.BytesIO(data), data_only=False)
    texts = {}
    for ws in wb.worksheets:
        for row in ws.iter_rows():
            for cell in row:
                if isinstance(cell.value, str) and cell.value[:1] in "=+-@":
                    texts[(ws.title, cell.coordinate)] = cell
                    assert cell.data_type == "s", (ws.title, cell.coordinate, cell.value)
    found = {cell.value for cell in texts.values()}
    assert {HOSTILE, "+1+1", "-5", "@SUM(1)"} <= found
    with zipfile.ZipFile(io.BytesIO(data)) as archive:
        for name in archive.namelist():
            if name.startswith("xl/worksheets/sheet"):
                assert b"<f>" not in archive.read(name), name


def test_summary_numbers_are_the_engine_metrics(built: Any) -> None:
    plan, results, data = built
    ws = openpyxl.load_workbook(io.BytesIO(data))["Summary"]
    header = [c.value for c in ws[1]]
    col = header.index("Ward peak demand [beds]") + 1
    date_col = header.index("Ward peak date") + 1
    deaths = header.index("Deaths among hospital patients [persons]") + 1
    row = 2
    for item in results:
        for run in (item.with_interventions, item.without_interventions):
            assert ws.cell(row, 1).value == item.scenario.name
            assert ws.cell(row, col).value == pytest.approx(run.metrics.ward.peak_demand_beds)
            peak = ws.cell(row, date_col).value
            expected = run.metrics.ward.peak_date
            assert (peak.date() if peak is not None else None) == expected
            assert ws.cell(row, deaths).value == pytest.approx(
                run.metrics.total.hospital_deaths_persons)
            row += 1


def test_daily_sheets_hold_the_series(built: Any) -> None:
    _, results, data = built
    wb = openpyxl.load_workbook(io.BytesIO(data))
    ws = wb[rw.daily_sheet_name(2, "without")]
    header = [c.value for c in ws[3]]
    assert header[:2] == ["date", "day"] and "ward_demand_beds" in header
    daily = results.scenarios[1].without_interventions.daily
    col = header.index("ward_demand_beds") + 1
    assert ws.max_row == 3 + len(daily)
    assert ws.cell(4 + 30, col).value == pytest.approx(float(daily["ward_demand_beds"].iloc[30]))
    assert ws.cell(4, 1).value.date() == daily.index[0].date()


def test_native_line_charts_reference_the_daily_sheets(built: Any) -> None:
    plan, _, data = built
    with zipfile.ZipFile(io.BytesIO(data)) as archive:
        charts = [n for n in archive.namelist() if n.startswith("xl/charts/chart")]
        assert len(charts) == 2 * len(plan.scenarios)
        number = next(i for i, s in enumerate(plan.scenarios, start=1) if s.interventions)
        xml = archive.read(f"xl/charts/chart{2 * number - 1}.xml").decode()
    assert "<lineChart>" in xml
    assert f"'Daily {number} with'!" in xml and f"'Daily {number} without'!" in xml
    assert "Demand without measures" in xml and "Available beds" in xml


def test_inputs_are_echoed_with_sheet_and_cell(built: Any) -> None:
    plan, _, data = built
    ws = openpyxl.load_workbook(io.BytesIO(data))["Inputs"]
    rows = [[c.value for c in row] for row in ws.iter_rows(min_row=2)]
    assert [(r[0], r[1], r[3]) for r in rows] == [
        (r.sheet, r.cell, r.value) for r in plan.source.inputs
    ]
    assert rows[2][5] == "yes"


def test_the_file_is_byte_reproducible_and_dated_by_the_run(built: Any) -> None:
    plan, results, data = built
    again = rw.results_workbook_bytes(plan, results, version="9.9", generated=WHEN)
    assert again == data
    wb = openpyxl.load_workbook(io.BytesIO(data))
    assert wb.properties.created == WHEN.replace(tzinfo=None)
    with zipfile.ZipFile(io.BytesIO(data)) as archive:
        core = archive.read("docProps/core.xml").decode()
        assert {i.date_time for i in archive.infolist()} == {(1980, 1, 1, 0, 0, 0)}
    assert "2027-01-02T03:04:05Z</dcterms:modified>" in core


def test_uncertainty_sheets() -> None:
    from prepkit.uncertainty import run_uncertainty

    plan = banded_plan(3, horizon=120)
    results = run_plan(plan)
    ensemble = run_uncertainty(plan, results, draws=12, progress=False)
    data = rw.results_workbook_bytes(plan, results, version="0", generated=WHEN,
                                     extra_sheets=rw.uncertainty_sheets(ensemble))
    wb = openpyxl.load_workbook(io.BytesIO(data))
    assert "Uncertainty" in wb.sheetnames and "Sensitivity" in wb.sheetnames
    ws = wb["Uncertainty"]
    metrics = {ws.cell(r, 3).value for r in range(4, ws.max_row + 1)}
    assert "peak_icu_demand_beds" in metrics
    assert rw.uncertainty_sheets(None) == ()
