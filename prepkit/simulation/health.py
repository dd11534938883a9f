"""The step rule's limits and the checks every run and every draw must pass.

Equations in words
------------------
No model equations. Every run (:func:`prepkit.simulation.kernels.run_days`) and
every ensemble draw (:func:`prepkit.simulation.kernels.run_draws`) takes its RK4
steps by the rule of :func:`prepkit.simulation.step_rule.advance_day` and keeps a
report of checks made at every day boundary:

* every number finite;
* no compartment below ``-NEGATIVE_TOLERANCE x people at day 0``;
* people (deaths included) within ``DRIFT_TOLERANCE`` (relative) of their
  number at day 0: the model has no births and no migration, and RK4 keeps
  any linear invariant of a linear flow exactly, so only rounding is left;
* no day needing more than ``MAX_RATE_PER_DAY / limit`` steps (the smaller
  limit of the step rule).

A run or a draw that fails any of them stops with a
:class:`~prepkit.errors.ModelError` (see :mod:`prepkit.simulation.diagnose`); its
numbers never reach a result.
"""

from __future__ import annotations

import math
from collections.abc import Callable

import numpy as np
from numpy.typing import NDArray

from prepkit.simulation.run_checks import (
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
[fraction]. Measured (tests/simulation/test_model_stability.py): rounding alone, about 1e-15 on the
sample plans and below 1e-12 over the hypothesis search of the whole documented range."""

NEGATIVE_TOLERANCE = 1e-9
"""Most negative content of any compartment allowed, relative to the population at day 0
[fraction]. With every (rate x step) at most 1, one RK4 step of a linear flow maps
non-negative states to non-negative states (its stability function
``1 + z + z^2/2 + z^3/6 + z^4/24`` and its derivatives are non-negative on [-1, 0]:
Bolley & Crouzeix 1978, RAIRO Anal. Numer. 12:237; Kraaijevanger 1991, BIT 31:482, from
memory), so only rounding and the change of the force of infection within a step are
left; measured below 1e-12 on the same search."""


def _residence(rate: NDArray[np.float64], stages: int, x: NDArray[np.float64]
               ) -> NDArray[np.float64]:
    """Time in an Erlang chain discounted by ``exp(-x t)`` [days]."""
    out = np.zeros(np.broadcast(rate, x).shape)
    term = 1.0 / (rate + x)
    ratio = rate / (rate + x)
    for _ in range(stages):
        out = out + term
        term = term * ratio
    return out


def growth_bound(
    measure: str,
    value: NDArray[np.float64] | float,
    latent: tuple[NDArray[np.float64] | float, int],
    infectious: tuple[NDArray[np.float64] | float, int],
    waiting: tuple[float, int],
    amplitude: float,
) -> NDArray[np.float64]:
    """Largest growth rate infections can reach at any time of a run [1/day].

    The growth rate ``r`` solves ``rho(K(r)) = 1`` (Euler-Lotka), where ``K(r)``
    is the next-generation matrix with every residence time discounted by
    ``exp(-r t)``: ``K(r)_ij = K(0)_ij L(r) c_j(r)`` with ``L(r) = (lat / (lat
    + r))^m`` the latent chain and ``c_j(r)`` a mix of the infectious (A, Y) and
    waiting (P) chains' discounted times, so ``c_j(x) / c_j(y)`` is at most the
    largest ratio ``D(x) / D(y)`` of one chain, which is that of the fastest
    chain (the ratio grows with the stage rate). Hence ``rho(K(x)) <= rho(K(y))
    L(x) / L(y) max_chain D(x) / D(y)`` for ``x >= y``, and the growth rate is at
    most the ``x`` where ``(1 + a) rho(K(y))`` times that ratio falls to 1:
    from ``y = 0`` with ``rho = R0``, or from the given growth rate ``y`` with
    ``rho = 1``. ``1 + a`` is the seasonal peak; measures, immunity and
    depletion only lower ``K``. Found by bisection between ``y`` and the
    bound from the latent chain alone.

    Parameters
    ----------
    measure : {"r0", "doubling_time", "growth_rate"}
        What ``value`` is.
    value : float or ndarray
        R0 [dimensionless], doubling time [days] or growth rate [1/day].
    latent, infectious : tuple
        Stage rate [1/day] (float or one per draw) and stage count of the
        latent and infectious chains.
    waiting : tuple
        Fastest onset-to-admission stage rate of any band [1/day] and the
        stage count.
    amplitude : float
        Seasonal amplitude [fraction].

    Returns
    -------
    ndarray
        The bound, at least 0 [1/day].

    References
    ----------
    Wallinga J., Lipsitch M. (2007). How generation intervals shape the
    relationship between growth rates and reproductive numbers. Proc. R.
    Soc. B 274:599-604. doi:10.1098/rspb.2006.3754
    """
    lat = np.asarray(latent[0], dtype=np.float64)
    m = latent[1]
    given = np.asarray(value, dtype=np.float64)
    lat, given = np.broadcast_arrays(lat, given)
    if measure == "r0":
        start = np.zeros(given.shape)
        scale = (1.0 + amplitude) * np.maximum(given, 0.0)
    else:
        start = math.log(2.0) / given if measure == "doubling_time" else given.copy()
        scale = np.full(given.shape, 1.0 + amplitude)
    chains = [
        (np.asarray(infectious[0], dtype=np.float64), infectious[1]),
        (np.asarray(waiting[0], dtype=np.float64), waiting[1]),
    ]

    def excess(x: NDArray[np.float64]) -> NDArray[np.float64]:
        """``(1 + a) rho(K(y))`` times the ratio at ``x``, minus 1."""
        ratio = np.zeros(x.shape)
        for rate, stages in chains:
            ratio = np.maximum(ratio, _residence(rate, stages, x)
                               / _residence(rate, stages, start))
        return np.asarray(scale * ((lat + start) / (lat + x)) ** m * ratio - 1.0)

    high = (lat + start) * scale ** (1.0 / m) - lat  # the latent chain alone
    return _bisect(excess, start.copy(), high)


def _bisect(
    excess: Callable[[NDArray[np.float64]], NDArray[np.float64]],
    low: NDArray[np.float64],
    high: NDArray[np.float64],
) -> NDArray[np.float64]:
    """Upper end, at least 0, after 60 halvings of ``[low, high]`` towards ``excess = 0``."""
    growing = high > low
    high = np.where(growing, high, low)
    for _ in range(60):
        mid = 0.5 * (low + high)
        above = excess(mid) > 0.0
        low = np.where(above, mid, low)
        high = np.where(above, high, mid)
    return np.asarray(np.maximum(high, 0.0), dtype=np.float64)


ACCURACY_TARGET = 1e-3
"""Largest relative error of peak census against the reference the step rule aims at
[fraction] (common practice, no source)."""


def growth_step(population: float, seeds: float) -> float:
    """Largest (growth rate x step) that keeps an exponential rise within half the target.

    One RK4 step multiplies a mode growing at ``r`` by ``R(z) = e^z - z^5 / 120 + ...``
    with ``z = r h``, a relative shortfall of ``z^5 / 120``; over a rise by ``e^G`` that
    takes ``G / z`` steps, ``G z^4 / 120``. Infections rise at most from the day-0 and
    first day's imported infections to the population: ``G = ln(population / seeds)``.
    Where the run ends during the rise, its peak census carries that error, so ``z`` is
    chosen to keep it at ``ACCURACY_TARGET / 2``.

    Parameters
    ----------
    population : float
        Residents [persons].
    seeds : float
        Initial infections plus one day of importations [persons].

    Returns
    -------
    float
        ``(60 ACCURACY_TARGET / G)^(1/4)`` with ``G`` at least 1 [dimensionless].
    """
    rise = math.log(population) - math.log(seeds) if seeds > 0.0 else 1.0
    return float((60.0 * ACCURACY_TARGET / max(rise, 1.0)) ** 0.25)


def most_substeps(floor: int, limit: float) -> int:
    """Most RK4 steps a day that the step rule may take.

    Parameters
    ----------
    floor : int
        Fewest steps a day.
    limit : float
        The smaller largest (rate x step) of the rule [dimensionless]; inf
        takes ``floor`` steps.

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
