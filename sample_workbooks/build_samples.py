"""Build the two demo planning workbooks of prepkit.

Both places are invented: Vellmora, a mid-size city of about 250,000 people,
and Tamsett Hollow, a small town of about 8,000. Every figure is invented for
the demo; where a figure sits inside a published range the "Source or note"
cell of the workbook says so.

Scenario names and descriptions, and every note that quotes a figure of the
plan, are written by the functions of the "Story" section from the same
objects the plan holds (dates from the measures' ``date`` values, doses from
their numbers), so the words cannot drift from the figures.

Run from the repository root::

    .venv/bin/python sample_workbooks/build_samples.py [OUTDIR]

The plans are built as :class:`prepkit.plan.Plan` objects first
(:func:`vellmora_plan`, :func:`tamsett_hollow_plan`) so the tests can check
them without reading a workbook back.
"""

from __future__ import annotations

import datetime as dt
import os
import sys
from collections.abc import Sequence
from pathlib import Path

import numpy as np
from numpy.typing import NDArray

from prepkit.plan import (
    SETTINGS,
    AgeBand,
    Contacts,
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
from prepkit.plan.resources import Capacity, Workforce
from prepkit.simulation.inputs import DOUBLING_TIME_LEVEL

HERE = Path(__file__).resolve().parent
VELLMORA_FILE = "vellmora_city.xlsx"
TAMSETT_FILE = "tamsett_hollow.xlsx"

DAY0 = dt.date(2027, 1, 4)
#: Document date stored in the sample workbooks (2026-12-01 00:00 UTC).
SAMPLE_DATE_EPOCH = 1_796_083_200

# ---- Note texts --------------------------------------------------------------------------

INVENTED = "Invented for the demo."
MOSSONG_SURVEY = "the 13.4 contacts/day survey mean (Mossong et al. 2008, PLoS Med 5:e74)"
BAGUST = (
    "Invented figure at the level above which risk rises, about 85% mean occupancy "
    "(Bagust, Place & Posnett 1999, BMJ 319:155)."
)
WUNSCH = (
    "Invented figure equal to the 68% mean occupancy of 97 US ICUs in 2005-2007 "
    "(Wunsch et al. 2013, Crit Care Med 41:2712)."
)
SCHOOLS = (
    "Invented contact reductions. Published modelling reports peak reductions up to ~40% "
    "from school closure with little change in the final size (Ferguson et al. 2006, "
    "Nature 442:448; Cauchemez et al. 2009, Lancet Infect Dis 9:473)."
)
SURGE = (
    "Invented. Surge tiers follow the conventional / contingency / crisis idea (Hick, "
    "Barbera & Kelen 2009, Disaster Med Public Health Prep 3:S59)."
)
ISOLATION = (
    "Invented. Isolation cuts only transmission after symptoms begin, so its effect is "
    "smaller the more spread happens before symptoms (Fraser, Riley, Anderson & Ferguson "
    "2004, PNAS 101:6146)."
)


# ---- Helpers -----------------------------------------------------------------------------

def rng3(low: float, central: float, high: float) -> Range3:
    """A Low / Central / High triple."""
    return Range3(low=low, central=central, high=high)


def spread(central: float, low_factor: float, high_factor: float, digits: int = 6,
           cap: float | None = None) -> Range3:
    """Central value with Low and High a fixed factor below and above it."""
    high = central * high_factor
    if cap is not None:
        high = min(high, cap)
    return Range3(low=round(central * low_factor, digits), central=round(central, digits),
                  high=round(high, digits))


def five_year_bands(people: Sequence[float], risk: Sequence[float]) -> tuple[AgeBand, ...]:
    """Five-year bands 0-4, 5-9, ... with an open top band."""
    bands = []
    for i, (n, r) in enumerate(zip(people, risk, strict=True)):
        lower = 5 * i
        last = i == len(people) - 1
        label = f"{lower}+" if last else f"{lower}-{lower + 4}"
        bands.append(AgeBand(label=label, lower_age=lower, upper_age=None if last else lower + 4,
                             people=float(n), high_risk_share=r))
    return tuple(bands)


def reciprocal_contacts(people: NDArray[np.float64], kernel: NDArray[np.float64],
                        per_person: NDArray[np.float64], digits: int = 3
                        ) -> tuple[tuple[float, ...], ...]:
    """Contact matrix with given row totals whose total contacts are symmetric.

    Finds activities ``x`` so that ``T = diag(x) K diag(x)`` (total contacts
    between bands, symmetric when the kernel ``K`` is) has row sums
    ``people * per_person``; returns ``C = T / people`` per row, so
    ``C[i, j] * N[i] == C[j, i] * N[j]`` up to rounding. The fit is the
    symmetric form of iterative proportional fitting.
    """
    target = people * per_person
    x = np.where(target > 0, 1.0, 0.0)
    for _ in range(10_000):
        rows = x * (kernel @ x)
        ratio = np.divide(target, rows, out=np.zeros_like(target), where=rows > 0)
        x_new = x * np.sqrt(ratio)
        converged = np.allclose(x_new, x, rtol=1e-12, atol=0)
        x = x_new
        if converged:
            break
    total = np.outer(x, x) * kernel
    if not np.allclose(total.sum(axis=1), target, rtol=1e-9, atol=1e-9):
        raise ValueError("the kernel cannot give these contact totals")
    contacts = total / people[:, None]
    return tuple(tuple(round(float(v), digits) for v in row) for row in contacts)


def _gauss(d: NDArray[np.float64], centre: float, width: float) -> NDArray[np.float64]:
    return np.exp(-0.5 * ((np.abs(d) - centre) / width) ** 2)


# ---- Story: names, descriptions and notes written from the plan's own figures ---------------

MONTHS = ("January", "February", "March", "April", "May", "June", "July", "August",
          "September", "October", "November", "December")
COUNT_WORDS = ("no", "one", "two", "three", "four", "five", "six", "seven", "eight", "nine")
COLUMN_WORDS: dict[Level, str] = {"low": "Low", "central": "Central", "high": "High"}
SPREAD_WORDS: dict[Level, str] = {"low": "Slow spread", "central": "Central spread",
                                  "high": "Fast spread"}
SEVERITY_WORDS: dict[Level, str] = {"low": "mild", "central": "central severity",
                                    "high": "severe"}
SHORT_NAMES = {"vaccination": "vaccine", "isolation": "isolation"}


def day_month(day: dt.date | None, year: int) -> str:
    """A date as ``25 January``, with the year only when it is not ``year``."""
    if day is None:
        raise ValueError("a measure needs its date")
    text = f"{day.day} {MONTHS[day.month - 1]}"
    return text if day.year == year else f"{text} {day.year}"


def percent(share: float | None) -> str:
    """A share [fraction] as a percentage: 0.6 gives ``60%``."""
    if share is None:
        raise ValueError("a measure needs its level")
    return f"{round(100 * share, 4):g}%"


def number(x: float | None) -> str:
    """A number with thousands separators and no trailing zeros: ``2,000``, ``3.5``."""
    if x is None:
        raise ValueError("a measure needs its number")
    return f"{x:,g}"


def count_word(n: int) -> str:
    """A small count in words: 3 gives ``three``."""
    return COUNT_WORDS[n] if n < len(COUNT_WORDS) else f"{n:,}"


def last_day_in_force(end: End) -> dt.date:
    """Last day a measure that ends on a date is in force.

    The workbook's end date is the last day in force (the model lifts the
    measure at the midnight that follows it).
    """
    if end.date is None:
        raise ValueError("a measure ending on a date needs its end date")
    return end.date


def _span(days: int) -> str:
    """A length of time [days] in words, in weeks when it is whole weeks."""
    if days % 7 == 0:
        weeks = days // 7
        return f"{weeks} week" if weeks == 1 else f"{weeks} weeks"
    return f"{days} day" if days == 1 else f"{days} days"


def _band_order(priority: Sequence[int], bands: Sequence[AgeBand]) -> str:
    ages = [bands[i].lower_age for i in priority]
    if ages == sorted(ages, reverse=True):
        return "oldest first"
    if ages == sorted(ages):
        return "youngest first"
    return "in the band order of the Measures sheet"


def measure_phrase(item: Intervention, bands: Sequence[AgeBand], year: int) -> str:
    """One measure in words, every date and number taken from the measure itself.

    E.g. ``distancing advice from 1 February to 30 May (17 weeks)``; dates
    in ``year`` are written without it.
    """
    name = item.name[:1].lower() + item.name[1:]
    start, end = item.start, item.end
    if start.kind == "date":
        begin = f"from {day_month(start.date, year)}"
    elif start.kind == "admissions":
        begin = f"once admissions reach {number(start.level)} a day"
    else:
        beds = "ward" if start.kind == "ward_occupancy" else "ICU"
        begin = (f"once outbreak patients fill {percent(start.level)} of the {beds} beds "
                 "available to them")
    if end.kind == "date":
        last = last_day_in_force(end)
        text = f"{name} {begin} to {day_month(last, year)}"
        if start.date is not None:
            text += f" ({_span((last - start.date).days + 1)})"
    elif end.kind == "duration":
        text = f"{name} for {number(end.duration_days)} days {begin}"
    elif end.kind == "release":
        level = (f"{number(end.level)} a day" if start.kind == "admissions"
                 else percent(end.level))
        text = f"{name} {begin} until the level falls to {level}"
    else:
        text = f"{name} {begin}"
    if item.vaccination is not None:
        v = item.vaccination
        text += (f", {number(v.doses_per_day)} doses a day, "
                 f"{_band_order(v.priority, bands)}")
    return text


def spread_phrase(disease: Disease, level: Level) -> str:
    """How fast the disease spreads at a transmissibility level, from the plan's column."""
    if disease.r0 is not None:
        return f"R0 {number(disease.r0.at(level))} (the {COLUMN_WORDS[level]} column)"
    if disease.doubling_time_days is not None:
        # High transmissibility means fast spread: the shortest doubling time.
        column = DOUBLING_TIME_LEVEL[level]
        return (f"cases double every {number(disease.doubling_time_days.at(column))} days "
                f"(the {COLUMN_WORDS[column]} column of the doubling time)")
    if disease.growth_rate_per_day is None:
        raise ValueError("the disease needs R0, a doubling time or a growth rate")
    return (f"infections grow by {percent(disease.growth_rate_per_day.at(level))} a day "
            f"(the {COLUMN_WORDS[level]} column)")


def scenario_name(transmissibility: Level, severity: Level, chosen: Sequence[Intervention],
                  measures_in_plan: int) -> str:
    """A plain name saying how fast, how severe and which measures.

    E.g. ``Fast spread, severe, all measures`` or ``Central figures, vaccine only``.
    """
    if transmissibility == severity == "central":
        lead = "Central figures"
    else:
        lead = f"{SPREAD_WORDS[transmissibility]}, {SEVERITY_WORDS[severity]}"
    if not chosen:
        tail = "no measures"
    elif len(chosen) == 1:
        item = chosen[0]
        tail = f"{SHORT_NAMES.get(item.kind, item.name.lower())} only"
    elif len(chosen) == measures_in_plan:
        tail = "both measures" if measures_in_plan == 2 else "all measures"
    else:
        tail = f"{count_word(len(chosen))} measures"
    return f"{lead}, {tail}"


def make_scenario(*, disease: Disease, interventions: Sequence[Intervention],
                  bands: Sequence[AgeBand], day0: dt.date, transmissibility: Level,
                  severity: Level, measures: Sequence[str]) -> Scenario:
    """A scenario whose name and description are written from its own inputs.

    The description says how fast the disease spreads at the scenario's level
    (the plan's own column) and lists its measures with their dates and doses.
    """
    by_name = {m.name: m for m in interventions}
    chosen = [by_name[name] for name in measures]
    # The levels themselves stand beside the description (Scenarios sheet, pack).
    lead = spread_phrase(disease, transmissibility)
    first = f"{lead[:1].upper()}{lead[1:]}."
    phrases = "; ".join(measure_phrase(m, bands, day0.year) for m in chosen)
    n = len(chosen)
    if n == 0:
        second = "No measures."
    elif n == 1:
        second = f"One measure only: {phrases}."
    elif n == len(interventions):
        count = "Both" if n == 2 else f"All {count_word(n)}"
        second = f"{count} measures: {phrases}."
    else:
        second = f"{count_word(n).capitalize()} measures: {phrases}."
    return Scenario(
        name=scenario_name(transmissibility, severity, chosen, len(interventions)),
        transmissibility_level=transmissibility,
        severity_level=severity,
        interventions=tuple(measures),
        description=f"{first} {second}",
    )


def mean_daily_contacts(plan: Plan) -> float:
    """Population mean of the daily contacts per person [contacts/person/day]."""
    people = np.array([b.people for b in plan.bands])
    c = plan.contacts
    if c.matrices is not None:
        per_band = sum(np.array(c.matrices[s]).sum(axis=1) for s in SETTINGS)
    elif c.mean_daily is not None:
        per_band = np.array(c.mean_daily)
    else:
        raise ValueError("the plan gives no contacts")
    return float(np.asarray(per_band) @ people / people.sum())


def contacts_note(plan: Plan) -> str:
    """Note on the contacts, quoting the plan's own population mean."""
    mean = f"{mean_daily_contacts(plan):.1f}"
    if plan.contacts.matrices is None:
        return (f"Invented; the population mean is {mean} contacts/day, to compare with "
                f"{MOSSONG_SURVEY}.")
    return (
        f"Invented matrices with a population mean of {mean} contacts/day, to compare with "
        f"{MOSSONG_SURVEY}; age-assortative as in that survey and in Prem, Cook & Jit 2017 "
        "(PLoS Comput Biol 13:e1005697). Reciprocal: contacts from band i to band j times "
        "people in i equal those from j to i times people in j."
    )


def admitted_per_ill(plan: Plan, level: Level) -> float:
    """Admissions per person with symptoms over the whole population [fraction].

    Admitted shares at ``level``; shares with symptoms at Central.
    """
    people = np.array([b.people for b in plan.bands])
    admitted = np.array([r.at(level) for r in plan.severity.admitted_share])
    ill = np.array([r.central for r in plan.disease.symptomatic_share])
    return float(admitted @ people / (ill @ people))


def icu_share_overall(plan: Plan) -> float:
    """Central share of all admissions that go to ICU [fraction]."""
    people = np.array([b.people for b in plan.bands])
    admitted = np.array([r.central for r in plan.severity.admitted_share]) * people
    icu = np.array([r.central for r in plan.severity.icu_share])
    return float(icu @ admitted / admitted.sum())


def admitted_note(plan: Plan) -> str:
    """Note on the admitted shares, quoting the plan's overall high-severity figure."""
    return (
        f"Invented. Over the whole population the High column admits "
        f"{100 * admitted_per_ill(plan, 'high'):.1f}% of people with symptoms (Central "
        "share with symptoms), inside the range of a published pandemic influenza planning "
        "table: 0.96% (moderate) to 11% (severe) hospitalised per ill (US HHS Pandemic "
        "Influenza Plan 2005, Table 1)."
    )


def icu_note(plan: Plan) -> str:
    """Note on the ICU shares, quoting the plan's overall central figure."""
    return (
        f"Invented; overall {100 * icu_share_overall(plan):.0f}% of admissions need ICU, "
        "close to the 15% ICU share of admissions in a published pandemic influenza planning "
        "table (US HHS Pandemic Influenza Plan 2005, Table 1)."
    )


def icu_surge_note(capacity: Capacity) -> str:
    """Note on the ICU surge beds, quoting how far they stretch the usual ICU."""
    stretch = (capacity.icu_beds + capacity.surge_icu_beds) / capacity.icu_beds
    return (
        "Invented. Published ICU surge planning aims for about 3x usual ICU capacity for up "
        "to 10 days (Rubinson et al. 2008, Chest 133(5 Suppl):32S); this plan reaches about "
        f"{stretch:.1f}x."
    )


# ---- Vellmora ------------------------------------------------------------------------------

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
    home = (1.0 * _gauss(d, 0.0, 4.0)        # siblings and partners
            + 0.9 * _gauss(d, 30.0, 5.0)     # parents and children
            + 0.25 * _gauss(d, 58.0, 7.0))   # grandparents and grandchildren
    school = (np.outer(pupils, pupils) * (_gauss(d, 0.0, 2.5) + 0.03)
              + 0.02 * (np.outer(pupils, teachers) + np.outer(teachers, pupils))
              + 0.001 * np.outer(teachers, teachers))
    work = np.outer(working, working) * (0.4 * _gauss(d, 0.0, 6.0) + 0.6)
    community = 0.35 * _gauss(d, 0.0, 8.0) + 0.65
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
    )


#: Invented early hospital figures: (day, new admissions, ward patients, ICU patients).
VELLMORA_OBSERVED: tuple[tuple[int, float, float, float], ...] = (
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
        "disease.r0": "Invented range for an influenza-like novel virus.",
        "disease.latent_period_days": INVENTED,
        "disease.infectious_period_days": INVENTED,
        "disease.asymptomatic_relative_infectiousness": INVENTED,
        "disease.seasonal_amplitude": "Invented mild winter swing.",
        "disease.initial_infections": INVENTED,
        "disease.daily_importations": "Invented; travel through the regional airport and rail.",
        "severity.ward_stages": INVENTED,
        "severity.icu_stages": INVENTED,
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
    )


def tamsett_hollow_notes(plan: Plan) -> dict[str, str]:
    """Source-or-note cells of the Tamsett Hollow workbook."""
    doubling = plan.disease.doubling_time_days
    if doubling is None:
        raise ValueError("the Tamsett Hollow plan gives a doubling time")
    fastest = doubling.at(DOUBLING_TIME_LEVEL["high"])
    notes: dict[str, str] = {
        "details.jurisdiction": "Invented town for the prepkit demo.",
        "mixing.assortativity": INVENTED,
        "disease.doubling_time_days": (
            f"Invented. Low is the fast end: {number(fastest)} days is the fastest spread "
            "planned for, used by scenarios with High transmissibility."
        ),
        "disease.latent_period_days": INVENTED,
        "disease.infectious_period_days": INVENTED,
        "disease.initial_infections": INVENTED,
        "disease.daily_importations": "Invented; commuters to and from Vellmora.",
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

def build(outdir: Path = HERE) -> list[Path]:
    """Write both workbooks into ``outdir``; returns their paths."""
    from prepkit.workbook.template import write_workbook

    outdir.mkdir(parents=True, exist_ok=True)
    written = []
    for filename, make, notes in (
        (VELLMORA_FILE, vellmora_plan, vellmora_notes),
        (TAMSETT_FILE, tamsett_hollow_plan, tamsett_hollow_notes),
    ):
        plan = make()
        path = outdir / filename
        write_workbook(path, plan, notes(plan))
        written.append(path)
    return written


def main(argv: Sequence[str] | None = None) -> int:
    args = list(sys.argv[1:] if argv is None else argv)
    outdir = Path(args[0]) if args else HERE
    # A fixed document date, so rebuilding unchanged plans gives identical files.
    os.environ.setdefault("SOURCE_DATE_EPOCH", str(SAMPLE_DATE_EPOCH))
    for path in build(outdir):
        print(f"wrote {path}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
