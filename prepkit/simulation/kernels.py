"""The day loops: a single run day by day, and many ensemble draws in parallel, compiled.

Equations in words
------------------
The equations are those of :mod:`prepkit.simulation.flows` (the right-hand
side); each day is stepped by :func:`prepkit.simulation.step_rule.advance_day`
after the decisions of :mod:`prepkit.simulation.decisions`, and every day
boundary is checked (:mod:`prepkit.simulation.run_checks`).
:func:`run_days` keeps every state; :func:`run_draws` runs the same loop for
many draws in parallel and keeps only what the ensemble reports.

Numba's cache and the split into modules
----------------------------------------
numba keys the cache of a compiled function on its own source file only (numba
0.68: a hash of the file's text), yet the machine code it keeps holds every
compiled function it calls and every constant it reads. Measured with numba
0.68: a cached function calling a function of another module kept returning
the old result after that module was edited (also after its own file was
touched), and the new one once its own file's text changed. So every module in
:data:`COMPILED` carries :data:`KERNEL_SOURCES`, a digest of all of them
(tests/simulation/test_kernel_sources.py checks it and gives the new value):
an edit to any of them changes every one of their files, and numba compiles
them all again, as when they were one file.
"""

from __future__ import annotations

import numpy as np
from numba import njit, prange
from numpy.typing import NDArray

from prepkit.simulation.decisions import contact_matrix, decide_day, decide_measures
from prepkit.simulation.layout import (
    BLK_C,
    BLK_CUM_ADM,
    BLK_CUM_DOSE,
    BLK_CUM_ICU,
    BLK_CUM_INF,
    BLK_CUM_ONSET,
    BLK_D,
    BLK_ICU_DAYS,
    BLK_W,
    BLK_WARD_DAYS,
    IT_KIND,
    IT_SCHOOL_CLOSURE,
    KIND_CONTACTS,
    LAY_BANDS,
    LAY_ICU,
    LAY_OFFSET,
    LAY_WARD,
    N_SETTINGS,
    STATUS_ACTIVE,
)
from prepkit.simulation.layout import (
    UINT as _U,
)
from prepkit.simulation.run_checks import (
    REPORT_EXTRA,
    REPORT_FAILED_DAY,
    REPORT_FORCE,
    REPORT_RATE,
    REPORT_SIZE,
    REPORT_STAGES,
    new_report,
    tally_health,
)
from prepkit.simulation.step_rule import advance_day, day_rates

KERNEL_SOURCES = "f47b452be61925d7"
"""Digest of the sources compiled together (see :data:`prepkit.simulation.kernels.COMPILED`);
tests/simulation/test_kernel_sources.py gives the value after an edit."""

COMPILED = (
    "layout", "seasonality", "flows", "step_rule", "decisions", "run_checks", "kernels",
)
"""Modules of :mod:`prepkit.simulation` whose code or constants numba compiles together."""


@njit(cache=True)
def run_days(
    y0: NDArray[np.float64],
    pc: NDArray[np.float64],
    lay: NDArray[np.int64],
    itab: NDArray[np.float64],
    iprio: NDArray[np.int64],
    cap: NDArray[np.float64],
    horizon: int,
    floor: int,
    limit: float,
    force_limit: float,
    most: int,
) -> tuple[NDArray[np.float64], NDArray[np.int8], NDArray[np.int64], NDArray[np.float64]]:
    """Simulate ``horizon`` days: decide at each boundary, then step the day.

    Parameters
    ----------
    y0 : ndarray
        State at day 0.
    pc, lay, itab, iprio, cap : ndarray
        Parameter, layout, intervention, priority and capacity arrays.
    horizon : int
        Number of days [days].
    floor, limit, force_limit, most : int, float, float, int
        Fewest RK4 steps a day, largest (rate x step) for stage rates and
        for the dynamics of infection, and most steps a day (the step rule
        of :func:`~prepkit.simulation.step_rule.advance_day`).

    Returns
    -------
    states : ndarray, shape (horizon + 1, size)
        State at each day boundary ``t = 0, 1, ..., horizon``; nan after a
        day that failed.
    active : ndarray of int8, shape (horizon, n_interventions)
        1 where an intervention was active during day ``d``.
    steps : ndarray of int64, shape (horizon,)
        RK4 steps taken on each day (-1 on a day that failed, 0 after it).
    report : ndarray, shape (REPORT_SIZE,)
        The checks of the run (``REPORT_*`` entries).
    """
    size = y0.size
    nb = lay[LAY_BANDS]
    n_int = itab.shape[0]
    people = lay[LAY_OFFSET + BLK_CUM_INF]
    states = np.full((horizon + 1, size), np.nan)
    active = np.zeros((horizon, n_int), dtype=np.int8)
    steps = np.zeros(horizon, dtype=np.int64)
    report = np.empty(REPORT_SIZE)
    new_report(report)
    status = np.zeros(n_int, dtype=np.int64)
    started = np.zeros(n_int)
    pd = np.zeros(nb * nb + 2 * nb + 1)
    work = np.empty((8, size))
    y = y0.copy()
    y_prev = y0.copy()
    reference = 0.0
    for q in range(people):
        reference += y0[q]
    states[0, :] = y
    tally_health(y, people, reference, report)
    force = 0.0
    for day in range(horizon):
        decide_day(day, y, y_prev, pc, lay, itab, iprio, cap, status, started, pd)
        for r in range(n_int):
            if status[r] == STATUS_ACTIVE:
                active[day, r] = 1
        y_prev[:] = y
        taken, force, rate = advance_day(
            y, float(day), pc, pd, lay, floor, limit, force_limit, most, force, work
        )
        report[REPORT_FORCE] = max(report[REPORT_FORCE], force)
        steps[day] = taken
        if taken < 0:
            _record_failure(day, rate, pc, pd, lay, report)
            break
        states[day + 1, :] = y
        tally_health(y, people, reference, report)
    return states, active, steps, report


@njit(cache=True)
def _record_failure(
    day: int,
    rate: float,
    pc: NDArray[np.float64],
    pd: NDArray[np.float64],
    lay: NDArray[np.int64],
    report: NDArray[np.float64],
) -> None:
    stages, extra = day_rates(pc, pd, lay)
    report[REPORT_FAILED_DAY] = day
    report[REPORT_RATE] = rate
    report[REPORT_STAGES] = stages
    report[REPORT_EXTRA] = extra


@njit(parallel=True, cache=True)
def run_draws(
    y0s: NDArray[np.float64], pcs: NDArray[np.float64], lay: NDArray[np.int64],
    itabs: NDArray[np.float64], iprio: NDArray[np.int64], cap: NDArray[np.float64],
    horizon: int, floors: NDArray[np.int64], limit: float, force_limit: float, most: int,
    employed: NDArray[np.float64], series: NDArray[np.float32] | NDArray[np.float64],
    finals: NDArray[np.float64], peaks: NDArray[np.float64], peak_days: NDArray[np.int64],
    steps: NDArray[np.int64], reports: NDArray[np.float64],
) -> None:
    """Simulate many parameter draws in parallel, keeping only what the ensemble reports.

    Each draw runs exactly the loop of :func:`run_days` (the same decisions
    and :func:`~prepkit.simulation.step_rule.advance_day`, so the same step
    rule), on its own flat state; draws are spread over threads with
    ``prange``. The decisions are
    :func:`~prepkit.simulation.decisions.decide_day`'s two parts,
    :func:`~prepkit.simulation.decisions.decide_measures` every day and
    :func:`~prepkit.simulation.decisions.contact_matrix` only on days
    the contact multipliers change (the matrix is the same otherwise), so
    every number equals the single run's. Instead of every state, each draw
    keeps five daily series, its final counters and its peaks.

    Parameters
    ----------
    y0s : ndarray, shape (draws, size)
        State at day 0 of each draw.
    pcs : ndarray, shape (draws, parameters)
        Parameter vector of each draw.
    lay, iprio, cap : ndarray
        Layout, priority and capacity arrays (shared).
    itabs : ndarray, shape (draws, interventions, columns)
        Intervention table of each draw.
    horizon : int
        Number of days [days].
    floors : ndarray of int64, shape (draws,)
        Fewest RK4 steps a day of each draw.
    limit, force_limit, most : float, float, int
        Largest (rate x step) for stage rates and for the dynamics of
        infection, and most steps a day (see :func:`~prepkit.simulation.step_rule.advance_day`).
    employed : ndarray, shape (bands,)
        Employed workers per resident of each band [fraction].
    series : ndarray, shape (5, draws, horizon)
        Output, for each day: ward census and ICU census at the end of the
        day [persons], admissions during the day [persons/day], symptom
        onsets during the day weighted by ``employed`` [persons/day] and the
        school closure intensity of the day [fraction].
    finals : ndarray, shape (draws, 8)
        Output, sums over bands of the final counters: infections, symptom
        onsets, admissions, ICU admissions, deaths [persons], doses
        [doses], ward and ICU bed-days [bed-days].
    peaks : ndarray, shape (draws, 3)
        Output, largest end-of-day ward and ICU census [persons] and largest
        daily admissions [persons/day].
    peak_days : ndarray of int64, shape (draws, 3)
        Output, first day each peak is reached [days since day 0].
    steps : ndarray of int64, shape (draws,)
        Output, the most RK4 steps taken on one day by each draw.
    reports : ndarray, shape (draws, REPORT_SIZE)
        Output, the checks of each draw (``REPORT_*`` entries); a draw whose
        day failed stops there.
    """
    people = lay[LAY_OFFSET + BLK_CUM_INF]
    for d in prange(pcs.shape[0]):
        y = y0s[d].copy()
        reference = 0.0
        for q in range(people):
            reference += y[q]
        steps[d] = _run_draw(d, y, pcs[d], lay, itabs[d], iprio, cap, horizon, floors[d], limit,
                             force_limit, most, employed, series, peaks, peak_days, reports[d],
                             people, reference)
        _final_counters(y, lay, finals[d])


@njit(cache=True)
def _run_draw(
    d: int, y: NDArray[np.float64], pc: NDArray[np.float64], lay: NDArray[np.int64],
    itab: NDArray[np.float64], iprio: NDArray[np.int64], cap: NDArray[np.float64],
    horizon: int, floor: int, limit: float, force_limit: float, most: int,
    employed: NDArray[np.float64], series: NDArray[np.float32] | NDArray[np.float64],
    peaks: NDArray[np.float64], peak_days: NDArray[np.int64], report: NDArray[np.float64],
    people: int, reference: float,
) -> int:
    """Run draw ``d`` from the state ``y`` (overwritten) as :func:`run_draws` describes.

    Returns the most RK4 steps taken on one day.
    """
    size = y.size
    nb = _U(lay[LAY_BANDS])
    n_int = itab.shape[0]
    y_prev = y.copy()
    work = np.empty((8, size))
    new_report(report)
    tally_health(y, people, reference, report)
    force = 0.0
    most_taken = 0
    pd = np.zeros(nb * nb + 2 * nb + 1)
    status = np.zeros(n_int, dtype=np.int64)
    started = np.zeros(n_int)
    multiplier = np.ones(N_SETTINGS)
    built = np.full(N_SETTINGS, np.nan)
    top_w = -1.0
    top_c = -1.0
    top_a = -1.0
    for day in range(horizon):
        # decide_day in two parts: the transmission matrix depends only on the contact
        # multipliers (and this draw's constants), so it is rebuilt only when they change
        decide_measures(day, y, y_prev, pc, lay, itab, iprio, cap, status, started, pd,
                        multiplier)
        changed = False
        for s in range(N_SETTINGS):
            if multiplier[s] != built[s]:
                changed = True
        if changed:
            contact_matrix(pc, lay, multiplier, pd)
            built[:] = multiplier
        closure = 0.0
        for r in range(n_int):
            if status[r] == STATUS_ACTIVE and int(itab[r, IT_KIND]) == KIND_CONTACTS:
                closure = max(closure, itab[r, IT_SCHOOL_CLOSURE])
        y_prev[:] = y
        taken, force, rate = advance_day(
            y, float(day), pc, pd, lay, floor, limit, force_limit, most, force,
            work,
        )
        report[REPORT_FORCE] = max(report[REPORT_FORCE], force)
        if taken < 0:
            _record_failure(day, rate, pc, pd, lay, report)
            break
        most_taken = max(most_taken, taken)
        tally_health(y, people, reference, report)
        ward, icu, admitted = _record_day(d, day, y, y_prev, lay, employed, closure, series)
        if ward > top_w:
            top_w = ward
            peak_days[d, 0] = day
        if icu > top_c:
            top_c = icu
            peak_days[d, 1] = day
        if admitted > top_a:
            top_a = admitted
            peak_days[d, 2] = day
    peaks[d, 0] = top_w
    peaks[d, 1] = top_c
    peaks[d, 2] = top_a
    return most_taken


@njit(cache=True)
def _record_day(
    d: int,
    day: int,
    y: NDArray[np.float64],
    y_prev: NDArray[np.float64],
    lay: NDArray[np.int64],
    employed: NDArray[np.float64],
    closure: float,
    series: NDArray[np.float32] | NDArray[np.float64],
) -> tuple[float, float, float]:
    """Write the five daily series of draw ``d`` on ``day``; returns ward, ICU and admissions."""
    nb = _U(lay[LAY_BANDS])
    o_w = _U(lay[LAY_OFFSET + BLK_W])
    o_c = _U(lay[LAY_OFFSET + BLK_C])
    n_w = _U(lay[LAY_WARD]) * nb
    n_c = _U(lay[LAY_ICU]) * nb
    o_adm = _U(lay[LAY_OFFSET + BLK_CUM_ADM])
    o_onset = _U(lay[LAY_OFFSET + BLK_CUM_ONSET])
    ward = 0.0
    for q in range(n_w):
        ward += y[o_w + q]
    icu = 0.0
    for q in range(n_c):
        icu += y[o_c + q]
    admitted = 0.0
    onsets = 0.0
    for i in range(nb):
        admitted += y[o_adm + i] - y_prev[o_adm + i]
        onsets += employed[i] * (y[o_onset + i] - y_prev[o_onset + i])
    series[0, d, day] = ward
    series[1, d, day] = icu
    series[2, d, day] = admitted
    series[3, d, day] = onsets
    series[4, d, day] = closure
    return ward, icu, admitted


@njit(cache=True)
def _final_counters(y: NDArray[np.float64], lay: NDArray[np.int64], out: NDArray[np.float64]
                    ) -> None:
    """Sums over bands of the final counters of a draw (the ``finals`` row of :func:`run_draws`)."""
    nb = _U(lay[LAY_BANDS])
    counters = (
        BLK_CUM_INF, BLK_CUM_ONSET, BLK_CUM_ADM, BLK_CUM_ICU, BLK_D, BLK_CUM_DOSE,
        BLK_WARD_DAYS, BLK_ICU_DAYS,
    )
    for k in range(len(counters)):
        start = _U(lay[LAY_OFFSET + counters[k]])
        total = 0.0
        for i in range(nb):
            total += y[start + i]
        out[k] = total
