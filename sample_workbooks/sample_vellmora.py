"""Vellmora, an invented mid-size city of about 250,000 people: its demo plan and notes.

Every figure is invented for the demo; where a figure sits inside a
published range the note beside it says so.
"""

from __future__ import annotations

import datetime as dt

import numpy as np
from numpy.typing import NDArray
from sample_story import (
    BAGUST,
    DAY0,
    INVENTED,
    ISOLATION,
    SCHOOLS,
    SURGE,
    WUNSCH,
    admitted_note,
    contacts_note,
    five_year_bands,
    gauss,
    icu_note,
    icu_surge_note,
    make_scenario,
    measure_phrase,
    reciprocal_contacts,
    rng3,
    spread,
)

from prepkit.plan import (
    SETTINGS,
    Contacts,
    DecideBy,
    Disease,
    End,
    Intervention,
    Isolation,
    Level,
    Plan,
    Range3,
    Scenario,
    Setting,
    Severity,
    Start,
    Vaccination,
)
from prepkit.plan.details import Details
from prepkit.plan.records import Observation
from prepkit.plan.resources import Capacity, Supplies, Workforce

VELLMORA_PEOPLE = (
    13_400, 14_100, 14_600, 15_200, 17_900, 19_300, 18_800, 17_600,
    16_300, 16_000, 16_400, 15_700, 14_200, 12_600, 10_400, 17_500,
)
VELLMORA_RISK = (
    0.04, 0.05, 0.05, 0.06, 0.07, 0.08, 0.09, 0.10,
    0.12, 0.14, 0.17, 0.21, 0.26, 0.32, 0.38, 0.47,
)
#: Band mid-points [years], the open top band taken at 80.
_MID = np.array([5 * i + 2.5 for i in range(15)] + [80.0])

#: Mean daily contacts per person by setting, one value per band [contacts/person/day].
VELLMORA_CONTACTS_PER_PERSON: dict[Setting, tuple[float, ...]] = {
    "home": (3.6, 3.8, 3.6, 3.2, 2.4, 2.6, 3.2, 3.5, 3.4, 3.0, 2.6, 2.3, 2.2, 2.4, 2.5, 2.6),
    "school": (3.5, 8.0, 8.5, 7.0, 2.0, 0.45, 0.5, 0.55, 0.55, 0.5, 0.45, 0.35, 0.25, 0.0,
               0.0, 0.0),
    "work": (0.0, 0.0, 0.0, 0.8, 4.6, 6.5, 7.0, 7.0, 7.0, 6.8, 6.5, 5.8, 4.0, 1.3, 0.3, 0.0),
    "community": (4.0, 4.2, 4.5, 5.6, 6.4, 5.6, 5.2, 5.0, 4.8, 4.7, 4.6, 4.5, 4.7, 6.3, 7.2,
                  6.9),
}


def vellmora_kernels() -> dict[Setting, NDArray[np.float64]]:
    """Symmetric mixing shapes by setting (who tends to meet whom)."""
    d = _MID[None, :] - _MID[:, None]
    pupils = (_MID < 25).astype(float)  # childcare, school and college
    teachers = ((_MID > 25) & (_MID < 65)).astype(float)
    working = ((_MID > 15) & (_MID < 75)).astype(float)
    home = (1.0 * gauss(d, 0.0, 4.0)        # siblings and partners
            + 0.9 * gauss(d, 30.0, 5.0)     # parents and children
            + 0.25 * gauss(d, 58.0, 7.0))   # grandparents and grandchildren
    school = (np.outer(pupils, pupils) * (gauss(d, 0.0, 2.5) + 0.03)
              + 0.02 * (np.outer(pupils, teachers) + np.outer(teachers, pupils))
              + 0.001 * np.outer(teachers, teachers))
    work = np.outer(working, working) * (0.4 * gauss(d, 0.0, 6.0) + 0.6)
    community = 0.35 * gauss(d, 0.0, 8.0) + 0.65
    return {"home": home, "school": school, "work": work, "community": community}


def vellmora_matrices() -> dict[Setting, tuple[tuple[float, ...], ...]]:
    """The four invented 16 x 16 contact matrices of Vellmora."""
    people = np.array(VELLMORA_PEOPLE, dtype=float)
    kernels = vellmora_kernels()
    return {
        s: reciprocal_contacts(people, kernels[s],
                               np.array(VELLMORA_CONTACTS_PER_PERSON[s], dtype=float))
        for s in SETTINGS
    }


VELLMORA_SYMPTOMATIC = (
    0.62, 0.56, 0.55, 0.57, 0.60, 0.62, 0.64, 0.65,
    0.66, 0.67, 0.68, 0.69, 0.70, 0.72, 0.74, 0.75,
)
VELLMORA_SUSCEPTIBILITY = (
    1.05, 1.05, 1.0, 1.0, 1.0, 1.0, 1.0, 1.0,
    1.0, 0.95, 0.95, 0.9, 0.9, 0.8, 0.75, 0.7,
)
VELLMORA_PRIOR_IMMUNITY = (
    0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0,
    0.0, 0.0, 0.0, 0.0, 0.02, 0.04, 0.06, 0.10,
)
#: Central admissions per infection [fraction].
VELLMORA_ADMITTED = (
    0.0020, 0.0008, 0.0008, 0.0010, 0.0014, 0.0018, 0.0022, 0.0028,
    0.0036, 0.0048, 0.0068, 0.0095, 0.0140, 0.0220, 0.0340, 0.0800,
)
#: Central ICU share of admissions [fraction].
VELLMORA_ICU = (
    0.12, 0.10, 0.10, 0.11, 0.13, 0.14, 0.15, 0.16,
    0.18, 0.20, 0.22, 0.24, 0.25, 0.23, 0.19, 0.12,
)
VELLMORA_WARD_FATALITY = (
    0.002, 0.001, 0.001, 0.002, 0.003, 0.004, 0.005, 0.007,
    0.010, 0.015, 0.022, 0.032, 0.045, 0.065, 0.095, 0.170,
)
VELLMORA_ICU_FATALITY = (
    0.05, 0.04, 0.04, 0.06, 0.08, 0.10, 0.12, 0.14,
    0.17, 0.20, 0.24, 0.28, 0.33, 0.38, 0.44, 0.52,
)
VELLMORA_ONSET_TO_ADMISSION = (
    4.0, 4.0, 4.0, 4.0, 4.5, 4.5, 4.5, 4.5,
    4.5, 4.5, 5.0, 5.0, 5.0, 5.0, 5.0, 4.5,
)
VELLMORA_WARD_STAY = (
    5.0, 5.0, 5.0, 5.0, 5.5, 5.5, 6.0, 6.0,
    6.5, 6.5, 7.0, 7.5, 8.0, 8.5, 9.0, 10.0,
)
VELLMORA_ICU_STAY = (
    8.0, 8.0, 8.0, 8.5, 9.0, 9.5, 10.0, 10.0,
    10.5, 11.0, 11.5, 12.0, 12.5, 13.0, 13.5, 14.0,
)


def vellmora_plan() -> Plan:
    """The Vellmora city plan: 16 five-year bands and full contact matrices."""
    bands = five_year_bands(VELLMORA_PEOPLE, VELLMORA_RISK)
    labels = [b.label for b in bands]
    disease = Disease(
        r0=rng3(1.5, 1.9, 2.4),
        doubling_time_days=None,
        growth_rate_per_day=None,
        latent_period_days=rng3(1.5, 2.0, 2.5),
        latent_stages=2,
        infectious_period_days=rng3(3.0, 3.5, 4.5),
        infectious_stages=2,
        symptomatic_share=tuple(spread(s, 0.88, 1.1, digits=4) for s in VELLMORA_SYMPTOMATIC),
        asymptomatic_relative_infectiousness=0.5,
        relative_susceptibility=VELLMORA_SUSCEPTIBILITY,
        prior_immunity=VELLMORA_PRIOR_IMMUNITY,
        seasonal_amplitude=0.1,
        seasonal_peak=dt.date(2027, 1, 15),
        initial_infections=20.0,
        daily_importations=2.0,
    )
    severity = Severity(
        admitted_share=tuple(spread(a, 0.5, 1.6, digits=6) for a in VELLMORA_ADMITTED),
        icu_share=tuple(spread(c, 0.75, 1.3, digits=4, cap=0.3) for c in VELLMORA_ICU),
        ward_fatality=VELLMORA_WARD_FATALITY,
        icu_fatality=VELLMORA_ICU_FATALITY,
        onset_to_admission_days=VELLMORA_ONSET_TO_ADMISSION,
        ward_stay_days=tuple(spread(w, 0.8, 1.3, digits=2) for w in VELLMORA_WARD_STAY),
        icu_stay_days=tuple(spread(w, 0.8, 1.25, digits=2) for w in VELLMORA_ICU_STAY),
        admission_delay_stages=1,
        ward_stages=2,
        icu_stages=2,
        ward_no_bed_extra_fatality=rng3(0.02, 0.05, 0.10),
        icu_no_bed_extra_fatality=rng3(0.15, 0.30, 0.50),
    )
    capacity = Capacity(
        ward_beds=600,
        icu_beds=55,
        ventilators=40,
        ward_baseline_occupancy=0.85,
        icu_baseline_occupancy=0.68,
        surge_ward_beds=150,
        surge_icu_beds=30,
        surge_days_to_open=7.0,
        surge_trigger_occupancy=0.85,
        catchment_share=0.92,
        crisis_ward_beds=60,
        crisis_icu_beds=10,
    )
    workforce = Workforce(
        working_age_min=18,
        working_age_max=64,
        employed_share=0.76,
        days_absent_per_illness=5.0,
        carer_share_school_closure=0.12,
    )
    priority = tuple(range(len(bands) - 1, labels.index("20-24") - 1, -1))
    interventions = (
        Intervention(
            name="Schools closed",
            kind="contacts",
            start=Start(kind="ward_occupancy", level=0.60),
            end=End(kind="duration", duration_days=56.0),
            contacts_kept={"school": 0.10, "community": 0.90},
            compliance=rng3(0.70, 0.85, 0.95),
        ),
        Intervention(
            name="Distancing advice",
            kind="contacts",
            start=Start(kind="date", date=DAY0 + dt.timedelta(days=28)),
            # The end date is the last day in force: to 31 May.
            end=End(kind="date", date=dt.date(2027, 5, 31)),
            contacts_kept={"work": 0.75, "community": 0.60},
            compliance=rng3(0.50, 0.70, 0.85),
        ),
        Intervention(
            name="Vaccine programme",
            kind="vaccination",
            start=Start(kind="date", date=DAY0 + dt.timedelta(days=21)),
            end=End(kind="horizon"),
            vaccination=Vaccination(
                doses_per_day=2000.0,
                priority=priority,
                uptake_ceiling=0.80,
                efficacy_infection=rng3(0.35, 0.50, 0.65),
                efficacy_severe=rng3(0.60, 0.75, 0.85),
                days_to_protection=14.0,
            ),
        ),
        Intervention(
            name="Isolation of cases",
            kind="isolation",
            start=Start(kind="date", date=DAY0 + dt.timedelta(days=10)),
            end=End(kind="horizon"),
            isolation=Isolation(isolated_share=0.50, days_from_onset=1.0),
            compliance=Range3.point(0.80),
        ),
    )
    everything = tuple(i.name for i in interventions)

    def scenario(transmissibility: Level, severity: Level, *measures: str) -> Scenario:
        return make_scenario(disease=disease, interventions=interventions, bands=bands,
                             day0=DAY0, transmissibility=transmissibility, severity=severity,
                             measures=measures)

    scenarios = (
        scenario("high", "high", *everything),
        scenario("central", "central", "Schools closed", "Distancing advice",
                 "Vaccine programme"),
        scenario("low", "low", "Isolation of cases"),
        scenario("central", "central", "Vaccine programme"),
    )
    observed = tuple(
        Observation(date=DAY0 + dt.timedelta(days=day), admissions=adm, ward_census=ward,
                    icu_census=icu)
        for day, adm, ward, icu in VELLMORA_OBSERVED
    )
    return Plan(
        details=Details(
            jurisdiction="City of Vellmora",
            title="Novel respiratory virus: hospital planning scenarios",
            prepared_by="Vellmora Office of Emergency Management, planning cell",
            day0=DAY0,
            horizon_days=300,
            draws=1000,
            seed=20270104,
            page_size="A4",
            review_by=dt.date(2027, 2, 28),
        ),
        bands=bands,
        contacts=Contacts(matrices=vellmora_matrices()),
        disease=disease,
        severity=severity,
        capacity=capacity,
        workforce=workforce,
        interventions=interventions,
        scenarios=scenarios,
        observed=observed,
        decide_by=DecideBy(within_beds_share=0.9, delay_days=4.0),
        supplies=Supplies(ward_nurses=120.0, icu_nurses=50.0, oxygen_supply_lpm=900.0,
                          gowns_stock=20_000.0, gowns_resupply_per_day=1_500.0,
                          gloves_stock=150_000.0, gloves_resupply_per_day=12_000.0,
                          respirators_stock=8_000.0, respirators_resupply_per_day=800.0,
                          mortuary_spaces=40),
    )


#: Invented early hospital figures, 28 days from 11 January to 7 February 2027:
#: (day, new admissions, ward patients, ICU patients).
VELLMORA_OBSERVED: tuple[tuple[int, float, float, float], ...] = (
    (7, 0, 0, 0),
    (8, 0, 0, 0),
    (9, 0, 0, 0),
    (10, 0, 0, 0),
    (11, 0, 0, 0),
    (12, 1, 1, 0),
    (13, 0, 1, 0),
    (14, 0, 1, 0),
    (15, 0, 1, 0),
    (16, 0, 1, 0),
    (17, 1, 2, 0),
    (18, 0, 2, 0),
    (19, 0, 1, 0),
    (20, 1, 1, 0),
    (21, 1, 2, 0),
    (22, 0, 2, 1),
    (23, 2, 4, 1),
    (24, 1, 4, 1),
    (25, 3, 6, 1),
    (26, 2, 7, 2),
    (27, 3, 9, 2),
    (28, 4, 11, 2),
    (29, 3, 12, 3),
    (30, 5, 15, 3),
    (31, 4, 17, 3),
    (32, 6, 19, 4),
    (33, 5, 21, 4),
    (34, 7, 25, 5),
)


def vellmora_notes(plan: Plan) -> dict[str, str]:
    """Source-or-note cells of the Vellmora workbook.

    Keys are canonical field names; a table field without ``@<row>`` notes
    every row of its table.
    """
    notes: dict[str, str] = {
        "details.jurisdiction": "Invented city for the prepkit demo.",
        "details.day0": INVENTED,
        "details.horizon_days": "Long enough to see the main wave through in every scenario.",
        "details.draws": INVENTED,
        "details.review_by": "Three weeks after the last local figures; invented.",
        "decide_by.within_beds_share": "Agreed with the invented health authority.",
        "decide_by.delay_days": "Invented: council order, then notice to employers.",
        "capacity.crisis_ward_beds": "Invented: day-surgery halls of the three hospitals.",
        "capacity.crisis_icu_beds": "Invented: recovery bays with ventilators.",
        "supplies.ward_nurses": "Invented: nurses per shift on the acute wards.",
        "supplies.icu_nurses": "Invented: fewer ICU nurses than ICU beds, as often in winter.",
        "supplies.oxygen_supply_lpm": "Invented: the three sites' tanks and pipes together.",
        "supplies.gowns_stock": INVENTED,
        "supplies.gowns_resupply_per_day": INVENTED,
        "supplies.gloves_stock": INVENTED,
        "supplies.gloves_resupply_per_day": INVENTED,
        "supplies.respirators_stock": INVENTED,
        "supplies.respirators_resupply_per_day": INVENTED,
        "supplies.mortuary_spaces": "Invented: the three hospital mortuaries.",
        "disease.r0": "Invented range for an influenza-like novel virus.",
        "disease.latent_period_days": INVENTED,
        "disease.infectious_period_days": INVENTED,
        "disease.asymptomatic_relative_infectiousness": INVENTED,
        "disease.seasonal_amplitude": "Invented mild winter swing.",
        "disease.initial_infections": INVENTED,
        "disease.daily_importations": "Invented; travel through the regional airport and rail.",
        "severity.ward_stages": INVENTED,
        "severity.icu_stages": INVENTED,
        "severity.ward_no_bed_extra_fatality": "Invented range; replace with your health "
                                               "authority's figure.",
        "severity.icu_no_bed_extra_fatality": "Invented range; replace with your health "
                                              "authority's figure.",
        "capacity.ward_beds": "Invented: the three acute hospitals serving the city.",
        "capacity.icu_beds": INVENTED,
        "capacity.ventilators": INVENTED,
        "capacity.ward_baseline_occupancy": BAGUST,
        "capacity.icu_baseline_occupancy": WUNSCH,
        "capacity.surge_ward_beds": SURGE,
        "capacity.surge_icu_beds": icu_surge_note(plan.capacity),
        "capacity.surge_days_to_open": INVENTED,
        "capacity.surge_trigger_occupancy": INVENTED,
        "capacity.catchment_share": "Invented: some residents are admitted outside the city.",
        "workforce.employed_share": INVENTED,
        "workforce.carer_share_school_closure": INVENTED,
        "measure.compliance@Schools closed": SCHOOLS,
        "measure.compliance@Distancing advice": INVENTED,
        "measure.efficacy_infection@Vaccine programme": (
            "Invented efficacy of a first-season vaccine. The measure: "
            + measure_phrase(plan.intervention("Vaccine programme"), plan.bands,
                             plan.details.day0.year)
            + "."
        ),
        "measure.compliance@Isolation of cases": ISOLATION,
        "mixing.assortativity": "Not used in this plan: the four contact-matrix sheets are "
                                "filled in. " + contacts_note(plan),
        "band.people": "Invented age pyramid.",
        "band.high_risk_share": INVENTED,
        "band_disease.symptomatic_share": INVENTED,
        "band_severity.admitted_share": admitted_note(plan),
        "band_severity.icu_share": icu_note(plan),
        "band_severity.ward_stay_days": INVENTED,
    }
    return notes


# ---- Tamsett Hollow ------------------------------------------------------------------------

