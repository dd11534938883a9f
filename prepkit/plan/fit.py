"""How the scenarios are fitted to the observed figures (see :mod:`prepkit.fitting`)."""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass, field
from typing import Literal

import numpy as np
from numpy.typing import NDArray

from prepkit.plan.ranges import Range3

__all__ = ["CHANGE_MEASURE", "FEW_FIT_POINTS", "MIN_FIT_POINTS", "FitMethod", "FitSettings",
           "FittedValues"]

FitMethod = Literal["fit", "draw"]

CHANGE_MEASURE = "Fitted change in spread"
"""Name of the measure-table row that carries the fitted change of spread after the change date
(a contacts measure with every setting kept at 0 and compliance ``1 - m``, so that contacts are
multiplied by ``m``)."""

MIN_FIT_POINTS: dict[str, int] = {"daily": 5, "weekly": 3}
"""Fewest rows with admissions worth fitting, by how the figures are kept: fewer cannot tell
the growth of admissions from their level and from chance. A project rule, stated where the
planner enters the figures and in the pack."""

FEW_FIT_POINTS: dict[str, int] = {"daily": 14, "weekly": 4}
"""Below this many rows a fit is made and used, but the pack warns that it rests on few figures
and that its ranges are wide (two weeks of daily figures, four weekly totals: a project rule)."""


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


@dataclass(frozen=True, kw_only=True, eq=False)
class FittedValues:
    """Values of the fitted inputs, one row per parameter set or posterior draw.

    A None column is not fitted: the draws keep their own values of it.

    Attributes
    ----------
    transmissibility : ndarray, shape (rows,) or None
        Value of the plan's transmissibility measure [R0: dimensionless; doubling time:
        days; growth rate: 1/day].
    change_factor : ndarray, shape (rows,) or None
        Spread after the change date relative to before [ratio].
    initial_infections : ndarray, shape (rows,) or None
        Infections at day 0 [persons].
    admitted_share : ndarray, shape (rows, bands) or None
        Admitted share of infections per band [fraction] (before the cut to the
        symptomatic share that every run makes).
    """

    transmissibility: NDArray[np.float64] | None = None
    change_factor: NDArray[np.float64] | None = None
    initial_infections: NDArray[np.float64] | None = None
    admitted_share: NDArray[np.float64] | None = None

    @property
    def rows(self) -> int:
        """Number of rows (0 when nothing is fitted)."""
        for column in (self.transmissibility, self.change_factor, self.initial_infections,
                       self.admitted_share):
            if column is not None:
                return int(column.shape[0])
        return 0

    def take(self, rows: NDArray[np.int64]) -> FittedValues:
        """The chosen rows, in the order of ``rows``."""
        def part(column: NDArray[np.float64] | None) -> NDArray[np.float64] | None:
            return None if column is None else column[rows]
        return FittedValues(transmissibility=part(self.transmissibility),
                            change_factor=part(self.change_factor),
                            initial_infections=part(self.initial_infections),
                            admitted_share=part(self.admitted_share))

    def cycled(self, count: int) -> FittedValues:
        """``count`` rows: row ``i`` is row ``i mod rows``.

        The posterior draws are kept in a random order, so the first ``count``
        of them are a fair sample.
        """
        return self.take(np.arange(count, dtype=np.int64) % max(self.rows, 1))
