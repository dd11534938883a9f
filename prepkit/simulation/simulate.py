"""Run a compiled model: the production RK4 integrator and the DOP853 reference.

Equations in words
------------------
The equations are those of :mod:`prepkit.simulation.flows`. Parameters change
only at day boundaries: at the start of each day the decisions (triggers,
intervention start and end, dose allocation) are taken from the state at
the boundary and the previous day's admissions, then the day is
integrated with those parameters held fixed (the season still varies
smoothly). The production integrator takes equal classical RK4 steps
within a day, as many as the step rule of
:func:`prepkit.simulation.step_rule.advance_day` asks (at least the model's
fewest), and checks the run (:mod:`prepkit.simulation.health`); the reference
integrates each day with scipy's DOP853 at tight tolerances and takes the
same decisions from its own state.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray
from scipy.integrate import solve_ivp

from prepkit.base.blas import one_blas_thread
from prepkit.errors import ModelError
from prepkit.simulation.compile import CompiledModel
from prepkit.simulation.decisions import decide_day
from prepkit.simulation.diagnose import run_error
from prepkit.simulation.flows import rhs
from prepkit.simulation.health import failed_check, most_substeps
from prepkit.simulation.kernels import run_days
from prepkit.simulation.layout import S_GROWTH_STEP, STATUS_ACTIVE, daily_size, scalar_offset
from prepkit.simulation.run_checks import REPORT_SIZE


@dataclass(frozen=True, kw_only=True, eq=False)
class Trajectory:
    """States of one run at the day boundaries.

    Attributes
    ----------
    states : ndarray, shape (days + 1, size)
        State at ``t = 0, 1, ..., days``.
    active : ndarray of bool, shape (days, interventions)
        True where an intervention was active during a day.
    substeps : ndarray of int64, shape (days,)
        RK4 steps taken on each day (0 for the reference, which chooses its
        own).
    report : ndarray, shape (REPORT_SIZE,)
        The run's checks (see :mod:`prepkit.simulation.health`).
    """

    states: NDArray[np.float64]
    active: NDArray[np.bool_]
    substeps: NDArray[np.int64]
    report: NDArray[np.float64]


@one_blas_thread
def simulate(
    model: CompiledModel,
    *,
    y0: NDArray[np.float64] | None = None,
    days: int | None = None,
    substeps: int | None = None,
    max_step_rate: float | None = None,
    max_force_step: float | None = None,
) -> Trajectory:
    """Simulate a compiled model with the production RK4 integrator.

    Parameters
    ----------
    model : CompiledModel
        The run.
    y0 : ndarray, optional
        State at day 0; default the model's.
    days : int, optional
        Days to simulate [days]; default the plan horizon.
    substeps : int, optional
        Fewest RK4 steps per day; default the model's.
    max_step_rate : float, optional
        Largest (rate x step) of the step rule; default the model's.
        ``numpy.inf`` takes exactly ``substeps`` steps every day (to study
        the integrator; the run may then fail its checks).
    max_force_step : float, optional
        Largest (rate x step) for what susceptibles lose per capita (force
        of infection, importations, dosing); default ``max_step_rate``.

    Returns
    -------
    Trajectory
        States at every day boundary, intervention activity, steps taken.

    Raises
    ------
    ModelError
        When the run fails a check of :mod:`prepkit.simulation.health`; the
        message names the inputs responsible.
    """
    start = model.y0 if y0 is None else np.asarray(y0, dtype=np.float64)
    horizon = model.horizon_days if days is None else int(days)
    floor = model.substeps if substeps is None else int(substeps)
    limit = model.max_step_rate if max_step_rate is None else float(max_step_rate)
    force_limit = limit if max_force_step is None else float(max_force_step)
    try:
        growth_limit = float(model.pc[scalar_offset(model.layout.bands) + S_GROWTH_STEP])
        most = most_substeps(floor, min(limit, force_limit, growth_limit))
    except ValueError as exc:
        raise ModelError(str(exc)) from None
    states, active, steps, report = run_days(
        np.ascontiguousarray(start, dtype=np.float64),
        model.pc,
        model.lay,
        model.itab,
        model.iprio,
        model.cap,
        horizon,
        floor,
        limit,
        force_limit,
        most,
    )
    if failed_check(report) is not None:
        if model.plan is None:
            raise ModelError(f"{model.description} failed a check of its results")
        raise run_error(model.plan, model, report, what=model.description)
    return Trajectory(states=states, active=active.astype(bool), substeps=steps, report=report)


@one_blas_thread
def simulate_reference(
    model: CompiledModel,
    *,
    y0: NDArray[np.float64] | None = None,
    days: int | None = None,
    rtol: float = 1e-10,
    atol_per_person: float = 1e-9,
    method: str = "DOP853",
) -> Trajectory:
    """Simulate with scipy's DOP853, day by day, taking the same daily decisions.

    Parameters
    ----------
    model, y0, days
        The run, its state at day 0 and its days [days], as for :func:`simulate`.
    rtol : float
        Relative tolerance of DOP853.
    atol_per_person : float
        Absolute tolerance as a share of the smallest band's population (a
        share of the total would let the compartments of a small band
        drift freely).
    method : str
        scipy's integrator: ``"DOP853"``, or ``"LSODA"`` (switches to an
        implicit method where the fastest rates would make an explicit one
        take millions of steps).

    Returns
    -------
    Trajectory
        States at every day boundary and intervention activity.

    References
    ----------
    Hairer E., Norsett S.P., Wanner G. (1993). Solving Ordinary Differential
    Equations I, 2nd ed., Springer (DOP853).

    Petzold L. (1983). Automatic selection of methods for solving stiff and
    nonstiff systems of ordinary differential equations. SIAM J. Sci. Stat.
    Comput. 4:136-148 (LSODA).
    """
    y = np.array(model.y0 if y0 is None else y0, dtype=np.float64)
    horizon = model.horizon_days if days is None else int(days)
    n_int = model.itab.shape[0]
    status = np.zeros(n_int, dtype=np.int64)
    started = np.zeros(n_int)
    pd = np.zeros(daily_size(model.layout.bands))
    scratch = np.empty(5 * model.layout.bands + 1)
    states = np.empty((horizon + 1, y.size))
    active = np.zeros((horizon, n_int), dtype=bool)
    states[0] = y
    y_prev = y.copy()
    atol = atol_per_person * float(model.population.min())

    def fun(t: float, x: NDArray[np.float64]) -> NDArray[np.float64]:
        out = np.empty_like(x)
        rhs(t, x, model.pc, pd, model.lay, out, scratch)
        return out

    for day in range(horizon):
        decide_day(
            day, y, y_prev, model.pc, model.lay, model.itab, model.iprio, model.cap,
            status, started, pd,
        )
        active[day] = status == STATUS_ACTIVE
        y_prev = y.copy()
        sol = solve_ivp(fun, (day, day + 1.0), y, method=method, rtol=rtol, atol=atol)
        if not sol.success:
            raise ModelError(f"reference integrator failed on day {day}: {sol.message}")
        y = np.ascontiguousarray(sol.y[:, -1])
        states[day + 1] = y
    return Trajectory(states=states, active=active, substeps=np.zeros(horizon, dtype=np.int64),
                      report=np.zeros(REPORT_SIZE))
