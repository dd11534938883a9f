"""Workbook fields of the Staff and supplies sheet, and the crisis beds of the Hospitals sheet.

Each declared once; the defaults of :class:`prepkit.plan.resources.Supplies`
are taken from here (one number, one source). A supply left blank (nurses,
oxygen, stock, mortuary spaces) is not compared: the pack says so.
"""

from __future__ import annotations

from prepkit.plan.resources import (
    ICU_OXYGEN_LPM,
    ICU_PATIENTS_PER_DOCTOR,
    ICU_PATIENTS_PER_NURSE,
    MORTUARY_DAYS,
    PPE_PER_PATIENT_DAY,
    WARD_OXYGEN_LPM,
    WARD_PATIENTS_PER_DOCTOR,
    WARD_PATIENTS_PER_NURSE,
)
from prepkit.workbook.field_types import Field
from prepkit.workbook.sheets import HOSPITALS, SUPPLIES, TYPICAL_VALUE

__all__ = ["CRISIS_FIELDS", "SUPPLY_FIELDS"]

_HVARFNER = "Hvarfner et al. 2022, PLOS ONE 17:e0249984"
_JHU = ("Johns Hopkins Center for Health Security 2020, Assumptions of US PPE needs for "
        "COVID-19")
#: Where each item's ICU default comes from.
_ICU_SOURCE = {
    "gowns": f"20 changes per ICU patient-day ({_JHU})",
    "gloves": f"170 changes of a pair per ICU patient-day ({_JHU})",
    "respirators": "one per worker per 4-hour wear, as for masks in the source of the gown and "
                   "glove figures: " + TYPICAL_VALUE,
}
_IOM = "Institute of Medicine 2012, Crisis Standards of Care"

CRISIS_FIELDS: tuple[Field, ...] = (
    Field(name="capacity.crisis_ward_beds", target="capacity.crisis_ward_beds",
          sheet=HOSPITALS, label="Crisis-space ward beds", unit="beds", type="integer",
          minimum=0, maximum=1_000_000, default=0,
          help="Further ward beds that could be set up under crisis care in space not built for "
               f"patients (halls, recovery areas), beyond the surge beds ({_IOM}). They open on "
               "the surge beds' schedule. Default 0."),
    Field(name="capacity.crisis_icu_beds", target="capacity.crisis_icu_beds",
          sheet=HOSPITALS, label="Crisis-space ICU beds", unit="beds", type="integer",
          minimum=0, maximum=100_000, default=0,
          help="Further critical care places under crisis care (operating theatres, recovery "
               f"bays), beyond the surge ICU beds ({_IOM}). Default 0."),
)

_WHEN_BLANK_STAFF = ("Leave blank if the staff on duty exactly match the staffed beds at the ratio "
                     "below; then absence takes away the same share of beds.")


def _staff(kind: str, noun: str, label: str, ratio: float, ratio_help: str) -> tuple[Field, ...]:
    where = "ward" if kind == "ward" else "ICU"
    article = "a" if kind == "ward" else "an"
    return (
        Field(name=f"supplies.{kind}_{noun}s", target=f"supplies.{kind}_{noun}s",
              sheet=SUPPLIES, label=f"{where[0].upper()}{where[1:]} {label}s on duty per shift",
              unit="persons", type="number", minimum=0, maximum=1_000_000,
              help=f"Optional: {label}s who look after {where} patients on a shift when none is "
                   f"absent. Hospital staff fall ill and care for children like the rest of the "
                   f"working population (the Workforce sheet), so fewer are on duty at the peak "
                   f"and fewer {where} beds can be staffed. {_WHEN_BLANK_STAFF}"),
        Field(name=f"supplies.{kind}_patients_per_{noun}",
              target=f"supplies.{kind}_patients_per_{noun}",
              sheet=SUPPLIES, label=f"{where[0].upper()}{where[1:]} patients per {label}",
              unit=f"per {label}", type="number", minimum=0.1, maximum=100, default=ratio,
              help=f"Patients one {label} looks after on {article} {where} shift. Default "
                   f"{ratio:g}: {ratio_help}"),
    )


def _stock(item: str, label: str, ward: float, icu: float) -> tuple[Field, ...]:
    return (
        Field(name=f"supplies.{item}_ward_per_patient_day",
              target=f"supplies.{item}_ward_per_patient_day", sheet=SUPPLIES,
              label=f"{label} per ward patient-day", unit="items", type="number", minimum=0,
              maximum=10_000, default=ward,
              help=f"{label} used for each day an outbreak patient spends on a ward. Default "
                   f"{ward:g}: {TYPICAL_VALUE}."),
        Field(name=f"supplies.{item}_icu_per_patient_day",
              target=f"supplies.{item}_icu_per_patient_day", sheet=SUPPLIES,
              label=f"{label} per ICU patient-day", unit="items", type="number", minimum=0,
              maximum=10_000, default=icu,
              help=f"{label} used for each day an outbreak patient spends in ICU. Default "
                   f"{icu:g}: {_ICU_SOURCE[item]}."),
        Field(name=f"supplies.{item}_stock", target=f"supplies.{item}_stock", sheet=SUPPLIES,
              label=f"{label} in stock on day 0", unit="items", type="number", minimum=0,
              maximum=1e10,
              help=f"Optional: {label.lower()} held for outbreak patients on day 0. Leave blank "
                   "and they are not compared."),
        Field(name=f"supplies.{item}_resupply_per_day",
              target=f"supplies.{item}_resupply_per_day", sheet=SUPPLIES,
              label=f"{label} delivered per day", unit="items", type="number", minimum=0,
              maximum=1e9, default=0.0,
              help=f"{label} the suppliers can deliver each day. Default 0."),
    )


_LABELS = {"gowns": "Gowns", "gloves": "Glove pairs", "respirators": "Respirators"}

SUPPLY_FIELDS: tuple[Field, ...] = (
    # ---- Staff --------------------------------------------------------------------------
    *_staff("ward", "nurse", "nurse", WARD_PATIENTS_PER_NURSE, TYPICAL_VALUE + "."),
    *_staff("icu", "nurse", "nurse", ICU_PATIENTS_PER_NURSE,
            "one nurse to each ICU patient, " + TYPICAL_VALUE + "."),
    *_staff("ward", "doctor", "doctor", WARD_PATIENTS_PER_DOCTOR, TYPICAL_VALUE + "."),
    *_staff("icu", "doctor", "doctor", ICU_PATIENTS_PER_DOCTOR, TYPICAL_VALUE + "."),
    # ---- Oxygen -------------------------------------------------------------------------
    Field(name="supplies.ward_oxygen_share", target="supplies.ward_oxygen_share",
          sheet=SUPPLIES, label="Ward patients on oxygen", unit="%", type="share",
          default=1.0,
          help="Share of outbreak ward patients on oxygen on any day. Default 100%, with the "
               "flow below an average over them: " + TYPICAL_VALUE + "."),
    Field(name="supplies.ward_oxygen_lpm", target="supplies.ward_oxygen_lpm",
          sheet=SUPPLIES, label="Oxygen per ward patient", unit="L/min", type="number",
          minimum=0, maximum=100, default=WARD_OXYGEN_LPM,
          help=f"Oxygen flow per ward patient on oxygen, litres per minute. Default "
               f"{WARD_OXYGEN_LPM:g}, the mean flow to ward patients on oxygen in a district "
               f"hospital ({_HVARFNER})."),
    Field(name="supplies.icu_oxygen_share", target="supplies.icu_oxygen_share",
          sheet=SUPPLIES, label="ICU patients on oxygen", unit="%", type="share", default=1.0,
          help="Share of outbreak ICU patients on oxygen on any day. Default 100%: "
               + TYPICAL_VALUE + "."),
    Field(name="supplies.icu_oxygen_lpm", target="supplies.icu_oxygen_lpm",
          sheet=SUPPLIES, label="Oxygen per ICU patient", unit="L/min", type="number",
          minimum=0, maximum=200, default=ICU_OXYGEN_LPM,
          help=f"Oxygen flow per ICU patient on oxygen, litres per minute. Default "
               f"{ICU_OXYGEN_LPM:g}, the World Health Organization's estimate for severely ill "
               f"patients, as quoted by a district-hospital study ({_HVARFNER}); patients on "
               f"high-flow oxygen need far more."),
    Field(name="supplies.oxygen_supply_lpm", target="supplies.oxygen_supply_lpm",
          sheet=SUPPLIES, label="Oxygen the site can deliver", unit="L/min", type="number",
          minimum=0, maximum=1e7,
          help="Optional: the oxygen flow the hospitals' tanks and pipes can deliver to "
               "outbreak patients at once, litres per minute (ask the site's engineers). Leave "
               "blank and oxygen is not compared."),
    # ---- Protective equipment -----------------------------------------------------------
    *(f for item, (ward, icu) in PPE_PER_PATIENT_DAY.items()
      for f in _stock(item, _LABELS[item], ward, icu)),
    # ---- Mortuary -----------------------------------------------------------------------
    Field(name="supplies.mortuary_spaces", target="supplies.mortuary_spaces",
          sheet=SUPPLIES, label="Mortuary spaces", unit="spaces", type="integer", minimum=0,
          maximum=1_000_000,
          help="Optional: spaces for the bodies of outbreak patients who die in these "
               "hospitals. Leave blank and they are not compared."),
    Field(name="supplies.mortuary_days", target="supplies.mortuary_days",
          sheet=SUPPLIES, label="Days before release from the mortuary", unit="days",
          type="number", minimum=0.5, maximum=90, default=MORTUARY_DAYS,
          help=f"Mean days a body stays before release to a funeral home. Default "
               f"{MORTUARY_DAYS:g}: "
               + TYPICAL_VALUE + "."),
)
