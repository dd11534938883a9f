"""The rules of the decide-by search, each on a set of futures (:mod:`prepkit.uncertainty.decide`).

Within beds, the 7-day average of admissions, the bisection of a window's
edge, the signal level and the latest order date of surge beds; the search
itself, which runs the ensemble at each start, is in :mod:`prepkit.uncertainty.decide`.
"""

from __future__ import annotations

import math
from collections.abc import Callable

import numpy as np
from numpy.typing import NDArray

from prepkit.metrics.beds import bed_supply, outbreak_demand
from prepkit.plan import Plan
from prepkit.uncertainty.decide_results import BedLevel, SurgeDecision, SurgeVerdict
from prepkit.uncertainty.draws import DrawSeries

__all__ = ["SIGNAL_WINDOW_DAYS", "edge", "seven_day_average", "signal_level", "surge_decision",
           "within_beds"]

SIGNAL_WINDOW_DAYS = 7
"""Days averaged in the admissions signal [days]."""


def seven_day_average(admissions: NDArray[np.floating], window: int = SIGNAL_WINDOW_DAYS
                      ) -> NDArray[np.float64]:
    """Trailing average of daily admissions over ``window`` days [persons/day].

    Day ``t`` averages days ``t - window + 1`` to ``t``; the first days average
    the days there are. Last axis = days.
    """
    values = np.asarray(admissions, dtype=np.float64)
    total = np.cumsum(values, axis=-1)
    lagged = np.zeros_like(total)
    lagged[..., window:] = total[..., :-window]
    count = np.minimum(np.arange(1, values.shape[-1] + 1), window)
    return np.asarray((total - lagged) / count)


def within_beds(plan: Plan, runs: DrawSeries) -> dict[BedLevel, NDArray[np.bool_]]:
    """Per future: outbreak demand never above the beds of each level."""
    beds = bed_supply(plan.capacity)
    catch = plan.capacity.catchment_share
    ward, icu = runs.peaks[:, 0] * catch, runs.peaks[:, 1] * catch
    return {
        "conventional": (ward <= beds["ward"][0]) & (icu <= beds["icu"][0]),
        "contingency": (ward <= sum(beds["ward"])) & (icu <= sum(beds["icu"])),
    }


def edge(ok: Callable[[int], bool], good: int, bad: int) -> int:
    """The good day nearest ``bad`` between a day ``ok`` holds and one it does not (bisection)."""
    while abs(bad - good) > 1:
        middle = (good + bad) // 2
        if ok(middle):
            good = middle
        else:
            bad = middle
    return good


def _latest_share_day(days: NDArray[np.float64], share: float, *, start: int) -> int | None:
    """Latest whole day ``o >= start`` with at least ``share`` of ``days`` at or after it.

    ``days`` are per-future latest days (``inf``: any day will do, ``-inf``:
    no day will). None when even ``start`` keeps too few.
    """
    need = math.ceil(share * days.size - 1e-9)
    ordered = np.sort(days)[::-1]
    best = ordered[need - 1]
    if best < start:
        return None
    return int(min(best, np.iinfo(np.int32).max))


def surge_decision(plan: Plan, runs: DrawSeries, share: float, now: int) -> SurgeDecision:
    """When surge beds must be ordered so that ``share`` of the futures ``runs`` stay in beds."""
    capacity = plan.capacity
    lead = math.ceil(capacity.surge_days_to_open - 1e-9)
    beds = bed_supply(capacity)
    n = runs.peaks.shape[0]
    latest = np.full(n, np.inf)
    enough = np.ones(n, dtype=bool)
    for kind, (available, surge) in beds.items():
        demand = outbreak_demand(runs.get(f"{kind}_census_persons"), capacity)
        over = demand > available
        first = np.where(over.any(axis=1), over.argmax(axis=1), np.iinfo(np.int32).max)
        latest = np.minimum(latest, np.where(over.any(axis=1), first - lead, np.inf))
        enough &= demand.max(axis=1) <= available + surge
    share_enough = float(enough.mean())
    if capacity.surge_ward_beds + capacity.surge_icu_beds == 0:
        return SurgeDecision(verdict="no_surge_beds", latest_order_day=None, lead_days=lead,
                             share_enough=share_enough)
    if np.isinf(latest).mean() >= share - 1e-12:
        return SurgeDecision(verdict="not_needed", latest_order_day=None, lead_days=lead,
                             share_enough=share_enough)
    per_future = np.where(enough, latest, -np.inf)
    if share_enough < share - 1e-12:
        return SurgeDecision(verdict="not_enough", latest_order_day=None, lead_days=lead,
                             share_enough=share_enough)
    day = _latest_share_day(per_future, share, start=-(10**9))
    assert day is not None
    verdict: SurgeVerdict = "date" if day >= now else "too_late"
    return SurgeDecision(verdict=verdict, latest_order_day=day, lead_days=lead,
                         share_enough=share_enough)


def signal_level(within: dict[int, NDArray[np.bool_]], lead: int, average: NDArray[np.float64],
            share: float, now: int) -> float | None:
    """The 7-day average of admissions at which acting keeps ``share`` of futures within beds.

    ``within`` maps each evaluated start to the futures within beds there;
    ``average`` is the 7-day average of each future without the moved
    measures (draws x days).
    """
    n, days = average.shape
    last = np.full(n, -1, dtype=np.int64)
    for start, ok in within.items():
        last = np.where(ok, np.maximum(last, start - lead), last)
    level = np.full(n, -np.inf)
    running = np.maximum.accumulate(average, axis=1)
    reach = last >= now
    level[reach] = running[reach, np.minimum(last[reach], days - 1)]  # never: any day
    need = math.ceil(share * n - 1e-9)
    best = float(np.sort(level)[::-1][need - 1])
    return best if np.isfinite(best) and best > 0.0 else None


# --------------------------------------------------------------------------- one scenario
