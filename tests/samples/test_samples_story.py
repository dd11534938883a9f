"""The sample workbooks tell one coherent story.

Every date and number a scenario description quotes is checked against the
scenario's own measures and levels as read back from the built workbook with
:func:`prepkit.workbook.read_plan`, by parsing the description here rather
than by calling the phrases of ``build_samples.py``. The model's meaning of a
measure's end date is checked against the workbook's help text.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import importlib.util
import re
import sys
from pathlib import Path
from types import ModuleType

import numpy as np
import pytest

from prepkit.plan import Intervention, Plan, Scenario
from prepkit.scenarios.daily import column_slug
from prepkit.scenarios.runs import run_plan, run_scenario
from prepkit.simulation.inputs import DOUBLING_TIME_LEVEL
from prepkit.workbook import read_plan
from prepkit.workbook.schema import FIELDS_BY_NAME

SAMPLES = Path(__file__).resolve().parents[2] / "sample_workbooks"
WORKBOOKS = ("vellmora_city.xlsx", "tamsett_hollow.xlsx")

MONTHS = ("January", "February", "March", "April", "May", "June", "July", "August",
          "September", "October", "November", "December")
DATE = re.compile(r"\b(\d{1,2}) (" + "|".join(MONTHS) + r")(?: (\d{4}))?\b")
# A number not glued to a word ("R0" is a name, not a number).
NUMBER = re.compile(r"(?<![\w.])\d[\d,]*(?:\.\d+)?%?")
COUNTS = {"one": 1, "two": 2, "both": 2, "three": 3, "four": 4, "five": 5, "six": 6}


def _load_build() -> ModuleType:
    path = SAMPLES / "build_samples.py"
    spec = importlib.util.spec_from_file_location("prepkit_build_samples_story", path)
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = module
    spec.loader.exec_module(module)
    return module


@pytest.fixture(scope="module", params=WORKBOOKS)
def plan(request: pytest.FixtureRequest) -> Plan:
    return read_plan(SAMPLES / request.param)


def _dates(text: str, year: int) -> list[dt.date]:
    return [dt.date(int(y) if y else year, MONTHS.index(m) + 1, int(d))
            for d, m, y in DATE.findall(text)]


def _numbers(text: str) -> list[float]:
    """Numbers quoted outside dates; percentages as fractions."""
    found = []
    for token in NUMBER.findall(DATE.sub(" ", text)):
        value = float(token.rstrip("%").replace(",", ""))
        found.append(value / 100 if token.endswith("%") else value)
    return found


def _parts(description: str) -> tuple[str, str, list[str]]:
    """(levels sentence, count words, one clause per measure) of a description."""
    first, _, rest = description.partition(". ")
    head, _, body = rest.partition(": ")
    clauses = body.removesuffix(".").split("; ") if body else []
    return first, head, clauses


def _measure_numbers(plan: Plan, item: Intervention) -> set[float]:
    """Every number a description may quote for a measure."""
    allowed: set[float] = set()
    start, end = item.start, item.end
    if start.level is not None:
        allowed.add(start.level)
    if end.kind == "duration" and end.duration_days is not None:
        allowed.add(end.duration_days)
    if end.level is not None:
        allowed.add(end.level)
    if end.kind == "date" and start.date is not None and end.date is not None:
        days = (end.date - start.date).days + 1  # days in force, both ends included
        allowed.add(days / 7 if days % 7 == 0 else days)
    if item.vaccination is not None:
        allowed.add(item.vaccination.doses_per_day)
    if item.isolation is not None:
        allowed.update({item.isolation.isolated_share, item.isolation.days_from_onset})
    return allowed


def _transmissibility(plan: Plan, scenario: Scenario) -> tuple[float, str]:
    """(value, column) the model uses for the scenario's transmissibility level."""
    d, level = plan.disease, scenario.transmissibility_level
    if d.r0 is not None:
        return d.r0.at(level), level
    if d.doubling_time_days is not None:
        column = DOUBLING_TIME_LEVEL[level]
        return d.doubling_time_days.at(column), column
    assert d.growth_rate_per_day is not None
    return d.growth_rate_per_day.at(level), level


# ---- Descriptions ------------------------------------------------------------------------------

def test_description_quotes_the_levels_it_runs_at(plan: Plan) -> None:
    for s in plan.scenarios:
        first, _, _ = _parts(s.description)
        value, column = _transmissibility(plan, s)
        assert _numbers(first) == [pytest.approx(value)], s.name
        assert f"the {column.capitalize()} column" in first, s.name
        assert not _dates(first, plan.details.day0.year), s.name


def test_description_counts_and_names_exactly_the_scenario_measures(plan: Plan) -> None:
    for s in plan.scenarios:
        _, head, clauses = _parts(s.description)
        counted = [COUNTS[w] for w in head.lower().split() if w in COUNTS]
        assert counted == [len(s.interventions)], s.name
        assert len(clauses) == len(s.interventions), s.name
        for clause, name in zip(clauses, s.interventions, strict=True):
            assert clause.lower().startswith(name.lower()), (s.name, clause)
        others = {m.name for m in plan.interventions} - set(s.interventions)
        assert not [o for o in others if o.lower() in s.description.lower()], s.name


def test_every_date_in_a_description_is_its_measure_date(plan: Plan) -> None:
    year = plan.details.day0.year
    quoted = 0
    for s in plan.scenarios:
        _, _, clauses = _parts(s.description)
        for clause, name in zip(clauses, s.interventions, strict=True):
            item = plan.intervention(name)
            expected = []
            if item.start.kind == "date":
                expected.append(item.start.date)
            if item.end.kind == "date":
                assert item.end.date is not None
                # The end date is the last day in force (the help text of the End date
                # column), and the description gives it as it is.
                expected.append(item.end.date)
            assert _dates(clause, year) == expected, (s.name, clause)
            quoted += len(expected)
    assert quoted > 0


def test_every_number_in_a_description_is_its_measure_number(plan: Plan) -> None:
    for s in plan.scenarios:
        _, _, clauses = _parts(s.description)
        for clause, name in zip(clauses, s.interventions, strict=True):
            item = plan.intervention(name)
            allowed = _measure_numbers(plan, item)
            for x in _numbers(clause):
                assert any(x == pytest.approx(a) for a in allowed), (s.name, clause, x)
            if item.vaccination is not None:
                assert item.vaccination.doses_per_day in _numbers(clause), clause
            if item.end.kind == "duration":
                assert item.end.duration_days in _numbers(clause), clause


def test_names_say_how_fast_how_severe_and_which_measures(plan: Plan) -> None:
    names = [s.name for s in plan.scenarios]
    assert len(set(names)) == len(names)
    for s in plan.scenarios:
        t, sev, n = s.transmissibility_level, s.severity_level, len(s.interventions)
        assert ("Fast spread" in s.name) == (t == "high"), s.name
        assert ("Slow spread" in s.name) == (t == "low"), s.name
        assert ("severe" in s.name) == (sev == "high"), s.name
        assert ("mild" in s.name) == (sev == "low"), s.name
        assert s.name.startswith("Central figures") == (t == sev == "central"), s.name
        assert s.name.endswith(" only") == (n == 1), s.name
        every = n == len(plan.interventions) > 1
        assert s.name.endswith(("all measures", "both measures")) == every, s.name


def test_no_scenario_calls_itself_the_worst_or_uses_a_stock_phrase(plan: Plan) -> None:
    # The pack names the hardest case from the results; a description only states inputs.
    stock = ("worst", "hardest", "planning case", "reasonable", "surge plan against")
    for s in plan.scenarios:
        text = f"{s.name} {s.description}".lower()
        assert not [w for w in stock if w in text], s.name


def test_notes_quote_the_plans_own_figures_inside_published_ranges() -> None:
    build = _load_build()
    for plan in (build.vellmora_plan(), build.tamsett_hollow_plan()):
        notes = (build.vellmora_notes if "Vellmora" in plan.details.jurisdiction
                 else build.tamsett_hollow_notes)(plan)
        high = build.admitted_per_ill(plan, "high")
        # US HHS Pandemic Influenza Plan 2005, Table 1: 0.96% (moderate) to 11% (severe)
        # of ill people hospitalised.
        assert 0.0096 <= high <= 0.11
        assert f"{100 * high:.1f}%" in notes["band_severity.admitted_share"]
        # Same table: 15% of hospitalised people need ICU care; the note says "close to".
        icu = build.icu_share_overall(plan)
        assert abs(icu - 0.15) <= 0.05
        assert f"{100 * icu:.0f}%" in notes["band_severity.icu_share"]
        people = np.array([b.people for b in plan.bands])
        if plan.contacts.matrices is not None:
            per_band = sum(np.array(m).sum(axis=1) for m in plan.contacts.matrices.values())
        else:
            assert plan.contacts.mean_daily is not None
            per_band = np.array(plan.contacts.mean_daily)
        mean = float(np.asarray(per_band) @ people / people.sum())
        note = next(v for k, v in notes.items() if "contacts/day" in v)
        assert f"{mean:.1f} contacts/day" in note


# ---- What an end date means --------------------------------------------------------------------

def _active_days(plan: Plan, scenario: str, measure: str) -> list[dt.date]:
    daily = run_scenario(plan, scenario).daily
    on = daily[f"active_{column_slug(measure)}"].to_numpy(dtype=bool)
    return [d.date() for d in daily.index[on]]


def test_end_date_is_the_last_day_in_force_as_the_help_says() -> None:
    help_text = FIELDS_BY_NAME["measure.end_date"].help
    assert "the last day in force" in help_text
    plan = read_plan(SAMPLES / "tamsett_hollow.xlsx")
    school = plan.intervention("School closure")
    assert school.start.date is not None and school.end.date is not None
    scenario = next(s.name for s in plan.scenarios if school.name in s.interventions)
    days = _active_days(plan, scenario, school.name)
    assert days[0] == school.start.date
    assert days[-1] == school.end.date
    assert len(days) == (school.end.date - school.start.date).days + 1
    # The description's span is the days in force: six whole weeks here.
    assert "(6 weeks)" in plan.scenario(scenario).description


def test_duration_counts_the_first_day_as_the_help_says() -> None:
    assert "the day it starts counted as the first" in FIELDS_BY_NAME["measure.duration_days"].help
    plan = read_plan(SAMPLES / "vellmora_city.xlsx")
    schools = plan.intervention("Schools closed")
    assert schools.end.kind == "duration" and schools.end.duration_days is not None
    scenario = next(s.name for s in plan.scenarios if schools.name in s.interventions)
    days = _active_days(plan, scenario, schools.name)
    assert len(days) == schools.end.duration_days
    assert (days[-1] - days[0]).days + 1 == len(days)


@pytest.mark.slow
def test_tamsett_hardest_case_is_the_fast_severe_one() -> None:
    plan = read_plan(SAMPLES / "tamsett_hollow.xlsx")
    results = run_plan(dataclasses.replace(
        plan, details=dataclasses.replace(plan.details, draws=0)))
    # The pack calls hardest the scenario with the most unmet ward plus ICU bed-days
    # with its measures.
    unmet = {s.name: (results[s.name].with_interventions.metrics.ward.unmet_bed_days
                      + results[s.name].with_interventions.metrics.icu.unmet_bed_days)
             for s in plan.scenarios}
    assert max(unmet, key=unmet.__getitem__) == "Fast spread, severe, both measures"
