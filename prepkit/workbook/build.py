"""Build the :class:`~prepkit.plan.Plan` from checked inputs, driven by ``Field.target``.

Every field of :data:`prepkit.workbook.schema.FIELDS` says where its value
lands in the plan (:mod:`prepkit.workbook.targets`). The generic builder
walks the attributes of each part of the plan in their declared order and
takes the value of the field that targets it: an item, a tuple over the age
bands, a per-band dict, or one entry per table row. Values are converted to
the type the plan declares (a whole number given where the plan holds a
float becomes a float).

Special cases, declared here and kept small:

* contacts given as matrices (four contact-matrix sheets, not fields);
* the measures table (:func:`build_measure`): which parts of an
  :class:`~prepkit.plan.Intervention` exist depends on its kind and rules;
* the scenarios table (:func:`build_scenario`): measure names are matched
  to the names on the Measures sheet.

Every value used is recorded (:class:`Recorder`) for the assumptions
appendix and the echo sheet of the results workbook.
"""

from __future__ import annotations

import dataclasses
import types
import typing
from collections.abc import Mapping, Sequence
from typing import Any, cast

from prepkit.plan import (
    LEVELS,
    SETTINGS,
    AgeBand,
    Contacts,
    Disease,
    End,
    EndKind,
    Intervention,
    InterventionKind,
    Isolation,
    Level,
    Plan,
    Range3,
    Scenario,
    Setting,
    Severity,
    Start,
    StartKind,
    Vaccination,
)
from prepkit.plan.decide import DecideBy
from prepkit.plan.details import Details
from prepkit.plan.fit import FitSettings
from prepkit.plan.records import InputRecord, Observation
from prepkit.plan.resources import Capacity, Supplies, Workforce
from prepkit.workbook import schema, validate
from prepkit.workbook.cells import Got, Key, TableRow, field_label, normalise_key
from prepkit.workbook.field_types import Field
from prepkit.workbook.schema import FIELDS, FIELDS_BY_NAME, format_value
from prepkit.workbook.targets import Target, parse_target

__all__ = ["SPECIAL_SECTIONS", "Recorder", "build_plan"]

#: Parts of the plan not built by the generic builder (see the module notes).
SPECIAL_SECTIONS: tuple[str, ...] = ("interventions", "scenarios")

#: Table rows whose blank optional cells are recorded too (shown blank in the appendix).
_RECORD_BLANKS: frozenset[str] = frozenset({"bands"})

_TARGETS: tuple[tuple[Field, Target], ...] = tuple(
    (f, parse_target(f.target)) for f in FIELDS if f.target is not None
)


def section_fields(section: str) -> tuple[tuple[Field, Target], ...]:
    """Fields whose target lies in one part of the plan, in declaration order."""
    return tuple((f, t) for f, t in _TARGETS if t.section == section)


class Recorder:
    """Values the plan uses, each with where it was read (for the appendix)."""

    def __init__(self) -> None:
        self.records: list[tuple[tuple[int, int, int, int], InputRecord]] = []

    def use(self, got: Got, unit: str | None = None) -> Any:
        """Value of an input that the plan uses (recorded for the appendix).

        ``unit`` overrides the field's unit where the row decides it (trigger
        levels: ``"%"`` of beds or ``"per day"``).
        """
        f = got.field
        if f.type == "choice" and isinstance(got.value, str):
            shown = schema.choice_shown(f, got.value)
        elif unit == "%" and isinstance(got.value, int | float):
            shown = f"{100 * got.value:.4g}%"
        else:
            shown = format_value(f, got.value)
        self.records.append((_record_order(got), InputRecord(
            sheet=got.sheet, cell=got.cell, name=f.name, label=got.label, value=shown,
            unit=f.unit if unit is None else unit, defaulted=got.defaulted,
        )))
        return got.value

    def use3(self, gots: Mapping[Key, Got], name: str, noun: str = "", key: str = "") -> Range3:
        """Low / Central / High of an uncertain input (one record)."""
        low, central, high = (gots[(name, level)] for level in LEVELS)
        value = Range3(low=_float(low.value), central=_float(central.value),
                       high=_float(high.value))
        f = central.field
        shown = format_value(f, value.central)
        if not value.is_point:
            shown += f" (low {format_value(f, value.low)}, high {format_value(f, value.high)})"
        self.records.append((_record_order(central), InputRecord(
            sheet=central.sheet, cell=central.cell, name=name,
            label=field_label(f, None, noun, key), value=shown, unit=f.unit,
            defaulted=central.defaulted,
            levels=tuple((level, got.cell, format_value(f, _float(got.value)))
                         for level, got in zip(LEVELS, (low, central, high), strict=True)),
        )))
        return value

    def value(self, f: Field, gots: Mapping[Key, Got], noun: str = "", key: str = "",
              record_blank: bool = False) -> Any:
        """Value of a field (a Range3 for an uncertain one); None when blank and optional."""
        if f.uncertain:
            if gots[(f.name, "central")].value is None:
                return None
            return self.use3(gots, f.name, noun, key)
        got = gots[(f.name, "central")]
        if got.value is None and not record_blank:
            return None
        return self.use(got)

    def sorted_records(self) -> tuple[InputRecord, ...]:
        """Records in workbook order (sheet, row, column, level)."""
        return tuple(record for _, record in sorted(self.records, key=lambda x: x[0]))


# ---- The generic builder ---------------------------------------------------------------------

def _wants_float(hint: Any) -> bool:
    """True when the plan declares a float there (alone, optional, or in a tuple or dict)."""
    if hint is float:
        return True
    origin = typing.get_origin(hint)
    args = typing.get_args(hint)
    if origin in (typing.Union, types.UnionType):
        return any(_wants_float(a) for a in args)
    if origin is tuple and args:
        return _wants_float(args[0])
    if origin is dict and len(args) == 2:
        return _wants_float(args[1])
    return False


def _as(hint: Any, value: Any) -> Any:
    if value is None or not _wants_float(hint):
        return value
    if isinstance(value, tuple):
        return tuple(_as(hint, v) for v in value)
    if isinstance(value, dict):
        return {k: float(v) for k, v in value.items()}
    return float(value)


def build_section(cls: type[Any], section: str, items: Mapping[Key, Got],
                  band_rows: Sequence[TableRow], rec: Recorder) -> Any:
    """One part of the plan from its item and per-band fields (attributes in declared order)."""
    hints = typing.get_type_hints(cls)
    targets = section_fields(section)
    kwargs: dict[str, Any] = {}
    for attribute in (a.name for a in dataclasses.fields(cls)):
        chosen = [(f, t) for f, t in targets if t.attribute == attribute]
        if not chosen:
            continue
        f, t = chosen[0]
        if not t.per_band:
            value = rec.value(f, items)
        elif t.key is None:
            value = tuple(rec.value(f, r.gots, "band", r.key) for r in band_rows)
        else:
            value = tuple({cast(str, tk.key): rec.value(fk, r.gots, "band", r.key)
                           for fk, tk in chosen} for r in band_rows)
        kwargs[attribute] = _as(hints[attribute], value)
    return cls(**kwargs)


def build_row(cls: type[Any], section: str, row: TableRow, rec: Recorder) -> Any:
    """One plan entry (an age band, an observed day) from one table row."""
    hints = typing.get_type_hints(cls)
    by_attribute = {t.attribute: f for f, t in section_fields(section)}
    record_blank = section in _RECORD_BLANKS
    kwargs: dict[str, Any] = {}
    for attribute in (a.name for a in dataclasses.fields(cls)):
        f = by_attribute.get(attribute)
        if f is None:
            continue
        value = rec.value(f, row.gots, record_blank=record_blank)
        if value is None and not record_blank:
            continue  # the plan's own default (None) stands
        kwargs[attribute] = _as(hints[attribute], value)
    return cls(**kwargs)


def build_plan(*, items: Mapping[Key, Got], band_rows: Sequence[TableRow],
               per_band: Mapping[str, Mapping[str, TableRow]],
               matrix_values: Mapping[Setting, Mapping[tuple[str, str], Got]] | None,
               tables: Mapping[str, Sequence[TableRow]], rec: Recorder) -> Plan:
    """The plan from checked inputs (every check has passed)."""
    details = build_section(Details, "details", items, (), rec)
    bands = tuple(build_row(AgeBand, "bands", row, rec) for row in band_rows)
    labels = [b.label for b in bands]

    def rows(table: str) -> list[TableRow]:
        return [per_band[table][b] for b in labels] if table in per_band else []

    if matrix_values is None:
        contacts = build_section(Contacts, "contacts", items, rows("band_contacts"), rec)
    else:
        contacts = build_matrix_contacts(items, matrix_values, labels, rec)
    disease = build_section(Disease, "disease", items, rows("band_disease"), rec)
    severity = build_section(Severity, "severity", items, rows("band_severity"), rec)
    capacity = build_section(Capacity, "capacity", items, (), rec)
    workforce = build_section(Workforce, "workforce", items, (), rec)
    interventions = tuple(build_measure(row, labels, rec) for row in tables["measures"])
    names = {normalise_key(m.name): m.name for m in interventions}
    scenarios = tuple(build_scenario(row, names, rec) for row in tables["scenarios"])
    observed = tuple(build_row(Observation, "observed", row, rec) for row in tables["observed"])
    fit = build_section(FitSettings, "fit", items, (), rec)
    decide_by = build_section(DecideBy, "decide_by", items, (), rec)
    supplies = build_section(Supplies, "supplies", items, (), rec)
    return Plan(details=details, bands=bands, contacts=contacts, disease=disease,
                severity=severity, capacity=capacity, workforce=workforce,
                interventions=interventions, scenarios=scenarios, observed=observed, fit=fit,
                decide_by=decide_by, supplies=supplies)


# ---- Special cases ---------------------------------------------------------------------------

def build_matrix_contacts(items: Mapping[Key, Got],
                          matrix_values: Mapping[Setting, Mapping[tuple[str, str], Got]],
                          labels: Sequence[str], rec: Recorder) -> Contacts:
    """Contacts given as one band x band matrix per setting."""
    assortativity = float(rec.value(FIELDS_BY_NAME["mixing.assortativity"], items))
    matrices = {
        setting: tuple(tuple(float(rec.use(matrix_values[setting][(a, b)])) for b in labels)
                       for a in labels)
        for setting in SETTINGS
    }
    return Contacts(matrices=matrices, assortativity=assortativity)


def _start(row: TableRow, rec: Recorder, kind: StartKind, level_unit: str) -> Start:
    if kind == "date":
        return Start(kind="date", date=rec.use(row.get("measure.start_date")))
    return Start(kind=kind, level=float(rec.use(row.get("measure.start_level"), level_unit)))


def _end(row: TableRow, rec: Recorder, kind: EndKind, level_unit: str) -> End:
    if kind == "date":
        return End(kind="date", date=rec.use(row.get("measure.end_date")))
    if kind == "duration":
        return End(kind="duration",
                   duration_days=float(rec.use(row.get("measure.duration_days"))))
    if kind == "release":
        return End(kind="release",
                   level=float(rec.use(row.get("measure.release_level"), level_unit)))
    return End(kind="horizon")


def _vaccination(row: TableRow, labels: Sequence[str], rec: Recorder) -> Vaccination:
    by_key = {normalise_key(b): i for i, b in enumerate(labels)}
    noun, key = "measure", row.key
    priority = rec.use(row.get("measure.priority"))
    return Vaccination(
        doses_per_day=float(rec.use(row.get("measure.doses_per_day"))),
        priority=tuple(by_key[normalise_key(str(b))] for b in priority),
        uptake_ceiling=float(rec.use(row.get("measure.uptake_ceiling"))),
        efficacy_infection=rec.use3(row.gots, "measure.efficacy_infection", noun, key),
        efficacy_severe=rec.use3(row.gots, "measure.efficacy_severe", noun, key),
        days_to_protection=float(rec.use(row.get("measure.days_to_protection"))),
    )


def build_measure(row: TableRow, labels: Sequence[str], rec: Recorder) -> Intervention:
    """One measure: the parts of it that its kind and its start and end rules use."""
    name = str(rec.use(row.get("measure.name")))
    kind = cast(InterventionKind, rec.use(row.get("measure.kind")))
    start_kind = cast(StartKind, rec.use(row.get("measure.start_rule")))
    end_kind = cast(EndKind, rec.use(row.get("measure.end_rule")))
    level_unit = "per day" if start_kind == "admissions" else "%"
    start = _start(row, rec, start_kind, level_unit)
    end = _end(row, rec, end_kind, level_unit)
    kept: dict[Setting, float] = {}
    vaccination = None
    isolation = None
    if kind == "contacts":
        for setting in SETTINGS:
            got = row.get(f"measure.{setting}_kept")
            if not got.blank:
                kept[setting] = float(rec.use(got))
    elif kind == "vaccination":
        vaccination = _vaccination(row, labels, rec)
    else:
        isolation = Isolation(
            isolated_share=float(rec.use(row.get("measure.isolated_share"))),
            days_from_onset=float(rec.use(row.get("measure.days_from_onset"))),
        )
    compliance = rec.use3(row.gots, "measure.compliance", "measure", row.key)
    return Intervention(name=name, kind=kind, start=start, end=end, contacts_kept=kept,
                        vaccination=vaccination, isolation=isolation, compliance=compliance)


def build_scenario(row: TableRow, names: Mapping[str, str], rec: Recorder) -> Scenario:
    """One scenario, its measures matched to the names on the Measures sheet."""
    listed = rec.use(row.get("scenario.interventions"))
    chosen: list[str] = []
    for entry in listed:
        name = names[normalise_key(str(entry))]
        if name not in chosen:
            chosen.append(name)
    return Scenario(
        name=str(rec.use(row.get("scenario.name"))),
        transmissibility_level=cast(Level, rec.use(row.get("scenario.transmissibility_level"))),
        severity_level=cast(Level, rec.use(row.get("scenario.severity_level"))),
        interventions=tuple(chosen),
        description=str(rec.use(row.get("scenario.description"))),
    )


def _record_order(got: Got) -> tuple[int, int, int, int]:
    row, col = validate.cell_position(got.cell)
    level = {"low": 0, "central": 1, "high": 2}[got.level]
    return (validate.sheet_index(got.sheet), row, col, level)


def _float(value: object) -> float:
    assert isinstance(value, int | float) and not isinstance(value, bool), value
    return float(value)

