"""The years an open top band spans: a plain input declared in the schema, read and used."""

from __future__ import annotations

from conftest import Editor
from numpy.testing import assert_allclose

from prepkit.metrics.absence import working_age_weights
from prepkit.plan import AgeBand
from prepkit.plan.resources import Workforce
from prepkit.workbook.schema import FIELDS_BY_NAME
from prepkit.workbook.sheets import TYPICAL_VALUE, WORKFORCE

FIELD = FIELDS_BY_NAME["workforce.open_band_width_years"]


def test_the_default_is_the_width_used_before_it_could_be_set() -> None:
    # Common practice, no source: an open top band was taken as 10 years wide.
    assert FIELD.default == 10 == Workforce.__dataclass_fields__["open_band_width_years"].default
    assert FIELD.target == "workforce.open_band_width_years"
    assert TYPICAL_VALUE in FIELD.help


def test_the_workbook_value_reaches_the_plan(editor: Editor) -> None:
    # Common practice, no source: a value typed in the cell is the one the plan holds.
    editor.item(WORKFORCE, FIELD.label).value = 20
    read, _ = editor.read()
    assert read.workforce.open_band_width_years == 20
    record = next(r for r in read.source.inputs if r.name == FIELD.name)
    assert (record.value, record.unit, record.defaulted) == ("20", "years", False)


def test_a_blank_cell_uses_the_default_and_says_so(editor: Editor) -> None:
    # Common practice, no source.
    editor.item(WORKFORCE, FIELD.label).value = None
    read, _ = editor.read()
    assert read.workforce.open_band_width_years == 10
    record = next(r for r in read.source.inputs if r.name == FIELD.name)
    assert record.defaulted


def test_the_width_sets_the_working_share_of_the_open_band() -> None:
    # Common practice, no source: ages uniform within a band, so of a 60+ band spanning
    # 10 years (60-69) the ages 60-64 are 5 of 10; spanning 5 years (60-64) all of it.
    top = (AgeBand(label="60+", lower_age=60, upper_age=None, people=1.0),)
    assert_allclose(working_age_weights(top, 18, 64, 10), [0.5])
    assert_allclose(working_age_weights(top, 18, 64, 5), [1.0])
    assert_allclose(working_age_weights(top, 18, 64, 20), [0.25])
