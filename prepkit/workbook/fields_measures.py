"""Workbook fields of the Measures, Scenarios and Observed sheets.

Each declared once; the layout rules are in :mod:`prepkit.workbook.schema`.
"""

from __future__ import annotations

from prepkit.plan import SETTINGS
from prepkit.plan.fit import MIN_FIT_POINTS
from prepkit.workbook.field_types import Field, Sampled
from prepkit.workbook.sheets import (
    END_CHOICES,
    FIT_CHOICES,
    KIND_CHOICES,
    LEVEL_CHOICES,
    MEASURES,
    OBSERVED,
    PERIOD_CHOICES,
    SCENARIOS,
    START_CHOICES,
    TYPICAL_VALUE,
)

MEASURE_FIELDS: tuple[Field, ...] = (
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
    Field(name="details.observed_period", target="details.observed_period",
          sheet=OBSERVED, label="Figures are", unit="", type="choice",
          choices=PERIOD_CHOICES, default="Daily",
          help="Daily: each row is one day. Weekly totals: admissions and deaths are the 7 days "
               "ending on the row's date, one row a week; patients in beds are on the date."),
    Field(name="fit.method", target="fit.method",
          sheet=OBSERVED, label="Use the figures to", unit="", type="choice",
          choices=FIT_CHOICES, default="Fit the scenarios",
          help="Fit the scenarios: estimate how fast the disease spreads here, how many were "
               "infected at day 0 and how severe it is, from the new admissions, and project "
               "every scenario from that (needs at least "
               f"{MIN_FIT_POINTS['daily']} daily or {MIN_FIT_POINTS['weekly']} weekly rows "
               "with admissions). Only draw them: show the figures beside the scenarios."),
    Field(name="fit.change_date", target="fit.change_date",
          sheet=OBSERVED, label="Spread changed on", unit="date", type="date",
          help="The day spread changed while the figures were kept (measures began, people "
               "changed their behaviour), if it did; the fit estimates the change. Measures "
               "already in force belong here, not on the Scenarios sheet. Blank = no change."),
    Field(name="fit.change_factor", target="fit.change_factor",
          sheet=OBSERVED, label="Spread after that day, relative to before", unit="ratio",
          type="number", minimum=0.05, maximum=3.0, default=1.0, uncertain=True,
          help="What you expect of the change: 0.6 = contacts that spread the disease fell "
               "by 40%. Low and High bound what the fit may find; needed when a change date "
               "is given."),
    Field(name="fit.initial_infections_factor", target="fit.initial_infections_factor",
          sheet=OBSERVED, label="Infections at day 0 may be off by a factor of", unit="ratio",
          type="number", minimum=1.5, maximum=1000.0, default=10.0,
          help="The fit searches for the infections at day 0 between the Disease sheet's "
               "figure divided and multiplied by this factor (10 = from a tenth to ten times)."),
    Field(name="observed.date", target="observed[].date",
          sheet=OBSERVED, table="observed", label="Date", unit="date",
          type="date", required=True,
          help="Day the figures refer to (for weekly totals, the last day of the week). "
               "Earliest first, within the plan's dates."),
    Field(name="observed.admissions", target="observed[].admissions",
          sheet=OBSERVED, table="observed",
          label="New admissions", unit="persons", type="number", minimum=0,
          help="Residents newly admitted with the disease, to a ward or to ICU."),
    Field(name="observed.icu_admissions", target="observed[].icu_admissions",
          sheet=OBSERVED, table="observed",
          label="Of which straight to ICU", unit="persons", type="number", minimum=0,
          help="Of the new admissions, those admitted straight to ICU."),
    Field(name="observed.ward_census", target="observed[].ward_census",
          sheet=OBSERVED, table="observed",
          label="Ward patients", unit="persons", type="number", minimum=0,
          help="Patients with the disease in ward beds of these hospitals on the date."),
    Field(name="observed.icu_census", target="observed[].icu_census",
          sheet=OBSERVED, table="observed", label="ICU patients",
          unit="persons", type="number", minimum=0,
          help="Patients with the disease in ICU beds of these hospitals on the date."),
    Field(name="observed.deaths", target="observed[].deaths",
          sheet=OBSERVED, table="observed", label="Deaths in hospital",
          unit="persons", type="number", minimum=0,
          help="Deaths among patients with the disease."),
    Field(name="observed.positive_share", target="observed[].positive_share",
          sheet=OBSERVED, table="observed", label="Tests positive",
          unit="%", type="share",
          help="Share of the disease's tests that were positive (optional)."),
)
