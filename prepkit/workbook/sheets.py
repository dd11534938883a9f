"""Sheet names, header words and choice lists of the planning workbook.

See the layout rules in :mod:`prepkit.workbook.schema`.
"""

from __future__ import annotations

from prepkit.plan import Level

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
SUPPLIES = "Staff and supplies"
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
    SUPPLIES,
    MEASURES,
    SCENARIOS,
    OBSERVED,
)

#: Sheets a workbook must have (Observed, Staff and supplies and the matrix sheets may be
#: absent: every field of theirs has a default or is optional).
REQUIRED_SHEETS: tuple[str, ...] = tuple(
    sheet for sheet in SHEET_ORDER
    if sheet not in (OBSERVED, SUPPLIES) and sheet not in MATRIX_SHEETS.values()
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
    SUPPLIES: (
        "Optional: hospital staff on duty and patients per nurse and doctor, oxygen, protective "
        "equipment and mortuary spaces. Each supply left blank is not compared."
    ),
    MEASURES: (
        "One row per measure: fewer contacts (school closure, distancing), vaccination, or "
        "isolation of cases; when it starts and ends (a start date is the first day in force, "
        "an end date the last day in force), and how well it is followed."
    ),
    SCENARIOS: (
        "One row per scenario: which transmissibility and severity level, and which measures. "
        "Every scenario is also run without its measures for comparison."
    ),
    OBSERVED: "Optional local figures seen so far: admissions, patients in beds, deaths and test "
              "positivity, daily or weekly, drawn beside the model curves.",
}

#: Choice lists (what the planner sees -> canonical value).
LEVEL_CHOICES: dict[str, Level] = {"Low": "low", "Central": "central", "High": "high"}
PAGE_CHOICES: dict[str, str] = {"A4": "A4", "Letter": "Letter"}
PERIOD_CHOICES: dict[str, str] = {"Daily": "daily", "Weekly totals": "weekly"}
FIT_CHOICES: dict[str, str] = {"Fit the scenarios": "fit", "Only draw them": "draw"}
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

#: Said of a default that no published source supports as such.
TYPICAL_VALUE = "typical value; replace with your health authority's figure"

#: Guidance of the band column of every per-band table.
BAND_KEY_HELP = "Band label exactly as on the Population sheet."
