"""What every run and every draw reports of itself, and the check at each day boundary.

Equations in words
------------------
No equations: the report array of a run (``REPORT_*`` slots) and
:func:`tally_health`, which updates it at every day boundary (drift of the
number of people, lowest compartment, numbers that are not finite). The
tolerances are in :mod:`prepkit.simulation.health`.
"""

from __future__ import annotations

import numpy as np
from numba import njit
from numpy.typing import NDArray

KERNEL_SOURCES = "f47b452be61925d7"
"""Digest of the sources compiled together (see :data:`prepkit.simulation.kernels.COMPILED`);
tests/simulation/test_kernel_sources.py gives the value after an edit."""

# what run_days and run_draws report of each run (report arrays, float64)
REPORT_DRIFT = 0  # largest |people - people at day 0| / people at day 0 [fraction]
REPORT_LOWEST = 1  # smallest number of people in any compartment / people at day 0 [fraction]
REPORT_NONFINITE = 2  # day boundaries with a number that is not finite [count]
REPORT_FAILED_DAY = 3  # day that needed more than the most steps allowed, -1 when none [days]
REPORT_RATE = 4  # largest per-capita outflow rate met on that day [1/day]
REPORT_STAGES = 5  # fastest stage rate on that day [1/day]
REPORT_EXTRA = 6  # importations + dosing (or protection) per capita on that day [1/day]
REPORT_FORCE = 7  # largest force of infection at a day start over the run [1/day]
REPORT_SIZE = 8


@njit(cache=True)
def tally_health(
    y: NDArray[np.float64], people: int, reference: float, health: NDArray[np.float64]
) -> None:
    """Update the running checks of a run with the state at one day boundary.

    Parameters
    ----------
    y : ndarray
        State.
    people : int
        Number of leading entries that hold people.
    reference : float
        People at day 0 [persons].
    health : ndarray, shape (3,)
        Updated in place: largest ``|sum of people - reference| /
        reference``, smallest entry of people divided by ``reference`` (both
        [fraction]) and the count of boundaries with a non-finite number.
    """
    total = 0.0
    low = np.inf
    for q in range(people):
        total += y[q]
        low = min(low, y[q])
    everything = total
    for q in range(people, y.size):
        everything += y[q]
    if not abs(everything) < np.inf:
        health[2] += 1.0
        return
    health[0] = max(health[0], abs(total - reference) / reference)
    health[1] = min(health[1], low / reference)


@njit(cache=True)
def new_report(report: NDArray[np.float64]) -> None:
    """Set a report array to its start: nothing found yet, no failed day."""
    report[:] = 0.0
    report[REPORT_LOWEST] = np.inf
    report[REPORT_FAILED_DAY] = -1.0


