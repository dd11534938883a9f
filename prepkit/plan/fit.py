"""How the scenarios are fitted to the observed figures (see :mod:`prepkit.fitting`)."""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass, field
from typing import Literal

from prepkit.plan.ranges import Range3

__all__ = ["MIN_FIT_POINTS", "FitMethod", "FitSettings"]

FitMethod = Literal["fit", "draw"]

MIN_FIT_POINTS: dict[str, int] = {"daily": 10, "weekly": 4}
"""Fewest rows with admissions worth fitting, by how the figures are kept: fewer cannot tell
the growth of admissions from their level and from chance. A project rule, stated where the
planner enters the figures and in the pack."""


@dataclass(frozen=True, kw_only=True)
class FitSettings:
    """What the planner says about fitting to the observed figures.

    Attributes
    ----------
    method : {"fit", "draw"}
        ``"fit"``: fit the scenarios to the observed admissions when there
        are enough of them; ``"draw"``: only draw the figures beside the
        model curves.
    change_date : datetime.date or None
        The day spread changed (measures began, behaviour changed); None
        when it did not change in the observed period.
    change_factor : Range3
        Spread after ``change_date`` relative to before [ratio]: the prior
        range of the fitted change.
    initial_infections_factor : float
        The infections at day 0 may be this many times fewer or more than
        the Disease sheet's figure [ratio]: the log-uniform prior range of
        the fitted size at day 0.
    """

    method: FitMethod = "fit"
    change_date: dt.date | None = None
    change_factor: Range3 = field(default_factory=lambda: Range3.point(1.0))
    initial_infections_factor: float = 10.0
