"""Typed results of the decide-by search (:mod:`prepkit.uncertainty.decide`)."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

__all__ = [
    "BED_LEVELS",
    "BedLevel",
    "DecisionResults",
    "MeasureDecision",
    "MeasureVerdict",
    "ScenarioDecisions",
    "SearchPoint",
    "SurgeDecision",
    "SurgeVerdict",
]

BedLevel = Literal["conventional", "contingency"]
BED_LEVELS: tuple[BedLevel, ...] = ("conventional", "contingency")

MeasureVerdict = Literal["no_measures", "not_needed", "date", "too_late", "not_enough"]
SurgeVerdict = Literal["no_surge_beds", "not_needed", "date", "too_late", "not_enough"]


@dataclass(frozen=True, kw_only=True)
class SearchPoint:
    """The chance of staying within beds for one searched start.

    Attributes
    ----------
    decision_day : int
        Day of the decision [days since day 0] (start less the delay).
    start_day : int
        Day the first moved measure starts [days since day 0].
    within_share : dict of level -> float
        Share of futures within the beds of each level [fraction].
    """

    decision_day: int
    start_day: int
    within_share: dict[BedLevel, float]


@dataclass(frozen=True, kw_only=True)
class MeasureDecision:
    """By when the moved measures must be decided.

    Attributes
    ----------
    verdict : {"no_measures", "not_needed", "date", "too_late", "not_enough"}
        ``"date"``: deciding by ``latest_decision_day`` keeps the plan's share
        of futures within beds at ``level``; ``"too_late"``: it would have,
        by a day before now; ``"not_enough"``: even starting at day 0 does
        not; ``"not_needed"``: without the moved measures enough futures stay
        within the conventional beds; ``"no_measures"``: nothing to move.
    level : {"conventional", "contingency"} or None
        The bed level the date keeps (for ``"date"`` and ``"too_late"``).
    latest_decision_day : int or None
        Latest decision [days since day 0].
    earliest_decision_day : int or None
        First decision of the same window [days since day 0]: deciding
        earlier keeps fewer futures within beds (the measures end too soon);
        None when the window is open from day 0.
    share_at_latest : float or None
        Share of futures within beds at ``level`` when deciding then [fraction].
    signal_admissions_per_day : float or None
        The 7-day average of new admissions at which to act [persons/day]
        (for ``"date"``).
    """

    verdict: MeasureVerdict
    level: BedLevel | None = None
    latest_decision_day: int | None = None
    earliest_decision_day: int | None = None
    share_at_latest: float | None = None
    signal_admissions_per_day: float | None = None


@dataclass(frozen=True, kw_only=True)
class SurgeDecision:
    """By when surge beds must be ordered, with the measures as planned.

    Attributes
    ----------
    verdict : {"no_surge_beds", "not_needed", "date", "too_late", "not_enough"}
        ``"date"``: ordering by ``latest_order_day`` keeps the plan's share
        of futures within beds; ``"too_late"``: the day has passed;
        ``"not_enough"``: the surge beds are too few in too many futures;
        ``"not_needed"``: enough futures stay within the conventional beds.
    latest_order_day : int or None
        Latest order [days since day 0].
    lead_days : int
        Days from order to usable beds [days].
    share_enough : float
        Share of futures whose demand stays within the contingency beds [fraction].
    """

    verdict: SurgeVerdict
    latest_order_day: int | None
    lead_days: int
    share_enough: float


@dataclass(frozen=True, kw_only=True)
class ScenarioDecisions:
    """The decide-by dates of one scenario.

    Attributes
    ----------
    scenario : str
        Scenario name.
    moved : tuple of str
        Measures the search moves.
    in_force : tuple of str
        The scenario's measures already in force by now (not moved).
    on_signal : tuple of str
        The scenario's measures that start on a signal (not moved).
    planned_decision_day : int or None
        The decision day the planned dates imply [days since day 0].
    measures : MeasureDecision
        When to decide on the moved measures.
    surge : SurgeDecision
        When to order surge beds.
    share_as_planned, share_now, share_never : dict of level -> float
        Share of futures within beds with the planned dates, deciding now,
        and without the moved measures [fraction].
    points : tuple of SearchPoint
        Every evaluated start, in order of the decision day.
    runs : int
        Ensemble runs the search made [count].
    """

    scenario: str
    moved: tuple[str, ...]
    in_force: tuple[str, ...]
    on_signal: tuple[str, ...]
    planned_decision_day: int | None
    measures: MeasureDecision
    surge: SurgeDecision
    share_as_planned: dict[BedLevel, float]
    share_now: dict[BedLevel, float]
    share_never: dict[BedLevel, float]
    points: tuple[SearchPoint, ...]
    runs: int


@dataclass(frozen=True, kw_only=True)
class DecisionResults:
    """The decide-by dates of every scenario of a plan.

    Attributes
    ----------
    now_day : int
        The day decisions are counted from [days since day 0].
    target_share : float
        Share of futures that must stay within beds [fraction].
    delay_days : int
        Days from a decision to the measures' effect, whole [days].
    draws : int
        Futures per evaluated start [count] (1: the central run only).
    scenarios : tuple of ScenarioDecisions
        In plan order.
    """

    now_day: int
    target_share: float
    delay_days: int
    draws: int
    scenarios: tuple[ScenarioDecisions, ...]

    def __getitem__(self, name: str) -> ScenarioDecisions:
        for item in self.scenarios:
            if item.scenario == name:
                return item
        raise KeyError(name)

    @property
    def runs(self) -> int:
        """Ensemble runs of the whole search [count]."""
        return sum(item.runs for item in self.scenarios)
