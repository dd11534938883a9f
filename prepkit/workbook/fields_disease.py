"""Workbook fields of the Disease, Disease by age and Severity sheets.

Each declared once; the layout rules are in :mod:`prepkit.workbook.schema`.
"""

from __future__ import annotations

from prepkit.plan import NO_BED_EXTRA_FATALITY
from prepkit.workbook.field_types import Field, Sampled
from prepkit.workbook.sheets import (
    BAND_KEY_HELP,
    DISEASE,
    DISEASE_BY_AGE,
    SEVERITY,
    TYPICAL_VALUE,
)


def _no_bed_field(kind: str, rank: int) -> Field:
    """The extra chance of death of a patient without a ``kind`` ("ward" or "icu") bed."""
    bed = {"ward": "a ward bed", "icu": "an ICU bed"}[kind]
    patients = {"ward": "ward patients", "icu": "ICU patients"}[kind]
    label = f"Extra deaths without {bed}"
    return Field(
        name=f"severity.{kind}_no_bed_extra_fatality",
        target=f"severity.{kind}_no_bed_extra_fatality",
        sampled=Sampled(key=f"{kind}_no_bed_extra_fatality", label=label, unit="fraction",
                        rank=rank, outcome=True),
        sheet=SEVERITY, label=label, unit="%", type="share",
        default=NO_BED_EXTRA_FATALITY[kind], uncertain=True,
        help=f"Added chance of death for a patient who needs {bed} and does not get one, over "
             f"the usual deaths of {patients}. Default {NO_BED_EXTRA_FATALITY[kind]:.0%}: "
             + TYPICAL_VALUE + ".")


DISEASE_FIELDS: tuple[Field, ...] = (
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
          unit="", type="text", required=True, help=BAND_KEY_HELP),
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
    *(_no_bed_field(kind, rank) for kind, rank in (("ward", 11), ("icu", 12))),
    Field(name="band_severity.band", sheet=SEVERITY, table="band_severity", label="Band",
          unit="", type="text", required=True, help=BAND_KEY_HELP),
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
)
