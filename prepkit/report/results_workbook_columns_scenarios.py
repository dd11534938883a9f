"""The columns of the scenario sheets of ``results.xlsx``, declared once.

Summary, Effect of measures, Beds in detail, Totals and peaks, the Daily
sheets, Transmissibility and Inputs; the types and number formats are in
:mod:`prepkit.report.results_workbook_columns`. A figure's ``name`` is its
key path in ``summary.json`` under the sheet's prefix (or its column in
``daily-series.csv``), and the sheet writer reads the value from the
attribute of the same path, so the Column guide cannot drift from the
files.
"""

from __future__ import annotations

from prepkit.report.results_workbook_columns import (
    BED_TYPE,
    BY_ROW,
    DATE,
    DAYS,
    DECIMAL_DAYS,
    KEYS,
    ONE_DECIMAL,
    PERCENT,
    RATE,
    RATIO,
    TEXT,
    VARIANT_RECORD,
    WHOLE,
    SheetColumn,
    SheetColumns,
    column,
)
from prepkit.report.tables import DAILY_COLUMNS

__all__ = [
    "BEDS",
    "DAILY",
    "EFFECT",
    "INPUTS",
    "MEASURE_FORMATS",
    "SUMMARY",
    "TOTALS",
    "TRANSMISSIBILITY",
]

_SCENARIO, _NUMBER, _VARIANT = KEYS

DEATHS = (
    column("Deaths in hospital care [people]", "total.hospital_deaths_persons",
           "people", WHOLE, "Deaths in hospital care (ward and ICU) over the period, as if "
           "every patient had a bed.", 12),
    column("Additional deaths when beds run short [people]", "shortage_deaths_persons",
           "people", WHOLE, "Patients who need a ward or ICU bed and do not get one, times "
           "the Severity sheet's extra chance of death without one; surge beds not counted.", 12),
    column("Additional deaths when beds run short, with surge beds [people]",
           "shortage_deaths_with_surge_persons", "people", WHOLE,
           "The same once surge beds are open.", 12),
)
"""The two kinds of death, in the Summary and Beds and people sheets."""

SUMMARY = SheetColumns(
    sheet="Summary", file="summary.json", prefix=VARIANT_RECORD,
    columns=(
        *KEYS,
        column("Ward peak demand [beds]", "ward.peak_demand_beds", "beds", WHOLE,
               "Most ward beds needed by outbreak patients on one day."),
        column("Ward peak date", "ward.peak_date", "date", DATE,
               "Day of the ward peak.", 12),
        column("Ward beds available [beds]", "ward.available_beds", "beds", WHOLE,
               "Staffed ward beds not needed by other patients, without surge beds."),
        column("Days ward beds short [days]", "ward.days_over_capacity_days", "days", DAYS,
               "Days on which ward demand is above the available ward beds."),
        column("Days ward occupancy above 75% [days]", "ward.days_strained_days", "days",
               DAYS, "Days on which other patients and outbreak patients fill more than 75% "
               "of the staffed ward beds (surge beds not counted)."),
        column("Unmet ward bed-days [bed-days]", "ward.unmet_bed_days", "bed-days", WHOLE,
               "Ward demand above the available beds, added up over the days."),
        column("ICU peak demand [beds]", "icu.peak_demand_beds", "beds", WHOLE,
               "Most ICU beds needed by outbreak patients on one day."),
        column("ICU peak date", "icu.peak_date", "date", DATE, "Day of the ICU peak.", 12),
        column("ICU beds available [beds]", "icu.available_beds", "beds", WHOLE,
               "Staffed ICU beds not needed by other patients, without surge beds."),
        column("Days ICU beds short [days]", "icu.days_over_capacity_days", "days", DAYS,
               "Days on which ICU demand is above the available ICU beds."),
        column("Days ICU occupancy above 75% [days]", "icu.days_strained_days", "days",
               DAYS, "Days on which other patients and outbreak patients fill more than 75% "
               "of the staffed ICU beds (surge beds not counted)."),
        column("Unmet ICU bed-days [bed-days]", "icu.unmet_bed_days", "bed-days", WHOLE,
               "ICU demand above the available beds, added up over the days."),
        column("Hospital admissions [people]", "total.admissions_persons", "people", WHOLE,
               "Residents admitted to hospital over the whole period."),
        column("ICU admissions [people]", "total.icu_admissions_persons", "people", WHOLE,
               "Admissions that go to ICU over the whole period."),
        *DEATHS,
        column("Residents infected [%]", "infection_attack_share", "%", PERCENT,
               "Share of residents infected over the period (the attack rate)."),
    ),
)

BEDS = SheetColumns(
    sheet="Beds in detail", file="summary.json", prefix=f"{VARIANT_RECORD}.<beds>",
    columns=(
        *KEYS,
        BED_TYPE,
        column("Peak demand [beds]", "peak_demand_beds", "beds", WHOLE,
               "Most beds needed by outbreak patients on one day: census x share admitted to "
               "these hospitals."),
        column("Peak date", "peak_date", "date", DATE, "Day of the peak.", 12),
        column("Peak census [people]", "peak_census_persons", "people", WHOLE,
               "Most residents in beds of this type on one day, in any hospital."),
        column("Beds available [beds]", "available_beds", "beds", WHOLE,
               "Staffed beds not needed by other patients, without surge beds."),
        column("Surge beds [beds]", "surge_beds", "beds", WHOLE,
               "Extra beds that can be opened, as in the planning workbook."),
        column("Surge beds called for", "surge_trigger_date", "date", DATE,
               "Day the surge trigger is reached (blank: never).", 12),
        column("Surge beds open", "surge_open_date", "date", DATE,
               "Day the surge beds are ready, after the lead time (blank: never).", 12),
        column("First day short", "first_over_capacity_date", "date", DATE,
               "First day demand is above the available beds (blank: never).", 12),
        column("Days short [days]", "days_over_capacity_days", "days", DAYS,
               "Days on which demand is above the available beds."),
        column("Largest shortfall [beds]", "largest_shortfall_beds", "beds", WHOLE,
               "Largest gap between demand and available beds on one day."),
        column("Unmet bed-days [bed-days]", "unmet_bed_days", "bed-days", WHOLE,
               "Demand above the available beds, added up over the days."),
        column("First day short with surge beds", "first_over_capacity_with_surge_date", "date",
               DATE, "First day demand is above the available beds with surge beds open.", 12),
        column("Days short with surge beds [days]", "days_over_capacity_with_surge_days", "days",
               DAYS, "Days on which demand is above the available beds with surge beds open."),
        column("Largest shortfall with surge beds [beds]", "largest_shortfall_with_surge_beds",
               "beds", WHOLE, "Largest gap on one day with surge beds open."),
        column("Unmet bed-days with surge beds [bed-days]", "unmet_bed_days_with_surge",
               "bed-days", WHOLE, "Demand above the available beds with surge beds open, added "
               "up over the days."),
    ),
)

TOTALS = SheetColumns(
    sheet="Totals and peaks", file="summary.json", prefix=VARIANT_RECORD,
    columns=(
        *KEYS,
        column("Infections [people]", "total.infections_persons", "people", WHOLE,
               "Infections over the period, day-0 infections included."),
        column("Residents infected [%]", "infection_attack_share", "%", PERCENT,
               "Share of residents infected over the period (the attack rate)."),
        column("Illnesses with symptoms [people]", "total.symptomatic_cases_persons", "people",
               WHOLE, "Infections with symptoms over the period."),
        column("Residents ill with symptoms [%]", "symptomatic_attack_share", "%", PERCENT,
               "Share of residents ill with symptoms over the period."),
        column("Peak new infections [people per day]", "peak_infections_per_day",
               "people per day", WHOLE, "Most new infections on one day."),
        column("Peak infections date", "peak_infections_date", "date", DATE,
               "Day with the most new infections.", 12),
        column("Hospital admissions [people]", "total.admissions_persons", "people", WHOLE,
               "Residents admitted to hospital over the period."),
        column("Peak admissions [people per day]", "peak_admissions_per_day", "people per day",
               WHOLE, "Most admissions on one day."),
        column("Peak admissions date", "peak_admissions_date", "date", DATE,
               "Day with the most admissions.", 12),
        column("ICU admissions [people]", "total.icu_admissions_persons", "people", WHOLE,
               "Admissions that go to ICU over the period."),
        *DEATHS,
        column("Ward bed-days used [bed-days]", "total.ward_bed_days", "bed-days", WHOLE,
               "Days spent in ward beds by residents, added up over the period."),
        column("ICU bed-days used [bed-days]", "total.icu_bed_days", "bed-days", WHOLE,
               "Days spent in ICU beds by residents, added up over the period."),
        column("Vaccine doses given [doses]", "total.doses_given_doses", "doses", WHOLE,
               "Vaccine doses given over the period."),
        column("Peak workforce absence [%]", "peak_absence_share", "%", PERCENT,
               "Largest share of workers off work on one day: ill, or caring for children."),
        column("Peak absence date", "peak_absence_date", "date", DATE,
               "Day of the largest workforce absence.", 12),
    ),
)

EFFECT = SheetColumns(
    sheet="Effect of measures", file="summary.json", prefix="scenarios[n].intervention_effect",
    columns=(
        _SCENARIO,
        _NUMBER,
        column("Measures applied", "scenarios[n].interventions", "text", TEXT,
               "The scenario's measures as named in the planning workbook, separated by '; ' "
               "('none' when it has none).", 30,
               absolute=True),
        column("Ward peak lowered by [beds]", "ward_peak_reduction_beds", "beds", WHOLE,
               "Ward peak demand without the measures minus with them."),
        column("Ward peak lowered by [%]", "ward_peak_reduction_share", "%", PERCENT,
               "The same as a share of the ward peak without the measures."),
        column("Ward peak later by [days]", "ward_peak_delay_days", "days", DAYS,
               "Days the ward peak moves later with the measures (negative: earlier)."),
        column("ICU peak lowered by [beds]", "icu_peak_reduction_beds", "beds", WHOLE,
               "ICU peak demand without the measures minus with them."),
        column("ICU peak lowered by [%]", "icu_peak_reduction_share", "%", PERCENT,
               "The same as a share of the ICU peak without the measures."),
        column("ICU peak later by [days]", "icu_peak_delay_days", "days", DAYS,
               "Days the ICU peak moves later with the measures (negative: earlier)."),
        column("Infections averted [people]", "averted_infections_persons", "people", WHOLE,
               "Infections without the measures minus with them."),
        column("Illnesses with symptoms averted [people]", "averted_symptomatic_cases_persons",
               "people", WHOLE, "Illnesses with symptoms without the measures minus with them."),
        column("Admissions averted [people]", "averted_admissions_persons", "people", WHOLE,
               "Hospital admissions without the measures minus with them."),
        column("ICU admissions averted [people]", "averted_icu_admissions_persons", "people",
               WHOLE, "ICU admissions without the measures minus with them."),
        column("Deaths in hospital care averted [people]",
               "averted_hospital_deaths_persons", "people", WHOLE,
               "Deaths in hospital care without the measures minus with them.", 12),
        column("Additional deaths averted [people]", "averted_shortage_deaths_persons",
               "people", WHOLE, "Additional deaths when beds run short, without the measures "
               "minus with them.", 12),
        column("Unmet ward bed-days averted [bed-days]", "averted_ward_unmet_bed_days",
               "bed-days", WHOLE, "Unmet ward bed-days without the measures minus with them."),
        column("Unmet ICU bed-days averted [bed-days]", "averted_icu_unmet_bed_days", "bed-days",
               WHOLE, "Unmet ICU bed-days without the measures minus with them."),
        column("Unmet ward bed-days averted with surge beds [bed-days]",
               "averted_ward_unmet_bed_days_with_surge", "bed-days", WHOLE,
               "The same with surge beds open.", 12),
        column("Unmet ICU bed-days averted with surge beds [bed-days]",
               "averted_icu_unmet_bed_days_with_surge", "bed-days", WHOLE,
               "The same with surge beds open.", 12),
    ),
)

_DAILY_MEANING = {c.name: c.meaning for c in DAILY_COLUMNS}


def _daily(header: str, name: str, unit: str, number_format: str = ONE_DECIMAL) -> SheetColumn:
    return column(header, name, unit, number_format, _DAILY_MEANING[name])


#: The daily series a planner charts most; every series is in ``daily-series.csv``.
DAILY = SheetColumns(
    sheet="Daily N with / without", file="daily-series.csv", prefix="",
    columns=(
        column("Date", "date", "date", DATE, "Calendar day.", 12),
        column("Day [days since day 0]", "day", "days", DAYS, "Days since day 0 of the plan.", 10),
        _daily("Admissions [people per day]", "admissions_per_day", "people per day"),
        _daily("ICU admissions [people per day]", "icu_admissions_per_day", "people per day"),
        _daily("Deaths in hospital care [people per day]", "hospital_deaths_per_day",
               "people per day"),
        _daily("Ward demand [beds]", "ward_demand_beds", "beds"),
        _daily("Ward beds available [beds]", "ward_available_beds", "beds"),
        _daily("Ward beds available with surge beds [beds]", "ward_available_with_surge_beds",
               "beds"),
        _daily("Ward beds short [beds]", "ward_unmet_beds", "beds"),
        _daily("ICU demand [beds]", "icu_demand_beds", "beds"),
        _daily("ICU beds available [beds]", "icu_available_beds", "beds"),
        _daily("ICU beds available with surge beds [beds]", "icu_available_with_surge_beds",
               "beds"),
        _daily("ICU beds short [beds]", "icu_unmet_beds", "beds"),
        _daily("Admissions so far [people]", "cumulative_admissions_persons", "people", WHOLE),
        _daily("Deaths in hospital care so far [people]",
               "cumulative_hospital_deaths_persons", "people"),
        _daily("Workers absent [people]", "absent_workers_persons", "people", WHOLE),
        _daily("Workers absent [%]", "absence_share", "%", PERCENT),
    ),
)

TRANSMISSIBILITY = SheetColumns(
    sheet="Transmissibility", file="summary.json", prefix="transmissibility_by_level.<level>",
    columns=(
        column("Level", "level", "text", TEXT,
               "Transmissibility level of the planning workbook: <level> is low, central or "
               "high.", 10),
        column("Given as", "measure", "text", TEXT,
               "Which measure of spread the planning workbook gives.", 18),
        column("Value given", "given_value", "as given", BY_ROW,
               "The workbook's value: R0 [dimensionless], doubling time [days] or growth rate "
               "[per day].", 10),
        column("R0", "r0", "dimensionless", RATIO,
               "Basic reproduction number the model has: people infected by one case when "
               "nobody is immune."),
        column("Growth rate [per day]", "growth_rate_per_day", "per day", RATE,
               "Early exponential growth rate."),
        column("Doubling time [days]", "doubling_time_days", "days", DECIMAL_DAYS,
               "Days for early case numbers to double (blank when the outbreak does not grow)."),
        column("Mean generation time [days]", "mean_generation_time_days", "days", DECIMAL_DAYS,
               "Mean time from one infection to the infections it causes.", 12),
        column("R on day 0", "r_effective_day0", "dimensionless", RATIO,
               "Reproduction number on day 0, with prior immunity and the season, without "
               "measures."),
    ),
)

INPUTS = SheetColumns(
    sheet="Inputs", file="planning workbook", prefix="",
    columns=(
        column("Sheet", "", "text", TEXT, "Sheet of the planning workbook.", 18),
        column("Cell", "", "text", TEXT, "Cell of the planning workbook.", 7),
        column("Input", "", "text", TEXT, "What the input is, with its band where it applies.",
               52),
        column("Value", "", "text", TEXT,
               "The value as read; Low and High where given; percentages as percentages.", 34),
        column("Unit", "", "text", TEXT, "Unit of the value.", 10),
        column("Default used", "", "text", TEXT,
               "'yes' when the cell was blank and prepkit's default was used.", 9),
    ),
)

#: Format of a transmissibility value by the measure it is given as, and its words.
MEASURE_FORMATS: dict[str, tuple[str, str]] = {
    "r0": ("R0", RATIO),
    "doubling_time": ("Doubling time [days]", DECIMAL_DAYS),
    "growth_rate": ("Growth rate [per day]", RATE),
}
