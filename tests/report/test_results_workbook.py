"""results.xlsx: sheets, figures equal to the engine's and to summary.json, charts, inputs as text.

The figures are checked against the engine's own results and against the
pack's JSON and CSV files through the names the Column guide gives, so the
guide cannot point at the wrong key. How the sheets print and read is in
``tests/report/test_results_workbook_print.py``.
"""

from __future__ import annotations

import csv
import dataclasses
import datetime as dt
import functools
import io
import re
import zipfile
from typing import Any

import openpyxl
import pytest
from factories import banded_plan

from prepkit.pipeline.summary import summary_dict
from prepkit.plan.records import InputRecord, Source
from prepkit.report import results_workbook as rw
from prepkit.report import results_workbook_columns_scenarios as cols
from prepkit.report.results_workbook_columns import SheetColumns
from prepkit.report.results_workbook_columns_uncertainty import (
    CHANCE,
    METRIC_ROWS,
    SENSITIVITY,
    percentile_words,
    uncertainty_columns,
)
from prepkit.report.tables import daily_csv
from prepkit.scenarios.runs import run_plan
from prepkit.uncertainty.plan_runs import run_uncertainty
from prepkit.uncertainty.results import SUMMARY_METRICS
from prepkit.uncertainty.summary_json import uncertainty_summary_dict

pytestmark = pytest.mark.slow  # writes results workbooks of full runs

WHEN = dt.datetime(2027, 1, 2, 3, 4, 5, tzinfo=dt.UTC)
HOSTILE = '=HYPERLINK("http://example.invalid","click")'
JURISDICTION = "@SUM(1) & Tamsett Hollow"


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
        details=dataclasses.replace(plan.details, jurisdiction=JURISDICTION, title="-2+3"),
        scenarios=tuple(scenarios),
        source=Source(path="/tmp/in.xlsx", sha256="ab" * 32, inputs=records),
    )


@dataclasses.dataclass(frozen=True)
class Built:
    """A plan, its results and ensemble, and the workbook written from them."""

    plan: Any
    results: Any
    ensemble: Any
    data: bytes

    def book(self) -> Any:
        """The workbook as openpyxl reads it back."""
        return openpyxl.load_workbook(io.BytesIO(self.data))


@functools.cache
def built_workbook() -> Built:
    """The hostile plan's results.xlsx with every sheet, built once per test session."""
    plan = _hostile_plan()
    results = run_plan(plan)
    ensemble = run_uncertainty(plan, results, draws=12, quantiles=(0.025, 0.5, 0.9))
    data = rw.results_workbook_bytes(plan, results, version="9.9", generated=WHEN,
                                     extra_sheets=rw.uncertainty_sheets(ensemble))
    return Built(plan=plan, results=results, ensemble=ensemble, data=data)


@pytest.fixture(scope="module")
def built() -> Built:
    return built_workbook()


def test_sheets_in_order(built: Built) -> None:
    expected = ["About", "Summary", "Effect of measures", "Beds in detail", "Totals and peaks",
                "Uncertainty", "Chance of running short", "Sensitivity", "Charts"]
    for number in range(1, len(built.plan.scenarios) + 1):
        expected += [rw.daily_sheet_name(number, "with"), rw.daily_sheet_name(number, "without")]
    expected += ["Transmissibility", "Inputs", "Column guide"]
    assert built.book().sheetnames == expected
    about = [c.value for c in built.book()["About"]["A"]]
    assert [s for s in rw.SHEET_GUIDE if s in about] == list(rw.SHEET_GUIDE)


def test_without_an_ensemble_there_are_no_uncertainty_sheets_or_guide_rows(built: Built) -> None:
    data = rw.results_workbook_bytes(built.plan, built.results, version="9.9", generated=WHEN)
    wb = openpyxl.load_workbook(io.BytesIO(data))
    assert not {"Uncertainty", "Chance of running short", "Sensitivity"} & set(wb.sheetnames)
    guide_sheets = {row[0].value for row in wb["Column guide"].iter_rows(min_row=2)}
    assert "Uncertainty" not in guide_sheets and "Summary" in guide_sheets
    about = {c.value for c in wb["About"]["A"]}
    assert "Uncertainty" not in about and "Summary" in about
    assert rw.uncertainty_sheets(None) == ()


def test_formula_looking_text_stays_text(built: Built) -> None:
    wb = openpyxl.load_workbook(io.BytesIO(built.data), data_only=False)
    found = set()
    for ws in wb.worksheets:
        for row in ws.iter_rows():
            for cell in row:
                if isinstance(cell.value, str) and cell.value[:1] in "=+-@":
                    found.add(cell.value)
                    assert cell.data_type == "s", (ws.title, cell.coordinate, cell.value)
    assert {HOSTILE, "+1+1", "-5", JURISDICTION} <= found
    with zipfile.ZipFile(io.BytesIO(built.data)) as archive:
        for name in archive.namelist():
            if name.startswith("xl/worksheets/sheet"):
                assert b"<f>" not in archive.read(name), name


def _header(ws: Any, row: int = 1) -> list[Any]:
    return [c.value for c in ws[row]]


def test_summary_holds_the_engine_metrics_unrounded(built: Built) -> None:
    ws = built.book()["Summary"]
    assert _header(ws) == cols.SUMMARY.headers
    col = cols.SUMMARY.headers.index("Ward peak demand [beds]") + 1
    date_col = cols.SUMMARY.headers.index("Ward peak date") + 1
    deaths = cols.SUMMARY.headers.index("Deaths in hospital care [people]") + 1
    share = cols.SUMMARY.headers.index("Residents infected [%]") + 1
    # openpyxl writes 16 significant digits; anything coarser would be rounding of ours.
    unrounded = functools.partial(pytest.approx, rel=1e-15, abs=0)
    row = 2
    for item in built.results:
        for run in (item.with_interventions, item.without_interventions):
            assert ws.cell(row, 1).value == item.scenario.name
            assert ws.cell(row, col).value == unrounded(run.metrics.ward.peak_demand_beds)
            peak = ws.cell(row, date_col).value
            assert (peak.date() if peak is not None else None) == run.metrics.ward.peak_date
            assert ws.cell(row, deaths).value == unrounded(
                run.metrics.total.hospital_deaths_persons)
            # A fraction in the cell, a percentage only in its number format.
            assert ws.cell(row, share).value == unrounded(run.metrics.infection_attack_share)
            row += 1
    assert ws.max_row == row - 1


# ---- The Column guide's names lead to the same figures in summary.json -------------------------

_STEP = re.compile(r"^([^\[\]]+)(\[(n|)\])?$")


def _resolve(document: Any, path: str, subs: dict[str, str], index: int | None,
             item: int | None = None) -> Any:
    """Follow a guide name such as ``scenarios[n].<variant>.ward.peak_date`` into the JSON.

    ``[n]`` is the scenario's entry (``index``), ``[]`` the row's entry of a list (``item``).
    """
    for placeholder, value in subs.items():
        path = path.replace(f"<{placeholder}>", value)
    node = document
    for step in path.split("."):
        match = _STEP.match(step)
        assert match, (path, step)
        node = node[match[1]]
        if match[2]:
            position = index if match[3] == "n" else item
            assert position is not None, path
            node = node[position]
    return node


def _same(cell_value: Any, json_value: Any) -> bool:
    if isinstance(cell_value, dt.datetime):
        return json_value == cell_value.date().isoformat()
    if cell_value is None:
        return json_value is None
    if isinstance(cell_value, str):
        return cell_value == json_value
    return json_value == pytest.approx(cell_value, rel=1e-15, abs=1e-300)


_VARIANT_KEYS = {"with measures": "with_interventions", "without measures": "without_interventions"}
_BED_KEYS = {"Ward": "ward", "ICU": "icu"}
_LEVEL_KEYS = {"Low": "low", "Central": "central", "High": "high"}
_METRIC_KEYS = {m.label: m.name for m in METRIC_ROWS}


def _check_sheet(ws: Any, columns: SheetColumns, document: Any, header_row: int,
                 skip: int) -> int:
    """Compare every figure of a sheet with the JSON; returns the number of cells compared."""
    headers = _header(ws, header_row)
    assert headers == columns.headers
    compared = 0
    block_start: dict[tuple[Any, Any], int] = {}
    for r in range(header_row + 1, ws.max_row + 1):
        cells = {h: ws.cell(r, i).value for i, h in enumerate(headers, start=1)}
        number = cells.get("Scenario number")
        index = None if number is None else int(number) - 1
        subs = {"variant": _VARIANT_KEYS.get(str(cells.get("Measures")), ""),
                "beds": _BED_KEYS.get(str(cells.get("Beds")), ""),
                "level": _LEVEL_KEYS.get(str(cells.get("Level")), ""),
                "metric": _METRIC_KEYS.get(str(cells.get("Metric")), "")}
        row_in_block = r - block_start.setdefault((number, cells.get("Measures")), r)
        for c in columns.columns[skip:]:
            path = columns.full_name(c)
            item = None
            if "[]" in path:  # one row per entry of a list: the tornado of the ensemble
                records = _resolve(document, path.split("[]")[0], subs, index)
                item = row_in_block
                if "tornado_unmet_bed_days" in path:  # its own order: match by the input
                    item = [rec["label"] for rec in records].index(cells["Input"])
            expected = _resolve(document, path, subs, index, item)
            assert _same(cells[c.header], expected), (ws.title, r, c.header, expected)
            compared += 1
    return compared


def test_every_figure_is_where_the_column_guide_says_in_summary_json(built: Built) -> None:
    document = summary_dict(built.plan, built.results)
    document["uncertainty"] = uncertainty_summary_dict(built.ensemble)
    wb = built.book()
    quantiles = tuple(built.ensemble.quantiles)
    checks = [
        ("Summary", cols.SUMMARY, 1, 3), ("Totals and peaks", cols.TOTALS, 1, 3),
        ("Beds in detail", cols.BEDS, 1, 4), ("Effect of measures", cols.EFFECT, 1, 3),
        ("Transmissibility", cols.TRANSMISSIBILITY, 1, 2),
        ("Uncertainty", uncertainty_columns(quantiles), 3, 5),
        ("Chance of running short", CHANCE, 3, 4), ("Sensitivity", SENSITIVITY, 3, 5),
    ]
    for sheet, columns, header_row, skip in checks:
        assert _check_sheet(wb[sheet], columns, document, header_row, skip) > 0, sheet
    effect = wb["Effect of measures"]
    assert effect.cell(2, 1).value == document["scenarios"][0]["name"] == HOSTILE
    for row, entry in enumerate(document["scenarios"], start=2):
        assert effect.cell(row, 3).value == ("; ".join(entry["interventions"]) or "none")


def test_the_uncertainty_sheet_names_its_percentiles_in_words(built: Built) -> None:
    ws = built.book()["Uncertainty"]
    assert _header(ws, 3)[5:] == ["Mean", "2.5th percentile", "Median", "90th percentile",
                                  "Central run"]
    metrics = {ws.cell(r, 4).value for r in range(4, ws.max_row + 1)}
    assert metrics == {m.label for m in METRIC_ROWS}
    assert {m.name for m in METRIC_ROWS} == set(SUMMARY_METRICS)


@pytest.mark.parametrize(("q", "words"), [
    # English ordinal suffixes (common practice, no source): 1st 2nd 3rd 4th, 11th-13th, 21st.
    (0.01, "1st percentile"), (0.02, "2nd percentile"), (0.03, "3rd percentile"),
    (0.05, "5th percentile"), (0.11, "11th percentile"), (0.12, "12th percentile"),
    (0.13, "13th percentile"), (0.21, "21st percentile"), (0.22, "22nd percentile"),
    (0.5, "Median"), (0.025, "2.5th percentile"), (0.95, "95th percentile"),
])
def test_percentile_words(q: float, words: str) -> None:
    assert percentile_words(q) == words


def test_daily_sheets_hold_the_series_of_daily_series_csv(built: Built) -> None:
    ws = built.book()[rw.daily_sheet_name(2, "without")]
    assert _header(ws, 3) == cols.DAILY.headers
    daily = built.results.scenarios[1].without_interventions.daily
    assert ws.max_row == 3 + len(daily)
    rows = list(csv.DictReader(io.StringIO(daily_csv(built.results).decode("utf-8-sig"))))
    mine = [r for r in rows
            if r["scenario"] == built.results.scenarios[1].scenario.name
            and r["variant"] == "without measures"]
    assert len(mine) == len(daily)
    for day in (0, 30, len(daily) - 1):
        assert ws.cell(4 + day, 1).value.date().isoformat() == mine[day]["date"]
        for col, c in enumerate(cols.DAILY.columns[1:], start=2):
            value, text = ws.cell(4 + day, col).value, mine[day][c.name]
            # The CSV keeps eight significant digits (tables.csv_number).
            assert value == pytest.approx(float(text), rel=1e-7, abs=1e-12), (day, c.name)
        assert ws.cell(4 + day, 6).value == pytest.approx(
            float(daily["ward_demand_beds"].iloc[day]), rel=1e-15, abs=0)


def test_native_line_charts_reference_the_daily_sheets(built: Built) -> None:
    with zipfile.ZipFile(io.BytesIO(built.data)) as archive:
        charts = [n for n in archive.namelist() if n.startswith("xl/charts/chart")]
        assert len(charts) == 2 * len(built.plan.scenarios)
        number = next(i for i, s in enumerate(built.plan.scenarios, start=1) if s.interventions)
        xml = archive.read(f"xl/charts/chart{2 * number - 1}.xml").decode()
    assert "<lineChart>" in xml
    assert f"'Daily {number} with'!$F$4:$F$153" in xml
    assert f"'Daily {number} without'!$F$4:$F$153" in xml
    assert "Demand without measures" in xml and "Available beds" in xml
    assert 'formatCode="#,##0" sourceLinked="0"' in xml  # whole beds on the axis


def test_inputs_are_echoed_with_sheet_and_cell(built: Built) -> None:
    ws = built.book()["Inputs"]
    assert _header(ws) == cols.INPUTS.headers
    rows = [[c.value for c in row] for row in ws.iter_rows(min_row=2)]
    assert [(r[0], r[1], r[3]) for r in rows] == [
        (r.sheet, r.cell, r.value) for r in built.plan.source.inputs
    ]
    assert rows[2][5] == "yes"


def test_the_file_is_byte_reproducible_and_dated_by_the_run(built: Built) -> None:
    again = rw.results_workbook_bytes(built.plan, built.results, version="9.9", generated=WHEN,
                                      extra_sheets=rw.uncertainty_sheets(built.ensemble))
    assert again == built.data
    wb = built.book()
    assert wb.properties.created == WHEN.replace(tzinfo=None)
    with zipfile.ZipFile(io.BytesIO(built.data)) as archive:
        core = archive.read("docProps/core.xml").decode()
        assert {i.date_time for i in archive.infolist()} == {(1980, 1, 1, 0, 0, 0)}
    assert "2027-01-02T03:04:05Z</dcterms:modified>" in core
