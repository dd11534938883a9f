"""The step rule's limits and the checks every run and every draw must pass.

Equations in words
------------------
No model equations. Every run (:func:`prepkit.model.kernels.run_days`) and
every ensemble draw (:func:`prepkit.model.kernels.run_draws`) takes its RK4
steps by the rule of :func:`prepkit.model.kernels.advance_day` and keeps a
report of checks made at every day boundary:

* every number finite;
* no compartment below ``-NEGATIVE_TOLERANCE x people at day 0``;
* people (deaths included) within ``DRIFT_TOLERANCE`` (relative) of their
  number at day 0: the model has no births and no migration, and RK4 keeps
  any linear invariant of a linear flow exactly, so only rounding is left;
* no day needing more than ``MAX_RATE_PER_DAY / limit`` steps.

A run or a draw that fails any of them stops with a
:class:`~prepkit.errors.ModelError` (see :mod:`prepkit.model.diagnose`); its
numbers never reach a result.
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import NDArray

from prepkit.model.kernels import (
    REPORT_DRIFT,
    REPORT_FAILED_DAY,
    REPORT_LOWEST,
    REPORT_NONFINITE,
)

MAX_RATE_PER_DAY = 10_000.0
"""Fastest per-capita outflow the step rule follows [1/day]: a resident leaving a compartment
in under 9 seconds on average. Planning inputs stay far below it (a stage of a tenth of a day
in ten parts is 100 per day); beyond it the inputs contradict one another (for example a
doubling time of half a day with a latent period of weeks, which needs an R0 in the
billions), and a run that meets it stops with a message naming them. It also bounds the
work: at most ``MAX_RATE_PER_DAY / limit`` RK4 steps on a day."""

DRIFT_TOLERANCE = 1e-9
"""Largest change of the number of people (deaths included) over a run, relative to day 0
[fraction]. Measured (tests/test_model_stability.py): rounding alone, about 1e-15 on the
sample plans and below 1e-12 over the hypothesis search of the whole documented range."""

NEGATIVE_TOLERANCE = 1e-9
"""Most negative content of any compartment allowed, relative to the population at day 0
[fraction]. With every (rate x step) at most 1, one RK4 step of a linear flow maps
non-negative states to non-negative states (its stability function
``1 + z + z^2/2 + z^3/6 + z^4/24`` and its derivatives are non-negative on [-1, 0]:
Bolley & Crouzeix 1978, RAIRO Anal. Numer. 12:237; Kraaijevanger 1991, BIT 31:482, from
memory), so only rounding and the change of the force of infection within a step are
left; measured below 1e-12 on the same search."""


def most_substeps(floor: int, limit: float) -> int:
    """Most RK4 steps a day that the step rule may take.

    Parameters
    ----------
    floor : int
        Fewest steps a day.
    limit : float
        Largest (rate x step) [dimensionless]; inf takes ``floor`` steps.

    Returns
    -------
    int
        ``ceil(MAX_RATE_PER_DAY / limit)``, at least ``floor``.
    """
    if floor < 1:
        raise ValueError(f"the fewest RK4 steps a day must be at least 1, found {floor}")
    if not limit > 0.0:
        raise ValueError(f"the largest rate x step must be positive, found {limit}")
    if not math.isfinite(limit):
        return int(floor)
    return max(int(floor), int(math.ceil(MAX_RATE_PER_DAY / limit)))


def failed_check(report: NDArray[np.float64]) -> str | None:
    """The first check a run's report fails, or None.

    Parameters
    ----------
    report : ndarray, shape (REPORT_SIZE,)
        As filled by the kernels.

    Returns
    -------
    {"too_fast", "not_finite", "negative", "drift"} or None
        ``"too_fast"``: a day needed more steps than allowed;
        ``"not_finite"``: a number stopped being finite; ``"negative"``: a
        compartment went below the tolerance; ``"drift"``: the number of
        people changed.
    """
    if report[REPORT_FAILED_DAY] >= 0:
        return "too_fast"
    if report[REPORT_NONFINITE] > 0:
        return "not_finite"
    if not report[REPORT_LOWEST] >= -NEGATIVE_TOLERANCE:
        return "negative"
    if not report[REPORT_DRIFT] <= DRIFT_TOLERANCE:
        return "drift"
    return None


def failed_rows(reports: NDArray[np.float64]) -> NDArray[np.int64]:
    """Rows of a (draws, REPORT_SIZE) array whose draw failed a check, in order."""
    bad = (
        (reports[:, REPORT_FAILED_DAY] >= 0)
        | (reports[:, REPORT_NONFINITE] > 0)
        | ~(reports[:, REPORT_LOWEST] >= -NEGATIVE_TOLERANCE)
        | ~(reports[:, REPORT_DRIFT] <= DRIFT_TOLERANCE)
    )
    return np.flatnonzero(bad).astype(np.int64)
