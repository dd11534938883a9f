"""Observed admissions as model days and counts, and the fewest points worth fitting.

A daily row's admissions are those of its date (model day ``i = date - day
0``, the kernel's admissions during day ``i``); a weekly row's are those of
the 7 days ending on its date (model days ``i - 6`` to ``i``; days before day
0 hold no model admissions). Census rows are kept for the check, not fitted:
a census is a running sum of admissions less discharges, so consecutive
days are strongly autocorrelated and treating them as independent counts
would overstate the evidence.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from prepkit.plan import Plan
from prepkit.plan.fit import MIN_FIT_POINTS
from prepkit.plan.records import DAYS_PER_WEEK

__all__ = ["FitData", "fit_data", "too_few_points"]


@dataclass(frozen=True, kw_only=True, eq=False)
class FitData:
    """The observations a fit uses.

    Attributes
    ----------
    period : {"daily", "weekly"}
        How the rows are kept.
    end_days : ndarray of int64, shape (rows,)
        Model day of each row with admissions (its date less day 0) [days].
    admissions : ndarray, shape (rows,)
        Observed new admissions of each row [persons per day or per week].
    census_days : dict of str to ndarray of int64
        ``"ward"`` and ``"icu"``: model days of the rows with that census [days].
    census : dict of str to ndarray
        The observed census on those days [persons].
    as_of : datetime.date
        The last observed date (of any figure).
    """

    period: str
    end_days: NDArray[np.int64]
    admissions: NDArray[np.float64]
    census_days: dict[str, NDArray[np.int64]]
    census: dict[str, NDArray[np.float64]]
    as_of: dt.date

    @property
    def days_needed(self) -> int:
        """Model days a simulation must cover to compare with every row [days]."""
        last = [int(self.end_days.max())] if self.end_days.size else []
        last += [int(d.max()) for d in self.census_days.values() if d.size]
        return max(last, default=-1) + 1

    @property
    def span_days(self) -> int:
        """Days each admissions row sums: 1 or 7 [days]."""
        return DAYS_PER_WEEK if self.period == "weekly" else 1

    def expected(self, daily: NDArray[np.float64]) -> NDArray[np.float64]:
        """Model admissions of each row from daily model admissions.

        Parameters
        ----------
        daily : ndarray, shape (sets, days)
            Model admissions during each day [persons/day], ``days >=
            days_needed``.

        Returns
        -------
        ndarray, shape (sets, rows)
            Expected admissions of each row [persons per day or per week].
        """
        series = np.asarray(daily, dtype=np.float64)
        cumulative = np.concatenate(
            [np.zeros((series.shape[0], 1)), np.cumsum(series, axis=1)], axis=1)
        ends = self.end_days + 1
        starts = np.maximum(ends - self.span_days, 0)
        return np.asarray(cumulative[:, ends] - cumulative[:, starts], dtype=np.float64)


def fit_data(plan: Plan) -> FitData | None:
    """The plan's observations as a fit uses them; None when nothing is observed."""
    if not plan.observed:
        return None
    day0 = plan.details.day0
    rows = [o for o in plan.observed if o.admissions is not None]
    census_days: dict[str, NDArray[np.int64]] = {}
    census: dict[str, NDArray[np.float64]] = {}
    for kind in ("ward", "icu"):
        kept = [(o.date, getattr(o, f"{kind}_census")) for o in plan.observed
                if getattr(o, f"{kind}_census") is not None]
        census_days[kind] = np.array([(d - day0).days for d, _ in kept], dtype=np.int64)
        census[kind] = np.array([v for _, v in kept], dtype=np.float64)
    return FitData(
        period=plan.details.observed_period,
        end_days=np.array([(o.date - day0).days for o in rows], dtype=np.int64),
        admissions=np.array([o.admissions for o in rows], dtype=np.float64),
        census_days=census_days,
        census=census,
        as_of=max(o.date for o in plan.observed),
    )


def too_few_points(data: FitData | None) -> str | None:
    """Why the observations cannot be fitted, in plain words; None when they can."""
    if data is None:
        return "No observed figures are given, so the scenarios are not fitted to local data."
    needed = MIN_FIT_POINTS[data.period]
    have = int(data.admissions.size)
    if have >= needed:
        return None
    unit = "weeks" if data.period == "weekly" else "days"
    return (f"Only {have} {unit} of observed admissions are given; at least {needed} are needed "
            "to fit the scenarios to local data, so the projections are not fitted.")
