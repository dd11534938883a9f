"""Every workbook field says where it lands in the plan, and the plan is built from that alone."""

from __future__ import annotations

import dataclasses
import typing

import pytest

from prepkit.plan import AgeBand, Contacts, Disease, Intervention, Plan, Scenario, Severity
from prepkit.plan.decide import DecideBy
from prepkit.plan.details import Details
from prepkit.plan.fit import FitSettings
from prepkit.plan.records import Observation
from prepkit.plan.resources import Capacity, Supplies, Workforce
from prepkit.workbook.build import SPECIAL_SECTIONS, section_fields
from prepkit.workbook.schema import FIELDS, TABLES
from prepkit.workbook.targets import Target, parse_target, resolve

#: The class of one entry (per-row sections) or of the part (other sections) of the plan.
SECTIONS: dict[str, type] = {
    "details": Details, "bands": AgeBand, "contacts": Contacts, "disease": Disease,
    "severity": Severity, "capacity": Capacity, "workforce": Workforce,
    "interventions": Intervention, "scenarios": Scenario, "observed": Observation,
    "fit": FitSettings, "decide_by": DecideBy, "supplies": Supplies,
}


def test_target_paths_parse() -> None:
    # Common practice, no source: the path syntax documented in prepkit.workbook.targets.
    assert parse_target("capacity.icu_beds") == Target(section="capacity", path=("icu_beds",))
    assert parse_target("severity.icu_share[band]") == Target(
        section="severity", path=("icu_share",), per_band=True)
    assert parse_target("contacts.setting_shares[band].home") == Target(
        section="contacts", path=("setting_shares",), per_band=True, key="home")
    assert parse_target("interventions[].vaccination.doses_per_day") == Target(
        section="interventions", path=("vaccination", "doses_per_day"), per_row=True)
    with pytest.raises(ValueError):
        parse_target("capacity")


def test_every_section_is_a_part_of_the_plan() -> None:
    # Common practice, no source: each target names an attribute of Plan.
    plan_parts = {f.name for f in dataclasses.fields(Plan)}
    assert set(SECTIONS) <= plan_parts


def _attribute_type(cls: type, path: tuple[str, ...]) -> object:
    hint: object = cls
    for name in path:
        if typing.get_origin(hint) is dict:  # a key of a dict, e.g. a setting
            key_type, hint = typing.get_args(hint)
            assert name in typing.get_args(key_type), name
            continue
        owner = next(a for a in typing.get_args(hint) or (hint,) if dataclasses.is_dataclass(a))
        assert isinstance(owner, type)
        hints = typing.get_type_hints(owner)
        assert name in hints, (owner, name)
        hint = hints[name]
    return hint


def test_every_target_names_a_real_attribute() -> None:
    # Common practice, no source: a declared target that names no attribute is a schema bug.
    for f in FIELDS:
        if f.target is None:
            assert f.table is not None and f.name == TABLES[f.table].key, f.name
            continue
        t = parse_target(f.target)
        assert t.section in SECTIONS, f.name
        _attribute_type(SECTIONS[t.section], t.path)
        assert t.per_row == (t.section in {"bands", "interventions", "scenarios", "observed"})
        if t.per_band:
            assert f.table is not None and TABLES[f.table].per_band, f.name


def test_each_attribute_of_a_generic_section_has_one_field() -> None:
    # Common practice, no source: two fields landing on one attribute would overwrite each other.
    for section in SECTIONS:
        if section in SPECIAL_SECTIONS:
            continue
        seen: dict[tuple[str, str | None], str] = {}
        for f, t in section_fields(section):
            where = (t.attribute, t.key)
            assert where not in seen, (f.name, seen.get(where))
            seen[where] = f.name


def test_resolve_follows_a_path_and_stops_at_none() -> None:
    # Common practice, no source.
    class Inner:
        value = 3

    class Outer:
        inner = Inner()
        missing = None

    assert resolve(Outer(), ("inner", "value")) == 3
    assert resolve(Outer(), ("missing", "value")) is None
