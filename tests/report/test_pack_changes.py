"""The comparison of two packs' inputs and headline figures (prepkit.report.changes).

Every expected row here is worked by hand from the two small records the test
builds; what a cell is and how a difference is taken (new less old, of the
figures as printed) is common practice, no source.
"""

from __future__ import annotations

import copy
from typing import Any

from prepkit.report.changes import (
    CHANGE_KEYS,
    FIGURE_KEYS,
    INPUTS_FORMAT,
    compare_packs,
)
from prepkit.report.words.changes import change_words


def _input(sheet: str, cell: str, name: str, label: str, value: str, unit: str = "",
           levels: tuple[tuple[str, str, str], ...] = ()) -> dict[str, Any]:
    return {"sheet": sheet, "cell": cell, "name": name, "label": label, "value": value,
            "unit": unit, "levels": [{"level": lv, "cell": c, "value": v} for lv, c, v in levels]}


def _inputs(*items: dict[str, Any], sha: str = "aa") -> dict[str, Any]:
    return {"format": INPUTS_FORMAT, "input_file": "plan.xlsx", "input_sha256": sha,
            "inputs": list(items)}


OLD_INPUTS = _inputs(
    _input("Hospitals", "B5", "capacity.icu_beds", "ICU beds", "12", "beds"),
    _input("Hospitals", "B6", "capacity.ward_beds", "Ward beds", "300", "beds"),
    _input("Measures", "A5", "measure.name", "Measure", "Schools closed"),
    _input("Measures", "A6", "measure.name", "Measure", "Masks"),
    _input("Severity", "D7", "severity.icu_share", "ICU share, band 0-4", "20% (low 10%, high 30%)",
           "%", (("low", "C7", "10%"), ("central", "D7", "20%"), ("high", "E7", "30%"))),
    _input("Observed", "B12", "observed.admissions", "New admissions, date 2027-01-11", "3",
           "persons"),
)


def _scenario(name: str, ward_peak: float, icu_peak: float, peak_date: str,
              days_short: int) -> dict[str, Any]:
    return {
        "name": name,
        "with_interventions": {
            "ward": {"peak_demand_beds": ward_peak, "peak_date": peak_date,
                     "days_over_capacity_days": days_short},
            "icu": {"peak_demand_beds": icu_peak, "peak_date": peak_date,
                    "days_over_capacity_days": 0},
            "total": {"admissions_persons": 101.4, "hospital_deaths_persons": 9.2},
            "shortage_deaths_persons": 0.0,
        },
    }


OLD_SUMMARY: dict[str, Any] = {
    "run": {"generated": "2027-01-20T09:00:00Z", "prepkit_version": "0.1.0",
            "input_file": "plan.xlsx", "input_sha256": "aa"},
    "scenarios": [_scenario("Central", 9.6, 3.2, "2027-02-10", 4)],
}


def _new_summary(**changes: Any) -> dict[str, Any]:
    summary = copy.deepcopy(OLD_SUMMARY)
    summary["run"]["generated"] = "2027-01-27T09:00:00Z"
    summary["run"]["input_sha256"] = changes.pop("sha", "aa")
    for key, value in changes.items():
        summary["scenarios"][0]["with_interventions"]["ward"][key] = value
    return summary


def test_the_same_inputs_and_figures_are_no_change() -> None:
    changes = compare_packs(OLD_INPUTS, OLD_SUMMARY, copy.deepcopy(OLD_INPUTS), _new_summary())
    assert changes.inputs == ()
    assert changes.same_workbook
    assert not changes.any  # so the pack shows no page and a rerun gives the same files
    assert change_words(changes) is None


def test_one_changed_cell_is_listed_alone_with_its_sheet_and_cell() -> None:
    new = copy.deepcopy(OLD_INPUTS)
    new["inputs"][0]["value"] = "14"
    new["input_sha256"] = "bb"
    changes = compare_packs(OLD_INPUTS, OLD_SUMMARY, new, _new_summary(sha="bb"))
    assert [c.row() for c in changes.inputs] == [{
        "change": "changed", "sheet": "Hospitals", "cell": "B5", "label": "ICU beds",
        "unit": "beds", "old_value": "12", "new_value": "14"}]
    assert not changes.same_workbook
    assert tuple(changes.inputs[0].row()) == CHANGE_KEYS
    words = change_words(changes)
    assert words is not None
    assert words.inputs == (("Changed", "Hospitals", "B5", "ICU beds", "12 beds", "14 beds"),)
    assert "1 input changed" in words.cover


def test_a_low_value_is_compared_at_its_own_cell() -> None:
    new = copy.deepcopy(OLD_INPUTS)
    new["inputs"][4]["levels"][0]["value"] = "12%"
    new["inputs"][4]["value"] = "20% (low 12%, high 30%)"
    changes = compare_packs(OLD_INPUTS, OLD_SUMMARY, new, _new_summary())
    assert [(c.cell, c.label, c.old_value, c.new_value) for c in changes.inputs] == [
        ("C7", "ICU share, band 0-4 (Low)", "10%", "12%")]


def test_a_renamed_row_and_new_observed_days_are_removed_and_added() -> None:
    new = copy.deepcopy(OLD_INPUTS)
    new["inputs"][3]["value"] = "Masks in shops"
    new["inputs"].append(_input("Observed", "B13", "observed.admissions",
                                "New admissions, date 2027-01-12", "5", "persons"))
    changes = compare_packs(OLD_INPUTS, OLD_SUMMARY, new, _new_summary())
    assert [(c.change, c.cell, c.old_value, c.new_value) for c in changes.inputs] == [
        ("added", "A6", "none", "Masks in shops"),
        ("added", "B13", "none", "5"),
        ("removed", "A6", "Masks", "none"),
    ]
    assert changes.counts() == {"changed": 0, "added": 2, "removed": 1, "figures_moved": 0}


def test_headline_differences_are_of_the_figures_as_printed() -> None:
    # 9.6 beds prints as 10 and 12.4 as 12: the page says 10, 12, +2 (not +2.8), so that
    # old + difference = new as printed; the peak moves from 10 Feb to 15 Feb: +5 days.
    changes = compare_packs(OLD_INPUTS, OLD_SUMMARY, OLD_INPUTS,
                            _new_summary(peak_demand_beds=12.4, peak_date="2027-02-15",
                                         days_over_capacity_days=4))
    rows = {f.figure: f for f in changes.figures}
    assert tuple(rows["Peak ward demand"].row()) == FIGURE_KEYS
    assert (rows["Peak ward demand"].old_value, rows["Peak ward demand"].new_value,
            rows["Peak ward demand"].difference) == ("10", "12", "+2")
    assert (rows["Ward peak on"].old_value, rows["Ward peak on"].new_value,
            rows["Ward peak on"].difference) == ("10 Feb 2027", "15 Feb 2027", "+5 days")
    assert rows["Days short of ward beds"].difference == "no change"
    assert not rows["Days short of ward beds"].moved
    assert changes.any
    assert changes.counts()["figures_moved"] == 2


def test_a_scenario_new_in_this_pack_has_no_earlier_figures() -> None:
    new = _new_summary()
    new["scenarios"].append(_scenario("Slow", 4.0, 1.0, "2027-03-01", 0))
    changes = compare_packs(OLD_INPUTS, OLD_SUMMARY, OLD_INPUTS, new)
    slow = [f for f in changes.figures if f.scenario == "Slow"]
    assert slow and all(f.old_value == "none" and f.difference == "" for f in slow)


def test_an_earlier_pack_without_inputs_compares_the_figures_only() -> None:
    changes = compare_packs(None, OLD_SUMMARY, OLD_INPUTS, _new_summary(peak_demand_beds=20.0))
    assert not changes.inputs_kept and changes.inputs == ()
    words = change_words(changes)
    assert words is not None
    assert any("did not keep its inputs" in sentence for sentence in words.intro)


def test_a_new_prepkit_version_is_said() -> None:
    new = _new_summary()
    new["run"]["prepkit_version"] = "0.2.0"
    changes = compare_packs(OLD_INPUTS, OLD_SUMMARY, OLD_INPUTS, new)
    assert changes.any
    words = change_words(changes)
    assert words is not None
    assert any("prepkit 0.2.0" in sentence for sentence in words.intro)


def test_decide_by_dates_and_verdicts_are_compared_as_the_pack_says_them() -> None:
    # Hand-worked: a decide-by date two days later reads +2 days; a date that has passed says
    # so; a verdict without a date is named, and its difference left blank.
    def decided(date: str | None, verdict: str) -> dict[str, Any]:
        summary = _new_summary()
        summary["decisions"] = {"scenarios": [{"scenario": "Central", "measures_verdict": verdict,
                                               "latest_decision_date": date}]}
        return summary

    def row(old: dict[str, Any], new: dict[str, Any]) -> tuple[str, str, str]:
        changes = compare_packs(OLD_INPUTS, old, OLD_INPUTS, new)
        figure = next(f for f in changes.figures if f.figure == "Decide on the measures by")
        return figure.old_value, figure.new_value, figure.difference

    assert row(decided("2027-01-20", "date"), decided("2027-01-22", "date")) == (
        "20 Jan 2027", "22 Jan 2027", "+2 days")
    assert row(decided("2027-01-20", "date"), decided("2027-01-17", "too_late")) == (
        "20 Jan 2027", "17 Jan 2027 (passed)", "-3 days")
    assert row(decided("2027-01-20", "date"), decided(None, "not_enough")) == (
        "20 Jan 2027", "no date is enough", "")
    assert row(decided(None, "not_enough"), decided(None, "not_enough"))[2] == "no change"


def test_more_surge_beds_show_in_the_days_short_with_surge() -> None:
    new = _new_summary()
    new["scenarios"][0]["with_interventions"]["icu"]["days_over_capacity_with_surge_days"] = 3
    old = copy.deepcopy(OLD_SUMMARY)
    old["scenarios"][0]["with_interventions"]["icu"]["days_over_capacity_with_surge_days"] = 9
    changes = compare_packs(OLD_INPUTS, old, OLD_INPUTS, new)
    figure = next(f for f in changes.figures
                  if f.figure == "Days short of ICU beds with surge beds open")
    assert (figure.old_value, figure.new_value, figure.difference) == ("9", "3", "-6")


def test_a_count_under_one_that_goes_to_none_is_a_change_of_less_than_one() -> None:
    # Hand-worked: 0.3 beds prints as "<1" and 0 as "0"; the figures as printed differ, so the
    # row is moved, and the difference of the whole numbers behind them (0 - 0) is under one.
    old = copy.deepcopy(OLD_SUMMARY)
    old["scenarios"][0]["with_interventions"]["ward"]["peak_demand_beds"] = 0.3
    changes = compare_packs(OLD_INPUTS, old, OLD_INPUTS, _new_summary(peak_demand_beds=0.0))
    row = next(f for f in changes.figures if f.figure == "Peak ward demand")
    assert (row.old_value, row.new_value, row.difference) == ("<1", "0", "less than 1")
    assert row.moved
