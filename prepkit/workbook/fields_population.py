"""Workbook fields of the Plan, Population and Mixing sheets.

Each declared once; the layout rules are in :mod:`prepkit.workbook.schema`.
"""

from __future__ import annotations

from prepkit.plan.decide import DECISION_DELAY_DAYS, WITHIN_BEDS_SHARE
from prepkit.workbook.field_types import Field
from prepkit.workbook.sheets import (
    BAND_KEY_HELP,
    MIXING,
    PAGE_CHOICES,
    PLAN,
    POPULATION,
    TYPICAL_VALUE,
)

POPULATION_FIELDS: tuple[Field, ...] = (
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
    Field(name="details.review_by", target="details.review_by",
          sheet=PLAN, label="Review by", unit="date", type="date",
          help="The date by which these figures must be checked again with the health "
               "authority; the pack prints it on the cover and every page, and prepkit warns "
               "when a workbook is run after it. Blank = four weeks after the last observed "
               "date, or after day 0 when the Observed sheet has no figures."),
    Field(name="details.page_size", target="details.page_size",
          sheet=PLAN, label="Paper size", unit="", type="choice",
          choices=PAGE_CHOICES, default="A4", help="Paper size of the printed pack."),
    Field(name="decide_by.within_beds_share", target="decide_by.within_beds_share",
          sheet=PLAN, label="Futures within beds for decide-by dates", unit="%", type="share",
          minimum=0.5, maximum=0.99, default=WITHIN_BEDS_SHARE,
          help="The decide-by dates are the latest dates at which acting keeps ward and ICU "
               "demand within the beds in this share of the plausible futures. Default "
               f"{WITHIN_BEDS_SHARE:.0%}, "
               "the 9 in 10 range the pack reports; agree the share with your health "
               "authority."),
    Field(name="decide_by.delay_days", target="decide_by.delay_days",
          sheet=PLAN, label="Days from decision to effect", unit="days", type="number",
          minimum=0, maximum=60, default=DECISION_DELAY_DAYS,
          help="Days between a decision on the measures and their taking effect (orders "
               "drafted, schools, employers and the public told). Each decide-by date is this "
               f"many days before the latest start. Default {DECISION_DELAY_DAYS:g}: "
               + TYPICAL_VALUE + "."),
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
          unit="", type="text", required=True, help=BAND_KEY_HELP),
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
)
