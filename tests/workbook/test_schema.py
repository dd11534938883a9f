"""The workbook schema is consistent: every declaration can be written and read back."""

from __future__ import annotations

import dataclasses

import pytest

import prepkit.plan as plan_module
from prepkit.plan.decide import DecideBy
from prepkit.plan.details import Details
from prepkit.plan.fit import FitSettings
from prepkit.plan.resources import Capacity, Supplies, Workforce
from prepkit.workbook import schema
from prepkit.workbook.field_types import Field
from prepkit.workbook.instructions import INSTRUCTIONS_CAUTION, INSTRUCTIONS_HOW
from prepkit.workbook.schema import (
    FIELDS,
    FIELDS_BY_NAME,
    MATRIX_FIELDS,
    TABLES,
    format_value,
    header_text,
    normalise_header,
)
from prepkit.workbook.sheets import (
    END_CHOICES,
    INSTRUCTIONS_SHEET,
    KIND_CHOICES,
    LEVEL_CHOICES,
    MATRIX_SHEETS,
    MEASURES,
    REQUIRED_SHEETS,
    SHEET_ORDER,
    SHEET_PURPOSE,
    START_CHOICES,
)


def test_every_sheet_has_a_purpose_and_a_place_in_the_order() -> None:
    assert set(SHEET_PURPOSE) == set(SHEET_ORDER)
    assert len(set(SHEET_ORDER)) == len(SHEET_ORDER)
    assert set(REQUIRED_SHEETS) <= set(SHEET_ORDER)
    assert INSTRUCTIONS_SHEET not in SHEET_ORDER


def test_sheet_names_fit_excel_limits() -> None:
    for name in (*SHEET_ORDER, INSTRUCTIONS_SHEET):
        assert 0 < len(name) <= 31
        assert not set(name) & set("[]:*?/\\")


def test_every_field_lives_on_a_known_sheet_and_table() -> None:
    for f in FIELDS:
        assert f.sheet in SHEET_ORDER, f.name
        if f.table is not None:
            assert TABLES[f.table].sheet == f.sheet, f.name


def test_every_table_key_is_a_required_column_of_its_table() -> None:
    for name, table in TABLES.items():
        key = FIELDS_BY_NAME[table.key]
        assert key.table == name
        assert key.required


def test_excel_table_names_are_unique_and_valid() -> None:
    names = [t.excel_name for t in TABLES.values()]
    assert len(set(names)) == len(names)
    for name in names:
        assert name.isidentifier() and " " not in name


@pytest.mark.parametrize("f", [f for f in FIELDS if f.default is not None], ids=lambda f: f.name)
def test_defaults_are_valid_values_of_their_field(f: Field) -> None:
    default = f.default
    if f.type == "choice":
        assert default in (f.choices or {})
    elif f.type in ("share", "number", "integer"):
        assert isinstance(default, int | float)
        low = f.minimum if f.minimum is not None else (0.0 if f.type == "share" else None)
        high = f.maximum if f.maximum is not None else (1.0 if f.type == "share" else None)
        assert low is None or default >= low
        assert high is None or default <= high


def test_required_fields_have_no_default() -> None:
    for f in FIELDS:
        assert not (f.required and f.default is not None), f.name


def test_choice_entries_fit_an_excel_dropdown() -> None:
    for f in FIELDS:
        if f.type == "choice":
            entries = list(f.choices or {})
            assert all("," not in e and '"' not in e for e in entries), f.name
            assert len(",".join(entries)) <= 255, f.name


def test_choice_values_are_the_plan_literals() -> None:
    assert set(LEVEL_CHOICES.values()) == set(plan_module.LEVELS)
    assert set(KIND_CHOICES.values()) == {"contacts", "vaccination", "isolation"}
    assert set(START_CHOICES.values()) == {
        "date", "ward_occupancy", "icu_occupancy", "admissions"}
    assert set(END_CHOICES.values()) == {"horizon", "date", "duration", "release"}


def test_choice_shown_inverts_the_choice_map() -> None:
    f = FIELDS_BY_NAME["measure.start_rule"]
    for shown, canonical in (f.choices or {}).items():
        assert schema.choice_shown(f, canonical) == shown
    with pytest.raises(KeyError):
        schema.choice_shown(f, "nonsense")


def test_item_fields_map_onto_plan_attributes() -> None:
    groups = {
        "details": Details, "mixing": plan_module.Contacts,
        "disease": plan_module.Disease, "severity": plan_module.Severity,
        "capacity": Capacity, "workforce": Workforce, "fit": FitSettings,
        "decide_by": DecideBy, "supplies": Supplies,
    }
    for f in FIELDS:
        if f.table is None:
            cls = groups[f.name.split(".")[0]]
            names = {x.name for x in dataclasses.fields(cls)}
            attribute = "assortativity" if f.name == "mixing.assortativity" else f.attribute
            assert attribute in names, f.name


def test_header_texts_carry_units_and_levels() -> None:
    people = FIELDS_BY_NAME["band.people"]
    assert header_text(people) == "People [persons]"
    icu = FIELDS_BY_NAME["band_severity.icu_share"]
    assert header_text(icu, "low") == "ICU share of admissions, low [%]"
    assert normalise_header(header_text(icu, "low")) == "icu share of admissions, low"
    assert header_text(FIELDS_BY_NAME["measure.start_date"]) == "Start date"


def test_normalise_header_ignores_case_spacing_and_unit() -> None:
    assert normalise_header("  People\u00a0 [anything] ") == "people"
    assert normalise_header("ICU  share") == "icu share"


def test_expected_describes_each_type_in_plain_words() -> None:
    assert FIELDS_BY_NAME["band_severity.icu_share"].expected() == (
        "a share between 0 and 1 (e.g. 25% or 0.25)")
    assert FIELDS_BY_NAME["details.day0"].expected().startswith("a date")
    assert FIELDS_BY_NAME["capacity.ward_beds"].expected() == (
        "a whole number between 0 and 1,000,000")
    assert FIELDS_BY_NAME["details.page_size"].expected() == "one of 'A4', 'Letter'"
    assert FIELDS_BY_NAME["observed.admissions"].expected() == "a number of at least 0"


def test_format_value_shows_shares_as_percentages() -> None:
    share = FIELDS_BY_NAME["band_severity.icu_share"]
    assert format_value(share, 0.25) == "25%"
    assert format_value(share, None) == ""
    assert format_value(FIELDS_BY_NAME["scenario.interventions"], ("a", "b")) == "a; b"


def test_matrix_fields_cover_every_setting_on_its_own_sheet() -> None:
    assert set(MATRIX_FIELDS) == set(plan_module.SETTINGS) == set(MATRIX_SHEETS)
    for setting, f in MATRIX_FIELDS.items():
        assert f.sheet == MATRIX_SHEETS[setting]
        assert f.minimum == 0
        assert f.name not in FIELDS_BY_NAME


def test_key_noun_names_the_row_of_each_table() -> None:
    assert schema.key_noun("band_severity") == "band"
    assert schema.key_noun("measures") == "measure"
    assert schema.key_noun("observed") == "date"


def test_instructions_mention_shares_dates_blanks_and_the_caution() -> None:
    text = " ".join(INSTRUCTIONS_HOW)
    assert "25%" in text and "0.25" in text
    assert "2027-01-15" in text
    assert "Low or High" in text
    assert "not a forecast" in INSTRUCTIONS_CAUTION
    assert "local health authority" in INSTRUCTIONS_CAUTION


def test_measure_dates_say_which_days_are_in_force() -> None:
    # The model starts a measure at the start of its start date and lifts it at the end of
    # its end date (checked against runs in tests/samples/test_samples_story.py).
    assert "first day in force" in FIELDS_BY_NAME["measure.start_date"].help
    assert "the last day in force" in FIELDS_BY_NAME["measure.end_date"].help
    purpose = SHEET_PURPOSE[MEASURES]
    assert "start date is the first day in force" in purpose
    assert "end date the last day in force" in purpose
