"""Problems of the whole plan, which no single cell holds, name the sheets and fields involved.

Before, `check` accepted these plans and `run` stopped with a sentence naming no sheet.
"""

from __future__ import annotations

import dataclasses
from pathlib import Path

import pytest
from conftest import Editor, quick_plan, quick_workbook

from prepkit.cli.main import main
from prepkit.plan import Plan, Range3
from prepkit.workbook.sheets import DISEASE_BY_AGE


def _check_problems(editor_or_plan: Editor | Plan, tmp_path: Path,
                    capsys: pytest.CaptureFixture[str]) -> str:
    if isinstance(editor_or_plan, Editor):
        path = editor_or_plan.save()
    else:
        path = quick_workbook(tmp_path, editor_or_plan)
    assert main(["check", str(path)]) == 2
    return capsys.readouterr().out


def test_nobody_can_infect_anybody_names_the_sheets_and_fields(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    # Before, `check` passed this plan and `run` stopped with "nobody can infect anybody:
    # contacts or infectiousness are all zero", naming no sheet.
    plan = quick_plan()
    still = dataclasses.replace(plan, contacts=dataclasses.replace(plan.contacts,
                                                                   mean_daily=(0.0, 0.0, 0.0)))
    out = _check_problems(still, tmp_path, capsys)
    assert ("Mixing (Daily contacts (Mixing) and Contacts within own band (Mixing), Relative "
            "susceptibility (Disease by age), With symptoms (Disease by age), Infectiousness "
            "without symptoms (Disease)): expected inputs with which the disease can spread") in out
    assert "found nobody can infect anybody: every contact is 0" in out
    immune = dataclasses.replace(plan, disease=dataclasses.replace(
        plan.disease, relative_susceptibility=(0.0, 0.0, 0.0)))
    out = _check_problems(immune, tmp_path, capsys)
    assert "'Disease by age' (Daily contacts" in out
    assert "found nobody can infect anybody: 'Relative susceptibility' is 0 in every band" in out


def test_a_one_way_chain_of_infection_cannot_spread_either(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    # Only band 0-17 is susceptible and only 65+ is infectious: R0 is 0 (no cycle).
    plan = quick_plan()
    none = Range3.point(0.0)
    some = Range3.point(0.5)
    disease = dataclasses.replace(
        plan.disease, relative_susceptibility=(1.0, 0.0, 0.0),
        symptomatic_share=(none, none, some), asymptomatic_relative_infectiousness=0.0)
    severity = dataclasses.replace(plan.severity, admitted_share=(none, none, Range3.point(0.1)))
    out = _check_problems(dataclasses.replace(plan, disease=disease, severity=severity),
                          tmp_path, capsys)
    assert "form no chain of infection that leads back to a band" in out


def test_immune_and_seeded_people_beyond_a_band_are_named_at_its_cell(
    editor: Editor, tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    cell = editor.table(DISEASE_BY_AGE, "Already immune [%]", "65+")
    cell.value = 1.0
    out = _check_problems(editor, tmp_path, capsys)
    assert (f"'Disease by age'!{cell.coordinate} (Already immune, band 65+, with Initial "
            "infections (Disease!") in out
    assert "found 100% immune plus" in out and "more than its 15,000 people" in out


def test_two_vaccines_in_one_scenario_are_named_at_the_scenario(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    plan = quick_plan()
    vaccine = plan.intervention("Vaccine")
    assert vaccine.vaccination is not None
    other = dataclasses.replace(vaccine, name="Second vaccine", vaccination=dataclasses.replace(
        vaccine.vaccination, days_to_protection=vaccine.vaccination.days_to_protection + 7))
    scenarios = tuple(
        dataclasses.replace(s, interventions=(*s.interventions, "Second vaccine"))
        if "Vaccine" in s.interventions else s for s in plan.scenarios)
    two = dataclasses.replace(plan, interventions=(*plan.interventions, other),
                              scenarios=scenarios)
    out = _check_problems(two, tmp_path, capsys)
    assert "Scenarios!" in out and "(Measures applied, scenario All measures; " in out
    assert "found Vaccine and Second vaccine, which differ" in out
