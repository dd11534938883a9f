"""How each scenario compares with the hospital figures observed so far.

The model is not fitted to the observations here; this module only measures
how far the latest observed census lies from each scenario, so that the pack
can say so and flag a scenario that the observations already contradict.

The rule, stated once and quoted in the pack (:data:`RULE_TEXT`): on the
latest observed day, a scenario is *consistent* with an observed census when
the count lies inside the scenario's plausible range of demand (the 5th to
95th percentile of the uncertainty ensemble, or the central run alone when no
ensemble was run), allowing for chance in small counts: a count above the
range is still consistent while a Poisson count with the range's upper end as
its mean would reach it at least 5% of the time, and likewise below the range.
Treating a daily census as a Poisson count is a simplification (common
practice, no source).
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Literal

import pandas as pd
from scipy import stats

from prepkit.plan import Plan
from prepkit.plan.records import Observation

__all__ = [
    "RULE_TEXT",
    "TAIL_SHARE",
    "ObservedCheck",
    "consistent_with",
    "latest_observed",
    "observed_checks",
]

BedKind = Literal["ward", "icu"]

#: Smallest tail probability at which an observed count still fits a range [fraction].
TAIL_SHARE = 0.05

#: The rule in words, for the pack.
RULE_TEXT = (
    "A scenario fits the observations when the latest observed ward and ICU patients lie "
    "within its plausible range (the middle 90% of its runs), allowing for chance in small "
    "counts."
)


@dataclass(frozen=True, kw_only=True)
class ObservedCheck:
    """One bed type of one scenario against the latest observed census.

    Attributes
    ----------
    kind : {"ward", "icu"}
        Bed type.
    date : datetime.date
        The latest observed day with this census.
    observed_persons : float
        Observed outbreak patients in these hospitals that day [persons].
    central_beds : float
        The scenario's central run: demand that day [beds].
    low_beds, high_beds : float
        The scenario's plausible range of demand that day [beds]; both equal
        ``central_beds`` when no ensemble was run.
    consistent : bool
        True when the observation fits the range (:func:`consistent_with`).
    """

    kind: BedKind
    date: dt.date
    observed_persons: float
    central_beds: float
    low_beds: float
    high_beds: float
    consistent: bool

    @property
    def above(self) -> bool:
        """True when the observation lies above the scenario's range."""
        return self.observed_persons > self.high_beds


def consistent_with(observed: float, low: float, high: float, tail: float = TAIL_SHARE) -> bool:
    """Whether an observed count fits a range of expected values.

    Parameters
    ----------
    observed : float
        Observed count [persons]; rounded to a whole count.
    low, high : float
        Range of the expected value [persons], ``low <= high``.
    tail : float, optional
        Smallest Poisson tail probability that still fits [fraction].

    Returns
    -------
    bool
        True inside the range; above it, when P(X >= observed) >= tail for
        X ~ Poisson(high); below it, when P(X <= observed) >= tail for
        X ~ Poisson(low).
    """
    count = round(observed)
    if low <= count <= high:
        return True
    if count > high:
        return bool(stats.poisson.sf(count - 1, max(high, 1e-12)) >= tail)
    return bool(stats.poisson.cdf(count, low) >= tail)


def latest_observed(
    observed: Sequence[Observation], kind: BedKind, first: dt.date, last: dt.date
) -> Observation | None:
    """The latest observation with a census of ``kind`` inside the modelled period."""
    field = "ward_census" if kind == "ward" else "icu_census"
    inside = [o for o in observed if first <= o.date <= last and getattr(o, field) is not None]
    return max(inside, key=lambda o: o.date) if inside else None


def observed_checks(
    plan: Plan,
    central_daily: pd.DataFrame,
    ensemble_daily: pd.DataFrame | None = None,
    quantile_columns: tuple[str, str] = ("q05", "q95"),
) -> tuple[ObservedCheck, ...]:
    """Ward and ICU checks of one scenario (with its measures) on the latest observed day.

    Parameters
    ----------
    plan : Plan
        The plan (its observations).
    central_daily : pandas.DataFrame
        The central run's daily series, indexed by date, with
        ``{kind}_demand_beds``.
    ensemble_daily : pandas.DataFrame, optional
        The ensemble's daily bands, indexed by date, with
        ``{kind}_demand_beds_{q}`` for the two quantile columns.
    quantile_columns : tuple of str, optional
        Labels of the range's lower and upper quantiles.

    Returns
    -------
    tuple of ObservedCheck
        Ward then ICU, each only when observed inside the period.
    """
    if not plan.observed or central_daily.empty:
        return ()
    first = pd.Timestamp(central_daily.index[0]).date()
    last = pd.Timestamp(central_daily.index[-1]).date()
    out = []
    kinds: tuple[BedKind, ...] = ("ward", "icu")
    for kind in kinds:
        item = latest_observed(plan.observed, kind, first, last)
        census = None if item is None else (
            item.ward_census if kind == "ward" else item.icu_census
        )
        if item is None or census is None:
            continue
        value = float(census)
        stamp = pd.Timestamp(item.date)
        central = _value(central_daily, stamp, f"{kind}_demand_beds")
        low = high = central
        if ensemble_daily is not None and stamp in ensemble_daily.index:
            low = min(central, _value(ensemble_daily, stamp,
                                      f"{kind}_demand_beds_{quantile_columns[0]}"))
            high = max(central, _value(ensemble_daily, stamp,
                                       f"{kind}_demand_beds_{quantile_columns[1]}"))
        out.append(
            ObservedCheck(
                kind=kind,
                date=item.date,
                observed_persons=value,
                central_beds=central,
                low_beds=low,
                high_beds=high,
                consistent=consistent_with(value, low, high),
            )
        )
    return tuple(out)


def _value(frame: pd.DataFrame, stamp: pd.Timestamp, column: str) -> float:
    """One number of a daily table by date and column."""
    return float(frame[column].to_numpy()[frame.index.get_loc(stamp)])
