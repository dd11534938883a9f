"""Words of the decide-by dates: the leader's "Decisions and dates" table and its notes.

The figures come from :mod:`prepkit.uncertainty.decide` (rules in words
there); this module only says them. Dates are short (``19 Jan``) with the
year given once in the table note; shares of futures are percentages.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from prepkit.plan import Plan
from prepkit.report.words.formatting import (
    format_date,
    format_days,
    format_number,
    format_percent,
    name_list,
)
from prepkit.uncertainty.decide_results import (
    BedLevel,
    DecisionResults,
    ScenarioDecisions,
    SurgeDecision,
)

__all__ = ["DECISION_HEADS", "DETAIL_HEADS", "DecisionWords", "decision_words"]

DECISION_HEADS: tuple[str, ...] = ("Decide on the measures", "Signal to act", "Surge beds")
"""Column heads of the leader's decisions table (after the scenario)."""

DETAIL_HEADS: tuple[str, ...] = ("Measures moved", "With the planned dates", "Decided now",
                                 "Without them")
"""Column heads of the decisions page's table (after the scenario)."""

LEVEL_WORDS: dict[BedLevel, str] = {
    "conventional": "staffed beds",
    "contingency": "beds with surge beds open",
}
"""How each bed level is named."""


@dataclass(frozen=True)
class DecisionWords:
    """The template's decisions table.

    Attributes
    ----------
    rows : tuple of (str, tuple of str)
        Scenario name and its cells, in :data:`DECISION_HEADS` order (the
        decisions page).
    short_rows, short_heads, short_note
        The leader page's table: a few words a cell (the signal column only
        when some scenario has a signal to watch), and its note.
    note : str
        What the table means: the share of futures, the delay, now, the year.
    runs : int
        Ensemble runs the search made [count].
    surge : bool
        Whether the plan has surge beds (the tables then give both bed levels).
    details : tuple of (str, tuple of str)
        Per scenario with measures to move: its name and :data:`DETAIL_HEADS` cells.
    """

    rows: tuple[tuple[str, tuple[str, ...]], ...]
    note: str
    runs: int
    details: tuple[tuple[str, tuple[str, ...]], ...] = ()
    surge: bool = False
    short_rows: tuple[tuple[str, tuple[str, ...]], ...] = ()
    short_heads: tuple[str, ...] = ()
    short_note: str = ""


def _day(plan: Plan, day: int | None) -> str:
    return format_date(None if day is None else plan.date_of(day), year=False)


SIGNAL_MIN_PER_DAY = 1.0
"""Below this 7-day average of new admissions [persons/day] a signal is too small to watch
(chance alone moves it); the pack says to act on the date instead (a project rule)."""


def share_words(value: float) -> str:
    """A share of futures as a percentage that never rounds up to a limit.

    Whole when it is whole, else with one decimal (200 futures give steps of
    0.5%), so that 89.5% is never printed as the 90% a decision needs; never
    rounded to all or none.
    """
    if 0.0 < value < 0.01:
        return "less than 1%"
    if 0.99 < value < 1.0:
        return "more than 99%"
    pct = 100.0 * value
    return f"{round(pct)}%" if abs(pct - round(pct)) < 1e-9 else f"{math.floor(pct * 10) / 10:.1f}%"


def _share(value: float) -> str:
    return f"{share_words(value)} of futures"


def measures_cell(plan: Plan, item: ScenarioDecisions, target: float) -> str:
    """When the scenario's measures must be decided, in words."""
    m = item.measures
    if m.verdict == "no_measures":
        if item.in_force and not item.on_signal:
            return f"Nothing to decide: {name_list(item.in_force)} in force already."
        if item.on_signal and not item.in_force:
            return f"Nothing to date: {name_list(item.on_signal)} start on a signal."
        return "Nothing to decide: no dated measures still to come."
    if m.verdict == "not_needed":
        kept = item.share_never["conventional" if m.level is None else m.level]
        where = LEVEL_WORDS["conventional" if m.level is None else m.level]
        return f"Not needed for beds: {_share(kept)} stay within {where} without them."
    now_share = item.share_now["contingency"]
    if m.verdict == "not_enough":
        return (f"No date is enough: deciding now keeps {_share(now_share)} within beds "
                "with surge beds open.")
    assert m.level is not None and m.latest_decision_day is not None
    where = LEVEL_WORDS[m.level]
    if m.verdict == "too_late":
        now = _share(item.share_now["conventional"]) + " within staffed beds"
        if plan.capacity.surge_ward_beds + plan.capacity.surge_icu_beds > 0:
            now += f", {share_words(item.share_now['contingency'])} with surge beds open"
        return (f"Too late: it had to be by {_day(plan, m.latest_decision_day)} to stay within "
                f"{where}; deciding now keeps {now}.")
    window = (f"between {_day(plan, m.earliest_decision_day)} and "
              if m.earliest_decision_day is not None else "by ")
    text = f"Decide {window}{_day(plan, m.latest_decision_day)}: stays within {where}."
    if m.earliest_decision_day is not None:
        text += " Earlier, the measures end before the wave."
    return text


def measures_short(plan: Plan, item: ScenarioDecisions) -> str:
    """:func:`measures_cell` in a few words, for the leader page."""
    m = item.measures
    surge = plan.capacity.surge_ward_beds + plan.capacity.surge_icu_beds > 0
    if m.verdict == "no_measures":
        return "None left to decide"
    if m.verdict == "not_needed":
        return "Not needed for beds"
    if m.verdict == "not_enough":
        best = item.share_now["contingency" if surge else "conventional"]
        return f"No date is enough (deciding today: {share_words(best)})"
    assert m.latest_decision_day is not None
    level = " with surge beds" if m.level == "contingency" else ""
    if m.verdict == "too_late":
        best = item.share_now["contingency" if surge else "conventional"]
        return (f"Too late: passed {_day(plan, m.latest_decision_day)}{level} "
                f"(deciding today: {share_words(best)})")
    window = ("" if m.earliest_decision_day is None
              else f"{_day(plan, m.earliest_decision_day)} to ")
    return f"{'By ' if not window else ''}{window}{_day(plan, m.latest_decision_day)}{level}"


def signal_short(item: ScenarioDecisions) -> str:
    """:func:`signal_cell` in a few words."""
    m = item.measures
    value = m.signal_admissions_per_day
    if m.verdict != "date" or value is None:
        return "-"
    if value < SIGNAL_MIN_PER_DAY:
        return "Too few to watch"
    shown = format_number(value) if value >= 10 else f"{value:.1f}"
    return f"{shown} a day"


def surge_short(plan: Plan, surge: SurgeDecision) -> str:
    """:func:`surge_cell` in a few words."""
    if surge.verdict == "no_surge_beds":
        return "None in the plan"
    if surge.verdict == "not_needed":
        return "Not needed"
    if surge.verdict == "not_enough":
        return f"Too few (enough in {share_words(surge.share_enough)})"
    if surge.verdict == "too_late":
        return f"Too late: passed {_day(plan, surge.latest_order_day)}"
    return f"Order by {_day(plan, surge.latest_order_day)}"


#: The signal cell when no date works: why there is no level to watch for.
_NO_SIGNAL = {
    "too_late": "None: the date has passed.",
    "not_enough": "None: no date is enough.",
    "not_needed": "None needed.",
    "no_measures": "No dated measures to move.",
}


def signal_cell(plan: Plan, item: ScenarioDecisions) -> str:
    """The 7-day average of new admissions at which to act, in words."""
    m = item.measures
    if m.verdict != "date":
        return _NO_SIGNAL.get(m.verdict, "None.")
    value = m.signal_admissions_per_day
    if value is None or value < SIGNAL_MIN_PER_DAY:
        return "Too few admissions to watch: act on the date."
    shown = format_number(value) if value >= 10 else f"{value:.1f}"
    text = f"When the 7-day average of new admissions reaches {shown} a day"
    if m.earliest_decision_day is not None:
        text += f", but not before {_day(plan, m.earliest_decision_day)}"
    return text + "."


def surge_cell(plan: Plan, surge: SurgeDecision) -> str:
    """By when surge beds must be ordered (with the measures as planned), in words."""
    if surge.verdict == "no_surge_beds":
        return "None in the plan."
    if surge.verdict == "not_needed":
        return "Not needed with the measures as planned."
    if surge.verdict == "not_enough":
        return f"Too few: enough in {_share(surge.share_enough)}."
    assert surge.latest_order_day is not None
    if surge.verdict == "too_late":
        return (f"Too late: had to be ordered by {_day(plan, surge.latest_order_day)} "
                f"({format_days(surge.lead_days)} to open).")
    return (f"Order by {_day(plan, surge.latest_order_day)} "
            f"({format_days(surge.lead_days)} to open).")


def decision_words(plan: Plan, decisions: DecisionResults | None) -> DecisionWords | None:
    """The leader's decisions table, or None when no search was made."""
    if decisions is None or not decisions.scenarios:
        return None
    target = decisions.target_share
    rows = tuple(
        (item.scenario, (measures_cell(plan, item, target), signal_cell(plan, item),
                         surge_cell(plan, item.surge)))
        for item in decisions.scenarios
    )
    now = format_date(plan.date_of(decisions.now_day))
    since = "the last local figures" if plan.observed else "day 0"
    note = (
        f"Latest dates, from {now} ({since}), that keep ward and ICU demand within the beds in "
        f"at least {format_percent(target)} of the plausible futures; each decision takes "
        f"effect {format_days(decisions.delay_days)} later. Dated measures still to come move "
        "together; surge beds are ordered with the measures as planned. Found by trying start "
        f"dates on the same {decisions.draws:,} futures each ({decisions.runs:,} runs in all), "
        "so its shares can differ by a few points from the other tables."
    )
    watch = any(signal_short(item) not in ("-", "Too few to watch")
                for item in decisions.scenarios)
    short_rows = tuple(
        (item.scenario, (measures_short(plan, item),
                         *((signal_short(item),) if watch else ()),
                         surge_short(plan, item.surge)))
        for item in decisions.scenarios
    )
    short_heads = ("Decide on the measures still to come",
                   *(("Act at a 7-day average of new admissions",) if watch else ()),
                   "Order surge beds")
    surge = plan.capacity.surge_ward_beds + plan.capacity.surge_icu_beds > 0
    short_note = (
        f"Latest dates from {now} keeping ward and ICU demand within staffed beds (or as said) "
        f"in {format_percent(target)} of plausible futures, decisions taking effect "
        f"{format_days(decisions.delay_days)} later; deciding today: the share of futures a "
        f"decision today keeps within beds{' with the surge beds' if surge else ''}. Details "
        "follow this page."
    )
    return DecisionWords(rows=rows, note=note, runs=decisions.runs,
                         short_rows=short_rows, short_heads=short_heads, short_note=short_note,
                         surge=surge,
                         details=tuple((item.scenario, detail_cells(plan, item))
                                       for item in decisions.scenarios if item.moved))


def _pair(shares: dict[BedLevel, float], surge: bool) -> str:
    text = share_words(shares["conventional"])
    return text + (f" ({share_words(shares['contingency'])})" if surge else "")


def detail_cells(plan: Plan, item: ScenarioDecisions) -> tuple[str, ...]:
    """Measures moved; the chance of staying within beds as planned, decided now, without them."""
    surge = plan.capacity.surge_ward_beds + plan.capacity.surge_icu_beds > 0
    planned = _pair(item.share_as_planned, surge)
    if item.planned_decision_day is not None:
        planned += f", decided {_day(plan, item.planned_decision_day)}"
    return (name_list(item.moved), planned, _pair(item.share_now, surge),
            _pair(item.share_never, surge))
