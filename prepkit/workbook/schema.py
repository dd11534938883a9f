"""Every workbook field, declared once.

This module is the single source of truth for the planning workbook. The
template writer, the reader, the validation messages and the assumptions
appendix of the briefing pack are all driven by the declarations below;
nothing else in prepkit names a sheet, a label or a unit.

Layout rules (shared by writer and reader)
------------------------------------------
* **Item blocks** (``Field.table is None``): one row per field. A header row
  holds ``ITEM_HEADER`` in some column; to its right come either
  ``VALUE_HEADER`` or ``LOW_HEADER``/``CENTRAL_HEADER``/``HIGH_HEADER``
  (sheets with at least one uncertain item), then ``UNIT_HEADER``,
  ``GUIDANCE_HEADER`` and ``NOTE_HEADER``. Fields are found by their label in
  the item column, so rows may be moved or inserted.
* **Tables** (``Field.table`` set): a header row whose cells are
  :func:`header_text` of each column; uncertain fields take three columns
  (low, central, high). Columns are found by header text, so they may be
  reordered; rows are read until the end of the sheet, blank rows skipped.
  A sheet holding both puts the item block above the table.
* **Contact matrices**: one sheet per setting (:data:`MATRIX_SHEETS`). A
  header row starts with ``BAND_HEADER`` followed by band labels; each row
  below starts with a band label. Rows are the band of the person making the
  contacts, columns the band of the people met.

Units: shares are fractions inside prepkit and shown as percentages in the
workbook (a cell may hold ``25%`` or ``0.25``); times are in days.
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Iterator

from prepkit.plan import Level
from prepkit.workbook.field_types import Field, Table
from prepkit.workbook.fields_disease import DISEASE_FIELDS
from prepkit.workbook.fields_measures import MEASURE_FIELDS
from prepkit.workbook.fields_population import POPULATION_FIELDS
from prepkit.workbook.fields_services import SERVICE_FIELDS
from prepkit.workbook.fields_supplies import CRISIS_FIELDS, SUPPLY_FIELDS
from prepkit.workbook.sheets import (
    DISEASE_BY_AGE,
    MATRIX_SHEETS,
    MEASURES,
    MIXING,
    OBSERVED,
    POPULATION,
    SCENARIOS,
    SEVERITY,
    SHEET_ORDER,
)

TABLES: dict[str, Table] = {
    t.name: t
    for t in (
        Table(name="bands", sheet=POPULATION, key="band.label", excel_name="AgeBands",
              template_rows=20),
        Table(name="band_contacts", sheet=MIXING, key="band_contacts.band",
              excel_name="ContactsByBand", template_rows=20, per_band=True),
        Table(name="band_disease", sheet=DISEASE_BY_AGE, key="band_disease.band",
              excel_name="DiseaseByBand", template_rows=20, per_band=True),
        Table(name="band_severity", sheet=SEVERITY, key="band_severity.band",
              excel_name="SeverityByBand", template_rows=20, per_band=True),
        Table(name="measures", sheet=MEASURES, key="measure.name", excel_name="MeasureList",
              template_rows=15),
        Table(name="scenarios", sheet=SCENARIOS, key="scenario.name",
              excel_name="ScenarioList", template_rows=10),
        Table(name="observed", sheet=OBSERVED, key="observed.date",
              excel_name="ObservedDays", template_rows=60),
    )
}

#: Every workbook field, in workbook order.
FIELDS: tuple[Field, ...] = (*POPULATION_FIELDS, *DISEASE_FIELDS, *SERVICE_FIELDS, *CRISIS_FIELDS,
                             *SUPPLY_FIELDS, *MEASURE_FIELDS)

FIELDS_BY_NAME: dict[str, Field] = {f.name: f for f in FIELDS}

#: Only one of these may be filled (Central column).
TRANSMISSIBILITY_FIELDS: tuple[str, ...] = (
    "disease.r0",
    "disease.doubling_time_days",
    "disease.growth_rate_per_day",
)


#: Most age bands a plan may have.
MAX_BANDS = 20

#: Longest text accepted in one cell [characters].
MAX_TEXT_LENGTH = 1000

#: One field per contact-matrix sheet. Not part of :data:`FIELDS`: matrix cells
#: are found by their row and column band labels, not by an item label or a
#: column header.
MATRIX_FIELDS: dict[str, Field] = {
    setting: Field(
        name=f"matrix.{setting}", sheet=sheet, label=sheet, unit="per day", type="number",
        minimum=0, maximum=500, width=9,
        help="Mean number of people in the column band that one person in the row band "
             "meets each day in this setting.",
    )
    for setting, sheet in MATRIX_SHEETS.items()
}


def choice_shown(f: Field, canonical: str) -> str:
    """Choice entry shown in the workbook for a canonical value."""
    for shown, value in (f.choices or {}).items():
        if value == canonical:
            return shown
    raise KeyError(f"{f.name}: no choice for {canonical!r}")


def key_noun(table: str) -> str:
    """Word naming a row of a table in messages, e.g. ``"band"`` or ``"measure"``."""
    return FIELDS_BY_NAME[TABLES[table].key].label.lower()


def sheet_fields(sheet: str) -> tuple[Field, ...]:
    """Item fields (not table columns) of a sheet, in declaration order."""
    return tuple(f for f in FIELDS if f.sheet == sheet and f.table is None)


def table_fields(table: str) -> tuple[Field, ...]:
    """Column fields of a table, in declaration order."""
    return tuple(f for f in FIELDS if f.table == table)


def sheet_has_uncertain_items(sheet: str) -> bool:
    """True when the sheet's item block uses Low / Central / High columns."""
    return any(f.uncertain for f in sheet_fields(sheet))


def header_text(f: Field, level: Level = "central") -> str:
    """Column header of a table field (one per level for uncertain fields).

    Examples: ``"People [persons]"``, ``"ICU share of admissions, low [%]"``.
    """
    label = f.label
    if f.uncertain:
        label = f"{label}, {level}"
    return f"{label} [{f.unit}]" if f.unit and f.type != "date" else label


def table_columns(table: str) -> Iterator[tuple[Field, Level]]:
    """(field, level) for every column of a table, in order."""
    for f in table_fields(table):
        if f.uncertain:
            yield f, "low"
            yield f, "central"
            yield f, "high"
        else:
            yield f, "central"


def normalise_header(text: str) -> str:
    """Header text reduced for matching: lower case, unit and spacing dropped."""
    text = text.split("[", 1)[0]
    return " ".join(text.replace("\u00a0", " ").lower().split())


def format_value(f: Field, value: object) -> str:
    """Value shown to a reader, percentages at the edge (for the appendix)."""
    if value is None:
        return ""
    if f.type == "share" and isinstance(value, int | float):
        return f"{100 * value:.4g}%"
    if isinstance(value, dt.date):
        return value.isoformat()
    if isinstance(value, tuple | list):
        return "; ".join(str(v) for v in value)
    if isinstance(value, float):
        return f"{value:.6g}"
    return str(value)


def _check_unique() -> None:
    names = [f.name for f in FIELDS]
    if len(names) != len(set(names)):
        raise AssertionError("duplicate field name in schema")
    for sheet in SHEET_ORDER:
        labels = [f.label.lower() for f in sheet_fields(sheet)]
        if len(labels) != len(set(labels)):
            raise AssertionError(f"duplicate item label on sheet {sheet}")
    for table in TABLES:
        heads = [normalise_header(header_text(f, lv)) for f, lv in table_columns(table)]
        if len(heads) != len(set(heads)):
            raise AssertionError(f"duplicate column header in table {table}")


_check_unique()
