"""daily-series.csv: long form, documented columns, neutralised text, exact numbers."""

from __future__ import annotations

import csv
import dataclasses
import io

import pytest
from factories import banded_plan

from prepkit.report import tables
from prepkit.scenarios.runs import run_plan


def _read(data: bytes) -> list[list[str]]:
    assert data.startswith(b"\xef\xbb\xbf")  # UTF-8 byte order mark for spreadsheet programs
    return list(csv.reader(io.StringIO(data.decode("utf-8-sig"), newline="")))


@pytest.fixture(scope="module")
def results():
    plan = banded_plan(3, horizon=90)
    first = dataclasses.replace(plan.scenarios[0], name="=1+2")
    plan = dataclasses.replace(plan, scenarios=(first, *plan.scenarios[1:]))
    return run_plan(plan)


def test_long_form_one_row_per_scenario_variant_and_day(results) -> None:
    rows = _read(tables.daily_csv(results))
    header, body = rows[0], rows[1:]
    assert header[:4] == ["scenario", "variant", "date", "day"]
    assert header[4:] == [c.name for c in tables.DAILY_COLUMNS]
    days = len(results.scenarios[0].with_interventions.daily)
    assert len(body) == 2 * days * len(results.scenarios)
    assert {r[1] for r in body} == {"with measures", "without measures"}
    assert body[0][2] == "2025-01-01" and body[0][3] == "0" and body[days - 1][3] == str(days - 1)


def test_formula_looking_names_are_neutralised(results) -> None:
    body = _read(tables.daily_csv(results))[1:]
    assert body[0][0] == "'=1+2"
    assert not any(r[0].startswith(("=", "+", "-", "@")) for r in body)


def test_numbers_round_trip_to_eight_digits(results) -> None:
    rows = _read(tables.daily_csv(results))
    header, body = rows[0], rows[1:]
    col = header.index("ward_demand_beds")
    series = results.scenarios[1].with_interventions.daily["ward_demand_beds"]
    row = next(i for i, r in enumerate(body) if r[0] == results.scenarios[1].scenario.name)
    for k in (0, 20, 40):
        assert float(body[row + k][col]) == pytest.approx(float(series.iloc[k]), rel=1e-7)


def test_column_dictionary_documents_every_column() -> None:
    rows = _read(tables.columns_csv())
    assert rows[0] == ["column", "unit", "meaning"]
    names = [r[0] for r in rows[1:]]
    assert names == [c.name for c in (*tables.KEY_COLUMNS, *tables.DAILY_COLUMNS)]
    assert all(r[1] and r[2] for r in rows[1:])


@pytest.mark.parametrize(
    ("value", "expected"),
    [(0.0, "0"), (True, "1"), (float("inf"), ""), (float("nan"), ""), (302.03751843, "302.03752"),
     (1e-12, "1e-12")],
)
def test_csv_number(value: object, expected: str) -> None:
    assert tables.csv_number(value) == expected
