"""The typed planning inputs: frozen, keyword-only dataclasses.

The plan never knows where it came from: :mod:`prepkit.workbook.reader`
translates a workbook into a :class:`Plan`. Inside the plan every share is a
fraction in [0, 1], every time is in days, every count is in persons, and
every date is a :class:`datetime.date`. Per-band values are tuples in the
order of :attr:`Plan.bands`.

Variants of a plan are made with :func:`dataclasses.replace`.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass, field
from typing import Literal

from prepkit.plan.decide import DecideBy
from prepkit.plan.details import REVIEW_AFTER_DAYS, Details
from prepkit.plan.disease import NO_BED_EXTRA_FATALITY, Disease, Severity
from prepkit.plan.fit import FitSettings, FittedValues
from prepkit.plan.ranges import LEVELS, Level, Range3
from prepkit.plan.records import Observation, Source
from prepkit.plan.resources import Capacity, Supplies, Workforce

__all__ = [
    "LEVELS",
    "NO_BED_EXTRA_FATALITY",
    "SETTINGS",
    "AgeBand",
    "Capacity",
    "Contacts",
    "DecideBy",
    "Details",
    "Disease",
    "End",
    "EndKind",
    "FitSettings",
    "FittedValues",
    "Intervention",
    "InterventionKind",
    "Isolation",
    "Level",
    "Observation",
    "Plan",
    "Range3",
    "Scenario",
    "Setting",
    "Severity",
    "Source",
    "Start",
    "StartKind",
    "Vaccination",
    "Supplies",
    "Workforce",
]

Setting = Literal["home", "school", "work", "community"]
SETTINGS: tuple[Setting, ...] = ("home", "school", "work", "community")

InterventionKind = Literal["contacts", "vaccination", "isolation"]
StartKind = Literal["date", "ward_occupancy", "icu_occupancy", "admissions"]
EndKind = Literal["horizon", "date", "duration", "release"]


@dataclass(frozen=True, kw_only=True)
class AgeBand:
    """One age band.

    Attributes
    ----------
    label : str
        Band label as the planner wrote it, e.g. ``"65-74"``.
    lower_age : int
        Lowest age in the band [years], inclusive.
    upper_age : int or None
        Highest age in the band [years], inclusive; None for an open top band.
    people : float
        Residents in the band [persons].
    high_risk_share : float or None
        Share at high clinical risk [fraction], if known.
    """

    label: str
    lower_age: int
    upper_age: int | None
    people: float
    high_risk_share: float | None = None


@dataclass(frozen=True, kw_only=True)
class Contacts:
    """Who meets whom.

    Either ``matrices`` is given (one band x band matrix per setting, entry
    [i][j] = mean daily contacts a person in band i has with people in band
    j) or the simple form is used: ``mean_daily`` per band with
    ``assortativity`` (preferential mixing) and per-band setting shares.

    Attributes
    ----------
    matrices : dict of setting -> tuple of tuples of float, or None
        Mean daily contacts by setting [contacts/person/day].
    mean_daily : tuple of float or None
        Mean daily contacts per band, all settings [contacts/person/day].
    assortativity : float
        Share of contacts kept within one's own band [fraction] (simple form).
    setting_shares : tuple of dict of setting -> float, or None
        Per band, share of contacts made at home, school and work [fraction];
        the rest are community contacts (simple form).
    """

    matrices: dict[Setting, tuple[tuple[float, ...], ...]] | None = None
    mean_daily: tuple[float, ...] | None = None
    assortativity: float = 0.5
    setting_shares: tuple[dict[Setting, float], ...] | None = None

    @property
    def uses_matrices(self) -> bool:
        """True when per-setting matrices were given."""
        return self.matrices is not None


@dataclass(frozen=True, kw_only=True)
class Start:
    """When an intervention starts.

    ``kind="date"`` uses ``date``; the trigger kinds use ``level``: a share
    of available beds [fraction] for occupancy, admissions per day
    [persons/day] for ``"admissions"``.
    """

    kind: StartKind
    date: dt.date | None = None
    level: float | None = None


@dataclass(frozen=True, kw_only=True)
class End:
    """When an intervention ends.

    ``"horizon"`` runs to the end; ``"date"`` uses ``date``; ``"duration"``
    uses ``duration_days`` counted from the start; ``"release"`` (trigger
    starts only) ends when the trigger quantity falls below ``level``.
    """

    kind: EndKind
    date: dt.date | None = None
    duration_days: float | None = None
    level: float | None = None


@dataclass(frozen=True, kw_only=True)
class Vaccination:
    """A vaccination campaign.

    Attributes
    ----------
    doses_per_day : float
        Doses given each day [doses/day] (one dose protects).
    priority : tuple of int
        Band indices in the order they are offered the vaccine.
    uptake_ceiling : float
        Largest share of a band that will be vaccinated [fraction].
    efficacy_infection : Range3
        Reduction in the risk of infection (leaky) [fraction].
    efficacy_severe : Range3
        Reduction in the risk of hospital admission, infection included
        [fraction]; at least ``efficacy_infection``.
    days_to_protection : float
        Mean delay from dose to protection [days].
    """

    doses_per_day: float
    priority: tuple[int, ...]
    uptake_ceiling: float
    efficacy_infection: Range3
    efficacy_severe: Range3
    days_to_protection: float


@dataclass(frozen=True, kw_only=True)
class Isolation:
    """Case isolation.

    Attributes
    ----------
    isolated_share : float
        Share of symptomatic cases isolated [fraction].
    days_from_onset : float
        Days from symptom onset to isolation [days].
    """

    isolated_share: float
    days_from_onset: float


@dataclass(frozen=True, kw_only=True)
class Intervention:
    """One measure.

    Attributes
    ----------
    name : str
        Unique name.
    kind : {"contacts", "vaccination", "isolation"}
        What the measure does.
    start, end : Start, End
        When it applies.
    contacts_kept : dict of setting -> float
        For ``kind="contacts"``: share of contacts kept in each setting
        [fraction]; settings not listed keep all contacts.
    vaccination : Vaccination or None
        For ``kind="vaccination"``.
    isolation : Isolation or None
        For ``kind="isolation"``.
    compliance : Range3
        Share of the full effect achieved [fraction].
    """

    name: str
    kind: InterventionKind
    start: Start
    end: End
    contacts_kept: dict[Setting, float] = field(default_factory=dict)
    vaccination: Vaccination | None = None
    isolation: Isolation | None = None
    compliance: Range3 = field(default_factory=lambda: Range3.point(1.0))


@dataclass(frozen=True, kw_only=True)
class Scenario:
    """A named combination of levels and interventions.

    Each scenario also runs without its interventions for comparison.
    """

    name: str
    transmissibility_level: Level
    severity_level: Level
    interventions: tuple[str, ...]
    description: str = ""


@dataclass(frozen=True, kw_only=True)
class Plan:
    """Everything prepkit needs to run the scenarios of one jurisdiction.

    ``standing`` names measures in force in every variant, with and without the
    scenarios' measures (the fitted change of spread); ``fitted`` holds the
    posterior draws of a plan fitted to its observed figures, which the
    ensemble's draws take (:func:`prepkit.simulation.draw_values.with_fitted`).
    Both are set only by :func:`prepkit.fitting.project.fitted_plan`.
    """

    details: Details
    bands: tuple[AgeBand, ...]
    contacts: Contacts
    disease: Disease
    severity: Severity
    capacity: Capacity
    workforce: Workforce
    interventions: tuple[Intervention, ...]
    scenarios: tuple[Scenario, ...]
    observed: tuple[Observation, ...] = ()
    fit: FitSettings = field(default_factory=FitSettings)
    decide_by: DecideBy = field(default_factory=DecideBy)
    supplies: Supplies = field(default_factory=Supplies)
    standing: tuple[str, ...] = ()
    fitted: FittedValues | None = None
    source: Source = field(default_factory=Source)

    @property
    def population(self) -> float:
        """Total residents [persons]."""
        return float(sum(b.people for b in self.bands))

    def intervention(self, name: str) -> Intervention:
        """Intervention by name (exact match)."""
        for item in self.interventions:
            if item.name == name:
                return item
        raise KeyError(name)

    def scenario(self, name: str) -> Scenario:
        """Scenario by name (exact match)."""
        for item in self.scenarios:
            if item.name == name:
                return item
        raise KeyError(name)

    @property
    def review_date(self) -> dt.date:
        """The date by which these figures must be reviewed.

        The planner's date, or by default
        :data:`~prepkit.plan.details.REVIEW_AFTER_DAYS` after the last observed date (day 0
        when nothing is observed).
        """
        if self.details.review_by is not None:
            return self.details.review_by
        start = max((o.date for o in self.observed), default=self.details.day0)
        return start + dt.timedelta(days=REVIEW_AFTER_DAYS)

    def day_of(self, date: dt.date) -> int:
        """Model day number of a calendar date [days since day 0]."""
        return (date - self.details.day0).days

    def date_of(self, day: float) -> dt.date:
        """Calendar date of a model day (whole days, rounded down)."""
        return self.details.day0 + dt.timedelta(days=int(day // 1))
