"""The RK4 day stepper and the step rule that chooses its steps, compiled.

Step rule
---------
Each day is integrated with ``n`` equal classical RK4 steps, ``n`` chosen
afresh every day by :func:`advance_day` (the one rule of single runs and of
every ensemble draw): at least the run's fewest steps, and enough that
``h * q`` (``h = 1 / n`` days) stays within a limit for every rate ``q``
met during the day: the Erlang stage rates within ``limit``; the dynamics
of infection within ``force_limit``: what susceptible and dosed people lose
per capita (the force of infection plus importations per resident and the
dosing or dose-to-protection rate) and the largest growth rate infections
can reach in the run (the positive eigenvalue of the infected subsystem,
bounded by :func:`prepkit.simulation.health.growth_bound`; for it also within
the run's growth step, :func:`prepkit.simulation.health.growth_step`, which
keeps an exponential rise within the accuracy target). On day 0 the
stage rates are held to half the smaller limit and at least
:data:`DAY0_FEWEST_STEPS` steps are taken: the day-0 infections enter the
first latent stage as a pulse, the one sharp transient of a run, and what
reaches a compartment several stages on starts as a high power of time,
which few steps follow poorly (a search over the documented ranges met
1-day runs whose ICU census, a few patients three stages from the pulse,
was 2e-3 off the reference with 1 or 2 steps and 1e-4 with 4). The force of infection is
taken from every RK4 evaluation of the day; a day that met a larger one
than its steps allow is taken again from its start with more steps, up to
the most allowed (:data:`prepkit.simulation.health.MAX_RATE_PER_DAY` over the
smaller limit; a day that needs more fails with a message naming the
inputs). With both limits at most 1 each step of a linear flow keeps every
compartment non-negative (the RK4 polynomial is absolutely monotonic on
[-1, 0], see :mod:`prepkit.simulation.health`) and RK4 keeps the number of
people exactly, up to rounding; every day boundary is checked for both.

Why this rule rather than the alternatives: a bound fixed before the run
(seasonal peak x beta x the largest contact row sum, with the whole
population infectious) is 7 to 140 times the largest force of infection
the sample plans reach, and 2.7 times for a doubling time of half a day
with 5-day periods, and it would hold on every day of the horizon: that
run would take 17 times the steps (20,880 against 1,243 over 240 days),
and the ensemble twice its steps on the samples. Limiting each outflow to
the content of its compartment would change the equations, and the
answer, exactly where the rates are large. Following the rates met costs
one maximum per evaluation, and a second attempt on the few days when the
force of infection rises faster than it did the day before.

"""

from __future__ import annotations

import math

import numpy as np
from numba import njit
from numpy.typing import NDArray

from prepkit.simulation.flows import rhs
from prepkit.simulation.layout import (
    LAY_BANDS,
    N_BAND_FIELDS,
    P_ICU_RATE,
    P_WAIT_RATE,
    P_WARD_RATE,
    S_GROWTH_BOUND,
    S_GROWTH_STEP,
    S_IMPORTS,
    S_INFECTIOUS_RATE,
    S_LATENT_RATE,
    S_PROTECT_RATE,
    S_TOTAL_POP,
)

KERNEL_SOURCES = "f47b452be61925d7"
"""Digest of the sources compiled together (see :data:`prepkit.simulation.kernels.COMPILED`);
tests/simulation/test_kernel_sources.py gives the value after an edit."""

FORCE_GROWTH_MAX = 8.0
"""Largest day-on-day growth of the force of infection assumed when a day's steps are first
chosen (a doubling time of a third of a day); a faster rise only costs a second attempt."""

DAY0_FEWEST_STEPS = 8
"""Fewest RK4 steps on day 0 (see the module's step rule): twice the engine's fewest a day, on
one day of the run."""


@njit(cache=True)
def _larger(top: float, value: float) -> float:
    """``max(top, value)`` that leaves out nan."""
    return value if value > top else top


@njit(cache=True)
def rk4_day(
    y: NDArray[np.float64],
    t0: float,
    pc: NDArray[np.float64],
    pd: NDArray[np.float64],
    lay: NDArray[np.int64],
    substeps: int,
    work: NDArray[np.float64],
    k1_ready: bool = False,
) -> float:
    """Advance ``y`` in place from day ``t0`` to ``t0 + 1`` with classical RK4.

    Parameters
    ----------
    y : ndarray
        State at ``t0``; overwritten with the state at ``t0 + 1``.
    t0 : float
        Start of the day [days].
    pc, pd, lay : ndarray
        Parameter, daily and layout arrays.
    substeps : int
        Equal RK4 steps per day.
    work : ndarray
        Scratch space of shape (6, y.size) or more rows.
    k1_ready : bool
        True when ``work[0]`` already holds the derivative at ``(t0, y)``
        (and ``work[5]`` the force of infection it found): the first
        evaluation is then skipped.

    Returns
    -------
    float
        Largest per-capita force of infection over every evaluation of the
        day [1/day]; evaluations that were not finite are left out.

    References
    ----------
    Kutta W. (1901). Beitrag zur naeherungsweisen Integration totaler
    Differentialgleichungen. Z. Math. Phys. 46:435-453.
    """
    size = y.size
    force_at = 5 * lay[LAY_BANDS]
    h = 1.0 / substeps
    half = 0.5 * h
    sixth = h / 6.0
    k1 = work[0]
    k2 = work[1]
    k3 = work[2]
    k4 = work[3]
    tmp = work[4]
    scratch = work[5]
    top = 0.0
    for step in range(substeps):
        t = t0 + step * h
        if step > 0 or not k1_ready:
            rhs(t, y, pc, pd, lay, k1, scratch)
        top = _larger(top, scratch[force_at])
        for q in range(size):
            tmp[q] = y[q] + half * k1[q]
        rhs(t + half, tmp, pc, pd, lay, k2, scratch)
        top = _larger(top, scratch[force_at])
        for q in range(size):
            tmp[q] = y[q] + half * k2[q]
        rhs(t + half, tmp, pc, pd, lay, k3, scratch)
        top = _larger(top, scratch[force_at])
        for q in range(size):
            tmp[q] = y[q] + h * k3[q]
        rhs(t + h, tmp, pc, pd, lay, k4, scratch)
        top = _larger(top, scratch[force_at])
        for q in range(size):
            y[q] += sixth * (k1[q] + 2.0 * k2[q] + 2.0 * k3[q] + k4[q])
    return top


@njit(cache=True)
def day_rates(
    pc: NDArray[np.float64], pd: NDArray[np.float64], lay: NDArray[np.int64]
) -> tuple[float, float]:
    """The per-capita outflow rates of a day that do not depend on the state.

    Parameters
    ----------
    pc, pd, lay : ndarray
        Parameter, daily and layout arrays.

    Returns
    -------
    stages : float
        Fastest Erlang stage rate: latent, infectious, onset-to-admission,
        ward and ICU stages of every band, and dose-to-protection [1/day].
    extra : float
        What susceptibles or dosed people lose per capita on top of the
        force of infection: importations per resident plus the largest
        dosing rate, or the dose-to-protection rate if larger [1/day].
    """
    nb = lay[LAY_BANDS]
    sc = N_BAND_FIELDS * nb
    protect = pc[sc + S_PROTECT_RATE]
    stages = max(pc[sc + S_LATENT_RATE], pc[sc + S_INFECTIOUS_RATE], protect)
    for field in (P_WAIT_RATE, P_WARD_RATE, P_ICU_RATE):
        for i in range(nb):
            stages = max(stages, pc[field * nb + i])
    dosing = 0.0
    for i in range(nb):
        dosing = max(dosing, pd[nb * nb + nb + i])
    extra = max(pc[sc + S_IMPORTS] / pc[sc + S_TOTAL_POP] + dosing, protect)
    return stages, extra


@njit(cache=True)
def advance_day(
    y: NDArray[np.float64],
    t0: float,
    pc: NDArray[np.float64],
    pd: NDArray[np.float64],
    lay: NDArray[np.int64],
    floor: int,
    limit: float,
    force_limit: float,
    most: int,
    previous_force: float,
    work: NDArray[np.float64],
) -> tuple[int, float, float]:
    """Advance ``y`` by one day with as many RK4 steps as the step rule asks.

    The step rule of this module (the same for single runs and every
    ensemble draw), for the rates actually met: the force of infection is
    read from every RK4 evaluation of the day. ``n`` is first chosen by
    :func:`_first_steps`, and the day is taken again from its start, with
    more steps, when a larger force was met or the state stopped being
    finite.

    Parameters
    ----------
    y : ndarray
        State at ``t0``; overwritten with the state at ``t0 + 1`` (left at
        ``t0`` when the day fails).
    t0 : float
        Start of the day [days].
    pc, pd, lay : ndarray
        Parameter, daily and layout arrays.
    floor, most : int
        Fewest RK4 steps a day, and most (a day that needs more fails).
    limit, force_limit : float
        Largest (rate x step) allowed for the stage rates, and for the
        growth of infections and the losses of susceptible and dosed people
        [dimensionless]; inf (both) takes exactly ``floor`` steps.
    previous_force : float
        Largest per-capita force of infection at the start of the previous
        day [1/day] (0 on day 0).
    work : ndarray
        Scratch space of shape (8, y.size); rows 6 and 7 keep the
        derivative and the state at ``t0`` for a second attempt.

    Returns
    -------
    steps : int
        RK4 steps taken, or -1 when the day would need more than ``most``.
    start_force : float
        Largest per-capita force of infection at ``t0`` [1/day].
    rate : float
        Largest rate met during the last attempt [1/day].
    """
    force_at = 5 * lay[LAY_BANDS]
    rhs(t0, y, pc, pd, lay, work[0], work[5])
    start_force = work[5, force_at]
    stages, extra = day_rates(pc, pd, lay)
    spread = pc[N_BAND_FIELDS * lay[LAY_BANDS] + S_GROWTH_BOUND]
    spread_limit = min(force_limit, pc[N_BAND_FIELDS * lay[LAY_BANDS] + S_GROWTH_STEP])
    fixed = limit == np.inf and force_limit == np.inf
    steps = _first_steps(t0, floor, limit, force_limit, most, fixed, stages,
                         spread / spread_limit, start_force, previous_force, extra)
    if not fixed:
        work[6, :] = work[0]
        work[7, :] = y
    rate = 0.0
    while True:
        top = rk4_day(y, t0, pc, pd, lay, steps, work, True)
        rate = max(stages, spread, top + extra)
        need = max(stages / limit, spread / spread_limit, (top + extra) / force_limit)
        if fixed or (_total_is_finite(y) and need <= steps * (1.0 + 1e-12)):
            return steps, start_force, rate
        y[:] = work[7]
        work[0, :] = work[6]
        work[5, force_at] = start_force
        if steps >= most:
            return -1, start_force, rate
        steps = _more_steps(steps, need, most)


@njit(cache=True)
def _first_steps(
    t0: float,
    floor: int,
    limit: float,
    force_limit: float,
    most: int,
    fixed: bool,
    stages: float,
    spread_need: float,
    start_force: float,
    previous_force: float,
    extra: float,
) -> int:
    """Steps of a day's first attempt.

    At least ``floor``, and enough for the stage rates (``stages``), the
    growth of infections (``spread_need`` steps) and the force of infection
    at the start of the day times its growth since the start of the previous
    day (between 1 and :data:`FORCE_GROWTH_MAX`) with ``extra``. On day 0,
    whose seeding sends a pulse through the stages, the stage rates are held
    to half the smaller limit and at least :data:`DAY0_FEWEST_STEPS` steps
    are taken. ``fixed`` (both limits inf) takes ``floor``.
    """
    stage_limit = limit
    if t0 == 0.0 and not fixed:  # day 0 carries the transient of the seeding
        stage_limit = 0.5 * min(limit, force_limit)
        floor = max(floor, DAY0_FEWEST_STEPS)
    growth = 1.0
    if previous_force > 0.0 and start_force > previous_force:
        growth = min(start_force / previous_force, FORCE_GROWTH_MAX)
    steps = floor
    if not fixed:
        # the day-0 stage limit chooses the first attempt only, so it never fails a day
        need = max(stages / stage_limit, spread_need,
                   (start_force * growth + extra) / force_limit)
        if not need <= most:
            steps = max(floor, most)
        elif need > steps:
            steps = max(floor, int(math.ceil(need)))
    return steps


@njit(cache=True)
def _total_is_finite(y: NDArray[np.float64]) -> bool:
    """True when the sum of the state is finite (no inf or nan anywhere)."""
    total = 0.0
    for q in range(y.size):
        total += y[q]
    return abs(total) < np.inf


@njit(cache=True)
def _more_steps(steps: int, need: float, most: int) -> int:
    """Steps of the next attempt: twice as many, or a quarter more than needed, at most ``most``."""
    wanted = 2 * steps
    if need < np.inf and need > wanted:
        wanted = int(math.ceil(1.25 * need)) if need < most else most
    return min(most, wanted)


