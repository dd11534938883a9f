"""Numbers and words of the briefing pack.

Every sentence of the pack that depends on the results is written here by a
small function that the tests call directly; the templates only place the
text. :func:`build_context` gathers it all into the variables of
``templates/pack.html.j2``.

Writing rules, for readers who are not modellers:

* Bottom line first; one idea per sentence; the same words for the same
  things everywhere: *demand* (beds needed by outbreak patients from the
  jurisdiction), *available beds* (staffed beds not needed by other
  patients), *surge beds*, *measures*.
* Dates as ``27 Feb 2027``; bed and people counts as whole numbers from 10
  up and with one decimal below 10 (small towns have fractions of a bed of
  demand on average); large totals in sentences rounded to two
  significant figures (``about 1,800 admissions``), never in tables.
* Nothing is said more precisely than the model can support, and every
  figure in a sentence is formatted by the same function the tests use.
"""

from __future__ import annotations

import datetime as dt
import math
import re
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field, replace
from typing import Any, Literal

import pandas as pd

from prepkit.base.plural import all_of
from prepkit.metrics.capacity import BedMetrics, VentilatorMetrics
from prepkit.metrics.core import ScenarioMetrics
from prepkit.plan import LEVELS, End, Intervention, Plan, Start
from prepkit.plan.records import InputRecord
from prepkit.report.observed import ObservedCheck, observed_checks
from prepkit.scenarios.daily import column_slug
from prepkit.scenarios.runs import PlanResults, ScenarioResults, ScenarioRun
from prepkit.uncertainty.results import quantile_label
from prepkit.workbook import schema
from prepkit.workbook.sheets import MATRIX_SHEETS, SHEET_ORDER, SHEET_PURPOSE

__all__ = [
    "BED_NOUNS",
    "CAUTION_LINE",
    "DEATHS_NOTE",
    "DECISIONS_LINE",
    "GRID_MAX_COLUMNS",
    "GRID_MIN_FILL",
    "HEADLINE_POLICY",
    "LEVEL_WORDS",
    "SMALL_POPULATION",
    "AssumptionGrid",
    "AssumptionGroup",
    "AssumptionRow",
    "BedKind",
    "ComparisonTable",
    "FigureView",
    "GridCell",
    "MeasureSpan",
    "PackFigures",
    "Period",
    "ScenarioView",
    "TableRow",
    "absence_alt",
    "admissions_alt",
    "assumption_groups",
    "as_date",
    "bands_alt",
    "bed_sentence",
    "bed_shortfall",
    "beds_phrase",
    "bottom_line",
    "build_context",
    "certainty_sentences",
    "chance_cell",
    "chance_phrase",
    "comparison_tables",
    "count_phrase",
    "demand_alt",
    "drivers_sentence",
    "ensemble_context",
    "observed_flag",
    "observed_sentence",
    "with_observations",
    "exceedance_alt",
    "format_about",
    "format_date",
    "format_days",
    "format_decimal",
    "format_number",
    "format_percent",
    "format_period",
    "format_table_date",
    "gap_alt",
    "headline_measures_text",
    "likely_period",
    "limitations",
    "lower_first",
    "measure_timing",
    "measure_what",
    "measure_when",
    "measures_headline",
    "measures_sentence",
    "outcomes_alt",
    "peak_dates_alt",
    "periods_over",
    "provenance_line",
    "quoted",
    "scenario_brief",
    "scenario_views",
    "shortfall_beds",
    "shown_value",
    "surge_sentence",
    "tornado_alt",
    "transmissibility_rows",
    "ventilator_sentence",
]

BedKind = Literal["ward", "icu"]

_MONTHS = ("Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec")

#: How each bed type is named in sentences: (capitalised noun, noun).
BED_NOUNS: dict[BedKind, tuple[str, str]] = {
    "ward": ("Ward", "ward"),
    "icu": ("ICU", "ICU"),
}

LEVEL_WORDS: dict[str, str] = {"low": "Low", "central": "Central", "high": "High"}

#: Caution printed on the cover, the leader page and the limitations page.
CAUTION_LINE = (
    "A planning aid, not a forecast: these figures show what follows from the assumptions in "
    "the planning workbook. Real outbreaks will differ."
)
#: What the death figures count, said on the leader page.
DEATHS_NOTE = (
    "The deaths in this pack are deaths among hospital patients, counted as if every patient "
    "who needs a bed gets one: running short of beds does not change them here."
)
DECISIONS_LINE = (
    "Decisions rest with the local health authority and with licensed clinical practice."
)


# ---- Formatting ----------------------------------------------------------------------------------


def format_date(day: dt.date | None, *, year: bool = True, missing: str = "none") -> str:
    """A date as ``27 Feb 2027`` (English month abbreviations, any locale).

    Parameters
    ----------
    day : datetime.date or None
        The date.
    year : bool, optional
        Include the year.
    missing : str, optional
        Text for None.

    Returns
    -------
    str
        The date as printed in the pack.
    """
    if day is None:
        return missing
    text = f"{day.day} {_MONTHS[day.month - 1]}"
    return f"{text} {day.year}" if year else text


def format_period(start: dt.date, end: dt.date) -> str:
    """A span of dates, both ends included: ``9 Feb to 23 Mar 2027``.

    Parameters
    ----------
    start, end : datetime.date
        First and last day.

    Returns
    -------
    str
        The span; the year is printed once when both ends share it.
    """
    if start == end:
        return format_date(start)
    if start.year == end.year:
        return f"{format_date(start, year=False)} to {format_date(end)}"
    return f"{format_date(start)} to {format_date(end)}"


def format_number(value: float | None, *, missing: str = "n/a", words: bool = False) -> str:
    """A count of beds, people or bed-days as printed: a whole number.

    Beds and people are whole in every table and sentence of the pack
    (``1,750``, ``7``); decimals appear only in the methods appendix. A
    positive value that rounds to zero is ``<1`` (``under 1`` in sentences),
    so an average of a fraction of a bed is not shown as none.

    Parameters
    ----------
    value : float or None
        The number [beds, persons or bed-days].
    missing : str, optional
        Text for None, NaN or infinity.
    words : bool, optional
        For a sentence: ``under 1`` instead of ``<1``.

    Returns
    -------
    str
        The formatted number.
    """
    if value is None or not math.isfinite(value):
        return missing
    whole = round(value)
    if whole == 0:
        if abs(value) < 1e-9:
            return "0"
        return "under 1" if words else "<1"
    return f"{whole:,}"


def shortfall_beds(peak_beds: float, available_beds: float, largest_shortfall_beds: float) -> int:
    """The largest shortfall in whole beds, consistent with the rounded peak and beds.

    When the largest shortfall falls on the day of the peak against a fixed
    number of available beds (the usual case), it is the rounded peak minus
    the rounded available beds, so that "peaking at 69 beds, 51 more than
    the 18 available" adds up as printed; otherwise the rounded shortfall.

    Parameters
    ----------
    peak_beds : float
        Peak demand [beds].
    available_beds : float
        Available beds on the day of the peak [beds].
    largest_shortfall_beds : float
        Largest daily demand above the available beds [beds].

    Returns
    -------
    int
        Whole beds short (0 when demand never exceeds the beds).
    """
    if largest_shortfall_beds <= 0.0:
        return 0
    gap = peak_beds - available_beds
    if abs(largest_shortfall_beds - gap) <= 1e-6 * max(1.0, peak_beds):
        return max(round(peak_beds) - round(available_beds), 0)
    return round(largest_shortfall_beds)


def format_about(value: float) -> str:
    """A count rounded for a sentence: two significant figures from 1,000 up.

    Parameters
    ----------
    value : float
        The number [persons, beds or bed-days].

    Returns
    -------
    str
        ``1,750`` gives ``1,800``; ``302`` stays ``302``; below 10 as
        :func:`format_number`.
    """
    if not math.isfinite(value):
        return "n/a"
    if abs(value) >= 1000:
        digits = int(math.floor(math.log10(abs(value)))) - 1
        return f"{round(value, -digits):,.0f}"
    return format_number(value)


def count_phrase(value: float, singular: str, plural: str) -> str:
    """A rounded count with its noun, for sentences.

    Parameters
    ----------
    value : float
        The count [persons, beds ...].
    singular, plural : str
        The noun in both numbers.

    Returns
    -------
    str
        ``fewer than one death``, ``about one death``, ``about 14 deaths``,
        ``about 350 deaths``, ``about 1,800 admissions`` (two significant
        figures from 100 up).
    """
    if value < 0.5:
        return f"fewer than one {singular}"
    if round(value) == 1:
        return f"about one {singular}"
    if value >= 100:  # two significant figures, as in format_about
        digits = int(math.floor(math.log10(value))) - 1
        return f"about {round(value, -digits):,.0f} {plural}"
    return f"about {round(value)} {plural}"


def format_percent(share: float | None, *, missing: str = "n/a") -> str:
    """A share as a percentage: whole from 10% up, one decimal below.

    Parameters
    ----------
    share : float or None
        The share [fraction].
    missing : str, optional
        Text for None, NaN or infinity.

    Returns
    -------
    str
        ``60%``, ``4.5%``, ``<0.1%`` or ``0%``.
    """
    if share is None or not math.isfinite(share):
        return missing
    pct = 100.0 * share
    if pct == 0.0:
        return "0%"
    if abs(pct) >= 9.95:
        return f"{round(pct)}%"
    if abs(pct) < 0.05:
        return "<0.1%"
    return f"{pct:.1f}%"


def beds_phrase(value: float, kind: str = "") -> str:
    """Whole beds with their noun: ``1 bed``, ``33 ICU beds``, ``less than one ward bed``.

    Parameters
    ----------
    value : float
        Beds [beds].
    kind : str, optional
        A word before the noun (``ward``, ``ICU``).

    Returns
    -------
    str
        The phrase.
    """
    whole = round(value)
    noun = f"{kind} bed".strip()
    if whole == 0:
        return f"no {noun}s" if abs(value) < 1e-9 else f"less than one {noun}"
    return f"1 {noun}" if whole == 1 else f"{whole:,} {noun}s"


def quoted(name: str) -> str:
    """A scenario or measure name in typographic quotes: “Slow spread, mild, isolation only”."""
    return f"\u201c{name}\u201d"


def lower_first(text: str) -> str:
    """Text with its first letter in lower case, unless it starts an acronym (``ICU``)."""
    if len(text) > 1 and text[1].isupper():
        return text
    return text[:1].lower() + text[1:]


def format_days(days: int) -> str:
    """A whole number of days with its noun: ``1 day``, ``43 days``."""
    return "1 day" if days == 1 else f"{days:,} days"


def format_decimal(value: float | None, digits: int = 2, *, missing: str = "n/a") -> str:
    """A ratio or rate with a fixed number of decimals (``1.90``)."""
    if value is None or not math.isfinite(value):
        return missing
    return f"{value:.{digits}f}"


# ---- Periods over capacity -----------------------------------------------------------------------


@dataclass(frozen=True)
class Period:
    """A run of consecutive days, both ends included.

    Parameters
    ----------
    start, end : datetime.date
        First and last day.
    """

    start: dt.date
    end: dt.date

    @property
    def days(self) -> int:
        """Length [days]."""
        return (self.end - self.start).days + 1


def periods_over(demand: pd.Series, available: pd.Series | float) -> tuple[Period, ...]:
    """Runs of days on which demand is above the available beds.

    Parameters
    ----------
    demand : pandas.Series
        Daily demand indexed by date [beds].
    available : pandas.Series or float
        Available beds, daily or constant [beds].

    Returns
    -------
    tuple of Period
        In date order; their lengths add up to
        :func:`prepkit.metrics.beds.days_over_capacity`.
    """
    over = ((demand - available) > 0.0).to_numpy()
    dates = [pd.Timestamp(stamp).date() for stamp in demand.index]
    out: list[Period] = []
    start: int | None = None
    for i, flag in enumerate(over):
        if flag and start is None:
            start = i
        elif not flag and start is not None:
            out.append(Period(dates[start], dates[i - 1]))
            start = None
    if start is not None:
        out.append(Period(dates[start], dates[-1]))
    return tuple(out)


def _when_over(periods: Sequence[Period], last_day: dt.date | None) -> str:
    total = sum(p.days for p in periods)
    if len(periods) == 1:
        only = periods[0]
        if last_day is not None and only.end >= last_day:
            return (
                f"from {format_date(only.start)} to the end of the period shown "
                f"({format_days(total)})"
            )
        return f"from {format_period(only.start, only.end)} ({format_days(total)})"
    first, last = periods[0], periods[-1]
    return f"on {format_days(total)} between {format_period(first.start, last.end)}"


# ---- Sentences -----------------------------------------------------------------------------------


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
        f"{_when_over(periods, last_day)}, peaking at {peak} beds on {when}, {beyond}."
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


def _peak_change(reduction_share: float | None, delay: int | None) -> str:
    if reduction_share is None:
        return "there is no ward demand to lower"
    if reduction_share >= 0.005:
        text = f"lower the ward peak by {format_percent(reduction_share)}"
    elif reduction_share <= -0.005:
        text = f"raise the ward peak by {format_percent(-reduction_share)}"
    else:
        text = "leave the ward peak almost unchanged"
    if delay is not None and delay > 0:
        text += f" and delay it by {format_days(delay)}"
    elif delay is not None and delay < 0:
        text += f" and bring it forward by {format_days(-delay)}"
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
    change = _peak_change(effect.ward_peak_reduction_share, effect.ward_peak_delay_days)
    admissions = effect.averted_admissions_persons
    deaths = effect.averted_hospital_deaths_persons
    if admissions >= 0.5:
        averted = (
            f"They avert {count_phrase(admissions, 'admission', 'admissions')} and "
            f"{count_phrase(max(deaths, 0.0), 'death', 'deaths')} among hospital patients."
        )
    elif admissions <= -0.5:
        averted = (
            f"They add {count_phrase(-admissions, 'admission', 'admissions')} over the period "
            "shown, mostly by moving the wave later."
        )
    else:
        averted = "They change the number of admissions by less than one."
    return f"{first} The measures {change}. {averted}"


# ---- Scenario views ------------------------------------------------------------------------------


@dataclass(frozen=True, kw_only=True)
class MeasureSpan:
    """When one measure was in force in a run.

    Parameters
    ----------
    name : str
        Measure name.
    periods : tuple of Period
        Days it was active.
    """

    name: str
    periods: tuple[Period, ...]

    @property
    def text(self) -> str:
        """``Schools closed: 12 Feb to 8 Apr 2027`` or ``... : not started``."""
        if not self.periods:
            return f"{self.name}: not started in the period shown"
        spans = "; ".join(format_period(p.start, p.end) for p in self.periods)
        return f"{self.name}: {spans}"


@dataclass(frozen=True, kw_only=True)
class ScenarioView:
    """One scenario with everything the pack says about it.

    Parameters
    ----------
    number : int
        Position in the plan, from 1.
    item : ScenarioResults
        Both runs.
    ward_periods, icu_periods : tuple of Period
        Days over the available beds with measures.
    ward_periods_without, icu_periods_without : tuple of Period
        The same without measures.
    last_day : datetime.date
        Last simulated day.
    measure_spans : tuple of MeasureSpan
        When each measure was in force (with measures).
    observed : tuple of ObservedCheck
        The scenario (with measures) against the latest observed census
        (:func:`with_observations`); empty without observations.
    """

    number: int
    item: ScenarioResults
    ward_periods: tuple[Period, ...]
    icu_periods: tuple[Period, ...]
    ward_periods_without: tuple[Period, ...]
    icu_periods_without: tuple[Period, ...]
    last_day: dt.date
    measure_spans: tuple[MeasureSpan, ...] = ()
    observed: tuple[ObservedCheck, ...] = ()

    @property
    def name(self) -> str:
        """Scenario name."""
        return self.item.scenario.name

    @property
    def with_metrics(self) -> ScenarioMetrics:
        """Metrics with measures."""
        return self.item.with_interventions.metrics

    @property
    def without_metrics(self) -> ScenarioMetrics:
        """Metrics without measures."""
        return self.item.without_interventions.metrics

    @property
    def short_of_beds(self) -> bool:
        """True when ward or ICU demand exceeds the available beds with measures."""
        m = self.with_metrics
        return m.ward.days_over_capacity_days > 0 or m.icu.days_over_capacity_days > 0

    @property
    def unmet_bed_days(self) -> float:
        """Ward plus ICU unmet bed-days with measures [bed-days]."""
        m = self.with_metrics
        return m.ward.unmet_bed_days + m.icu.unmet_bed_days

    @property
    def levels_text(self) -> str:
        """``High transmissibility, high severity``."""
        s = self.item.scenario
        return (
            f"{LEVEL_WORDS[s.transmissibility_level]} transmissibility, "
            f"{LEVEL_WORDS[s.severity_level].lower()} severity"
        )

    @property
    def measures_text(self) -> str:
        """The scenario's measures, or ``No measures``."""
        names = self.item.scenario.interventions
        return "; ".join(names) if names else "No measures"

    @property
    def ward_sentence(self) -> str:
        """:func:`bed_sentence` for ward beds with measures."""
        return bed_sentence("ward", self.with_metrics.ward, self.ward_periods, self.last_day)

    @property
    def icu_sentence(self) -> str:
        """:func:`bed_sentence` for ICU beds with measures."""
        return bed_sentence("icu", self.with_metrics.icu, self.icu_periods, self.last_day)

    @property
    def ventilator_sentence(self) -> str:
        """:func:`ventilator_sentence` with measures ("" when none are needed)."""
        return ventilator_sentence(self.with_metrics.ventilators)

    @property
    def surge_sentences(self) -> tuple[str, ...]:
        """:func:`surge_sentence` for both bed types, empty ones dropped."""
        texts = (surge_sentence("ward", self.with_metrics.ward),
                 surge_sentence("icu", self.with_metrics.icu))
        return tuple(t for t in texts if t)

    @property
    def measures_sentence(self) -> str:
        """:func:`measures_sentence` of the scenario."""
        return measures_sentence(self.item)

    @property
    def brief(self) -> str:
        """:func:`scenario_brief` of the scenario."""
        return scenario_brief(self)

    @property
    def observed_sentence(self) -> str:
        """:func:`observed_sentence` of the scenario ("" without observations)."""
        return observed_sentence(self.observed)

    @property
    def contradicted(self) -> bool:
        """True when an observed census lies outside the scenario's plausible range."""
        return any(not check.consistent for check in self.observed)


def _active_spans(plan: Plan, run: ScenarioRun, names: Iterable[str]) -> tuple[MeasureSpan, ...]:
    out = []
    for name in names:
        key = f"active_{column_slug(name)}"
        if key not in run.daily.columns:
            continue
        flags = run.daily[key].astype(float)
        out.append(MeasureSpan(name=name, periods=periods_over(flags, 0.5)))
    return tuple(out)


def scenario_views(plan: Plan, results: PlanResults) -> tuple[ScenarioView, ...]:
    """A :class:`ScenarioView` per scenario, in plan order.

    Parameters
    ----------
    plan : Plan
        The plan.
    results : PlanResults
        Its results.

    Returns
    -------
    tuple of ScenarioView
        One per scenario.
    """
    out = []
    for number, item in enumerate(results.scenarios, start=1):
        runs = {"with": item.with_interventions, "without": item.without_interventions}
        found: dict[str, tuple[Period, ...]] = {}
        for variant, run in runs.items():
            for kind in ("ward", "icu"):
                daily = run.daily
                found[f"{kind}_{variant}"] = periods_over(
                    daily[f"{kind}_demand_beds"], daily[f"{kind}_available_beds"]
                )
        daily = item.with_interventions.daily
        last_day = pd.Timestamp(daily.index[-1]).date() if len(daily) else plan.details.day0
        out.append(
            ScenarioView(
                number=number,
                item=item,
                ward_periods=found["ward_with"],
                icu_periods=found["icu_with"],
                ward_periods_without=found["ward_without"],
                icu_periods_without=found["icu_without"],
                last_day=last_day,
                measure_spans=_active_spans(
                    plan, item.with_interventions, item.scenario.interventions
                ),
            )
        )
    return tuple(out)


def with_observations(
    plan: Plan, views: Sequence[ScenarioView], uncertainty: Any | None = None
) -> tuple[ScenarioView, ...]:
    """The views with each scenario checked against the latest observed census.

    Parameters
    ----------
    plan : Plan
        The plan (its observations).
    views : sequence of ScenarioView
        Every scenario.
    uncertainty : prepkit.uncertainty.results.UncertaintyResults, optional
        The ensemble: its daily bands give each scenario's plausible range;
        without it the range is the central run alone.

    Returns
    -------
    tuple of ScenarioView
        The same views, ``observed`` filled in.
    """
    if not plan.observed:
        return tuple(views)
    columns = ("q05", "q95")
    if uncertainty is not None and uncertainty.scenarios:
        low, _, high = band_columns(uncertainty.quantiles)
        columns = (low, high)
    out = []
    for view in views:
        result = scenario_ensemble(uncertainty, view.name) if uncertainty is not None else None
        bands = result.with_interventions.daily if result is not None else None
        checks = observed_checks(plan, view.item.with_interventions.daily, bands, columns)
        out.append(replace(view, observed=checks))
    return tuple(out)


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


def observed_flag(views: Sequence[ScenarioView]) -> str:
    """The leader page's sentence on scenarios the observations already contradict.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario, checked by :func:`with_observations`.

    Returns
    -------
    str
        "" without observations; otherwise which scenarios the latest
        observed census rules out, or that it fits them all.
    """
    checked = [v for v in views if v.observed]
    if not checked:
        return ""
    date = format_date(max(c.date for v in checked for c in v.observed))
    off = [v for v in checked if v.contradicted]
    if not off:
        return (
            f"The hospital figures observed up to {date} fit the plausible range of "
            f"{all_of(len(checked), 'scenario')}."
        )
    names = _name_list([quoted(v.name) for v in off])
    ahead = all(c.above for v in off for c in v.observed if not c.consistent)
    if len(off) == len(checked):
        where = "ahead of" if ahead else "apart from"
        return (
            f"The hospital figures observed up to {date} already lie outside the plausible "
            f"range of every scenario: the outbreak is running {where} all of them, so read "
            "their dates and peaks with care."
        )
    which = "that scenario" if len(off) == 1 else "those scenarios"
    return (
        f"The hospital figures observed up to {date} already lie outside the plausible range "
        f"of {names}; read {which} with care."
    )


def _name_list(names: Sequence[str]) -> str:
    if len(names) <= 2:
        return " and ".join(names)
    return ", ".join(names[:-1]) + " and " + names[-1]


def scenario_brief(view: ScenarioView) -> str:
    """Two short sentences on one scenario for the leader page.

    Parameters
    ----------
    view : ScenarioView
        The scenario.

    Returns
    -------
    str
        E.g. "Ward beds run short on 43 days from 9 Feb 2027; demand peaks
        at 302 beds against 90 available. ICU beds run short on 59 days from
        6 Feb 2027; demand peaks at 118 beds against 18 available. The
        measures lower the ward peak by 60% and delay it by 7 days."
    """
    m = view.with_metrics
    parts = []
    for kind, bed in (("ward", m.ward), ("icu", m.icu)):
        title, noun = BED_NOUNS[kind]  # type: ignore[index]
        if bed.days_over_capacity_days > 0:
            start = format_date(bed.first_over_capacity_date)
            parts.append(
                f"{title} beds run short on {format_days(bed.days_over_capacity_days)} from "
                f"{start}; demand peaks at {format_number(bed.peak_demand_beds, words=True)} "
                f"beds against {format_number(bed.available_beds, words=True)} available."
            )
    if not parts:
        parts.append(
            f"Demand stays within the available beds: peaks of "
            f"{beds_phrase(m.ward.peak_demand_beds, 'ward')} and "
            f"{beds_phrase(m.icu.peak_demand_beds, 'ICU')}."
        )
    if view.item.scenario.interventions:
        change = _peak_change(
            view.item.effect.ward_peak_reduction_share, view.item.effect.ward_peak_delay_days
        )
        if view.item.effect.ward_peak_reduction_share is not None:
            parts.append(f"The measures {change}.")
    else:
        parts.append("No measures in this scenario.")
    return " ".join(parts)


def bottom_line(views: Sequence[ScenarioView]) -> tuple[str, ...]:
    """The leader page's first paragraph: whether demand exceeds beds, where worst.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.

    Returns
    -------
    tuple of str
        Two or three sentences.
    """
    total = len(views)
    if total == 0:
        return ("The plan has no scenarios.",)
    short = [v for v in views if v.short_of_beds]
    if not short:
        top = max(views, key=lambda v: v.with_metrics.ward.peak_demand_beds)
        ward = top.with_metrics.ward
        scope = all_of(total, "scenario")
        return (
            f"With the planned measures, outbreak patients stay within the available ward and "
            f"ICU beds in {scope}.",
            f"The highest ward demand is {format_number(ward.peak_demand_beds, words=True)} beds "
            f"({quoted(top.name)}, {format_date(ward.peak_date)}) against "
            f"{format_number(ward.available_beds, words=True)} available.",
        )
    if total == 1:
        first = "Outbreak patients would need more hospital beds than are available, even with "
        first += "the planned measures."
    elif len(short) == total:
        first = (
            f"In {all_of(total, 'scenario')}, outbreak patients would need more "
            "hospital beds than are available, even with the planned measures."
        )
    else:
        first = (
            f"In {len(short)} of the {total} scenarios, outbreak patients would need more "
            "hospital beds than are available, even with the planned measures."
        )
    worst = max(short, key=lambda v: v.unmet_bed_days)
    m = worst.with_metrics
    clauses = []
    for kind, bed in (("ward", m.ward), ("icu", m.icu)):
        _, noun = BED_NOUNS[kind]  # type: ignore[index]
        if bed.days_over_capacity_days > 0:
            clauses.append(
                f"{noun} beds run short on {format_days(bed.days_over_capacity_days)} from "
                f"{format_date(bed.first_over_capacity_date)}, with demand peaking at "
                f"{format_number(bed.peak_demand_beds, words=True)} beds against "
                f"{format_number(bed.available_beds, words=True)} available"
            )
    lead = "The hardest case is" if total > 1 else "In"
    second = f"{lead} {quoted(worst.name)}: " + "; ".join(clauses) + "."
    return (first, second)


def measures_headline(views: Sequence[ScenarioView]) -> ScenarioView | None:
    """The scenario whose measures the leader page describes.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.

    Returns
    -------
    ScenarioView or None
        Among scenarios with measures, the one that would be shortest of
        beds without them (unmet ward plus ICU bed-days); the first scenario
        when none has measures; None when there are no scenarios.
    """
    with_measures = [v for v in views if v.item.scenario.interventions]
    if not with_measures:
        return views[0] if views else None

    def unmet_without(view: ScenarioView) -> float:
        m = view.without_metrics
        return m.ward.unmet_bed_days + m.icu.unmet_bed_days

    return max(with_measures, key=unmet_without)


def headline_measures_text(view: ScenarioView) -> str:
    """The leader page's paragraph on what the measures change.

    Parameters
    ----------
    view : ScenarioView
        The scenario chosen by :func:`measures_headline`.

    Returns
    -------
    str
        ``Take “<name>”.`` followed by :func:`measures_sentence`.
    """
    return f"Take {quoted(view.name)}. {measures_sentence(view.item)}"


def certainty_sentences(
    plan: Plan,
    views: Sequence[ScenarioView],
    ensemble: Mapping[str, Any] | None = None,
) -> tuple[str, ...]:
    """How certain the figures are, in words.

    Parameters
    ----------
    plan : Plan
        The plan (for the number of draws asked for).
    views : sequence of ScenarioView
        Every scenario.
    ensemble : mapping, optional
        Sentences prepared from the uncertainty ensemble (key
        ``"sentences"``); None when no ensemble was run.

    Returns
    -------
    tuple of str
        Two or three sentences.
    """
    if ensemble is not None and ensemble.get("sentences"):
        return tuple(str(s) for s in ensemble["sentences"])
    out = [
        "Each figure here comes from one run at the scenario's own assumptions; it is not a "
        "range."
    ]
    peaks = [v.with_metrics.ward.peak_demand_beds for v in views]
    if len(views) > 1:
        out.append(
            f"The spread between the scenarios is the best guide to the uncertainty: ward peaks "
            f"run from {format_number(min(peaks), words=True)} to "
            f"{format_number(max(peaks), words=True)} beds."
        )
    if plan.details.draws == 0:
        out.append("Uncertainty ranges were switched off for this pack (0 uncertainty draws).")
    else:
        out.append("Uncertainty ranges were not computed for this pack.")
    return tuple(out)


# ---- Tables --------------------------------------------------------------------------------------


@dataclass(frozen=True, kw_only=True)
class TableRow:
    """One row of a table: a label, its cells and an optional group heading.

    Parameters
    ----------
    label : str
        Row heading.
    cells : tuple of str
        Cell texts.
    group : bool
        True for a group-heading row spanning the table (``cells`` empty).
    """

    label: str
    cells: tuple[str, ...] = ()
    group: bool = False


@dataclass(frozen=True, kw_only=True)
class ComparisonTable:
    """The scenario comparison for up to four scenarios.

    Parameters
    ----------
    scenarios : tuple of str
        Scenario names, each spanning two columns (with, without measures).
    rows : tuple of TableRow
        Metric rows.
    year : int
        Year of dates printed without one.
    """

    scenarios: tuple[str, ...]
    rows: tuple[TableRow, ...]
    year: int


def format_table_date(day: dt.date | None, year: int) -> str:
    """A date in a table: ``27 Feb`` in the table's year, ``3 Jan 2028`` otherwise, ``–`` for none.

    Parameters
    ----------
    day : datetime.date or None
        The date.
    year : int
        The year the table's caption names.

    Returns
    -------
    str
        The short date.
    """
    if day is None:
        return "–"
    return format_date(day, year=day.year != year)


def _bed_rows(
    kind: BedKind, pairs: Sequence[tuple[BedMetrics, BedMetrics]], year: int
) -> list[TableRow]:
    title, noun = BED_NOUNS[kind]
    first = pairs[0][0]
    surge = first.available_beds + first.surge_beds
    head = (
        f"{title} beds: {format_number(first.available_beds)} available"
        + (f", {format_number(surge)} with surge beds" if first.surge_beds > 0 else "")
    )

    def cells(fn: Any) -> tuple[str, ...]:
        return tuple(text for pair in pairs for text in (fn(pair[0]), fn(pair[1])))

    return [
        TableRow(label=head, group=True),
        TableRow(label="Peak demand [beds]",
                 cells=cells(lambda b: format_number(b.peak_demand_beds))),
        TableRow(label="Date of peak", cells=cells(lambda b: format_table_date(b.peak_date, year))),
        TableRow(label="First day short",
                 cells=cells(lambda b: format_table_date(b.first_over_capacity_date, year))),
        TableRow(label="Days short [days]",
                 cells=cells(lambda b: f"{b.days_over_capacity_days:,}")),
        TableRow(label="Days short with surge [days]",
                 cells=cells(lambda b: f"{b.days_over_capacity_with_surge_days:,}")),
        TableRow(label="Largest shortfall [beds]",
                 cells=cells(lambda b: f"{bed_shortfall(b):,}")),
        TableRow(label="Unmet bed-days [bed-days]",
                 cells=cells(lambda b: format_number(b.unmet_bed_days))),
    ]


def _ventilator_rows(available: int | None, cells: Any) -> list[TableRow]:
    head = (
        f"Ventilators: {available:,} available" if available is not None
        else "Ventilators: number available not given"
    )
    rows = [
        TableRow(label=head, group=True),
        TableRow(label="Needed at the peak [devices]",
                 cells=cells(lambda m: format_number(m.ventilators.peak_demand_devices))),
    ]
    if available is not None:
        rows.append(TableRow(label="Days short [days]",
                             cells=cells(lambda m: f"{m.ventilators.days_short_days:,}")))
    return rows


def comparison_tables(
    views: Sequence[ScenarioView], year: int, per_table: int = 4
) -> tuple[ComparisonTable, ...]:
    """The scenario comparison, split into tables of up to ``per_table`` scenarios.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.
    year : int
        Year of dates printed without one (the year of day 0).
    per_table : int, optional
        Most scenarios per table (two columns each); the scenarios are
        spread evenly over as few tables as that allows.

    Returns
    -------
    tuple of ComparisonTable
        The tables; every cell is formatted with the functions of this
        module.
    """
    tables = []
    count = math.ceil(len(views) / per_table) if views else 0
    size = math.ceil(len(views) / count) if count else 0
    for start in range(0, len(views), max(size, 1)):
        chunk = views[start : start + size]
        metrics = [(v.with_metrics, v.without_metrics) for v in chunk]

        def cells(fn: Any, metrics: list[tuple[ScenarioMetrics, ScenarioMetrics]] = metrics) -> (
            tuple[str, ...]
        ):
            return tuple(text for pair in metrics for text in (fn(pair[0]), fn(pair[1])))

        rows = _bed_rows("ward", [(a.ward, b.ward) for a, b in metrics], year)
        rows += _bed_rows("icu", [(a.icu, b.icu) for a, b in metrics], year)
        rows += _ventilator_rows(metrics[0][0].ventilators.available_devices, cells)
        rows += [
            TableRow(label="People", group=True),
            TableRow(label="Peak admissions [per day]",
                     cells=cells(lambda m: format_number(m.peak_admissions_per_day))),
            TableRow(label="Hospital admissions [persons]",
                     cells=cells(lambda m: format_number(m.total.admissions_persons))),
            TableRow(label="ICU admissions [persons]",
                     cells=cells(lambda m: format_number(m.total.icu_admissions_persons))),
            TableRow(label="Deaths among hospital patients [persons]",
                     cells=cells(lambda m: format_number(m.total.hospital_deaths_persons))),
            TableRow(label="Residents infected [%]",
                     cells=cells(lambda m: format_percent(m.infection_attack_share))),
            TableRow(label="Peak workforce absence [%]",
                     cells=cells(lambda m: format_percent(m.peak_absence_share))),
        ]
        tables.append(
            ComparisonTable(scenarios=tuple(v.name for v in chunk), rows=tuple(rows), year=year)
        )
    return tuple(tables)


_MEASURE_NAMES = {
    "r0": "R0",
    "doubling_time": "Doubling time [days]",
    "growth_rate": "Growth rate [per day]",
}


def transmissibility_rows(plan: Plan, results: PlanResults) -> tuple[TableRow, ...]:
    """The transmissibility table: one row per level.

    Parameters
    ----------
    plan : Plan
        The plan.
    results : PlanResults
        Its results (``transmissibility_by_level``).

    Returns
    -------
    tuple of TableRow
        Cells: value given in the workbook, R0, growth rate [per day],
        doubling time [days], mean generation time [days], effective R on
        day 0.
    """
    rows = []
    for level in LEVELS:
        t = results.transmissibility_by_level.get(level)
        if t is None:
            continue
        given = (
            format_decimal(t.given_value, 3)
            if t.measure == "growth_rate"
            else format_decimal(t.given_value, 2)
        )
        rows.append(
            TableRow(
                label=LEVEL_WORDS[level],
                cells=(
                    f"{_MEASURE_NAMES.get(t.measure, t.measure)} {given}",
                    format_decimal(t.r0, 2),
                    format_decimal(t.growth_rate_per_day, 3),
                    format_decimal(t.doubling_time_days, 1),
                    format_decimal(t.mean_generation_time_days, 1),
                    format_decimal(t.r_effective_day0, 2),
                ),
            )
        )
    return tuple(rows)


# ---- Measures ------------------------------------------------------------------------------------


def measure_when(start: Start, end: End) -> str:
    """When a measure applies, in words.

    Parameters
    ----------
    start, end : Start, End
        The measure's rules.

    Returns
    -------
    str
        E.g. "When ward demand reaches 60% of the available ward beds; for
        56 days".
    """
    if start.kind == "date":
        begin = f"From {format_date(start.date)}"
    elif start.kind == "ward_occupancy":
        begin = f"When ward demand reaches {format_percent(start.level)} of the available ward beds"
    elif start.kind == "icu_occupancy":
        begin = f"When ICU demand reaches {format_percent(start.level)} of the available ICU beds"
    else:
        begin = f"When admissions reach {format_number(start.level)} a day"
    if end.kind == "horizon":
        finish = "to the end of the period"
    elif end.kind == "date":
        finish = f"last day {format_date(end.date)}"
    elif end.kind == "duration":
        finish = f"for {format_days(round(end.duration_days or 0))}"
    else:
        level = end.level or 0.0
        shown = format_number(level) + " a day" if start.kind == "admissions" else format_percent(
            level
        )
        finish = f"until the level falls to {shown}"
    return f"{begin}; {finish}"


_SETTING_WORDS = {"home": "home", "school": "school", "work": "work", "community": "community"}


def measure_what(item: Intervention) -> str:
    """What a measure does, in words.

    Parameters
    ----------
    item : Intervention
        The measure.

    Returns
    -------
    str
        E.g. "Work contacts at 75% and community contacts at 60% of normal;
        compliance 85%".
    """
    compliance = item.compliance
    comp = f"compliance {format_percent(compliance.central)}"
    if not compliance.is_point:
        comp += f" ({format_percent(compliance.low)} to {format_percent(compliance.high)})"
    if item.kind == "contacts":
        changed = [
            f"{_SETTING_WORDS[s]} contacts at {format_percent(kept)}"
            for s, kept in item.contacts_kept.items()
            if kept < 1.0
        ]
        what = (" and ".join([", ".join(changed[:-1]), changed[-1]]) if len(changed) > 1
                else (changed[0] if changed else "no contacts changed"))
        return f"{what[0].upper()}{what[1:]} of normal; {comp}"
    if item.kind == "vaccination" and item.vaccination is not None:
        v = item.vaccination
        return (
            f"{format_number(v.doses_per_day)} doses a day, up to "
            f"{format_percent(v.uptake_ceiling)} of each band offered; protects against "
            f"infection {format_percent(v.efficacy_infection.central)} and against admission "
            f"{format_percent(v.efficacy_severe.central)}, {_day_count(v.days_to_protection)} "
            f"after the dose; {comp}"
        )
    if item.kind == "isolation" and item.isolation is not None:
        iso = item.isolation
        return (
            f"{format_percent(iso.isolated_share)} of people with symptoms isolate "
            f"{_day_count(iso.days_from_onset)} after symptoms start; {comp}"
        )
    return comp


def _day_count(days: float) -> str:
    text = format_number(days)
    return f"{text} day" if text == "1" else f"{text} days"


def measure_timing(view: ScenarioView) -> tuple[str, ...]:
    """When each of a scenario's measures was in force, one line each."""
    return tuple(span.text for span in view.measure_spans)


# ---- Assumptions appendix ------------------------------------------------------------------------


@dataclass(frozen=True, kw_only=True)
class AssumptionRow:
    """One input of the appendix, listed on its own line.

    Parameters
    ----------
    cell, label, value, unit : str
        As read (choice values in the words the workbook shows).
    defaulted : bool
        True when the cell was blank and the default was used.
    """

    cell: str
    label: str
    value: str
    unit: str
    defaulted: bool


@dataclass(frozen=True, kw_only=True)
class GridCell:
    """One value of an :class:`AssumptionGrid` (empty when the sheet gave none there).

    Parameters
    ----------
    value : str
        Value as read.
    defaulted : bool
        True when the default was used.
    present : bool
        True when the cell holds an input (False for a gap in the grid).
    """

    value: str = ""
    defaulted: bool = False
    present: bool = False


@dataclass(frozen=True, kw_only=True)
class AssumptionGrid:
    """Inputs laid out as on their sheet: the cell of a value is its column letter and row.

    Parameters
    ----------
    columns : tuple of tuple of str
        (column letter, heading) of every column, left to right; the heading
        is a band label (contact matrices) or a field label with its unit.
    rows : tuple of tuple of (int, str, tuple of GridCell)
        Row number, row label (a band, for contact matrices) and the values
        along the row.
    """

    columns: tuple[tuple[str, str], ...]
    rows: tuple[tuple[int, str, tuple[GridCell, ...]], ...]

    @property
    def count(self) -> int:
        """Number of values in the grid."""
        return sum(1 for _, _, cells in self.rows for c in cells if c.present)


@dataclass(frozen=True, kw_only=True)
class AssumptionGroup:
    """The inputs read from one sheet.

    Parameters
    ----------
    sheet : str
        Sheet name.
    purpose : str
        What the sheet holds (from the schema).
    rows : tuple of AssumptionRow
        Inputs listed one per line (single items, and sparse tables).
    grids : tuple of AssumptionGrid
        Tables and contact matrices laid out as on the sheet.
    matrix : bool
        True for a contact-matrix sheet (rows: band making the contacts).
    unit : str
        Unit of every value of a contact matrix.
    defaulted : int
        How many inputs used their default.
    """

    sheet: str
    purpose: str
    rows: tuple[AssumptionRow, ...] = ()
    grids: tuple[AssumptionGrid, ...] = ()
    matrix: bool = False
    unit: str = ""
    defaulted: int = 0

    @property
    def count(self) -> int:
        """Number of inputs in the group."""
        return len(self.rows) + sum(g.count for g in self.grids)


def shown_value(record: InputRecord) -> str:
    """An input's value as the workbook shows it (choices in their words, e.g. "Fewer contacts")."""
    f = schema.FIELDS_BY_NAME.get(record.name)
    if f is not None and f.type == "choice":
        try:
            return schema.choice_shown(f, record.value)
        except KeyError:
            return record.value
    return record.value


_CELL = re.compile(r"^\$?([A-Z]{1,3})\$?([0-9]+)$")
_MEETING = re.compile(r", band (.+) meeting band (.+)$")
_ROW_KEY = re.compile(r", (?:band|measure|scenario|date) (.+)$")

#: Widest table laid out as a grid [columns], and the least share of its
#: cells that must hold a value; sparser or wider tables are listed instead.
GRID_MAX_COLUMNS = 9
GRID_MIN_FILL = 0.6


def _column_number(letters: str) -> int:
    number = 0
    for char in letters:
        number = number * 26 + (ord(char) - 64)
    return number


def _split_cell(cell: str) -> tuple[str, int] | None:
    match = _CELL.match(cell.upper())
    return (match[1], int(match[2])) if match else None


def _grid_heading(record: InputRecord) -> str:
    f = schema.FIELDS_BY_NAME.get(record.name)
    label = f.label if f is not None else record.label.split(",", 1)[0]
    unit = f.unit if f is not None else record.unit
    return f"{label} [{unit}]" if unit and unit != "date" else label


def _grid(records: Sequence[InputRecord], *, matrix: bool) -> AssumptionGrid | None:
    cells: dict[tuple[int, int], GridCell] = {}
    letters: dict[int, str] = {}
    headings: dict[int, str] = {}
    row_labels: dict[int, str] = {}
    for record in records:
        where = _split_cell(record.cell)
        if where is None:
            return None
        letter, row = where
        col = _column_number(letter)
        letters[col] = letter
        cells[(row, col)] = GridCell(
            value=record.value if matrix else shown_value(record), defaulted=record.defaulted,
            present=True,
        )
        if matrix:
            names = _MEETING.search(record.label)
            if names:
                row_labels.setdefault(row, names[1])
                headings.setdefault(col, names[2])
        else:
            headings.setdefault(col, _grid_heading(record))
            key = _ROW_KEY.search(record.label)
            if key:
                row_labels.setdefault(row, key[1])
    cols = sorted(letters)
    rows = sorted({r for r, _ in cells})
    for r in rows:  # a key column on the sheet already names the row
        if any(cells.get((r, c), GridCell()).value == row_labels.get(r) for c in cols):
            row_labels.pop(r, None)
    return AssumptionGrid(
        columns=tuple((letters[c], headings.get(c, "")) for c in cols),
        rows=tuple(
            (r, row_labels.get(r, ""), tuple(cells.get((r, c), GridCell()) for c in cols))
            for r in rows
        ),
    )


def _dense(records: Sequence[InputRecord]) -> bool:
    places = [_split_cell(r.cell) for r in records]
    if any(p is None for p in places) or not places:
        return False
    cols = {p[0] for p in places if p}
    rows = {p[1] for p in places if p}
    return len(cols) <= GRID_MAX_COLUMNS and len(places) >= GRID_MIN_FILL * len(cols) * len(rows)


def _row(record: InputRecord) -> AssumptionRow:
    return AssumptionRow(
        cell=record.cell, label=record.label, value=shown_value(record), unit=record.unit,
        defaulted=record.defaulted,
    )


def assumption_groups(records: Sequence[InputRecord]) -> tuple[AssumptionGroup, ...]:
    """Every input of the plan, grouped by sheet in workbook order.

    Single inputs are listed one per line with their cell. Tables (one row
    per band, measure, scenario or day) are laid out as on the sheet when
    they are narrow and dense enough, so the cell of each value is its
    column letter and row number; contact matrices always are.

    Parameters
    ----------
    records : sequence of InputRecord
        ``plan.source.inputs``.

    Returns
    -------
    tuple of AssumptionGroup
        One group per sheet that gave inputs.
    """
    by_sheet: dict[str, list[InputRecord]] = {}
    for record in records:
        by_sheet.setdefault(record.sheet, []).append(record)
    order = [s for s in SHEET_ORDER if s in by_sheet]
    order += [s for s in by_sheet if s not in order]
    matrix_sheets = set(MATRIX_SHEETS.values())
    groups = []
    for sheet in order:
        items = by_sheet[sheet]
        purpose = SHEET_PURPOSE.get(sheet, "")
        defaulted = sum(1 for r in items if r.defaulted)
        if sheet in matrix_sheets:
            grid = _grid(items, matrix=True)
            if grid is not None:
                groups.append(AssumptionGroup(
                    sheet=sheet, purpose=purpose, grids=(grid,), matrix=True,
                    unit=items[0].unit, defaulted=defaulted,
                ))
                continue
        singles: list[InputRecord] = []
        tables: dict[str, list[InputRecord]] = {}
        for record in items:
            f = schema.FIELDS_BY_NAME.get(record.name)
            if f is not None and f.table is not None:
                tables.setdefault(f.table, []).append(record)
            else:
                singles.append(record)
        rows = [_row(r) for r in singles]
        grids = []
        for table_records in tables.values():
            grid = _grid(table_records, matrix=False) if _dense(table_records) else None
            if grid is None:
                rows += [_row(r) for r in table_records]
            else:
                grids.append(grid)
        groups.append(AssumptionGroup(
            sheet=sheet, purpose=purpose, rows=tuple(rows), grids=tuple(grids),
            defaulted=defaulted,
        ))
    return tuple(groups)


# ---- Provenance ----------------------------------------------------------------------------------


def provenance_line(plan: Plan, *, version: str, generated: dt.datetime) -> str:
    """The footer line printed on every page.

    Parameters
    ----------
    plan : Plan
        The plan (its source file and hash, seed).
    version : str
        prepkit version.
    generated : datetime.datetime
        Run time (from :func:`prepkit.base.files.source_date`).

    Returns
    -------
    str
        Jurisdiction, input file name and short SHA-256, version, run time
        (UTC) and seed.
    """
    name = plan.source.path.replace("\\", "/").rsplit("/", 1)[-1] or "workbook"
    digest = plan.source.sha256[:12] if plan.source.sha256 else "not recorded"
    stamp = generated.astimezone(dt.UTC).strftime("%Y-%m-%d %H:%M UTC")
    return (
        f"{plan.details.jurisdiction} · input {name} (SHA-256 {digest}) · prepkit {version} · "
        f"run {stamp} · seed {plan.details.seed}"
    )


# ---- The whole context ---------------------------------------------------------------------------


@dataclass(frozen=True, kw_only=True)
class FigureView:
    """A chart as the template places it.

    Parameters
    ----------
    name : str
        File stem under ``charts/``.
    src : str
        ``data:`` URI of the image.
    alt : str
        Alternate text written from the data.
    caption : str
        Caption.
    label : str
        ``Figure 3.``
    wide : bool
        True for tall charts given a page of their own.
    """

    name: str
    src: str
    alt: str
    caption: str
    label: str = ""
    wide: bool = False


@dataclass(frozen=True, kw_only=True)
class PackFigures:
    """Charts of the pack, by place.

    Parameters
    ----------
    by_scenario : mapping of int to FigureView
        Demand chart of each scenario, by scenario number.
    across : tuple of FigureView
        Charts comparing scenarios.
    uncertainty : tuple of FigureView
        Ensemble charts (empty when no ensemble was run).
    """

    by_scenario: Mapping[int, FigureView] = field(default_factory=dict)
    across: tuple[FigureView, ...] = ()
    uncertainty: tuple[FigureView, ...] = ()


def build_context(
    plan: Plan,
    results: PlanResults,
    *,
    figures: PackFigures,
    version: str,
    generated: dt.datetime,
    uncertainty: Any | None = None,
    files: Sequence[tuple[str, str]] = (),
    notes: Sequence[str] = (),
    inline_css: str | None = None,
) -> dict[str, Any]:
    """Variables of ``pack.html.j2``.

    Parameters
    ----------
    plan : Plan
        The plan.
    results : PlanResults
        Its results.
    figures : PackFigures
        Charts, already drawn.
    version : str
        prepkit version.
    generated : datetime.datetime
        Run time.
    uncertainty : prepkit.uncertainty.results.UncertaintyResults, optional
        The ensemble, when it was run (its words come from
        :func:`ensemble_context`).
    files : sequence of (str, str)
        Files of the pack and what each holds, for the provenance appendix.
    notes : sequence of str
        Warnings found reading the workbook, for the provenance appendix.
    inline_css : str, optional
        Stylesheet text to inline (the standalone HTML file); None links
        ``pack.css`` (the PDF).

    Returns
    -------
    dict
        Template variables. Every value is plain text or a dataclass of
        plain text: the templates escape all of it.
    """
    views = with_observations(plan, scenario_views(plan, results), uncertainty)
    ensemble = ensemble_context(plan, views, uncertainty)
    d = plan.details
    last_day = plan.date_of(d.horizon_days - 1)
    title = d.title
    measures = [
        {
            "name": item.name,
            "what": measure_what(item),
            "when": measure_when(item.start, item.end),
            "scenarios": "; ".join(
                v.name for v in views if item.name in v.item.scenario.interventions
            ) or "none",
        }
        for item in plan.interventions
    ]
    headline = measures_headline(views)
    return {
        "title": title,
        "page_size": d.page_size,
        "lang": "en",
        "inline_css": inline_css,
        "provenance": provenance_line(plan, version=version, generated=generated),
        "plan": {
            "jurisdiction": d.jurisdiction,
            "title": d.title,
            "prepared_by": d.prepared_by,
            "day0": format_date(d.day0),
            "last_day": format_date(last_day),
            "horizon": format_days(d.horizon_days),
            "population": format_number(plan.population),
            "bands": len(plan.bands),
            "scenarios": len(plan.scenarios),
            "seed": d.seed,
            "draws": f"{d.draws:,}",
            "uses_matrices": plan.contacts.uses_matrices,
            "latent_stages": plan.disease.latent_stages,
            "infectious_stages": plan.disease.infectious_stages,
            "ward_stages": plan.severity.ward_stages,
            "icu_stages": plan.severity.icu_stages,
            "admission_stages": plan.severity.admission_delay_stages,
            "transmissibility_measure": _MEASURE_NAMES.get(
                plan.disease.transmissibility_measure, ""
            ).split(" [")[0],
            "observed_days": len(plan.observed),
        },
        "run": {
            "date": format_date(generated.date()),
            "stamp": generated.astimezone(dt.UTC).strftime("%Y-%m-%d %H:%M:%S UTC"),
            "version": version,
            "input_name": plan.source.path.replace("\\", "/").rsplit("/", 1)[-1],
            "input_sha256": plan.source.sha256,
            "input_count": f"{len(plan.source.inputs):,}",
        },
        "caution": CAUTION_LINE,
        "decisions": DECISIONS_LINE,
        "bottom_line": bottom_line(views),
        "observed_flag": observed_flag(views),
        "deaths_note": DEATHS_NOTE,
        "headline": headline,
        "headline_measures": headline_measures_text(headline) if headline else "",
        "certainty": certainty_sentences(plan, views, ensemble),
        "views": views,
        "comparison": comparison_tables(views, d.day0.year),
        "transmissibility": transmissibility_rows(plan, results),
        "measures": measures,
        "figures": figures,
        "ensemble": ensemble,
        "assumptions": assumption_groups(plan.source.inputs),
        "limitations": limitations(plan, ensemble=ensemble is not None),
        "files": tuple(files),
        "notes": tuple(notes),
    }


# ---- Alternate text of the charts ----------------------------------------------------------------


def demand_alt(view: ScenarioView, observed_days: int = 0) -> str:
    """Alternate text of a scenario's bed-demand chart, written from its data.

    Parameters
    ----------
    view : ScenarioView
        The scenario.
    observed_days : int, optional
        Days of observed figures drawn as points.

    Returns
    -------
    str
        What the chart shows: each panel's peak and date against the
        available (and surge) beds, when demand is above them, and the peak
        without measures.
    """
    parts = [f"Two panels for the scenario {view.name}, ward beds above and ICU beds below."]
    for kind, bed, bed_without in (
        ("ward", view.with_metrics.ward, view.without_metrics.ward),
        ("icu", view.with_metrics.icu, view.without_metrics.icu),
    ):
        title, _ = BED_NOUNS[kind]  # type: ignore[index]
        surge = (
            f" ({format_number(bed.available_beds + bed.surge_beds)} once surge beds open)"
            if bed.surge_beds > 0
            else ""
        )
        text = (
            f"{title} demand with measures peaks at {format_number(bed.peak_demand_beds)} beds "
            f"on {format_date(bed.peak_date)} against {format_number(bed.available_beds)} "
            f"available beds{surge}"
        )
        periods = view.ward_periods if kind == "ward" else view.icu_periods
        if periods:
            text += (
                f"; it is above the available beds, shaded, "
                f"{_when_over(periods, view.last_day)}"
            )
        if view.item.scenario.interventions:
            text += (
                f". Without measures it would peak at "
                f"{format_number(bed_without.peak_demand_beds)} beds on "
                f"{format_date(bed_without.peak_date)}"
            )
        parts.append(text + ".")
    if observed_days:
        parts.append(f"Observed patients on {format_days(observed_days)} are drawn as dots.")
    return " ".join(parts)


def gap_alt(views: Sequence[ScenarioView]) -> str:
    """Alternate text of the capacity-gap timeline.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.

    Returns
    -------
    str
        For each scenario, the days ward and ICU beds run short and from
        when.
    """
    parts = ["Timeline of the days on which beds run short, one strip per scenario and bed type."]
    for view in views:
        pieces = []
        for kind, bed in (("ward", view.with_metrics.ward), ("icu", view.with_metrics.icu)):
            _, noun = BED_NOUNS[kind]  # type: ignore[index]
            if bed.days_over_capacity_days:
                pieces.append(
                    f"{noun} beds short on {format_days(bed.days_over_capacity_days)} from "
                    f"{format_date(bed.first_over_capacity_date)} "
                    f"({format_days(bed.days_over_capacity_with_surge_days)} with surge beds)"
                )
        body = "; ".join(pieces) if pieces else "no days short"
        parts.append(f"{view.name}: {body}.")
    return " ".join(parts)


def admissions_alt(views: Sequence[ScenarioView]) -> str:
    """Alternate text of the daily admissions chart.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.

    Returns
    -------
    str
        Each scenario's peak daily admissions and date, with and without
        measures.
    """
    parts = ["Daily hospital admissions, one panel per scenario, with and without measures."]
    for view in views:
        m, w = view.with_metrics, view.without_metrics
        text = (
            f"{view.name}: peak {format_number(m.peak_admissions_per_day)} a day on "
            f"{format_date(m.peak_admissions_date)}"
        )
        if view.item.scenario.interventions:
            text += (
                f" ({format_number(w.peak_admissions_per_day)} on "
                f"{format_date(w.peak_admissions_date)} without measures)"
            )
        parts.append(text + ".")
    return " ".join(parts)


def outcomes_alt(views: Sequence[ScenarioView]) -> str:
    """Alternate text of the total outcomes chart.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.

    Returns
    -------
    str
        Admissions, ICU admissions and deaths by scenario, with and without
        measures.
    """
    parts = [
        "Bar chart of total admissions, ICU admissions and deaths among hospital patients "
        "by scenario."
    ]
    for view in views:
        m, w = view.with_metrics.total, view.without_metrics.total
        parts.append(
            f"{view.name}: {format_number(m.admissions_persons)} admissions, "
            f"{format_number(m.icu_admissions_persons)} ICU admissions and "
            f"{format_number(m.hospital_deaths_persons)} deaths with measures; "
            f"{format_number(w.admissions_persons)}, {format_number(w.icu_admissions_persons)} "
            f"and {format_number(w.hospital_deaths_persons)} without."
        )
    return " ".join(parts)


def absence_alt(views: Sequence[ScenarioView]) -> str:
    """Alternate text of the workforce absence chart.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.

    Returns
    -------
    str
        Each scenario's peak share of workers absent and its date.
    """
    parts = ["Share of workers absent each day, one line per scenario, with measures."]
    for view in views:
        m = view.with_metrics
        parts.append(
            f"{view.name}: peak {format_percent(m.peak_absence_share)} on "
            f"{format_date(m.peak_absence_date)}."
        )
    return " ".join(parts)


# ---- Limitations ---------------------------------------------------------------------------------

#: Population below which chance events dominate a local outbreak [persons]
#: (a judgement for the wording, no source).
SMALL_POPULATION = 20_000


def _range_text(low: float, high: float, unit: str = "", digits: int = 1) -> str:
    return f"{low:.{digits}f} to {high:.{digits}f}{unit}"


def limitations(plan: Plan, *, ensemble: bool = False) -> tuple[tuple[str, str], ...]:
    """The limitations and cautions page: (heading, text) pairs.

    Parameters
    ----------
    plan : Plan
        The plan; some points depend on its size and inputs.
    ensemble : bool, optional
        True when uncertainty ranges were computed.

    Returns
    -------
    tuple of (str, str)
        Plain-language points, the general ones first.
    """
    d = plan.disease
    points: list[tuple[str, str]] = [
        (
            "A planning aid, not a forecast",
            "The pack shows what would follow if the assumptions in the planning workbook held. "
            "It does not predict what will happen, and its dates and numbers should not be "
            "quoted as predictions.",
        ),
        (
            "Who decides",
            "Decisions on measures, hospital surge and clinical care rest with the local health "
            "authority and with licensed clinical practice. This pack informs those decisions; "
            "it does not make them.",
        ),
    ]
    main = []
    if d.r0 is not None and not d.r0.is_point:
        main.append(f"how fast the disease spreads (R0 from {_range_text(d.r0.low, d.r0.high)})")
    elif d.doubling_time_days is not None and not d.doubling_time_days.is_point:
        dt_ = d.doubling_time_days
        main.append(
            f"how fast the disease spreads (doubling time {_range_text(dt_.low, dt_.high)} days)"
        )
    else:
        main.append("how fast the disease spreads")
    main += [
        "how many infected people need a hospital bed, and for how long",
        "how many beds other patients need at the same time",
        "how closely people follow the measures",
    ]
    points.append(
        (
            "The main uncertainties",
            "The results depend most on " + ", ".join(main[:-1]) + " and " + main[-1] + ". "
            + (
                "The uncertainty ranges sample these from the workbook's Low to High values."
                if ensemble
                else "The scenarios show a few combinations of these; they do not bracket every "
                "plausible outcome."
            ),
        )
    )
    points.append(
        (
            "What the model leaves out",
            "People within an age band are treated alike and mix at random; immunity does not "
            "wane within the period; nobody transmits before symptoms start; people in hospital "
            "do not transmit; the population does not change; and hospitals elsewhere are "
            "assumed to take the share of patients stated in the workbook.",
        )
    )
    if plan.population < SMALL_POPULATION:
        points.append(
            (
                "Chance in a small population",
                f"With {format_number(plan.population)} residents, chance events matter: a real "
                "outbreak may die out early, arrive later, or peak higher than these smooth "
                "averages. Bed figures below one or two are averages, not predictions of single "
                "patients.",
            )
        )
    if plan.observed:
        points.append(
            (
                "Observed figures",
                f"The {format_days(len(plan.observed))} of observed hospital figures are drawn "
                "beside the model curves for comparison only; the model is not fitted to them.",
            )
        )
    return tuple(points)


# ---- The uncertainty ensemble --------------------------------------------------------------------


def chance_phrase(share: float) -> str:
    """A probability as a count of plausible futures, to read "in ... plausible futures".

    Parameters
    ----------
    share : float
        Share of draws [fraction].

    Returns
    -------
    str
        ``none of the``, ``fewer than 1 in 10``, ``7 of 10``, ``more than 9
        of 10`` or ``all``.
    """
    if not math.isfinite(share) or share <= 0.0:
        return "none of the"
    if share >= 1.0:
        return "all"
    if share < 0.05:
        return "fewer than 1 in 10"
    if share > 0.95:
        return "more than 9 of 10"
    return f"{round(10 * share)} of 10"


def chance_cell(share: float) -> str:
    """:func:`chance_phrase` for a table cell: ``none``, ``7 of 10``, ``all``."""
    phrase = chance_phrase(share)
    return "none" if phrase == "none of the" else phrase


def likely_period(probability: pd.Series, threshold: float = 0.5) -> Period | None:
    """First run of days on which a daily probability is at least ``threshold``.

    Parameters
    ----------
    probability : pandas.Series
        Daily share of draws [fraction] indexed by date.
    threshold : float, optional
        Share to reach [fraction].

    Returns
    -------
    Period or None
        From the first to the last day of the first such run.
    """
    runs = periods_over(probability, threshold - 1e-12)
    return runs[0] if runs else None


def _spread_cells(central: float, row: Any, q_low: str, q_mid: str, q_high: str) -> tuple[
    str, str, str
]:
    """Central run, median and range of one quantity, formatted alike [beds or bed-days]."""
    return (
        format_number(central),
        format_number(float(row[q_mid])),
        f"{format_number(float(row[q_low]))} to {format_number(float(row[q_high]))}",
    )


#: Said where the central run's figures meet the ensemble's (uncertainty page).
HEADLINE_POLICY = (
    "Every figure outside this section comes from the central run: one run of each scenario "
    "at its own transmissibility and severity levels, with every other input at its Central "
    "value. The table below puts that run beside the median and the range of the {draws} "
    "runs. The two need not agree: the runs draw each input from around its level (a High "
    "level from Central to High), and outcomes do not respond evenly to the inputs, so the "
    "middle of the runs can sit above or below the central run."
)


def scenario_ensemble(uncertainty: Any, name: str) -> Any | None:
    """The ensemble of scenario ``name`` (a ScenarioUncertainty), or None when it has none."""
    for item in getattr(uncertainty, "scenarios", ()):
        if item.scenario == name:
            return item
    return None


def band_columns(quantiles: Sequence[float]) -> tuple[str, str, str]:
    """Suffixes of the lower band, median and upper band columns, e.g. ``("q05", "q50", "q95")``."""
    return quantile_label(min(quantiles)), quantile_label(0.5), quantile_label(max(quantiles))


def _exceedance_sentence(view: ScenarioView, result: Any) -> str:
    any_day = result.exceedance_any_day
    icu = float(any_day.loc["icu", "any_day_probability"])
    ward = float(any_day.loc["ward", "any_day_probability"])
    text = (
        f"In {chance_phrase(icu)} plausible futures of {quoted(view.name)}, ICU demand exceeds "
        f"the available beds at some point"
    )
    window = likely_period(result.exceedance["icu_exceedance_probability"])
    if window is not None:
        text += (
            f", most likely from {format_date(window.start)} (more likely than not until "
            f"{format_date(window.end)})"
        )
    elif icu > 0.0:
        text += ", though on no single day is that more likely than not"
    return text + f". Ward beds run short in {chance_phrase(ward)} plausible futures."


def ensemble_context(
    plan: Plan, views: Sequence[ScenarioView], uncertainty: Any
) -> dict[str, Any] | None:
    """Words and table rows from the uncertainty ensemble.

    Parameters
    ----------
    plan : Plan
        The plan.
    views : sequence of ScenarioView
        Every scenario.
    uncertainty : prepkit.uncertainty.results.UncertaintyResults or None
        The ensemble; None or an empty one gives None.

    Returns
    -------
    dict or None
        ``sentences`` (leader page), ``intro``, ``rows`` (table),
        ``drivers`` (what matters most), ``method`` (appendix),
        ``references``, ``draws``, ``range_words``, ``focus`` (scenario
        of the tornado chart).
    """
    if uncertainty is None or not getattr(uncertainty, "scenarios", ()):
        return None
    q_low, q_mid, q_high = band_columns(uncertainty.quantiles)
    share = max(uncertainty.quantiles) - min(uncertainty.quantiles)
    range_words = f"{round(10 * share)} of 10"
    draws = int(uncertainty.draws)
    short = [v for v in views if v.short_of_beds]
    focus = max(short, key=lambda v: v.unmet_bed_days) if short else (views[0] if views else None)
    sentences = [
        f"Each scenario was also run {draws:,} times, each time drawing the uncertain inputs "
        "from the workbook's Low to High ranges."
    ]
    if focus is not None:
        result = scenario_ensemble(uncertainty, focus.name)
        if result is not None:
            sentences.append(_exceedance_sentence(focus, result.with_interventions))
            peak = result.with_interventions.summary.loc["peak_icu_demand_beds"]
            sentences.append(
                f"Its ICU peak lies between {format_number(float(peak[q_low]), words=True)} and "
                f"{format_number(float(peak[q_high]), words=True)} beds in {range_words} "
                "futures (the central run quoted elsewhere in this pack: "
                f"{format_number(focus.with_metrics.icu.peak_demand_beds, words=True)})."
            )
    chances = []
    rows = []
    spread = []
    for view in views:
        result = scenario_ensemble(uncertainty, view.name)
        if result is None:
            continue
        e = result.with_interventions
        any_day = e.exceedance_any_day
        s = e.summary
        dates = e.peak_dates
        chances.append(
            f"{quoted(view.name)} {chance_cell(float(any_day.loc['icu', 'any_day_probability']))}"
        )
        ward_peak_dates = dates.loc["ward_demand"]
        rows.append(
            TableRow(
                label=view.name,
                cells=(
                    chance_cell(float(any_day.loc["ward", "any_day_probability"])),
                    chance_cell(float(any_day.loc["icu", "any_day_probability"])),
                    (
                        f"{format_date(as_date(ward_peak_dates[q_low]), year=False)} to "
                        f"{format_date(as_date(ward_peak_dates[q_high]), year=False)}"
                        if ward_peak_dates[q_low] is not None
                        else "–"
                    ),
                ),
            )
        )
        m = view.with_metrics
        spread.append(
            TableRow(
                label=view.name,
                cells=(
                    *_spread_cells(m.ward.peak_demand_beds, s.loc["peak_ward_demand_beds"],
                                   q_low, q_mid, q_high),
                    *_spread_cells(m.icu.peak_demand_beds, s.loc["peak_icu_demand_beds"],
                                   q_low, q_mid, q_high),
                    *_spread_cells(view.unmet_bed_days, s.loc["total_unmet_bed_days"],
                                   q_low, q_mid, q_high),
                ),
            )
        )
    if len(chances) > 1:
        sentences.append(
            "Plausible futures in which ICU beds run short at some point, with measures: "
            + "; ".join(chances) + "."
        )
    drivers = ""
    if focus is not None:
        result = scenario_ensemble(uncertainty, focus.name)
        if result is not None:
            drivers = drivers_sentence(focus.name, result.with_interventions.tornado_peak_icu)
    intro = (
        f"Each scenario was run {draws:,} times. Every run draws each uncertain input (how fast "
        "the disease spreads, the latent and infectious periods, who needs a hospital or ICU "
        "bed and for how long, how well the measures are followed, how well the vaccine "
        "protects) from the Low to High range given in the workbook, most often near the "
        "Central value. The spread of the results shows how much the figures depend on those "
        "inputs.",
        "It does not cover everything that could happen: inputs given as a single value stay "
        "fixed, and every run uses the same model. Read the ranges as the consequences of the "
        "workbook's ranges, not as odds of what will happen.",
    )
    method = (
        f"Each scenario is run {draws:,} times with and without its measures, using the same "
        f"draws for every scenario (random seed {uncertainty.seed}). Each uncertain input is "
        "drawn from a beta-PERT distribution over its range with the Central value as the most "
        "likely (Malcolm, Roseboom, Clark & Fazar 1959); the draws are spread evenly over "
        "every input's range by Latin hypercube sampling (McKay, Beckman & Conover 1979). "
        "Transmissibility and the admission and ICU shares are drawn around the scenario's "
        "own level; the other inputs over their whole range. Inputs given per age band move "
        "together: a draw with long ICU stays has long stays in every band.",
        f"Ranges in this pack run from the {round(100 * min(uncertainty.quantiles))}th to the "
        f"{round(100 * max(uncertainty.quantiles))}th percentile of the draws, shown beside "
        "the median and the central run. The chance of running short is the share of draws in "
        "which demand is above the available beds on at least one day. The sensitivity chart "
        "moves one input at a time to each end of its range while the others stay at their "
        "most likely values.",
    )
    references = (
        "Malcolm DG, Roseboom JH, Clark CE, Fazar W (1959). Application of a technique for "
        "research and development program evaluation. Operations Research 7:646–669.",
        "McKay MD, Beckman RJ, Conover WJ (1979). A comparison of three methods for selecting "
        "values of input variables in the analysis of output from a computer code. "
        "Technometrics 21:239–245.",
    )
    return {
        "draws": f"{draws:,}",
        "sentences": tuple(sentences),
        "intro": intro,
        "rows": tuple(rows),
        "spread_rows": tuple(spread),
        "headline_policy": HEADLINE_POLICY.format(draws=f"{draws:,}"),
        "drivers": drivers,
        "method": method,
        "references": references,
        "range_words": range_words,
        "focus": focus.name if focus is not None else "",
        "low_pct": round(100 * min(uncertainty.quantiles)),
        "high_pct": round(100 * max(uncertainty.quantiles)),
    }


def as_date(value: Any) -> dt.date | None:
    """A date from a table cell: pandas timestamps and dates as dates, missing as None."""
    if value is None:
        return None
    try:
        if pd.isna(value):
            return None
    except (TypeError, ValueError):
        pass
    return pd.Timestamp(value).date()


def drivers_sentence(name: str, tornado: pd.DataFrame, top: int = 3) -> str:
    """Which inputs move the ICU peak most, from a one-at-a-time sensitivity table.

    Parameters
    ----------
    name : str
        Scenario name.
    tornado : pandas.DataFrame
        ``tornado_peak_icu`` of the ensemble (largest swing first).
    top : int, optional
        How many inputs to name.

    Returns
    -------
    str
        E.g. "In “Central figures, three measures” the ICU peak depends most on R0 (22
        to 117 beds across its range), then ..."; ``""`` when no input moves
        it.
    """
    rows = tornado[tornado["swing_beds"] > 0.5].head(top)
    if rows.empty:
        return ""
    parts = []
    for i, (_, row) in enumerate(rows.iterrows()):
        low = format_number(float(row["peak_icu_demand_at_low_beds"]))
        high = format_number(float(row["peak_icu_demand_at_high_beds"]))
        label = lower_first(str(row["label"]))
        if i == 0:
            parts.append(
                f"{label}: {low} beds with it at the low end of its range, {high} at the high end"
            )
        else:
            parts.append(f"{label} ({low} and {high})")
    text = f"In {quoted(name)} the ICU peak depends most on {parts[0]}"
    if len(parts) > 1:
        text += "; then on " + " and ".join(parts[1:])
    return text + "."


def bands_alt(views: Sequence[ScenarioView], uncertainty: Any) -> str:
    """Alternate text of the uncertainty-band chart.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.
    uncertainty : prepkit.uncertainty.results.UncertaintyResults
        The ensemble.

    Returns
    -------
    str
        For each scenario, the range of the ward and ICU peaks.
    """
    q_low, q_mid, q_high = band_columns(uncertainty.quantiles)
    low, high = round(100 * min(uncertainty.quantiles)), round(100 * max(uncertainty.quantiles))
    parts = [
        f"Ward and ICU demand with measures: the middle line is the median of "
        f"{int(uncertainty.draws):,} plausible futures, the band runs from the {low}th to the "
        f"{high}th percentile."
    ]
    for view in views:
        result = scenario_ensemble(uncertainty, view.name)
        if result is None:
            continue
        s = result.with_interventions.summary
        texts = []
        for kind in ("ward", "icu"):
            central, median, spread = _spread_cells(
                getattr(view.with_metrics, kind).peak_demand_beds,
                s.loc[f"peak_{kind}_demand_beds"], q_low, q_mid, q_high,
            )
            texts.append(
                f"{BED_NOUNS[kind][1]} peak {spread} beds (median {median}, central run {central})"
            )
        parts.append(f"{view.name}: {'; '.join(texts)}.")
    return " ".join(parts)


def exceedance_alt(views: Sequence[ScenarioView], uncertainty: Any) -> str:
    """Alternate text of the daily exceedance-probability chart.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.
    uncertainty : prepkit.uncertainty.results.UncertaintyResults
        The ensemble.

    Returns
    -------
    str
        For each scenario, the highest daily chance that ward and ICU beds
        run short, and when.
    """
    parts = ["Share of plausible futures in which demand is above the available beds, each day."]
    for view in views:
        result = scenario_ensemble(uncertainty, view.name)
        if result is None:
            continue
        e = result.with_interventions.exceedance
        pieces = []
        for kind, column in (("ward", "ward_exceedance_probability"),
                             ("ICU", "icu_exceedance_probability")):
            series = e[column]
            top = float(series.max()) if len(series) else 0.0
            when = format_date(pd.Timestamp(series.idxmax()).date()) if top > 0 else "no day"
            pieces.append(f"{kind} highest {format_percent(top)} on {when}")
        parts.append(f"{view.name}: " + ", ".join(pieces) + ".")
    return " ".join(parts)


def peak_dates_alt(views: Sequence[ScenarioView], uncertainty: Any) -> str:
    """Alternate text of the peak-date chart.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.
    uncertainty : prepkit.uncertainty.results.UncertaintyResults
        The ensemble.

    Returns
    -------
    str
        For each scenario, the range and median of the ICU peak date.
    """
    q_low, q_mid, q_high = band_columns(uncertainty.quantiles)
    parts = ["When ICU demand peaks across the plausible futures, with measures, by week."]
    for view in views:
        result = scenario_ensemble(uncertainty, view.name)
        if result is None:
            continue
        row = result.with_interventions.peak_dates.loc["icu_demand"]
        low, mid, high = (as_date(row[q]) for q in (q_low, q_mid, q_high))
        if mid is None:
            parts.append(f"{view.name}: no ICU demand.")
            continue
        parts.append(
            f"{view.name}: between {format_date(low)} and {format_date(high)}, median "
            f"{format_date(mid)}."
        )
    return " ".join(parts)


def tornado_alt(name: str, tornado: pd.DataFrame, top: int) -> str:
    """Alternate text of the sensitivity (tornado) chart.

    Parameters
    ----------
    name : str
        Scenario name.
    tornado : pandas.DataFrame
        ``tornado_peak_icu`` of its ensemble with measures.
    top : int
        How many inputs the chart shows.

    Returns
    -------
    str
        The inputs in order of their effect on the ICU peak, with the peak at
        each end of their range.
    """
    rows = tornado.head(top)
    base = float(rows["peak_icu_demand_baseline_beds"].iloc[0]) if len(rows) else 0.0
    parts = [
        f"How the ICU peak of {name} ({format_number(base)} beds at the most likely values) "
        "moves when one input at a time goes to the low or high end of its range, largest "
        "effect first."
    ]
    for _, row in rows.iterrows():
        parts.append(
            f"{row['label']}: {format_number(float(row['peak_icu_demand_at_low_beds']))} at the "
            f"low end, {format_number(float(row['peak_icu_demand_at_high_beds']))} at the high "
            "end."
        )
    return " ".join(parts)
