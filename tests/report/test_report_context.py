"""Words and numbers of the briefing pack: formatting, sentences, tables, appendix."""

from __future__ import annotations

import dataclasses
import datetime as dt
from typing import Any

import numpy as np
import pandas as pd
import pytest
from factories import banded_plan

from prepkit.metrics.core import BedMetrics
from prepkit.plan import End, Isolation, Start
from prepkit.plan.records import InputRecord
from prepkit.report.words.assumptions import assumption_groups
from prepkit.report.words.comparison import format_table_date
from prepkit.report.words.ensemble_format import chance_cell, chance_phrase, likely_period
from prepkit.report.words.formatting import (
    Period,
    beds_phrase,
    count_phrase,
    format_about,
    format_date,
    format_days,
    format_number,
    format_percent,
    format_period,
    lower_first,
    periods_over,
    quoted,
    shortfall_beds,
)
from prepkit.report.words.leader import bottom_line, certainty_sentences
from prepkit.report.words.limitations import SMALL_POPULATION, limitations
from prepkit.report.words.measures import measure_what, measure_when
from prepkit.report.words.pack import PackFigures, build_context, provenance_line
from prepkit.report.words.scenario_text import bed_sentence, measures_sentence, surge_sentence
from prepkit.report.words.uncertainty_text import drivers_sentence
from prepkit.report.words.views import brief_cells, scenario_views
from prepkit.scenarios.runs import run_plan

D = dt.date


def bed(**changes: Any) -> BedMetrics:
    values: dict[str, Any] = dict(
        peak_census_persons=330.0,
        peak_demand_beds=302.4,
        peak_date=D(2027, 2, 27),
        available_beds=90.0,
        surge_beds=150.0,
        first_over_capacity_date=D(2027, 2, 10),
        days_over_capacity_days=43,
        days_strained_days=50,
        strain_headroom_beds=80.0,
        unmet_bed_days=5309.0,
        largest_shortfall_beds=212.4,
        surge_trigger_date=D(2027, 2, 9),
        surge_open_date=D(2027, 2, 16),
        first_over_capacity_with_surge_date=D(2027, 2, 10),
        days_over_capacity_with_surge_days=25,
        unmet_bed_days_with_surge=2000.0,
        largest_shortfall_with_surge_beds=92.2,
        unserved_patients_persons=120.0,
        unserved_patients_with_surge_persons=60.0,
    )
    values.update(changes)
    return BedMetrics(**values)


# ---- Formatting ---------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("day", "year", "expected"),
    [(D(2027, 2, 27), True, "27 Feb 2027"), (D(2027, 12, 1), False, "1 Dec"), (None, True, "none")],
)
def test_format_date(day: dt.date | None, year: bool, expected: str) -> None:
    assert format_date(day, year=year) == expected


def test_format_period_prints_the_year_once() -> None:
    assert format_period(D(2027, 2, 9), D(2027, 3, 23)) == "9 Feb to 23 Mar 2027"
    assert format_period(D(2027, 12, 30), D(2028, 1, 2)) == "30 Dec 2027 to 2 Jan 2028"
    assert format_period(D(2027, 5, 1), D(2027, 5, 1)) == "1 May 2027"


@pytest.mark.parametrize(
    ("value", "expected"),
    [
        (302.4, "302"), (1750.2, "1,750"), (6.76, "7"), (9.96, "10"), (1.2, "1"),
        (3.0, "3"), (0.04, "<1"), (0.0, "0"), (-3.25, "-3"), (float("nan"), "n/a"),
        (None, "n/a"),
    ],
)
def test_format_number_gives_whole_beds_and_people(
    value: float | None, expected: str
) -> None:
    assert format_number(value) == expected


def test_a_fraction_of_a_bed_is_not_shown_as_none() -> None:
    assert format_number(0.3, words=True) == "under 1"
    assert beds_phrase(0.3) == "less than one bed"
    assert beds_phrase(1.2) == "1 bed"
    assert beds_phrase(33.4) == "33 beds"


@pytest.mark.parametrize(
    ("peak", "available", "largest", "expected"),
    [
        # Largest shortfall on the peak day against fixed beds: the printed figures subtract.
        (68.6, 17.6, 51.0, 51),   # "69 beds, 51 more than the 18 available"
        (69.4, 17.6, 51.8, 51),   # 69 - 18, not round(51.8) = 52
        (18.4, 17.6, 0.8, 0),     # rounds to "18 against 18": less than one bed
        (0.0, 10.0, 0.0, 0),
        # Shortfall on another day (available beds changed): the shortfall itself, rounded.
        (120.0, 90.0, 40.4, 40),
    ],
)
def test_shortfall_adds_up_as_printed(
    peak: float, available: float, largest: float, expected: int
) -> None:
    assert shortfall_beds(peak, available, largest) == expected


def test_bed_sentence_adds_up() -> None:
    import datetime as dt

    from prepkit.metrics.capacity import BedMetrics

    fields = {f: 0.0 for f in BedMetrics.__dataclass_fields__}
    fields.update(
        available_beds=17.6, peak_demand_beds=69.4, largest_shortfall_beds=51.8,
        peak_date=dt.date(2027, 3, 2), days_over_capacity_days=52,
        first_over_capacity_date=dt.date(2027, 2, 7),
    )
    bed = BedMetrics(**fields)  # type: ignore[arg-type]
    text = bed_sentence(
        "icu", bed, (Period(dt.date(2027, 2, 7), dt.date(2027, 3, 30)),)
    )
    assert "peaking at 69 beds on 2 Mar 2027, 51 more than the 18 available" in text
    assert "." not in text.replace("2027.", "").split("peaking")[1].rstrip(".")


def test_bottom_line_says_both_for_two(small_results: Any) -> None:
    plan, _ = small_results
    roomy = dataclasses.replace(
        plan, capacity=dataclasses.replace(plan.capacity, ward_beds=100_000, icu_beds=100_000)
    )
    roomy = dataclasses.replace(roomy, scenarios=roomy.scenarios[:2])
    views = scenario_views(roomy, run_plan(roomy))
    assert len(views) == 2
    assert "available ward and ICU beds in both scenarios." in bottom_line(views)[0]


@pytest.mark.parametrize(
    ("value", "expected"),
    [(1750.0, "1,800"), (3097.0, "3,100"), (150_123.0, "150,000"), (302.0, "302"), (6.8, "7")],
)
def test_format_about_rounds_large_counts_to_two_figures(value: float, expected: str) -> None:
    assert format_about(value) == expected


@pytest.mark.parametrize(
    ("value", "expected"),
    [(0.2, "fewer than one death"), (1.3, "about one death"), (4.4, "about 4 deaths"),
     (232.0, "about 230 deaths"), (1350.0, "about 1,400 deaths"), (99.6, "about 100 deaths")],
)
def test_count_phrase(value: float, expected: str) -> None:
    assert count_phrase(value, "death", "deaths") == expected


@pytest.mark.parametrize(
    ("share", "expected"),
    [(0.6, "60%"), (0.045, "4.5%"), (0.0004, "<0.1%"), (0.0, "0%"), (None, "n/a"),
     (0.0996, "10%")],
)
def test_format_percent(share: float | None, expected: str) -> None:
    assert format_percent(share) == expected


def test_small_helpers() -> None:
    assert format_days(1) == "1 day" and format_days(1200) == "1,200 days"
    assert quoted("Milder wave") == "\u201cMilder wave\u201d"
    assert lower_first("Basic reproduction number R0") == "basic reproduction number R0"
    assert lower_first("ICU share") == "ICU share"
    assert format_table_date(D(2027, 3, 4), 2027) == "4 Mar"
    assert format_table_date(D(2028, 1, 3), 2027) == "3 Jan 2028"
    assert format_table_date(None, 2027) == "–"


# ---- Periods ------------------------------------------------------------------------------------


def _series(values: list[float]) -> pd.Series:
    return pd.Series(values, index=pd.date_range("2027-01-01", periods=len(values), freq="D"))


def test_periods_over_finds_every_run_and_matches_the_day_count() -> None:
    demand = _series([0, 5, 12, 12, 3, 11, 11, 11])
    periods = periods_over(demand, 10.0)
    assert periods == (
        Period(D(2027, 1, 3), D(2027, 1, 4)),
        Period(D(2027, 1, 6), D(2027, 1, 8)),
    )
    assert sum(p.days for p in periods) == int((demand > 10.0).sum())
    assert periods_over(_series([1, 2]), 10.0) == ()


def test_likely_period_is_the_first_run_at_or_above_one_half() -> None:
    probability = _series([0.1, 0.5, 0.8, 0.4, 0.6])
    assert likely_period(probability) == Period(D(2027, 1, 2), D(2027, 1, 3))
    assert likely_period(_series([0.1, 0.4])) is None


# ---- Sentences ----------------------------------------------------------------------------------


def test_bed_sentence_over_capacity_says_when_how_long_and_by_how_much() -> None:
    periods = (Period(D(2027, 2, 10), D(2027, 3, 24)),)
    text = bed_sentence("ward", bed(), periods, last_day=D(2027, 10, 30))
    assert text == (
        "Ward demand exceeds the 90 available ward beds from 10 Feb to 24 Mar 2027 (43 days), "
        "peaking at 302 beds on 27 Feb 2027, 212 more than the 90 available."
    )


def test_bed_sentence_with_several_periods_and_to_the_end() -> None:
    two = (Period(D(2027, 2, 1), D(2027, 2, 10)), Period(D(2027, 3, 1), D(2027, 3, 5)))
    text = bed_sentence("icu", bed(days_over_capacity_days=15), two)
    assert "on 15 days between 1 Feb to 5 Mar 2027" in text
    last = (Period(D(2027, 9, 1), D(2027, 10, 30)),)
    text = bed_sentence("icu", bed(days_over_capacity_days=60), last, D(2027, 10, 30))
    assert "from 1 Sep 2027 to the end of the period shown (60 days)" in text


def test_bed_sentence_within_capacity_and_without_demand() -> None:
    within = bed_sentence("icu", bed(peak_demand_beds=3.7, days_over_capacity_days=0), ())
    assert within == (
        "ICU demand stays within the 90 available ICU beds, peaking at 4 on 27 Feb 2027."
    )
    none = bed_sentence("ward", bed(peak_demand_beds=0.0, peak_date=None), ())
    assert none == "Ward demand from the outbreak stays at zero."


def test_surge_sentence_cases() -> None:
    assert surge_sentence("ward", bed()) == (
        "Opening the 150 surge ward beds (ready from 16 Feb 2027) would cut this to 25 days, "
        "with up to 92 beds still short."
    )
    closed = bed(days_over_capacity_with_surge_days=0)
    assert "would close the gap" in surge_sentence("ward", closed)
    assert surge_sentence("ward", bed(surge_beds=0.0)) == ""
    assert surge_sentence("ward", bed(days_over_capacity_days=0)) == ""
    late = bed(days_over_capacity_with_surge_days=43, largest_shortfall_with_surge_beds=212.4)
    assert "too late" in surge_sentence("icu", late)
    never = bed(surge_open_date=None)
    assert "would not open" in surge_sentence("icu", never)


@pytest.fixture(scope="module")
def small_results() -> Any:
    plan = banded_plan(3, horizon=150)
    return plan, run_plan(plan)


def test_measures_sentence_uses_the_effect(small_results: Any) -> None:
    plan, results = small_results
    item = next(s for s in results if s.scenario.interventions)
    text = measures_sentence(item)
    without = item.without_interventions.metrics.ward
    assert text.startswith(
        f"Without its measures, ward demand would peak at "
        f"{format_number(without.peak_demand_beds)} beds on "
        f"{format_date(without.peak_date)}."
    )
    assert "The measures " in text
    bare = dataclasses.replace(item, scenario=dataclasses.replace(item.scenario, interventions=()))
    assert "has no measures" in measures_sentence(bare)


def test_views_brief_and_bottom_line_agree_with_metrics(small_results: Any) -> None:
    plan, results = small_results
    views = scenario_views(plan, results)
    assert [v.name for v in views] == [s.name for s in plan.scenarios]
    for view in views:
        ward = view.with_metrics.ward
        assert sum(p.days for p in view.ward_periods) == ward.days_over_capacity_days
        ward_cell = brief_cells(view, plan.details.day0.year)[0]
        if ward.days_over_capacity_days:
            assert ward_cell.startswith(f"{format_days(ward.days_over_capacity_days)} short from ")
        else:
            assert ward_cell.startswith("Never short; peak ")
    lines = bottom_line(views)
    assert 1 <= len(lines) <= 3
    short = [v for v in views if v.short_of_beds]
    if short:
        assert f"In {len(short)} of the {len(views)} scenarios" in lines[0] or "all" in lines[0]
    else:
        assert "stay within the available" in lines[0]


def test_bottom_line_when_nothing_runs_short(small_results: Any) -> None:
    plan, results = small_results
    roomy = dataclasses.replace(
        plan, capacity=dataclasses.replace(plan.capacity, ward_beds=100_000, icu_beds=100_000)
    )
    views = scenario_views(roomy, run_plan(roomy))
    lines = bottom_line(views)
    assert lines[0].startswith("With the planned measures, outbreak patients stay within")
    top = max(views, key=lambda v: v.with_metrics.ward.peak_demand_beds)
    assert format_number(top.with_metrics.ward.peak_demand_beds) in lines[1]


def test_certainty_without_an_ensemble_names_the_spread(small_results: Any) -> None:
    plan, results = small_results
    views = scenario_views(plan, results)
    text = " ".join(certainty_sentences(plan, views))
    assert "not a range" in text
    off = dataclasses.replace(plan, details=dataclasses.replace(plan.details, draws=0))
    assert "switched off" in " ".join(certainty_sentences(off, views))


@pytest.mark.parametrize(
    ("share", "expected"),
    [(0.0, "none of the"), (0.02, "fewer than 1 in 10"), (0.66, "7 of 10"),
     (0.97, "more than 9 of 10"), (1.0, "all")],
)
def test_chance_phrase(share: float, expected: str) -> None:
    assert chance_phrase(share) == expected
    assert chance_cell(0.0) == "none"


def test_drivers_sentence_names_the_largest_swings() -> None:
    table = pd.DataFrame(
        {
            "label": ["Basic reproduction number R0", "ICU length of stay", "Symptomatic share"],
            "peak_icu_demand_at_low_beds": [21.6, 50.3, 59.7],
            "peak_icu_demand_at_high_beds": [116.7, 70.3, 59.9],
            "swing_beds": [95.1, 20.0, 0.2],
        }
    )
    text = drivers_sentence("Central", table)
    assert text == (
        "In \u201cCentral\u201d the ICU peak depends most on basic reproduction number R0: 22 "
        "beds with it at the low end of its range, 117 at the high end; then on ICU length of "
        "stay (50 and 70)."
    )
    assert drivers_sentence("Central", table.assign(swing_beds=0.0)) == ""


# ---- Measures -----------------------------------------------------------------------------------


def test_measure_when_wording() -> None:
    assert measure_when(Start(kind="date", date=D(2027, 2, 13)),
                              End(kind="date", date=D(2027, 5, 31))) == \
        "From 13 Feb 2027; last day 31 May 2027"
    assert measure_when(Start(kind="ward_occupancy", level=0.6),
                              End(kind="duration", duration_days=56)) == \
        "When ward demand reaches 60% of the available ward beds; for 56 days"
    assert measure_when(Start(kind="admissions", level=25.0),
                              End(kind="release", level=10.0)) == \
        "When admissions reach 25 a day; until the level falls to 10 a day"
    assert measure_when(Start(kind="icu_occupancy", level=0.8),
                              End(kind="horizon")).endswith("to the end of the period")


def test_measure_what_wording(small_results: Any) -> None:
    plan, _ = small_results
    for item in plan.interventions:
        text = measure_what(item)
        assert "compliance" in text
        if item.kind == "contacts":
            assert "of normal" in text
    iso = dataclasses.replace(
        plan.interventions[0], kind="isolation", contacts_kept={},
        isolation=Isolation(isolated_share=0.5, days_from_onset=1.0),
    )
    assert "isolate 1 day after symptoms start" in measure_what(iso)


# ---- Assumptions appendix -----------------------------------------------------------------------


def _record(sheet: str, cell: str, name: str, label: str, value: str, unit: str = "",
            defaulted: bool = False) -> InputRecord:
    return InputRecord(sheet=sheet, cell=cell, name=name, label=label, value=value, unit=unit,
                       defaulted=defaulted)


def test_assumption_groups_keep_every_input_with_its_cell() -> None:
    records = [
        _record("Plan", "B5", "details.jurisdiction", "Jurisdiction", "=1+1"),
        _record("Plan", "B12", "details.page_size", "Paper size", "A4", defaulted=True),
        _record("Scenarios", "B5", "scenario.transmissibility_level",
                "Transmissibility, scenario A", "high"),
        _record("Home contacts", "B6", "matrix.home", "Home contacts, band 0-4 meeting band 0-4",
                "0.8", "per day"),
        _record("Home contacts", "C6", "matrix.home", "Home contacts, band 0-4 meeting band 5+",
                "0.4", "per day"),
        _record("Home contacts", "B7", "matrix.home", "Home contacts, band 5+ meeting band 0-4",
                "0.3", "per day"),
        _record("Population", "A5", "band.label", "Band", "0-4"),
        _record("Population", "D5", "band.people", "People, band 0-4", "100", "persons"),
        _record("Population", "A6", "band.label", "Band", "5+"),
        _record("Population", "D6", "band.people", "People, band 5+", "200", "persons",
                defaulted=True),
    ]
    groups = assumption_groups(records)
    assert [g.sheet for g in groups] == ["Plan", "Population", "Home contacts", "Scenarios"]
    assert sum(g.count for g in groups) == len(records)
    plan_group = groups[0]
    assert [(r.cell, r.value, r.defaulted) for r in plan_group.rows] == [
        ("B5", "=1+1", False), ("B12", "A4", True)
    ]
    scenarios = groups[3]
    # a choice is shown as the workbook shows it
    assert scenarios.grids[0].rows[0][2][0].value == "High"
    matrix = groups[2].grids[0]
    assert groups[2].matrix and groups[2].unit == "per day"
    assert matrix.columns == (("B", "0-4"), ("C", "5+"))
    assert [(n, label) for n, label, _ in matrix.rows] == [(6, "0-4"), (7, "5+")]
    assert [c.value for c in matrix.rows[1][2]] == ["0.3", ""]
    population = groups[1].grids[0]
    assert population.columns == (("A", "Band"), ("D", "People [persons]"))
    assert population.rows[1][2][1].defaulted
    assert population.rows[0][1] == ""  # the key column already names the row


def test_sparse_tables_are_listed_not_gridded() -> None:
    records = [
        _record("Measures", f"{col}{row}", "measure.doses_per_day", f"Doses, measure {row}", "1")
        for row, col in [(5, "A"), (6, "C"), (7, "E"), (8, "G"), (9, "J"), (10, "L")]
    ]
    (group,) = assumption_groups(records)
    assert group.grids == () and len(group.rows) == len(records)


# ---- Provenance and limitations -----------------------------------------------------------------


def test_provenance_line(small_results: Any) -> None:
    plan, _ = small_results
    plan = dataclasses.replace(
        plan, source=dataclasses.replace(plan.source, path="/x/y/plan.xlsx", sha256="ab" * 32)
    )
    line = provenance_line(plan, version="9.9", generated=dt.datetime(2027, 1, 2, 3, 4,
                                                                            tzinfo=dt.UTC))
    assert "input plan.xlsx (SHA-256 abababababab)" in line
    assert "prepkit 9.9" in line and "run 2027-01-02 03:04 UTC" in line
    assert f"seed {plan.details.seed}" in line


def test_limitations_depend_on_the_plan(small_results: Any) -> None:
    plan, _ = small_results
    heads = [h for h, _ in limitations(plan)]
    assert heads[:2] == ["A planning aid, not a forecast", "Who decides"]
    assert ("Chance in a small population" in heads) == (plan.population < SMALL_POPULATION)
    text = " ".join(t for _, t in limitations(plan, ensemble=True))
    assert "Low to High" in text


def test_build_context_is_plain_data(small_results: Any) -> None:
    plan, results = small_results
    context = build_context(
        plan, results, figures=PackFigures(), version="0", generated=dt.datetime(
            2027, 1, 1, tzinfo=dt.UTC),
    )
    assert context["page_size"] == plan.details.page_size
    assert context["ensemble"] is None
    assert len(context["views"]) == len(plan.scenarios)
    assert context["bottom_line"] == bottom_line(context["views"])
    assert np.isclose(
        sum(g.count for g in context["assumptions"]), len(plan.source.inputs)
    )


def test_band_columns_name_the_ensemble_columns_for_any_quantiles() -> None:
    # The report reads the columns the ensemble writes, including fractional percentiles.
    from prepkit.report.words.ensemble_format import band_columns
    from prepkit.uncertainty.results import quantile_label

    assert band_columns((0.05, 0.5, 0.95)) == ("q05", "q50", "q95")
    assert band_columns((0.025, 0.5, 0.975)) == (
        quantile_label(0.025), quantile_label(0.5), quantile_label(0.975)
    )
