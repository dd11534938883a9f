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
from collections.abc import Iterator, Mapping
from dataclasses import dataclass
from typing import Literal

from prepkit.plan import SETTINGS, Level

FieldType = Literal["text", "integer", "number", "share", "date", "choice", "list"]

ITEM_HEADER = "Item"
VALUE_HEADER = "Value"
LOW_HEADER = "Low"
CENTRAL_HEADER = "Central"
HIGH_HEADER = "High"
UNIT_HEADER = "Unit"
GUIDANCE_HEADER = "Guidance"
NOTE_HEADER = "Source or note"
BAND_HEADER = "Band"

INSTRUCTIONS_SHEET = "Start here"

#: Sheet names, in workbook order (the instructions sheet comes first).
PLAN = "Plan"
POPULATION = "Population"
MIXING = "Mixing"
DISEASE = "Disease"
DISEASE_BY_AGE = "Disease by age"
SEVERITY = "Severity"
HOSPITALS = "Hospitals"
WORKFORCE = "Workforce"
MEASURES = "Measures"
SCENARIOS = "Scenarios"
OBSERVED = "Observed"

#: One contact-matrix sheet per setting.
MATRIX_SHEETS: dict[str, str] = {
    "home": "Home contacts",
    "school": "School contacts",
    "work": "Work contacts",
    "community": "Community contacts",
}

SHEET_ORDER: tuple[str, ...] = (
    PLAN,
    POPULATION,
    MIXING,
    *MATRIX_SHEETS.values(),
    DISEASE,
    DISEASE_BY_AGE,
    SEVERITY,
    HOSPITALS,
    WORKFORCE,
    MEASURES,
    SCENARIOS,
    OBSERVED,
)

#: Sheets a workbook must have (Observed and the matrix sheets may be absent).
REQUIRED_SHEETS: tuple[str, ...] = (
    PLAN,
    POPULATION,
    MIXING,
    DISEASE,
    DISEASE_BY_AGE,
    SEVERITY,
    HOSPITALS,
    WORKFORCE,
    MEASURES,
    SCENARIOS,
)

#: Short description of each sheet, shown on the instructions sheet.
SHEET_PURPOSE: dict[str, str] = {
    PLAN: "Who the plan is for, day 0, how far ahead to look and how many uncertainty draws.",
    POPULATION: "Residents by age band. Bands must start at age 0 and follow on without gaps.",
    MIXING: (
        "Simple contacts: mean daily contacts per band and how much people mix with their own "
        "age. Used only when the four contact-matrix sheets are left blank."
    ),
    "Home contacts": "Mean daily contacts at home: row band meets column band.",
    "School contacts": "Mean daily contacts at school or childcare: row band meets column band.",
    "Work contacts": "Mean daily contacts at work: row band meets column band.",
    "Community contacts": (
        "Mean daily contacts everywhere else (shops, transport, leisure): row band meets column "
        "band."
    ),
    DISEASE: (
        "How the disease spreads. Give exactly one of R0, doubling time or growth rate. "
        "Low/High are optional; blank means equal to Central."
    ),
    DISEASE_BY_AGE: "Symptoms, susceptibility and prior immunity for each band.",
    SEVERITY: "The hospital pathway for each band: who is admitted, who needs ICU, for how long.",
    HOSPITALS: "Beds serving the jurisdiction, how full they already are, and surge beds.",
    WORKFORCE: "Inputs for estimating staff absence from illness and school closures.",
    MEASURES: (
        "One row per measure: fewer contacts (school closure, distancing), vaccination, or "
        "isolation of cases; when it starts and ends (a start date is the first day in force, "
        "an end date the last day in force), and how well it is followed."
    ),
    SCENARIOS: (
        "One row per scenario: which transmissibility and severity level, and which measures. "
        "Every scenario is also run without its measures for comparison."
    ),
    OBSERVED: "Optional hospital figures seen so far, drawn beside the model curves.",
}

#: Choice lists (what the planner sees -> canonical value).
LEVEL_CHOICES: dict[str, Level] = {"Low": "low", "Central": "central", "High": "high"}
PAGE_CHOICES: dict[str, str] = {"A4": "A4", "Letter": "Letter"}
KIND_CHOICES: dict[str, str] = {
    "Fewer contacts": "contacts",
    "Vaccination": "vaccination",
    "Isolation of cases": "isolation",
}
START_CHOICES: dict[str, str] = {
    "On a date": "date",
    "Ward occupancy reaches": "ward_occupancy",
    "ICU occupancy reaches": "icu_occupancy",
    "Daily admissions reach": "admissions",
}
END_CHOICES: dict[str, str] = {
    "At the horizon": "horizon",
    "On a date": "date",
    "After a number of days": "duration",
    "When the level falls to": "release",
}


SampledRange = Literal["full", "transmissibility", "severity"]


@dataclass(frozen=True, kw_only=True)
class Sampled:
    """How the uncertainty ensemble draws an uncertain field.

    Attributes
    ----------
    key : str
        Dimension key of the Latin hypercube; ``{name}`` stands for the
        measure's name in per-measure fields.
    label : str
        Plain-words name in the sensitivity (tornado) results; ``{name}`` as
        for ``key``.
    unit : str
        Unit of the drawn values in the ensemble results.
    rank : int
        Place of the field in the Latin hypercube (plan fields first, then
        per measure), so that the order of the columns never depends on the
        order of the declarations.
    around : {"full", "transmissibility", "severity"}
        ``"full"`` draws over Low-High with mode Central; the others draw
        around the scenario's level of that name.
    inverted : bool
        A high level of ``around`` means the Low end (a short doubling time
        is fast spread).
    first_only : bool
        Per-measure fields: drawn only for the first measure of a scenario
        that has the value (one vaccine per scenario).
    """

    key: str
    label: str
    unit: str
    rank: int
    around: SampledRange = "full"
    inverted: bool = False
    first_only: bool = False


@dataclass(frozen=True, kw_only=True)
class Field:
    """Declaration of one workbook input.

    Attributes
    ----------
    name : str
        Canonical name, ``<group>.<attribute>``; unique.
    sheet : str
        Sheet the field lives on.
    label : str
        Plain-words label shown in the workbook and the report.
    unit : str
        Unit shown beside the value ("%" for shares).
    type : FieldType
        Kind of value expected.
    minimum, maximum : float or None
        Allowed range, inclusive, in the internal unit (fractions for
        shares, days for times).
    default : object or None
        Value used when the cell is blank; None for no default.
    required : bool
        A blank cell is an error (only when ``default`` is None).
    help : str
        Guidance shown in the workbook and as the Excel input message.
    uncertain : bool
        Low / Central / High columns apply.
    choices : dict of str -> str
        Allowed entries for ``type="choice"`` (shown -> canonical).
    table : str or None
        Table the field is a column of; None for an item.
    target : str or None
        Where the value lands in the :class:`~prepkit.plan.Plan`, a dotted
        path: ``"capacity.icu_beds"`` (an item), ``"severity.icu_share[band]"``
        (one entry per age band, in the order of the bands),
        ``"contacts.setting_shares[band].home"`` (one key of a per-band dict)
        or ``"bands[].people"`` (one entry per table row). None for the key
        column of a per-band table (it only matches rows to bands).
    sampled : Sampled or None
        How the uncertainty ensemble draws the field (uncertain fields only).
    """

    name: str
    target: str | None = None
    sheet: str
    label: str
    unit: str
    type: FieldType
    help: str
    minimum: float | None = None
    maximum: float | None = None
    default: object | None = None
    required: bool = False
    uncertain: bool = False
    choices: Mapping[str, str] | None = None
    table: str | None = None
    width: float = 16.0
    sampled: Sampled | None = None

    @property
    def attribute(self) -> str:
        """Attribute part of the canonical name."""
        return self.name.split(".", 1)[1]

    def expected(self) -> str:
        """Plain-words description of an acceptable value, for messages."""
        if self.type == "share":
            lo = 0.0 if self.minimum is None else self.minimum
            hi = 1.0 if self.maximum is None else self.maximum
            return f"a share between {_num(lo)} and {_num(hi)} (e.g. 25% or 0.25)"
        if self.type == "date":
            return "a date (an Excel date or text like 2027-01-15)"
        if self.type == "choice":
            return "one of " + ", ".join(repr(c) for c in (self.choices or {}))
        if self.type == "text":
            return "some text"
        if self.type == "list":
            return "names separated by ';'"
        what = "a whole number" if self.type == "integer" else "a number"
        if self.minimum is not None and self.maximum is not None:
            return f"{what} between {_num(self.minimum)} and {_num(self.maximum)}"
        if self.minimum is not None:
            return f"{what} of at least {_num(self.minimum)}"
        if self.maximum is not None:
            return f"{what} of at most {_num(self.maximum)}"
        return what


def _num(x: float) -> str:
    # Whole numbers in full with thousands separators ("1,000,000", not "1e+06").
    if float(x).is_integer() and abs(x) < 1e15:
        return f"{int(x):,}"
    return f"{x:g}"


@dataclass(frozen=True, kw_only=True)
class Table:
    """A table-shaped block: its sheet, key column and Excel table name."""

    name: str
    sheet: str
    key: str
    excel_name: str
    template_rows: int
    per_band: bool = False
    help: str = ""


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

_BAND_KEY_HELP = "Band label exactly as on the Population sheet."

#: Said of a default that no published source supports as such.
TYPICAL_VALUE = "typical value; replace with your health authority's figure"

FIELDS: tuple[Field, ...] = (
    # ---- Plan details -------------------------------------------------------------------
    Field(name="details.jurisdiction", target="details.jurisdiction",
          sheet=PLAN, label="Jurisdiction", unit="", type="text",
          required=True, help="Name of the municipality or county the plan covers."),
    Field(name="details.title", target="details.title",
          sheet=PLAN, label="Report title", unit="", type="text",
          default="Outbreak planning scenarios",
          help="Title printed on the cover of the briefing pack."),
    Field(name="details.prepared_by", target="details.prepared_by",
          sheet=PLAN, label="Prepared by", unit="", type="text",
          required=True, help="Person or team responsible for these figures."),
    Field(name="details.day0", target="details.day0",
          sheet=PLAN, label="Day 0 date", unit="date", type="date",
          required=True, help="Calendar date of model day 0, when the initial infections occur."),
    Field(name="details.horizon_days", target="details.horizon_days",
          sheet=PLAN, label="Days to look ahead", unit="days",
          type="integer", minimum=1, maximum=730, default=365,
          help="How many days after day 0 to simulate (1 to 730)."),
    Field(name="details.draws", target="details.draws",
          sheet=PLAN, label="Uncertainty draws", unit="draws",
          type="integer", minimum=0, maximum=100_000, default=1000,
          help="Plausible futures sampled from the Low-High ranges per scenario; 0 switches the "
               "uncertainty ranges off."),
    Field(name="details.seed", target="details.seed",
          sheet=PLAN, label="Random seed", unit="", type="integer",
          minimum=0, maximum=2**32 - 1, default=20_270_101,
          help="Any whole number; the same seed gives the same uncertainty draws."),
    Field(name="details.page_size", target="details.page_size",
          sheet=PLAN, label="Paper size", unit="", type="choice",
          choices=PAGE_CHOICES, default="A4", help="Paper size of the printed pack."),
    # ---- Population ---------------------------------------------------------------------
    Field(name="band.label", target="bands[].label",
          sheet=POPULATION, table="bands", label="Band", unit="",
          type="text", required=True,
          help="Short label such as 0-4 or 75+. Used to match bands on every other sheet."),
    Field(name="band.lower_age", target="bands[].lower_age",
          sheet=POPULATION, table="bands", label="Lowest age",
          unit="years", type="integer", minimum=0, maximum=120, required=True,
          help="Youngest age in the band, in whole years. The first band starts at 0."),
    Field(name="band.upper_age", target="bands[].upper_age",
          sheet=POPULATION, table="bands", label="Highest age",
          unit="years", type="integer", minimum=0, maximum=120,
          help="Oldest age in the band, inclusive. Leave blank in the last band for "
               "'and over'."),
    Field(name="band.people", target="bands[].people",
          sheet=POPULATION, table="bands", label="People", unit="persons",
          type="number", minimum=1, maximum=1e9, required=True,
          help="Residents in the band."),
    Field(name="band.high_risk_share", target="bands[].high_risk_share",
          sheet=POPULATION, table="bands",
          label="High clinical risk", unit="%", type="share",
          help="Optional: share of the band with conditions that raise the risk of severe "
               "illness. Shown in the pack; not used in the calculation."),
    # ---- Mixing (simple form) -----------------------------------------------------------
    Field(name="mixing.assortativity", target="contacts.assortativity",
          sheet=MIXING, label="Contacts within own band",
          unit="%", type="share", default=0.5,
          help="Share of each person's contacts kept for their own band; the rest mix in "
               "proportion to activity (preferential mixing). Used only when the contact "
               "matrices are blank. Default 50%: " + TYPICAL_VALUE + "."),
    Field(name="band_contacts.band", sheet=MIXING, table="band_contacts", label="Band",
          unit="", type="text", required=True, help=_BAND_KEY_HELP),
    Field(name="band_contacts.mean_daily", target="contacts.mean_daily[band]",
          sheet=MIXING, table="band_contacts",
          label="Daily contacts", unit="per day", type="number", minimum=0, maximum=500,
          help="Mean number of people a person in this band meets each day, all settings. "
               "A diary survey in 8 European countries found 13.4 on average (Mossong et al. "
               "2008, PLoS Med 5:e74)."),
    Field(name="band_contacts.home_share", target="contacts.setting_shares[band].home",
          sheet=MIXING, table="band_contacts",
          label="At home", unit="%", type="share", default=0.0,
          help="Share of the band's contacts made at home."),
    Field(name="band_contacts.school_share", target="contacts.setting_shares[band].school",
          sheet=MIXING, table="band_contacts",
          label="At school", unit="%", type="share", default=0.0,
          help="Share made at school or childcare."),
    Field(name="band_contacts.work_share", target="contacts.setting_shares[band].work",
          sheet=MIXING, table="band_contacts",
          label="At work", unit="%", type="share", default=0.0,
          help="Share made at work. The rest are community contacts."),
    # ---- Disease ------------------------------------------------------------------------
    Field(name="disease.r0", target="disease.r0",
          sampled=Sampled(key="transmissibility", label="Basic reproduction number R0",
                          unit="dimensionless", rank=0, around="transmissibility"),
          sheet=DISEASE, label="R0", unit="", type="number", minimum=0.1,
          maximum=30, uncertain=True,
          help="Basic reproduction number: people infected by one case in a fully susceptible "
               "population. Give this, the doubling time, or the growth rate, not more."),
    Field(name="disease.doubling_time_days", target="disease.doubling_time_days",
          sampled=Sampled(key="transmissibility", label="Doubling time", unit="days", rank=0,
                          around="transmissibility", inverted=True),
          sheet=DISEASE, label="Doubling time",
          unit="days", type="number", minimum=0.5, maximum=365, uncertain=True,
          help="Days for early case numbers to double. Columns run from the shortest (Low) to the "
               "longest (High) time; note that a SHORT doubling time means FAST spread."),
    Field(name="disease.growth_rate_per_day", target="disease.growth_rate_per_day",
          sampled=Sampled(key="transmissibility", label="Growth rate", unit="1/day", rank=0,
                          around="transmissibility"),
          sheet=DISEASE, label="Growth rate",
          unit="per day", type="number", minimum=0.001, maximum=2, uncertain=True,
          help="Early exponential growth rate of infections per day (0.1 = about 10% a day)."),
    Field(name="disease.latent_period_days", target="disease.latent_period_days",
          sampled=Sampled(key="latent_period_days", label="Latent period", unit="days", rank=1),
          sheet=DISEASE, label="Latent period",
          unit="days", type="number", minimum=0.1, maximum=60, required=True, uncertain=True,
          help="Mean time from infection until a person can infect others."),
    Field(name="disease.latent_stages", target="disease.latent_stages",
          sheet=DISEASE, label="Latent period stages", unit="",
          type="integer", minimum=1, maximum=10, default=2,
          help="Shape of the latent period: 1 = very variable (exponential); more stages = "
               "more regular. Default 2: " + TYPICAL_VALUE + "."),
    Field(name="disease.infectious_period_days", target="disease.infectious_period_days",
          sampled=Sampled(key="infectious_period_days", label="Infectious period", unit="days",
                          rank=2),
          sheet=DISEASE, label="Infectious period",
          unit="days", type="number", minimum=0.1, maximum=60, required=True, uncertain=True,
          help="Mean time a person stays infectious."),
    Field(name="disease.infectious_stages", target="disease.infectious_stages",
          sheet=DISEASE, label="Infectious period stages",
          unit="", type="integer", minimum=1, maximum=10, default=2,
          help="Shape of the infectious period, as for the latent period. Default 2: "
               + TYPICAL_VALUE + "."),
    Field(name="disease.asymptomatic_relative_infectiousness",
          target="disease.asymptomatic_relative_infectiousness",
          sheet=DISEASE,
          label="Infectiousness without symptoms", unit="%", type="share", default=0.5,
          help="How infectious a person without symptoms is, compared with one with "
               "symptoms. Default 50%: " + TYPICAL_VALUE + "."),
    Field(name="disease.seasonal_amplitude", target="disease.seasonal_amplitude",
          sheet=DISEASE, label="Seasonal swing", unit="%",
          type="share", maximum=0.9, default=0.0,
          help="How much transmission rises above (and falls below) its average over the "
               "year; 0% for none."),
    Field(name="disease.seasonal_peak", target="disease.seasonal_peak",
          sheet=DISEASE, label="Seasonal peak date", unit="date",
          type="date", help="Date of the seasonal high point (the year is ignored). Needed "
                            "when the seasonal swing is above 0%."),
    Field(name="disease.initial_infections", target="disease.initial_infections",
          sheet=DISEASE, label="Initial infections",
          unit="persons", type="number", minimum=0, maximum=1e8, default=10.0,
          help="People newly infected on day 0, spread across bands by population. "
               "Default 10: " + TYPICAL_VALUE + "."),
    Field(name="disease.daily_importations", target="disease.daily_importations",
          sheet=DISEASE, label="Infections from outside",
          unit="per day", type="number", minimum=0, maximum=1e6, default=0.0,
          help="Residents infected elsewhere each day (travel), spread by population."),
    # ---- Disease by age -----------------------------------------------------------------
    Field(name="band_disease.band", sheet=DISEASE_BY_AGE, table="band_disease", label="Band",
          unit="", type="text", required=True, help=_BAND_KEY_HELP),
    Field(name="band_disease.symptomatic_share", target="disease.symptomatic_share[band]",
          sampled=Sampled(key="symptomatic_share", label="Symptomatic share", unit="fraction",
                          rank=3),
          sheet=DISEASE_BY_AGE, table="band_disease",
          label="With symptoms", unit="%", type="share", default=0.67, uncertain=True,
          help="Share of infections that cause symptoms. Default 67%, the share with "
               "symptoms in influenza challenge studies of healthy adults (Carrat et al. 2008, "
               "Am J Epidemiol 167:775); replace with your health authority's figure for this "
               "disease."),
    Field(name="band_disease.relative_susceptibility",
          target="disease.relative_susceptibility[band]",
          sheet=DISEASE_BY_AGE,
          table="band_disease", label="Relative susceptibility", unit="ratio", type="number",
          minimum=0, maximum=10, default=1.0,
          help="Risk of infection per contact compared with other bands (1 = the same)."),
    Field(name="band_disease.prior_immunity", target="disease.prior_immunity[band]",
          sheet=DISEASE_BY_AGE, table="band_disease",
          label="Already immune", unit="%", type="share", default=0.0,
          help="Share of the band immune on day 0 from earlier infection."),
    # ---- Severity -----------------------------------------------------------------------
    Field(name="severity.admission_delay_stages", target="severity.admission_delay_stages",
          sheet=SEVERITY,
          label="Onset-to-admission stages", unit="", type="integer", minimum=1, maximum=10,
          default=1, help="Shape of the delay from symptoms to admission (1 = exponential). "
                          "Default 1: " + TYPICAL_VALUE + "."),
    Field(name="severity.ward_stages", target="severity.ward_stages",
          sheet=SEVERITY, label="Ward stay stages", unit="",
          type="integer", minimum=1, maximum=10, default=2,
          help="Shape of the ward length of stay (1 = exponential; more stages = more "
               "regular). Default 2: " + TYPICAL_VALUE + "."),
    Field(name="severity.icu_stages", target="severity.icu_stages",
          sheet=SEVERITY, label="ICU stay stages", unit="",
          type="integer", minimum=1, maximum=10, default=2,
          help="Shape of the ICU length of stay, as for the ward. Default 2: "
               + TYPICAL_VALUE + "."),
    Field(name="band_severity.band", sheet=SEVERITY, table="band_severity", label="Band",
          unit="", type="text", required=True, help=_BAND_KEY_HELP),
    Field(name="band_severity.admitted_share", target="severity.admitted_share[band]",
          sampled=Sampled(key="admitted_share", label="Admitted share of infections",
                          unit="fraction", rank=4, around="severity"),
          sheet=SEVERITY, table="band_severity",
          label="Admitted per infection", unit="%", type="share", required=True,
          uncertain=True,
          help="Share of all infections (with or without symptoms) admitted to hospital. "
               "Must not exceed the share with symptoms."),
    Field(name="band_severity.icu_share", target="severity.icu_share[band]",
          sampled=Sampled(key="icu_share", label="ICU share of admissions", unit="fraction",
                          rank=5, around="severity"),
          sheet=SEVERITY, table="band_severity",
          label="ICU share of admissions", unit="%", type="share", required=True,
          uncertain=True, help="Share of admissions that need intensive care."),
    Field(name="band_severity.ward_fatality", target="severity.ward_fatality[band]",
          sheet=SEVERITY, table="band_severity",
          label="Deaths per ward stay", unit="%", type="share", required=True,
          help="Share of ward-only stays that end in death."),
    Field(name="band_severity.icu_fatality", target="severity.icu_fatality[band]",
          sheet=SEVERITY, table="band_severity",
          label="Deaths per ICU stay", unit="%", type="share", required=True,
          help="Share of ICU stays that end in death."),
    Field(name="band_severity.onset_to_admission_days",
          target="severity.onset_to_admission_days[band]",
          sheet=SEVERITY,
          table="band_severity", label="Onset to admission", unit="days", type="number",
          minimum=0.1, maximum=60, required=True,
          help="Mean days from first symptoms to hospital admission."),
    Field(name="band_severity.ward_stay_days", target="severity.ward_stay_days[band]",
          sampled=Sampled(key="ward_stay_days", label="Ward length of stay", unit="days", rank=6),
          sheet=SEVERITY, table="band_severity",
          label="Ward length of stay", unit="days", type="number", minimum=0.1, maximum=365,
          required=True, uncertain=True, help="Mean days in a ward bed."),
    Field(name="band_severity.icu_stay_days", target="severity.icu_stay_days[band]",
          sampled=Sampled(key="icu_stay_days", label="ICU length of stay", unit="days", rank=7),
          sheet=SEVERITY, table="band_severity",
          label="ICU length of stay", unit="days", type="number", minimum=0.1, maximum=365,
          required=True, uncertain=True, help="Mean days in an ICU bed."),
    # ---- Hospitals ----------------------------------------------------------------------
    Field(name="capacity.ward_beds", target="capacity.ward_beds",
          sheet=HOSPITALS, label="Staffed ward beds", unit="beds",
          type="integer", minimum=0, maximum=1_000_000, required=True,
          help="General and acute beds that can be staffed today."),
    Field(name="capacity.icu_beds", target="capacity.icu_beds",
          sheet=HOSPITALS, label="Staffed ICU beds", unit="beds",
          type="integer", minimum=0, maximum=100_000, required=True,
          help="Adult and paediatric intensive care beds that can be staffed today."),
    Field(name="capacity.ventilators", target="capacity.ventilators",
          sheet=HOSPITALS, label="Ventilators", unit="devices",
          type="integer", minimum=0, maximum=100_000,
          help="Optional: mechanical ventilators available to outbreak patients. The pack "
               "compares them with the ICU patients who need one, day by day."),
    Field(name="capacity.ventilated_icu_share", target="capacity.ventilated_icu_share",
          sheet=HOSPITALS,
          label="ICU patients needing a ventilator", unit="%", type="share", default=0.5,
          help="Share of outbreak ICU patients on mechanical ventilation on any day. Default "
               "50%: 7.5% of hospitalised patients need ventilation and 15% need ICU care "
               "(US HHS Pandemic Influenza Plan 2005, Table 1)."),
    Field(name="capacity.ward_baseline_occupancy", target="capacity.ward_baseline_occupancy",
          sheet=HOSPITALS,
          label="Ward beds used by other patients", unit="%", type="share", default=0.85,
          help="Share of ward beds filled by patients without this disease. Default 85%: "
               "above this mean occupancy, the risk of finding no bed for an emergency "
               "admission rises (Bagust, Place & Posnett 1999, BMJ 319:155)."),
    Field(name="capacity.icu_baseline_occupancy", target="capacity.icu_baseline_occupancy",
          sheet=HOSPITALS,
          label="ICU beds used by other patients", unit="%", type="share", default=0.68,
          help="Share of ICU beds filled by other patients. Default 68%, the mean occupancy "
               "of 97 US ICUs in 2005-2007 (Wunsch et al. 2013, Crit Care Med 41:2712)."),
    Field(name="capacity.surge_ward_beds", target="capacity.surge_ward_beds",
          sheet=HOSPITALS, label="Surge ward beds",
          unit="beds", type="integer", minimum=0, maximum=1_000_000, default=0,
          help="Extra ward beds that can be opened under the surge plan."),
    Field(name="capacity.surge_icu_beds", target="capacity.surge_icu_beds",
          sheet=HOSPITALS, label="Surge ICU beds",
          unit="beds", type="integer", minimum=0, maximum=100_000, default=0,
          help="Extra ICU beds that can be opened under the surge plan."),
    Field(name="capacity.surge_days_to_open", target="capacity.surge_days_to_open",
          sheet=HOSPITALS, label="Days to open surge beds",
          unit="days", type="number", minimum=0, maximum=90, default=7.0,
          help="Days from the surge trigger until surge beds can take patients. Default 7: "
               + TYPICAL_VALUE + "."),
    Field(name="capacity.surge_trigger_occupancy", target="capacity.surge_trigger_occupancy",
          sheet=HOSPITALS,
          label="Surge trigger", unit="%", type="share", default=0.85,
          help="When outbreak patients fill this share of the beds available to them, the "
               "surge beds start to open. Default 85%: " + TYPICAL_VALUE + "."),
    Field(name="capacity.catchment_share", target="capacity.catchment_share",
          sheet=HOSPITALS,
          label="Residents' admissions to these hospitals", unit="%", type="share",
          minimum=0.01, default=1.0,
          help="Share of the jurisdiction's hospital patients that these beds receive."),
    # ---- Workforce ----------------------------------------------------------------------
    Field(name="workforce.working_age_min", target="workforce.working_age_min",
          sheet=WORKFORCE, label="Youngest working age",
          unit="years", type="integer", minimum=10, maximum=100, default=18,
          help="Youngest age counted in the workforce. Default 18: " + TYPICAL_VALUE + "."),
    Field(name="workforce.working_age_max", target="workforce.working_age_max",
          sheet=WORKFORCE, label="Oldest working age",
          unit="years", type="integer", minimum=10, maximum=100, default=64,
          help="Oldest age counted in the workforce. Default 64: " + TYPICAL_VALUE + "."),
    Field(name="workforce.employed_share", target="workforce.employed_share",
          sheet=WORKFORCE,
          label="Working-age people in work", unit="%", type="share", default=0.75,
          help="Share of working-age residents in paid work. Default 75%: " + TYPICAL_VALUE
               + "."),
    Field(name="workforce.days_absent_per_illness", target="workforce.days_absent_per_illness",
          sheet=WORKFORCE,
          label="Days off per illness", unit="days", type="number", minimum=0, maximum=60,
          default=5.0, help="Working days lost per symptomatic illness. Default 5: "
                            + TYPICAL_VALUE + "."),
    Field(name="workforce.carer_share_school_closure",
          target="workforce.carer_share_school_closure",
          sheet=WORKFORCE,
          label="Workers caring for children when schools close", unit="%", type="share",
          default=0.1,
          help="Share of workers who must stay home while schools are closed. Default 10%: "
               + TYPICAL_VALUE + "."),
    # ---- Measures -----------------------------------------------------------------------
    Field(name="measure.name", target="interventions[].name",
          sheet=MEASURES, table="measures", label="Measure", unit="",
          type="text", required=True, help="A short unique name, used on the Scenarios sheet."),
    Field(name="measure.kind", target="interventions[].kind",
          sheet=MEASURES, table="measures", label="Kind", unit="",
          type="choice", choices=KIND_CHOICES, required=True,
          help="Fewer contacts (school closure, distancing), vaccination, or isolation of "
               "cases."),
    Field(name="measure.start_rule", target="interventions[].start.kind",
          sheet=MEASURES, table="measures", label="Starts",
          unit="", type="choice", choices=START_CHOICES, default="On a date",
          help="Start on a date, or when a level is reached (checked once a day).", width=22),
    Field(name="measure.start_date", target="interventions[].start.date",
          sheet=MEASURES, table="measures", label="Start date",
          unit="date", type="date", help="For 'On a date': the first day in force."),
    Field(name="measure.start_level", target="interventions[].start.level",
          sheet=MEASURES, table="measures", label="Start level",
          unit="% or per day", type="number", minimum=0,
          help="For occupancy: share of the beds available to outbreak patients (e.g. 80%). "
               "For admissions: new admissions per day."),
    Field(name="measure.end_rule", target="interventions[].end.kind",
          sheet=MEASURES, table="measures", label="Ends", unit="",
          type="choice", choices=END_CHOICES, default="At the horizon",
          help="When the measure stops.", width=22),
    Field(name="measure.end_date", target="interventions[].end.date",
          sheet=MEASURES, table="measures", label="End date",
          unit="date", type="date",
          help="For 'On a date': the last day in force; the measure stops at the midnight "
               "that follows (2027-05-31 means in force up to and including 31 May)."),
    Field(name="measure.duration_days", target="interventions[].end.duration_days",
          sheet=MEASURES, table="measures", label="Lasts",
          unit="days", type="number", minimum=1, maximum=730,
          help="For 'After a number of days': days in force, the day it starts counted as "
               "the first (56 = eight weeks)."),
    Field(name="measure.release_level", target="interventions[].end.level",
          sheet=MEASURES, table="measures",
          label="Release level", unit="% or per day", type="number", minimum=0,
          help="For 'When the level falls to': lift the measure when the level it started on "
               "falls to this (must be below the start level)."),
    *(
        Field(name=f"measure.{setting}_kept", target=f"interventions[].contacts_kept.{setting}",
              sheet=MEASURES, table="measures",
              label=f"{setting.capitalize()} contacts kept", unit="%", type="share",
              default=1.0,
              help=f"For 'Fewer contacts': share of {setting} contacts that still happen "
                   f"(0% = all stopped, 100% = no change).")
        for setting in SETTINGS
    ),
    Field(name="measure.doses_per_day", target="interventions[].vaccination.doses_per_day",
          sheet=MEASURES, table="measures",
          label="Doses per day", unit="per day", type="number", minimum=0, maximum=1e7,
          help="For vaccination: people vaccinated each day."),
    Field(name="measure.priority", target="interventions[].vaccination.priority",
          sheet=MEASURES, table="measures", label="Band order",
          unit="", type="list",
          help="For vaccination: bands in the order they are offered the vaccine, separated "
               "by ';' (e.g. 75+; 65-74). Bands not listed are not offered it.", width=24),
    Field(name="measure.uptake_ceiling", target="interventions[].vaccination.uptake_ceiling",
          sheet=MEASURES, table="measures",
          label="Uptake ceiling", unit="%", type="share",
          help="For vaccination: largest share of each band that will accept the vaccine."),
    Field(name="measure.efficacy_infection",
          target="interventions[].vaccination.efficacy_infection",
          sampled=Sampled(key="efficacy_infection[{name}]",
                          label="Vaccine efficacy against infection: {name}", unit="fraction",
                          rank=9, first_only=True),
          sheet=MEASURES, table="measures",
          label="Efficacy against infection", unit="%", type="share", uncertain=True,
          help="For vaccination: reduction in the chance of infection per contact."),
    Field(name="measure.efficacy_severe", target="interventions[].vaccination.efficacy_severe",
          sampled=Sampled(key="efficacy_severe[{name}]",
                          label="Vaccine efficacy against admission: {name}", unit="fraction",
                          rank=10, first_only=True),
          sheet=MEASURES, table="measures",
          label="Efficacy against admission", unit="%", type="share", uncertain=True,
          help="For vaccination: overall reduction in the chance of hospital admission; at "
               "least the efficacy against infection."),
    Field(name="measure.days_to_protection",
          target="interventions[].vaccination.days_to_protection",
          sheet=MEASURES, table="measures",
          label="Days to protection", unit="days", type="number", minimum=0, maximum=90,
          default=14.0, help="For vaccination: mean days from the dose to protection. "
                             "Default 14: " + TYPICAL_VALUE + "."),
    Field(name="measure.isolated_share", target="interventions[].isolation.isolated_share",
          sheet=MEASURES, table="measures",
          label="Cases isolated", unit="%", type="share",
          help="For isolation: share of people with symptoms who isolate."),
    Field(name="measure.days_from_onset", target="interventions[].isolation.days_from_onset",
          sheet=MEASURES, table="measures",
          label="Days from onset to isolation", unit="days", type="number", minimum=0,
          maximum=30, default=1.0,
          help="For isolation: mean delay after symptoms begin. Default 1: " + TYPICAL_VALUE
               + "."),
    Field(name="measure.compliance", target="interventions[].compliance",
          sampled=Sampled(key="compliance[{name}]", label="Compliance: {name}", unit="fraction",
                          rank=8),
          sheet=MEASURES, table="measures", label="Compliance",
          unit="%", type="share", default=1.0, uncertain=True,
          help="Share of the full effect actually achieved."),
    # ---- Scenarios ----------------------------------------------------------------------
    Field(name="scenario.name", target="scenarios[].name",
          sheet=SCENARIOS, table="scenarios", label="Scenario",
          unit="", type="text", required=True, help="A short unique name.", width=24),
    Field(name="scenario.transmissibility_level", target="scenarios[].transmissibility_level",
          sheet=SCENARIOS, table="scenarios",
          label="Transmissibility", unit="", type="choice", choices=LEVEL_CHOICES,
          default="Central",
          help="High = faster spread: the High R0 or growth rate, or the Low (shortest) "
               "doubling time. Low = slower spread."),
    Field(name="scenario.severity_level", target="scenarios[].severity_level",
          sheet=SCENARIOS, table="scenarios",
          label="Severity", unit="", type="choice", choices=LEVEL_CHOICES, default="Central",
          help="Which column of the admission and ICU shares to use (High = more severe)."),
    Field(name="scenario.interventions", target="scenarios[].interventions",
          sheet=SCENARIOS, table="scenarios",
          label="Measures applied", unit="", type="list", default=(),
          help="Names from the Measures sheet separated by ';'. Blank = no measures.",
          width=34),
    Field(name="scenario.description", target="scenarios[].description",
          sheet=SCENARIOS, table="scenarios",
          label="Description", unit="", type="text", default="",
          help="One or two sentences for the briefing pack.", width=48),
    # ---- Observed -----------------------------------------------------------------------
    Field(name="observed.date", target="observed[].date",
          sheet=OBSERVED, table="observed", label="Date", unit="date",
          type="date", required=True, help="Day the figures refer to."),
    Field(name="observed.admissions", target="observed[].admissions",
          sheet=OBSERVED, table="observed",
          label="New admissions", unit="per day", type="number", minimum=0,
          help="Residents admitted with the disease that day."),
    Field(name="observed.ward_census", target="observed[].ward_census",
          sheet=OBSERVED, table="observed",
          label="Ward patients", unit="persons", type="number", minimum=0,
          help="Patients with the disease in ward beds that day."),
    Field(name="observed.icu_census", target="observed[].icu_census",
          sheet=OBSERVED, table="observed", label="ICU patients",
          unit="persons", type="number", minimum=0,
          help="Patients with the disease in ICU that day."),
)

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

#: Guidance of the "Source or note" cells (free text; prepkit does not read it).
NOTE_HELP = (
    "Where the figure comes from (a report, a data set, a person) or why it was chosen. "
    "Not used in the calculation."
)

#: Title row of every contact-matrix sheet.
MATRIX_TITLE = (
    "Rows: the band of the person making the contacts. Columns: the band of the people "
    "they meet. Each cell: mean contacts per person per day."
)
#: How to label a contact-matrix sheet.
MATRIX_NOTE = (
    f"Copy the band labels from the {POPULATION} sheet into the row that starts with "
    f"'{BAND_HEADER}' and into the column below it, in any order. Leave all four contact "
    f"sheets blank to use the simple contacts on the {MIXING} sheet; fill one and all four "
    "must be complete."
)

#: Text of the instructions sheet (the sheet list is built from SHEET_PURPOSE).
INSTRUCTIONS_TITLE = "prepkit planning workbook"
INSTRUCTIONS_PURPOSE = (
    "This workbook holds the inputs of one outbreak plan: the population, how people "
    "meet, how the disease spreads and how severe it is, the hospital beds, the measures "
    "being considered and the scenarios to compare. prepkit reads it and turns it into "
    "planning scenarios and a printed briefing pack."
)
INSTRUCTIONS_HOW_HEADING = "How to fill it in"
INSTRUCTIONS_HOW: tuple[str, ...] = (
    "Type only in the shaded cells with a dotted border; every other cell is locked. "
    "The sheets are protected without a password: use Review > Unprotect Sheet if you "
    "need to change the layout.",
    "Each input has its unit beside it and guidance next to it; selecting a cell also "
    "shows its guidance. Leave a cell blank to use the default named in the guidance.",
    "Shares may be typed as 25% or as 0.25. A bare number above 1 is not a share.",
    "Dates may be Excel dates or text like 2027-01-15.",
    "Where Low, Central and High columns appear, Central is the best estimate; a blank "
    "Low or High means the same as Central.",
    "You may insert rows, move item rows, put the rows of a table in any order, reorder "
    "table columns and add your own sheets. Keep the labels and column headers as they "
    "are: prepkit finds every input by them.",
    "Use the Source or note column to say where each figure comes from.",
    "Run 'prepkit check' on the file to list every problem at once, with its sheet and "
    "cell.",
)
INSTRUCTIONS_SHEETS_HEADING = "The sheets"
INSTRUCTIONS_CAUTION = (
    "Caution: the results are a planning aid, not a forecast. They show what could happen "
    "under the stated assumptions. Decisions rest with the local health authority."
)


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
