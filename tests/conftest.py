"""Shared fixtures: a small valid plan, that plan written as a workbook, an editor.

The plan is minimal and generic (three bands, three measures, two
scenarios); its figures are round test numbers, not estimates of anything.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import subprocess
import sys
from pathlib import Path
from typing import Any

import pytest

from prepkit.errors import Problem
from prepkit.plan import (
    AgeBand,
    Contacts,
    Disease,
    End,
    Intervention,
    Isolation,
    Plan,
    Range3,
    Scenario,
    Severity,
    Start,
    Vaccination,
)
from prepkit.plan.details import Details
from prepkit.plan.records import Observation
from prepkit.plan.resources import Capacity, Workforce
from prepkit.workbook.sheets import (
    CENTRAL_HEADER,
    HIGH_HEADER,
    ITEM_HEADER,
    LOW_HEADER,
    VALUE_HEADER,
)


def small_plan() -> Plan:
    """A valid plan touching every kind of input once."""
    point = Range3.point
    return Plan(
        details=Details(
            jurisdiction="Test jurisdiction", title="Test plan", prepared_by="Test team",
            day0=dt.date(2027, 1, 4), horizon_days=200, draws=50, seed=7, page_size="A4",
        ),
        bands=(
            AgeBand(label="0-17", lower_age=0, upper_age=17, people=20_000.0,
                    high_risk_share=0.05),
            AgeBand(label="18-64", lower_age=18, upper_age=64, people=60_000.0,
                    high_risk_share=0.15),
            AgeBand(label="65+", lower_age=65, upper_age=None, people=15_000.0),
        ),
        contacts=Contacts(
            mean_daily=(10.0, 12.5, 6.0),
            assortativity=0.4,
            setting_shares=(
                {"home": 0.3, "school": 0.4, "work": 0.0},
                {"home": 0.25, "school": 0.05, "work": 0.4},
                {"home": 0.5, "school": 0.0, "work": 0.05},
            ),
        ),
        disease=Disease(
            r0=Range3(low=1.8, central=2.2, high=2.6),
            doubling_time_days=None,
            growth_rate_per_day=None,
            latent_period_days=Range3(low=2.5, central=3.0, high=3.5),
            latent_stages=2,
            infectious_period_days=point(4.0),
            infectious_stages=2,
            symptomatic_share=(Range3(low=0.5, central=0.6, high=0.7), point(0.67), point(0.75)),
            asymptomatic_relative_infectiousness=0.5,
            relative_susceptibility=(0.8, 1.0, 1.1),
            prior_immunity=(0.0, 0.05, 0.1),
            seasonal_amplitude=0.1,
            seasonal_peak=dt.date(2027, 1, 15),
            initial_infections=20.0,
            daily_importations=0.5,
        ),
        severity=Severity(
            admitted_share=(point(0.002), Range3(low=0.008, central=0.01, high=0.015),
                            Range3(low=0.04, central=0.05, high=0.07)),
            icu_share=(point(0.1), point(0.15), Range3(low=0.2, central=0.25, high=0.3)),
            ward_fatality=(0.01, 0.03, 0.12),
            icu_fatality=(0.1, 0.2, 0.4),
            onset_to_admission_days=(4.0, 5.0, 4.0),
            ward_stay_days=(point(3.0), point(5.0), Range3(low=6.0, central=8.0, high=10.0)),
            icu_stay_days=(point(5.0), point(8.0), point(10.0)),
            admission_delay_stages=1,
            ward_stages=2,
            icu_stages=2,
        ),
        capacity=Capacity(
            ward_beds=400, icu_beds=30, ventilators=25, ward_baseline_occupancy=0.85,
            icu_baseline_occupancy=0.7, surge_ward_beds=50, surge_icu_beds=10,
            surge_days_to_open=7.0, surge_trigger_occupancy=0.85, catchment_share=0.9,
        ),
        workforce=Workforce(
            working_age_min=18, working_age_max=64, employed_share=0.75,
            days_absent_per_illness=5.0, carer_share_school_closure=0.1,
        ),
        interventions=(
            Intervention(
                name="School closure", kind="contacts",
                start=Start(kind="date", date=dt.date(2027, 2, 1)),
                end=End(kind="duration", duration_days=42.0),
                contacts_kept={"school": 0.1, "community": 0.9},
                compliance=Range3(low=0.7, central=0.8, high=0.9),
            ),
            Intervention(
                name="Vaccine", kind="vaccination",
                start=Start(kind="date", date=dt.date(2027, 3, 1)),
                end=End(kind="horizon"),
                vaccination=Vaccination(
                    doses_per_day=500.0, priority=(2, 1), uptake_ceiling=0.8,
                    efficacy_infection=Range3(low=0.4, central=0.5, high=0.6),
                    efficacy_severe=Range3(low=0.7, central=0.8, high=0.9),
                    days_to_protection=14.0,
                ),
            ),
            Intervention(
                name="Isolation", kind="isolation",
                start=Start(kind="ward_occupancy", level=0.8),
                end=End(kind="release", level=0.5),
                isolation=Isolation(isolated_share=0.6, days_from_onset=1.0),
            ),
        ),
        scenarios=(
            Scenario(name="No measures", transmissibility_level="central",
                     severity_level="central", interventions=()),
            Scenario(name="All measures", transmissibility_level="high",
                     severity_level="low", interventions=("School closure", "Vaccine",
                                                          "Isolation"),
                     description="Every measure at once."),
        ),
        observed=(
            Observation(date=dt.date(2027, 1, 10), admissions=1.0, ward_census=2.0),
            Observation(date=dt.date(2027, 1, 11), admissions=0.0, ward_census=2.0,
                        icu_census=1.0),
            Observation(date=dt.date(2027, 1, 12), admissions=3.0),
        ),
    )


ENTRY = "from prepkit.cli.main import entry; entry()"
"""The console entry point, run in a fresh interpreter by :func:`run_entry`."""


def run_entry(*args: str, env: dict[str, str] | None = None, timeout: float = 120
              ) -> subprocess.CompletedProcess[str]:
    """Run ``prepkit ARGS`` in a fresh interpreter and capture its output."""
    return subprocess.run([sys.executable, "-c", ENTRY, *args], capture_output=True, text=True,
                          timeout=timeout, check=False, env=env)


def quick_plan() -> Plan:
    """:func:`small_plan` with no draws and a 60-day horizon: a run in well under a second."""
    plan = small_plan()
    return dataclasses.replace(plan, details=dataclasses.replace(plan.details, draws=0,
                                                                 horizon_days=60))


def quick_workbook(folder: Path, plan: Plan | None = None) -> Path:
    """``plan`` (default :func:`quick_plan`) written as ``folder/plan.xlsx``."""
    from prepkit.workbook.template import write_workbook

    path = folder / "plan.xlsx"
    write_workbook(path, plan or quick_plan())
    return path


def assert_no_traceback(text: str) -> None:
    """Fail when a program's output shows a traceback or an internal error."""
    assert "Traceback" not in text and "internal error" not in text, text


@pytest.fixture
def plan() -> Plan:
    """A small valid plan (fresh for each test)."""
    return small_plan()


@pytest.fixture
def plan_path(tmp_path: Path, plan: Plan) -> Path:
    """The small plan written as a filled workbook in a temporary folder."""
    from prepkit.workbook.template import write_workbook

    path = tmp_path / "plan.xlsx"
    write_workbook(path, plan)
    return path


@pytest.fixture
def template_path(tmp_path: Path) -> Path:
    """The blank template written in a temporary folder."""
    from prepkit.workbook.template import write_workbook

    path = tmp_path / "template.xlsx"
    write_workbook(path)
    return path


class Editor:
    """A filled workbook in memory, with cells found the way the reader finds them.

    ``item(sheet, label)`` is the value cell of an item row, ``table(sheet,
    header, key)`` the cell of a table column in the row with that key;
    ``save()`` writes the workbook and ``read()`` / ``problems()`` read it back.
    """

    def __init__(self, plan: Plan | None, folder: Path) -> None:
        from prepkit.workbook.template import build_workbook

        self.wb = build_workbook(plan)
        self.folder = folder
        self.saved = 0

    def _header(self, ws: Any, text: str, after: int = 0) -> tuple[int, int]:
        for row in ws.iter_rows(min_row=after + 1):
            for cell in row:
                if isinstance(cell.value, str) and cell.value.strip() == text:
                    return cell.row, cell.column
        raise KeyError(f"{text!r} on {ws.title}")

    def item(self, sheet: str, label: str, level: str = "central") -> Any:
        from prepkit.workbook import schema

        ws = self.wb[sheet]
        head_row, item_col = self._header(ws, ITEM_HEADER)
        heads = {"low": LOW_HEADER, "high": HIGH_HEADER,
                 "central": CENTRAL_HEADER if schema.sheet_has_uncertain_items(sheet)
                 else VALUE_HEADER}
        col = next(c.column for c in ws[head_row] if c.value == heads[level])
        row = next(r for r in range(head_row + 1, ws.max_row + 1)
                   if ws.cell(r, item_col).value == label)
        return ws.cell(row, col)

    def table(self, sheet: str, header: str, key: object) -> Any:
        from prepkit.workbook import schema

        ws = self.wb[sheet]
        table = next(t for t in schema.TABLES.values() if t.sheet == sheet)
        key_head = schema.header_text(schema.FIELDS_BY_NAME[table.key])
        head_row, key_col = self._header(ws, key_head)
        col = next(c.column for c in ws[head_row] if c.value == header)
        for r in range(head_row + 1, ws.max_row + 1):
            value = ws.cell(r, key_col).value
            if value == key or (isinstance(value, dt.datetime) and value.date() == key):
                return ws.cell(r, col)
        raise KeyError(f"{key!r} on {sheet}")

    def save(self) -> Path:
        self.saved += 1
        path = self.folder / f"edited-{self.saved}.xlsx"
        self.wb.save(path)
        return path

    def read(self) -> tuple[Plan, tuple[Problem, ...]]:
        from prepkit.workbook.reader import read_plan_with_warnings

        return read_plan_with_warnings(self.save())

    def problems(self) -> tuple[Problem, ...]:
        """Errors of the edited workbook (it must fail to read)."""
        from prepkit.errors import WorkbookError
        from prepkit.workbook.reader import read_plan

        with pytest.raises(WorkbookError) as caught:
            read_plan(self.save())
        return caught.value.problems

    def only_problem(self) -> Problem:
        """The single error of the edited workbook."""
        problems = self.problems()
        assert len(problems) == 1, "\n".join(str(p) for p in problems)
        return problems[0]


@pytest.fixture
def editor(tmp_path: Path, plan: Plan) -> Editor:
    """The small plan as an editable workbook."""
    return Editor(plan, tmp_path)
