"""Who a plan is for, when it starts, how far it looks (see :mod:`prepkit.plan`)."""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass
from typing import Literal

__all__ = ["REVIEW_AFTER_DAYS", "Details", "ObservedPeriod", "PageSize"]

REVIEW_AFTER_DAYS = 28
"""Default time from day 0, or from the last observed date, to the review date [days]: four
weeks, a project rule (scenarios age quickly once an outbreak is under way)."""


PageSize = Literal["A4", "Letter"]

ObservedPeriod = Literal["daily", "weekly"]


@dataclass(frozen=True, kw_only=True)
class Details:
    """Plan details: who, where, when, how long, how many draws.

    Attributes
    ----------
    jurisdiction : str
        Name of the municipality or county.
    title : str
        Report title.
    prepared_by : str
        Person or team preparing the plan.
    day0 : datetime.date
        Calendar date of model day 0.
    horizon_days : int
        Days simulated after day 0 [days], 1 to 730.
    draws : int
        Uncertainty draws per scenario [count]; 0 turns the ensemble off.
    seed : int
        Random seed for the uncertainty draws.
    page_size : {"A4", "Letter"}
        Paper size of the briefing pack.
    observed_period : {"daily", "weekly"}
        Whether each observed row holds one day's figures or a week's
        totals ending on its date (census figures are on the date either way).
    review_by : datetime.date or None
        The date by which the figures must be checked again, as the planner
        gives it; None for the default (:meth:`prepkit.plan.Plan.review_date`).
    """

    jurisdiction: str
    title: str
    prepared_by: str
    day0: dt.date
    horizon_days: int
    draws: int
    seed: int
    page_size: PageSize
    observed_period: ObservedPeriod = "daily"
    review_by: dt.date | None = None
