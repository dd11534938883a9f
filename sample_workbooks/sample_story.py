"""The shared pieces of the demo plans: note texts, band and contact builders, and the story.

The "Story" functions write scenario names, descriptions and every note that
quotes a figure of a plan from the objects the plan holds, so the words
cannot drift from the figures. Used by :mod:`sample_vellmora` and
:mod:`sample_tamsett`; see :mod:`build_samples`.
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Sequence

import numpy as np
from numpy.typing import NDArray

from prepkit.plan import (
    SETTINGS,
    AgeBand,
    Disease,
    End,
    Intervention,
    Level,
    Plan,
    Range3,
    Scenario,
)
from prepkit.plan.resources import Capacity
from prepkit.simulation.inputs import DOUBLING_TIME_LEVEL

DAY0 = dt.date(2027, 1, 4)

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


def gauss(d: NDArray[np.float64], centre: float, width: float) -> NDArray[np.float64]:
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

