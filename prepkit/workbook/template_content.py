"""What the planning workbook's cells hold when it is written from a plan."""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass

from prepkit.plan import Intervention, Plan
from prepkit.workbook import schema
from prepkit.workbook.cells import normalise_key
from prepkit.workbook.field_types import Field, Table
from prepkit.workbook.schema import (
    FIELDS_BY_NAME,
    TABLES,
)

# ---- Plan -> cell values ---------------------------------------------------------------------

Row = dict[str, object]


@dataclass(frozen=True)
class SheetContent:
    """What goes into the cells: item values and table rows, by canonical name."""

    items: dict[str, object]
    rows: dict[str, list[Row]]
    band_labels: tuple[str, ...]
    matrices: dict[str, tuple[tuple[float, ...], ...]] | None

    @classmethod
    def from_plan(cls, plan: Plan | None) -> SheetContent:
        """Cell values of a plan; empty for the blank template."""
        if plan is None:
            return cls(items={}, rows={name: [] for name in TABLES}, band_labels=(),
                       matrices=None)
        items: dict[str, object] = {}
        groups = {
            "details": plan.details, "mixing": plan.contacts, "disease": plan.disease,
            "severity": plan.severity, "capacity": plan.capacity, "workforce": plan.workforce,
            "fit": plan.fit, "decide_by": plan.decide_by, "supplies": plan.supplies,
        }
        for f in schema.FIELDS:
            if f.table is None:
                value = getattr(groups[f.name.split(".")[0]], f.attribute)
                items[f.name] = schema.choice_shown(f, value) if f.choices else value
        labels = tuple(b.label for b in plan.bands)
        rows: dict[str, list[Row]] = {
            "bands": [
                {"band.label": b.label, "band.lower_age": b.lower_age,
                 "band.upper_age": b.upper_age, "band.people": b.people,
                 "band.high_risk_share": b.high_risk_share}
                for b in plan.bands
            ],
            "band_contacts": _contact_rows(plan, labels),
            "band_disease": [
                {"band_disease.band": label,
                 "band_disease.symptomatic_share": plan.disease.symptomatic_share[i],
                 "band_disease.relative_susceptibility":
                     plan.disease.relative_susceptibility[i],
                 "band_disease.prior_immunity": plan.disease.prior_immunity[i]}
                for i, label in enumerate(labels)
            ],
            "band_severity": [
                {"band_severity.band": label, **{
                    f.name: getattr(plan.severity, f.attribute)[i]
                    for f in schema.table_fields("band_severity") if f.attribute != "band"
                }}
                for i, label in enumerate(labels)
            ],
            "measures": [_measure_row(m, labels) for m in plan.interventions],
            "scenarios": [
                {"scenario.name": s.name,
                 "scenario.transmissibility_level": schema.choice_shown(
                     FIELDS_BY_NAME["scenario.transmissibility_level"], s.transmissibility_level),
                 "scenario.severity_level": schema.choice_shown(
                     FIELDS_BY_NAME["scenario.severity_level"], s.severity_level),
                 "scenario.interventions": s.interventions,
                 "scenario.description": s.description}
                for s in plan.scenarios
            ],
            "observed": [
                {f.name: getattr(o, f.attribute) for f in schema.table_fields("observed")}
                for o in plan.observed
            ],
        }
        matrices = None
        if plan.contacts.matrices is not None:
            matrices = {str(k): v for k, v in plan.contacts.matrices.items()}
        return cls(items=items, rows=rows, band_labels=labels, matrices=matrices)


def _contact_rows(plan: Plan, labels: Sequence[str]) -> list[Row]:
    contacts = plan.contacts
    rows: list[Row] = []
    for i, label in enumerate(labels):
        row: Row = {"band_contacts.band": label}
        if contacts.mean_daily is not None:
            row["band_contacts.mean_daily"] = contacts.mean_daily[i]
        if contacts.setting_shares is not None:
            for setting, share in contacts.setting_shares[i].items():
                row[f"band_contacts.{setting}_share"] = share
        rows.append(row)
    return rows


def _measure_row(m: Intervention, labels: Sequence[str]) -> Row:
    f = FIELDS_BY_NAME
    row: Row = {
        "measure.name": m.name,
        "measure.kind": schema.choice_shown(f["measure.kind"], m.kind),
        "measure.start_rule": schema.choice_shown(f["measure.start_rule"], m.start.kind),
        "measure.end_rule": schema.choice_shown(f["measure.end_rule"], m.end.kind),
        "measure.compliance": m.compliance,
    }
    if m.start.kind == "date":
        row["measure.start_date"] = m.start.date
    else:
        row["measure.start_level"] = m.start.level
    row["measure.end_date"] = m.end.date
    row["measure.duration_days"] = m.end.duration_days
    row["measure.release_level"] = m.end.level
    for setting, kept in m.contacts_kept.items():
        row[f"measure.{setting}_kept"] = kept
    if m.vaccination is not None:
        v = m.vaccination
        row.update({
            "measure.doses_per_day": v.doses_per_day,
            "measure.priority": tuple(labels[i] for i in v.priority),
            "measure.uptake_ceiling": v.uptake_ceiling,
            "measure.efficacy_infection": v.efficacy_infection,
            "measure.efficacy_severe": v.efficacy_severe,
            "measure.days_to_protection": v.days_to_protection,
        })
    if m.isolation is not None:
        row["measure.isolated_share"] = m.isolation.isolated_share
        row["measure.days_from_onset"] = m.isolation.days_from_onset
    return row


def _row_key(table: Table, row: Row) -> str:
    """Key of a table row as text (band label, name or ISO date), as note keys give it."""
    return schema.format_value(FIELDS_BY_NAME[table.key], row.get(table.key))


# ---- Notes -----------------------------------------------------------------------------------

class SheetNotes:
    """Resolves note keys to the item rows and table rows they belong to."""

    def __init__(self, notes: Mapping[str, str], content: SheetContent) -> None:
        self.items: dict[str, str] = {}
        self.rows: dict[tuple[str, int], list[tuple[Field, str]]] = {}
        unknown: list[str] = []
        for key, text in notes.items():
            name, _, row_key = key.partition("@")
            f = FIELDS_BY_NAME.get(name)
            if f is None:
                unknown.append(key)
            elif f.table is None:
                if row_key:
                    unknown.append(key)
                else:
                    self.items[name] = str(text)
            else:
                matches = [
                    i for i, row in enumerate(content.rows[f.table])
                    if not row_key
                    or normalise_key(_row_key(TABLES[f.table], row)) == normalise_key(row_key)
                ]
                if row_key and not matches:
                    unknown.append(key)
                for i in matches:
                    self.rows.setdefault((f.table, i), []).append((f, str(text)))
        if unknown:
            raise ValueError("notes name no field or row of the workbook: " + ", ".join(unknown))

    def row_text(self, table: str, index: int) -> str:
        """Note of one table row: texts in order, each after the labels it concerns."""
        by_text: dict[str, list[str]] = {}
        for f, text in self.rows.get((table, index), []):
            labels = by_text.setdefault(text, [])
            if f.name != TABLES[table].key:
                labels.append(f.label)
        parts = [f"{', '.join(labels)}: {text}" if labels else text
                 for text, labels in by_text.items()]
        return " ".join(parts)
