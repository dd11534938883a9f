"""Tamsett Hollow, an invented small town of about 8,000 people: its demo plan and notes.

Every figure is invented for the demo; where a figure sits inside a
published range the note beside it says so.
"""

from __future__ import annotations

import datetime as dt

from sample_story import (
    DAY0,
    INVENTED,
    ISOLATION,
    SCHOOLS,
    admitted_note,
    contacts_note,
    icu_note,
    make_scenario,
    number,
    rng3,
    spread,
)

from prepkit.plan import (
    AgeBand,
    Contacts,
    DecideBy,
    Disease,
    End,
    Intervention,
    Isolation,
    Level,
    Plan,
    Scenario,
    Severity,
    Start,
)
from prepkit.plan.details import Details
from prepkit.plan.resources import Capacity, Supplies, Workforce
from prepkit.simulation.inputs import DOUBLING_TIME_LEVEL

TAMSETT_BANDS = (
    ("0-17", 0, 17, 1_750.0, 0.05),
    ("18-49", 18, 49, 2_900.0, 0.10),
    ("50-69", 50, 69, 2_150.0, 0.24),
    ("70+", 70, None, 1_200.0, 0.45),
)


def tamsett_hollow_plan() -> Plan:
    """The Tamsett Hollow town plan: four coarse bands and the simple contact form."""
    bands = tuple(
        AgeBand(label=label, lower_age=lo, upper_age=hi, people=n, high_risk_share=r)
        for label, lo, hi, n, r in TAMSETT_BANDS
    )
    contacts = Contacts(
        matrices=None,
        mean_daily=(15.0, 13.5, 11.5, 8.5),
        assortativity=0.45,
        setting_shares=(
            {"home": 0.25, "school": 0.50, "work": 0.0},
            {"home": 0.25, "school": 0.05, "work": 0.40},
            {"home": 0.25, "school": 0.02, "work": 0.33},
            {"home": 0.35, "school": 0.0, "work": 0.02},
        ),
    )
    disease = Disease(
        r0=None,
        # Low is the fast (short) end of the doubling time.
        doubling_time_days=rng3(3.5, 4.5, 6.0),
        growth_rate_per_day=None,
        latent_period_days=rng3(1.5, 2.0, 2.5),
        latent_stages=2,
        infectious_period_days=rng3(3.0, 3.5, 4.5),
        infectious_stages=2,
        symptomatic_share=(rng3(0.50, 0.57, 0.64), rng3(0.57, 0.64, 0.71),
                           rng3(0.61, 0.69, 0.76), rng3(0.66, 0.74, 0.82)),
        asymptomatic_relative_infectiousness=0.5,
        relative_susceptibility=(1.05, 1.0, 0.92, 0.75),
        prior_immunity=(0.0, 0.0, 0.02, 0.08),
        seasonal_amplitude=0.0,
        seasonal_peak=None,
        initial_infections=3.0,
        daily_importations=0.3,
    )
    severity = Severity(
        admitted_share=tuple(spread(a, 0.5, 1.6) for a in (0.0012, 0.0032, 0.0160, 0.0600)),
        icu_share=tuple(spread(c, 0.75, 1.3, digits=4) for c in (0.10, 0.17, 0.23, 0.14)),
        ward_fatality=(0.002, 0.008, 0.040, 0.140),
        icu_fatality=(0.05, 0.12, 0.28, 0.46),
        onset_to_admission_days=(4.0, 4.5, 5.0, 4.5),
        ward_stay_days=(rng3(4.0, 5.0, 6.5), rng3(4.5, 5.5, 7.0), rng3(6.0, 7.5, 9.5),
                        rng3(7.5, 9.5, 12.5)),
        icu_stay_days=(rng3(6.5, 8.0, 10.0), rng3(7.5, 9.5, 12.0), rng3(9.0, 11.5, 14.5),
                       rng3(10.5, 13.0, 16.0)),
        ward_no_bed_extra_fatality=rng3(0.03, 0.06, 0.12),
        icu_no_bed_extra_fatality=rng3(0.20, 0.35, 0.55),
    )
    capacity = Capacity(
        ward_beds=24,
        icu_beds=3,
        ventilators=2,
        ward_baseline_occupancy=0.75,
        icu_baseline_occupancy=0.60,
        surge_ward_beds=4,
        surge_icu_beds=0,
        surge_days_to_open=3.0,
        surge_trigger_occupancy=0.85,
        catchment_share=0.70,
        crisis_ward_beds=4,
        crisis_icu_beds=1,
    )
    workforce = Workforce(
        working_age_min=18,
        working_age_max=64,
        employed_share=0.68,
        days_absent_per_illness=5.0,
        carer_share_school_closure=0.10,
    )
    interventions = (
        Intervention(
            name="School closure",
            kind="contacts",
            start=Start(kind="date", date=dt.date(2027, 2, 1)),
            # The end date is the last day in force: six weeks, 1 Feb to 14 Mar.
            end=End(kind="date", date=dt.date(2027, 3, 14)),
            contacts_kept={"school": 0.10, "community": 0.90},
            compliance=rng3(0.75, 0.90, 0.95),
        ),
        Intervention(
            name="Isolation of cases",
            kind="isolation",
            start=Start(kind="date", date=dt.date(2027, 1, 18)),
            end=End(kind="horizon"),
            isolation=Isolation(isolated_share=0.50, days_from_onset=1.0),
            compliance=rng3(0.60, 0.75, 0.85),
        ),
    )
    def scenario(transmissibility: Level, severity: Level, *measures: str) -> Scenario:
        return make_scenario(disease=disease, interventions=interventions, bands=bands,
                             day0=DAY0, transmissibility=transmissibility, severity=severity,
                             measures=measures)

    scenarios = (
        # High transmissibility picks the shortest doubling time (its Low column).
        scenario("high", "high", "School closure", "Isolation of cases"),
        scenario("central", "central", "School closure", "Isolation of cases"),
        # Low transmissibility picks the longest doubling time (its High column).
        scenario("low", "low", "Isolation of cases"),
    )
    return Plan(
        details=Details(
            jurisdiction="Town of Tamsett Hollow",
            title="Novel respiratory virus: community hospital scenarios",
            prepared_by="Tamsett Hollow Emergency Management, planning cell",
            day0=DAY0,
            horizon_days=240,
            draws=500,
            seed=20270105,
            page_size="Letter",
        ),
        bands=bands,
        contacts=contacts,
        disease=disease,
        severity=severity,
        capacity=capacity,
        workforce=workforce,
        interventions=interventions,
        scenarios=scenarios,
        decide_by=DecideBy(within_beds_share=0.9, delay_days=2.0),
        supplies=Supplies(oxygen_supply_lpm=60.0, gowns_stock=800.0,
                          gowns_resupply_per_day=40.0, mortuary_spaces=4),
    )


def tamsett_hollow_notes(plan: Plan) -> dict[str, str]:
    """Source-or-note cells of the Tamsett Hollow workbook."""
    doubling = plan.disease.doubling_time_days
    if doubling is None:
        raise ValueError("the Tamsett Hollow plan gives a doubling time")
    fastest = doubling.at(DOUBLING_TIME_LEVEL["high"])
    notes: dict[str, str] = {
        "details.jurisdiction": "Invented town for the prepkit demo.",
        "decide_by.delay_days": "Invented: the town board meets within two days.",
        "capacity.crisis_ward_beds": "Invented: the clinic's day room.",
        "capacity.crisis_icu_beds": "Invented: one monitored bay in recovery.",
        "supplies.oxygen_supply_lpm": "Invented: the community hospital's oxygen plant.",
        "supplies.gowns_stock": INVENTED,
        "supplies.gowns_resupply_per_day": INVENTED,
        "supplies.mortuary_spaces": "Invented: the hospital and the town's funeral home.",
        "mixing.assortativity": INVENTED,
        "disease.doubling_time_days": (
            f"Invented. Low is the fast end: {number(fastest)} days is the fastest spread "
            "planned for, used by scenarios with High transmissibility."
        ),
        "disease.latent_period_days": INVENTED,
        "disease.infectious_period_days": INVENTED,
        "disease.initial_infections": INVENTED,
        "disease.daily_importations": "Invented; commuters to and from Vellmora.",
        "severity.ward_no_bed_extra_fatality": INVENTED,
        "severity.icu_no_bed_extra_fatality": INVENTED,
        "capacity.ward_beds": "Invented: the town's community hospital.",
        "capacity.icu_beds": INVENTED,
        "capacity.ward_baseline_occupancy": INVENTED,
        "capacity.icu_baseline_occupancy": INVENTED,
        "capacity.surge_ward_beds": "Invented: the day-surgery unit converted to ward beds.",
        "capacity.catchment_share": (
            "Invented: the rest of the town's patients go to the Vellmora hospitals."
        ),
        "workforce.employed_share": INVENTED,
        "measure.compliance@School closure": SCHOOLS,
        "measure.compliance@Isolation of cases": ISOLATION,
        "band.people": INVENTED,
        "band_contacts.mean_daily": contacts_note(plan),
        "band_severity.admitted_share": admitted_note(plan),
        "band_severity.icu_share": icu_note(plan),
    }
    return notes


# ---- Writing ---------------------------------------------------------------------------------

