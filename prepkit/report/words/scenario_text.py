"""Sentences on one scenario: its beds, ventilators, surge beds, measures and observations."""

from __future__ import annotations

import datetime as dt
from collections.abc import Sequence
from typing import Literal

from prepkit.metrics.core import BedMetrics, VentilatorMetrics
from prepkit.report.observed import ObservedCheck
from prepkit.report.words.formatting import (
    BED_NOUNS,
    BedKind,
    Period,
    beds_phrase,
    count_phrase,
    format_date,
    format_days,
    format_number,
    format_percent,
    shortfall_beds,
    when_over,
)
from prepkit.scenarios.runs import ScenarioResults


def bed_sentence(
    kind: BedKind,
    bed: BedMetrics,
    periods: Sequence[Period],
    last_day: dt.date | None = None,
) -> str:
    """Whether, when, by how much and for how long demand exceeds the beds.

    Parameters
    ----------
    kind : {"ward", "icu"}
        Bed type.
    bed : BedMetrics
        Its metrics for one scenario variant.
    periods : sequence of Period
        Its runs of days over the available beds (:func:`periods_over`).
    last_day : datetime.date, optional
        Last simulated day, to say "to the end of the period shown".

    Returns
    -------
    str
        One sentence, e.g. "Ward demand exceeds the 90 available ward beds
        from 9 Feb to 23 Mar 2027 (43 days), peaking at 302 beds on 27 Feb
        2027, 212 more than are available."
    """
    title, noun = BED_NOUNS[kind]
    available = format_number(bed.available_beds, words=True)
    if bed.peak_date is None:
        return f"{title} demand from the outbreak stays at zero."
    peak = format_number(bed.peak_demand_beds, words=True)
    when = format_date(bed.peak_date)
    if bed.days_over_capacity_days == 0 or not periods:
        return (
            f"{title} demand stays within the {available} available {noun} beds, "
            f"peaking at {peak} on {when}."
        )
    short = bed_shortfall(bed)
    beyond = (
        f"{short:,} more than the {available} available" if short >= 1
        else f"just above the {available} available"
    )
    return (
        f"{title} demand exceeds the {available} available {noun} beds "
        f"{when_over(periods, last_day)}, peaking at {peak} beds on {when}, {beyond}."
    )


def ventilator_sentence(vent: VentilatorMetrics) -> str:
    """Ventilators needed by outbreak ICU patients against those available, in words.

    Parameters
    ----------
    vent : VentilatorMetrics
        Ventilator metrics of one scenario variant.

    Returns
    -------
    str
        One sentence ("" when no ICU patient needs a ventilator).
    """
    if vent.peak_date is None or round(vent.peak_demand_devices) == 0 and (
        vent.days_short_days == 0
    ):
        return ""
    need = format_number(vent.peak_demand_devices, words=True)
    when = format_date(vent.peak_date)
    if vent.available_devices is None:
        return (
            f"Up to {need} ICU patients would need a ventilator at once ({when}); the workbook "
            "does not say how many ventilators there are."
        )
    have = f"{vent.available_devices:,}"
    if vent.days_short_days == 0:
        return (
            f"Up to {need} ICU patients would need a ventilator at once ({when}), within the "
            f"{have} available."
        )
    return (
        f"Ventilators run short on {format_days(vent.days_short_days)} from "
        f"{format_date(vent.first_short_date)}: up to {need} needed at once ({when}) against "
        f"{have} available."
    )


def bed_shortfall(bed: BedMetrics) -> int:
    """:func:`shortfall_beds` of one bed type's metrics [beds]."""
    return shortfall_beds(bed.peak_demand_beds, bed.available_beds, bed.largest_shortfall_beds)


def surge_sentence(kind: BedKind, bed: BedMetrics) -> str:
    """What opening the surge beds does to a shortfall ("" when not relevant).

    Parameters
    ----------
    kind : {"ward", "icu"}
        Bed type.
    bed : BedMetrics
        Its metrics for one scenario variant.

    Returns
    -------
    str
        A sentence, or ``""`` when demand never exceeds the beds or there
        are no surge beds of this type.
    """
    _, noun = BED_NOUNS[kind]
    if bed.days_over_capacity_days == 0 or bed.surge_beds <= 0.0:
        return ""
    beds = format_number(bed.surge_beds)
    if bed.surge_open_date is None:
        return f"The {beds} surge {noun} beds would not open within the period shown."
    ready = format_date(bed.surge_open_date)
    with_days = bed.days_over_capacity_with_surge_days
    if with_days == 0:
        return f"Opening the {beds} surge {noun} beds (ready from {ready}) would close the gap."
    still = beds_phrase(bed.largest_shortfall_with_surge_beds)
    if with_days < bed.days_over_capacity_days:
        return (
            f"Opening the {beds} surge {noun} beds (ready from {ready}) would cut this to "
            f"{format_days(with_days)}, with up to {still} still short."
        )
    if bed.largest_shortfall_with_surge_beds < bed.largest_shortfall_beds - 0.05:
        return (
            f"The {beds} surge {noun} beds (ready from {ready}) would not shorten this, though "
            f"they cut the largest shortfall to {still}."
        )
    return f"The {beds} surge {noun} beds (ready from {ready}) would come too late to help."


_PEAK_WORDS = {
    "sentence": ("there is no ward demand to lower", "lower the ward peak by {}",
                 "raise the ward peak by {}", "leave the ward peak almost unchanged",
                 " and delay it by {}", " and bring it forward by {}"),
    "cell": ("No ward demand to lower", "Ward peak {} lower", "Ward peak {} higher",
             "Ward peak almost unchanged", ", {} later", ", {} earlier"),
}
"""How :func:`peak_change` says each case, after "The measures" or in a table cell."""


def peak_change(reduction_share: float | None, delay: int | None, *,
                form: Literal["sentence", "cell"] = "sentence") -> str:
    """What the measures do to the ward peak.

    ``form="sentence"`` follows "The measures" ("lower the ward peak by 74%
    and delay it by 7 days"); ``form="cell"`` stands alone in a table ("Ward
    peak 74% lower, 7 days later"). Changes under half a percent count as
    none.
    """
    none, lower, higher, same, later, earlier = _PEAK_WORDS[form]
    if reduction_share is None:
        return none
    if reduction_share >= 0.005:
        text = lower.format(format_percent(reduction_share))
    elif reduction_share <= -0.005:
        text = higher.format(format_percent(-reduction_share))
    else:
        text = same
    if delay is not None and delay > 0:
        text += later.format(format_days(delay))
    elif delay is not None and delay < 0:
        text += earlier.format(format_days(-delay))
    return text


def measures_sentence(item: ScenarioResults) -> str:
    """What a scenario's measures change, compared with the same scenario without them.

    Parameters
    ----------
    item : ScenarioResults
        Both variants of a scenario.

    Returns
    -------
    str
        Two or three sentences: the peak without measures, how much the
        measures lower and delay it, and the admissions and deaths averted.
    """
    if not item.scenario.interventions:
        return "This scenario has no measures: it shows the outbreak left to run its course."
    without = item.without_interventions.metrics
    effect = item.effect
    if without.ward.peak_date is None:
        first = "Even without its measures there would be no ward demand."
    else:
        first = (
            f"Without its measures, ward demand would peak at "
            f"{format_number(without.ward.peak_demand_beds, words=True)} beds on "
            f"{format_date(without.ward.peak_date)}."
        )
    change = peak_change(effect.ward_peak_reduction_share, effect.ward_peak_delay_days)
    admissions = effect.averted_admissions_persons
    deaths = effect.averted_hospital_deaths_persons
    shortage = effect.averted_shortage_deaths_persons
    if admissions >= 0.5:
        care = f"{count_phrase(max(deaths, 0.0), 'death', 'deaths')} in hospital care"
        if shortage >= 0.5:
            averted = (
                f"They avert {count_phrase(admissions, 'admission', 'admissions')}, {care} "
                f"and {count_phrase(shortage, 'additional death', 'additional deaths')} "
                "when beds run short."
            )
        else:
            averted = (f"They avert {count_phrase(admissions, 'admission', 'admissions')} "
                       f"and {care}.")
    elif admissions <= -0.5:
        averted = (
            f"They add {count_phrase(-admissions, 'admission', 'admissions')} over the period "
            "shown, mostly by moving the wave later."
        )
    else:
        averted = "They change the number of admissions by less than one."
    return f"{first} The measures {change}. {averted}"


def observed_sentence(checks: Sequence[ObservedCheck]) -> str:
    """How a scenario compares with the latest observed census, in words.

    Parameters
    ----------
    checks : sequence of ObservedCheck
        Ward and ICU checks of one scenario.

    Returns
    -------
    str
        E.g. "Observed on 3 Feb 2027: 15 ward and 3 ICU patients; this
        scenario: 1 (1 to 2) and under 1. The observed ward and ICU patients
        already lie above its plausible range." The plausible range is shown
        in brackets when it is wider than one bed ("" without checks).
    """
    if not checks:
        return ""
    texts = []
    for date in sorted({c.date for c in checks}):
        day = [c for c in checks if c.date == date]
        seen = " and ".join(
            f"{format_number(c.observed_persons, words=True)} {BED_NOUNS[c.kind][1]}" for c in day
        )
        model = " and ".join(
            format_number(c.central_beds, words=True)
            + (
                f" ({format_number(c.low_beds)} to {format_number(c.high_beds)})"
                if round(c.low_beds) != round(c.high_beds) else ""
            )
            for c in day
        )
        texts.append(
            f"Observed on {format_date(date)}: {seen} patients; this scenario: {model}."
        )
    off = [c for c in checks if not c.consistent]
    if not off:
        texts.append("The observations fit its plausible range.")
    else:
        sides = sorted({"above" if c.above else "below" for c in off})
        kinds = " and ".join(BED_NOUNS[c.kind][1] for c in off)
        texts.append(
            f"The observed {kinds} patients already lie {' and '.join(sides)} its plausible range."
        )
    return " ".join(texts)

