"""One test per validation rule: each names the sheet and cell of the problem."""

from __future__ import annotations

import datetime as dt
from typing import Any

import pytest
from conftest import Editor

from prepkit.errors import Problem
from prepkit.workbook.sheets import (
    DISEASE,
    DISEASE_BY_AGE,
    HOSPITALS,
    MATRIX_SHEETS,
    MEASURES,
    MIXING,
    OBSERVED,
    PLAN,
    POPULATION,
    SCENARIOS,
    SEVERITY,
    WORKFORCE,
)

POP, MIX, DIS, BY_AGE, SEV = (POPULATION, MIXING, DISEASE,
                              DISEASE_BY_AGE, SEVERITY)
MEAS, SCEN, OBS = MEASURES, SCENARIOS, OBSERVED


def _at(problems: tuple[Problem, ...], cell: Any) -> Problem:
    """The problem at a cell (exactly one)."""
    sheet = cell.parent.title
    found = [p for p in problems if (p.sheet, p.cell) == (sheet, cell.coordinate)]
    assert len(found) == 1, "\n".join(str(p) for p in problems)
    return found[0]


def _only_at(editor: Editor, cell: Any) -> Problem:
    problem = editor.only_problem()
    assert (problem.sheet, problem.cell) == (cell.parent.title, cell.coordinate), str(problem)
    return problem


def _warning_at(editor: Editor, cell: Any) -> Problem:
    _, warnings = editor.read()
    assert [(w.sheet, w.cell) for w in warnings] == [(cell.parent.title, cell.coordinate)], (
        "\n".join(str(w) for w in warnings))
    assert warnings[0].severity == "warning"
    return warnings[0]


# ---- Single-field rules -------------------------------------------------------------------

def test_wrong_type_names_the_cell_expected_and_found(editor: Editor) -> None:
    cell = editor.item(HOSPITALS, "Staffed ward beds")
    cell.value = "many"
    problem = _only_at(editor, cell)
    assert str(problem) == (f"Hospitals!{cell.coordinate} (Staffed ward beds): expected a whole "
                            'number between 0 and 1,000,000, found "many"')


def test_out_of_range_value_is_an_error(editor: Editor) -> None:
    cell = editor.item(PLAN, "Days to look ahead")
    cell.value = 0
    assert _only_at(editor, cell).expected == "a whole number between 1 and 730"


def test_whole_number_fields_refuse_fractions(editor: Editor) -> None:
    cell = editor.item(PLAN, "Uncertainty draws")
    cell.value = 2.5
    assert _only_at(editor, cell).found == "2.5"


def test_required_blank_is_an_error(editor: Editor) -> None:
    cell = editor.item(PLAN, "Prepared by")
    cell.value = None
    assert _only_at(editor, cell).found == "a blank cell"


def test_choice_must_be_one_of_the_list(editor: Editor) -> None:
    cell = editor.table(MEAS, "Kind", "Vaccine")
    cell.value = "Lockdown"
    problem = _only_at(editor, cell)
    assert problem.expected == "one of 'Fewer contacts', 'Vaccination', 'Isolation of cases'"
    assert problem.field == "Kind, measure Vaccine"


def test_share_problem_names_level_and_band(editor: Editor) -> None:
    cell = editor.table(SEV, "ICU share of admissions, central [%]", "65+")
    cell.value = 1.4
    cell.number_format = "General"
    problem = _only_at(editor, cell)
    assert str(problem) == (
        f"Severity!{cell.coordinate} (ICU share of admissions, central, band 65+): expected a "
        "share between 0 and 1 (e.g. 25% or 0.25), found 1.4 (did you mean 1.4%? Type 1.4% or "
        "0.014)")


# A share typed as a whole number of percent: common practice, no source (spreadsheets store
# 75% as 0.75, so a 75 typed into a percent-formatted cell is shown as 7500%).

def test_whole_percent_in_a_percent_cell_of_a_table_asks_did_you_mean(editor: Editor) -> None:
    cell = editor.table(SEV, "ICU share of admissions, central [%]", "65+")
    cell.value = 75
    cell.number_format = "0%"
    assert str(_only_at(editor, cell)) == (
        f"Severity!{cell.coordinate} (ICU share of admissions, central, band 65+): expected a "
        "share between 0 and 1 (e.g. 25% or 0.25), found 7500% (did you mean 75%? Type 75% or "
        "0.75)")


@pytest.mark.parametrize("level", ["low", "high"])
def test_whole_percent_in_a_low_or_high_column_asks_did_you_mean(editor: Editor, level: str
                                                                 ) -> None:
    cell = editor.table(BY_AGE, f"With symptoms, {level} [%]", "18-64")
    cell.value = 60
    cell.number_format = "General"
    assert _at(editor.problems(), cell).found == "60 (did you mean 60%? Type 60% or 0.6)"


def test_whole_percent_typed_as_text_in_an_item_asks_did_you_mean(editor: Editor) -> None:
    cell = editor.item(HOSPITALS, "Ward beds used by other patients")
    cell.value = "85"
    assert _only_at(editor, cell).found == '"85" (did you mean 85%? Type 85% or 0.85)'


def test_no_percent_hint_where_a_hundredth_is_still_out_of_range(editor: Editor) -> None:
    cell = editor.item(DISEASE, "Seasonal swing")  # at most 90%
    cell.value = 95
    cell.number_format = "General"
    assert _only_at(editor, cell).found == "95"
    cell.value = 250
    assert _only_at(editor, cell).found == "250"


def test_whole_percent_occupancy_trigger_asks_did_you_mean(editor: Editor) -> None:
    cell = editor.table(MEAS, "Start level [% or per day]", "Isolation")  # ward occupancy
    cell.value = 80
    cell.number_format = "General"
    assert _only_at(editor, cell).found == "80 (did you mean 80%? Type 80% or 0.8)"


def test_percent_formatted_share_is_shown_as_typed(editor: Editor) -> None:
    cell = editor.table(SEV, "ICU share of admissions, central [%]", "65+")
    cell.value = 1.4
    cell.number_format = "0%"
    assert _only_at(editor, cell).found.startswith("140% (did you mean 1.4%?")


# ---- Bands --------------------------------------------------------------------------------

def test_more_than_twenty_bands_is_an_error(editor: Editor) -> None:
    ws = editor.wb[POP]
    for i in range(21):
        row = 5 + i
        ws.cell(row, 1, f"b{i}")
        ws.cell(row, 2, i)
        ws.cell(row, 3, i if i < 20 else None)
        ws.cell(row, 4, 100)
    problems = editor.problems()
    too_many = [p for p in problems if p.expected == "at most 20 bands"]
    assert [(p.sheet, p.cell, p.found) for p in too_many] == [(POP, "A25", "21 bands")]


def test_first_band_must_start_at_age_zero(editor: Editor) -> None:
    cell = editor.table(POP, "Lowest age [years]", "0-17")
    cell.value = 1
    assert "0 for the youngest band" in _only_at(editor, cell).expected


def _two_problems(editor: Editor) -> tuple[Problem, ...]:
    problems = editor.problems()
    assert len(problems) == 2, "\n".join(str(p) for p in problems)
    return problems


def test_gap_between_bands_is_shown_at_both_ends(editor: Editor) -> None:
    cell = editor.table(POP, "Lowest age [years]", "18-64")
    cell.value = 19
    problems = _two_problems(editor)
    assert _at(problems, cell).expected.startswith("18, one more than the highest age of band "
                                                   "0-17")
    end = editor.table(POP, "Highest age [years]", "0-17")
    assert _at(problems, end).expected.startswith("18, one less than the lowest age of band "
                                                  "18-64")


def test_overlap_made_at_a_lowest_age_is_shown_there_and_at_the_band_before(
    editor: Editor,
) -> None:
    cell = editor.table(POP, "Lowest age [years]", "65+")
    cell.value = 60
    problems = _two_problems(editor)
    assert _at(problems, cell).expected.startswith("65, one more")
    end = editor.table(POP, "Highest age [years]", "18-64")
    assert _at(problems, end).expected == (
        "59, one less than the lowest age of band 65+ (bands follow on without gaps or overlaps)")


def test_overlap_made_at_a_highest_age_is_shown_there_and_at_the_next_band(
    editor: Editor,
) -> None:
    cell = editor.table(POP, "Highest age [years]", "18-64")
    cell.value = 70
    problems = _two_problems(editor)
    assert str(_at(problems, cell)) == (
        f"Population!{cell.coordinate} (Highest age, band 18-64): expected 64, one less than the "
        "lowest age of band 65+ (bands follow on without gaps or overlaps), found 70")
    start = editor.table(POP, "Lowest age [years]", "65+")
    assert _at(problems, start).expected.startswith("71, one more than the highest age of band "
                                                    "18-64")


def test_only_the_last_band_may_leave_highest_age_blank(editor: Editor) -> None:
    cell = editor.table(POP, "Highest age [years]", "18-64")
    cell.value = None
    assert "only the oldest band" in _only_at(editor, cell).expected


def test_highest_age_below_lowest_age_is_an_error(editor: Editor) -> None:
    cell = editor.table(POP, "Highest age [years]", "18-64")
    cell.value = 10
    problems = editor.problems()
    assert _at(problems, cell).expected == "at least the lowest age (18)"


def test_band_labels_must_be_unique(editor: Editor) -> None:
    cell = editor.table(POP, "Band", "65+")
    cell.value = "18-64"
    problems = editor.problems()
    assert _at(problems, cell).expected == "a band label used once"


def test_population_rows_may_be_in_any_order_but_plan_bands_go_by_age(editor: Editor) -> None:
    ws = editor.wb[POP]
    for col in range(1, 7):
        a, b = ws.cell(5, col), ws.cell(7, col)
        a.value, b.value = b.value, a.value
    plan, _ = editor.read()
    assert [b.label for b in plan.bands] == ["0-17", "18-64", "65+"]


# ---- Per-band tables ----------------------------------------------------------------------

def test_per_band_table_missing_a_band_points_below_the_table(editor: Editor) -> None:
    ws = editor.wb[SEV]
    row = editor.table(SEV, "Band", "65+").row
    for col in range(1, ws.max_column + 1):
        ws.cell(row, col).value = None
    problem = editor.only_problem()
    assert (problem.sheet, problem.cell) == (SEV, f"A{row}")
    assert problem.expected == "a row for band 65+"


def test_per_band_table_with_an_unknown_band_is_an_error(editor: Editor) -> None:
    ws = editor.wb[BY_AGE]
    row = editor.table(BY_AGE, "Band", "65+").row + 1
    ws.cell(row, 1, "80+")
    ws.cell(row, 5, 1.0)
    problem = _only_at(editor, ws.cell(row, 1))
    assert problem.expected == "a band label from the Population sheet (0-17, 18-64, 65+)"


def test_per_band_table_with_a_band_twice_is_an_error(editor: Editor) -> None:
    ws = editor.wb[BY_AGE]
    row = editor.table(BY_AGE, "Band", "65+").row + 1
    ws.cell(row, 1, "0-17")
    ws.cell(row, 5, 1.0)
    assert _only_at(editor, ws.cell(row, 1)).expected == "one row for band 0-17"


def test_band_labels_match_ignoring_case_spaces_and_dash_kind(editor: Editor) -> None:
    editor.table(SEV, "Band", "18-64").value = " 18\u201364 "
    plan, _ = editor.read()
    assert plan.severity.icu_share[1].central == 0.15


def test_setting_shares_may_not_exceed_the_whole(editor: Editor) -> None:
    cell = editor.table(MIX, "At work [%]", "0-17")
    cell.value = 0.5
    assert _only_at(editor, cell).found == "a total of 120%"


def test_simple_contacts_need_daily_contacts_for_every_band(editor: Editor) -> None:
    cell = editor.table(MIX, "Daily contacts [per day]", "18-64")
    cell.value = None
    _only_at(editor, cell)


# ---- Contact matrices ---------------------------------------------------------------------

def _fill_matrix(editor: Editor, sheet: str, value: float = 1.0) -> None:
    ws = editor.wb[sheet]
    for r in range(6, 9):
        for c in range(2, 5):
            ws.cell(r, c, value)


def test_filled_matrices_replace_the_simple_form_with_a_warning(editor: Editor) -> None:
    for sheet in MATRIX_SHEETS.values():
        _fill_matrix(editor, sheet)
    plan, warnings = editor.read()
    assert plan.contacts.uses_matrices and plan.contacts.mean_daily is None
    assert [(w.sheet, w.cell) for w in warnings] == [(MIX, editor.table(MIX, "Band", "0-17")
                                                      .coordinate)]


def test_matrix_labels_in_any_order_are_put_in_band_order(editor: Editor) -> None:
    for sheet in MATRIX_SHEETS.values():
        _fill_matrix(editor, sheet)
    ws = editor.wb[MATRIX_SHEETS["home"]]
    ws["B5"], ws["D5"] = "65+", "0-17"  # swap two column labels
    ws["B6"] = 7.0  # row 0-17, column now 65+
    plan, _ = editor.read()
    assert plan.contacts.matrices is not None
    assert plan.contacts.matrices["home"][0] == (1.0, 1.0, 7.0)


def test_one_matrix_filled_needs_all_four_complete(editor: Editor) -> None:
    _fill_matrix(editor, MATRIX_SHEETS["home"])
    problems = editor.problems()
    assert [(p.sheet, p.cell) for p in problems] == [
        (MATRIX_SHEETS[s], "B6") for s in ("school", "work", "community")]
    assert all(p.found == "no numbers on this sheet" for p in problems)


def test_partly_filled_matrix_reports_each_blank_cell(editor: Editor) -> None:
    for sheet in MATRIX_SHEETS.values():
        _fill_matrix(editor, sheet)
    cell = editor.wb[MATRIX_SHEETS["school"]]["C8"]
    cell.value = None
    assert _only_at(editor, cell).found == "a blank cell"


def test_negative_matrix_entry_is_an_error(editor: Editor) -> None:
    for sheet in MATRIX_SHEETS.values():
        _fill_matrix(editor, sheet)
    cell = editor.wb[MATRIX_SHEETS["work"]]["C7"]
    cell.value = -1
    assert _only_at(editor, cell).field == "Work contacts, band 18-64 meeting band 18-64"


def test_matrix_missing_a_band_label_is_not_square(editor: Editor) -> None:
    for sheet in MATRIX_SHEETS.values():
        _fill_matrix(editor, sheet)
    ws = editor.wb[MATRIX_SHEETS["school"]]
    ws["D5"] = None
    problems = editor.problems()
    assert any(p.sheet == ws.title and p.expected.startswith("a column labelled 65+")
               for p in problems)
    assert all(p.sheet == ws.title for p in problems)


def test_matrix_label_that_is_no_band_is_an_error(editor: Editor) -> None:
    for sheet in MATRIX_SHEETS.values():
        _fill_matrix(editor, sheet)
    cell = editor.wb[MATRIX_SHEETS["community"]]["A7"]
    cell.value = "adults"
    problems = editor.problems()
    assert _at(problems, cell).expected.startswith("a band label from the Population sheet")


# ---- Disease ------------------------------------------------------------------------------

def test_no_transmissibility_measure_is_an_error(editor: Editor) -> None:
    for level in ("low", "central", "high"):
        editor.item(DIS, "R0", level).value = None
    problem = _only_at(editor, editor.item(DIS, "R0"))
    assert problem.found == "none given"


def test_two_transmissibility_measures_are_an_error(editor: Editor) -> None:
    cell = editor.item(DIS, "Doubling time")
    cell.value = 3
    assert "a second one" in _only_at(editor, cell).found


def test_low_or_high_without_central_is_an_error(editor: Editor) -> None:
    cell = editor.item(DIS, "Growth rate", "low")
    cell.value = 0.1
    assert "Central" in _only_at(editor, cell).expected


def test_low_above_central_is_an_error(editor: Editor) -> None:
    cell = editor.item(DIS, "Latent period", "low")
    cell.value = 3.2
    assert _only_at(editor, cell).expected == "at most the Central value (3)"


def test_high_below_central_in_a_table_is_an_error(editor: Editor) -> None:
    cell = editor.table(SEV, "Ward length of stay, high [days]", "65+")
    cell.value = 7
    assert _only_at(editor, cell).expected == "at least the Central value (8)"


def test_doubling_time_levels_are_ordered_too(editor: Editor) -> None:
    for level in ("low", "central", "high"):
        editor.item(DIS, "R0", level).value = None
    editor.item(DIS, "Doubling time", "low").value = 5
    editor.item(DIS, "Doubling time").value = 4
    _only_at(editor, editor.item(DIS, "Doubling time", "low"))


def test_admitted_share_may_not_exceed_symptomatic_share(editor: Editor) -> None:
    cell = editor.table(SEV, "Admitted per infection, central [%]", "65+")
    cell.value = 0.8
    editor.table(SEV, "Admitted per infection, high [%]", "65+").value = 0.8
    problems = editor.problems()
    assert len(problems) == 2  # central and high
    expected = _at(problems, cell).expected
    assert expected.startswith("at most the share with symptoms (75%, 'Disease by age'!C")


def test_seasonal_swing_needs_a_peak_date(editor: Editor) -> None:
    cell = editor.item(DIS, "Seasonal peak date")
    cell.value = None
    assert "seasonal swing" in _only_at(editor, cell).expected


def test_youngest_working_age_not_above_oldest(editor: Editor) -> None:
    editor.item(WORKFORCE, "Youngest working age").value = 70
    cell = editor.item(WORKFORCE, "Oldest working age")
    assert _only_at(editor, cell).expected == "at least the youngest working age (70)"


# ---- Measures -----------------------------------------------------------------------------

def test_measure_names_must_be_unique(editor: Editor) -> None:
    cell = editor.table(MEAS, "Measure", "Isolation")
    cell.value = "Vaccine"
    editor.table(SCEN, "Measures applied", "All measures").value = "School closure; Vaccine"
    assert _only_at(editor, cell).expected == "a measure name used once"


def test_measure_names_may_not_hold_list_separators(editor: Editor) -> None:
    cell = editor.table(MEAS, "Measure", "Isolation")
    cell.value = "Isolation; strict"
    editor.table(SCEN, "Measures applied", "All measures").value = "Vaccine"
    assert "without ';'" in _only_at(editor, cell).expected


def test_date_start_needs_a_start_date(editor: Editor) -> None:
    cell = editor.table(MEAS, "Start date", "Vaccine")
    cell.value = None
    assert "starts on a date" in _only_at(editor, cell).expected


def test_level_start_needs_a_start_level(editor: Editor) -> None:
    cell = editor.table(MEAS, "Start level [% or per day]", "Isolation")
    cell.value = None
    _only_at(editor, cell)


def test_occupancy_trigger_is_a_share_of_beds(editor: Editor) -> None:
    cell = editor.table(MEAS, "Start level [% or per day]", "Isolation")
    cell.value = 80
    cell.number_format = "General"
    problems = editor.problems()
    assert _at(problems, cell).expected == (
        "a share of the beds between 0 and 1 (e.g. 80% or 0.8)")


def test_occupancy_trigger_accepts_percent_text(editor: Editor) -> None:
    editor.table(MEAS, "Start level [% or per day]", "Isolation").value = "80%"
    plan, _ = editor.read()
    assert plan.intervention("Isolation").start.level == pytest.approx(0.8)


def test_admissions_trigger_is_a_count_not_a_percentage(editor: Editor) -> None:
    editor.table(MEAS, "Starts", "Isolation").value = "Daily admissions reach"
    cell = editor.table(MEAS, "Start level [% or per day]", "Isolation")
    cell.value = "20%"
    problems = editor.problems()
    assert "not a percentage" in _at(problems, cell).expected


def test_release_needs_a_level_start(editor: Editor) -> None:
    cell = editor.table(MEAS, "Ends", "School closure")
    cell.value = "When the level falls to"
    editor.table(MEAS, "Lasts [days]", "School closure").value = None
    assert "other than 'When the level falls to'" in _only_at(editor, cell).expected


def test_release_level_must_be_below_start_level(editor: Editor) -> None:
    cell = editor.table(MEAS, "Release level [% or per day]", "Isolation")
    cell.value = 0.9
    assert _only_at(editor, cell).expected == "a level below the start level (80%)"


def test_end_date_must_follow_start_date(editor: Editor) -> None:
    editor.table(MEAS, "Ends", "School closure").value = "On a date"
    editor.table(MEAS, "Lasts [days]", "School closure").value = None
    cell = editor.table(MEAS, "End date", "School closure")
    cell.value = dt.date(2027, 1, 20)
    assert _only_at(editor, cell).expected == "a date after the start date (2027-02-01)"


def test_duration_end_needs_a_duration(editor: Editor) -> None:
    cell = editor.table(MEAS, "Lasts [days]", "School closure")
    cell.value = None
    _only_at(editor, cell)


def test_date_start_after_the_horizon_warns(editor: Editor) -> None:
    cell = editor.table(MEAS, "Start date", "Vaccine")
    cell.value = dt.date(2028, 1, 1)
    assert "within the horizon (up to 2027-07-23)" in _warning_at(editor, cell).expected


def test_contacts_measure_keeping_everything_warns(editor: Editor) -> None:
    editor.table(MEAS, "School contacts kept [%]", "School closure").value = 1
    editor.table(MEAS, "Community contacts kept [%]", "School closure").value = None
    _warning_at(editor, editor.table(MEAS, "Home contacts kept [%]", "School closure"))


def test_unused_start_date_on_a_level_start_warns(editor: Editor) -> None:
    cell = editor.table(MEAS, "Start date", "Isolation")
    cell.value = dt.date(2027, 2, 1)
    _warning_at(editor, cell)


def test_vaccination_needs_doses_per_day(editor: Editor) -> None:
    cell = editor.table(MEAS, "Doses per day [per day]", "Vaccine")
    cell.value = None
    assert "needed for vaccination" in _only_at(editor, cell).expected


def test_vaccination_band_order_names_existing_bands(editor: Editor) -> None:
    cell = editor.table(MEAS, "Band order", "Vaccine")
    cell.value = "65+; 80+"
    assert _only_at(editor, cell).found == '"80+", which is not a band'


def test_efficacy_against_admission_at_least_against_infection(editor: Editor) -> None:
    for level in ("low", "high"):
        editor.table(MEAS, f"Efficacy against admission, {level} [%]", "Vaccine").value = None
    cell = editor.table(MEAS, "Efficacy against admission, central [%]", "Vaccine")
    cell.value = 0.45
    assert _only_at(editor, cell).expected == "at least the efficacy against infection (50%)"


def test_isolation_needs_cases_isolated(editor: Editor) -> None:
    cell = editor.table(MEAS, "Cases isolated [%]", "Isolation")
    cell.value = None
    _only_at(editor, cell)


# ---- Scenarios and observed days ----------------------------------------------------------

def test_scenario_names_must_be_unique(editor: Editor) -> None:
    cell = editor.table(SCEN, "Scenario", "All measures")
    cell.value = "No measures"
    assert _only_at(editor, cell).expected == "a scenario name used once"


def test_at_least_one_scenario(editor: Editor) -> None:
    ws = editor.wb[SCEN]
    for row in (5, 6):
        for col in range(1, 7):
            ws.cell(row, col).value = None
    problem = editor.only_problem()
    assert (problem.sheet, problem.cell) == (SCEN, "A5")


def test_scenario_measures_must_exist(editor: Editor) -> None:
    cell = editor.table(SCEN, "Measures applied", "All measures")
    cell.value = "Vaccine; Curfew"
    assert _only_at(editor, cell).found == '"Curfew", which is not a measure'


def test_observed_dates_are_unique(editor: Editor) -> None:
    cell = editor.table(OBS, "Date", dt.date(2027, 1, 12))
    cell.value = dt.date(2027, 1, 11)
    assert _only_at(editor, cell).expected == "one row per date"
