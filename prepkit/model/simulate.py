"""Run a compiled model: the production RK4 integrator and the DOP853 reference.

Equations in words
------------------
The equations are those of :mod:`prepkit.model.kernels`. Parameters change
only at day boundaries: at the start of each day the decisions (triggers,
intervention start and end, dose allocation) are taken from the state at
the boundary and the previous day's admissions, then the day is
integrated with those parameters held fixed (the season still varies
smoothly). The production integrator takes a fixed number of classical
RK4 steps per day; the reference integrates each day with scipy's DOP853
at tight tolerances and takes the same decisions from its own state.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray
from scipy.integrate import solve_ivp

from prepkit.errors import ModelError
from prepkit.model.compile import CompiledModel
from prepkit.model.kernels import decide_day, rhs, run_days
from prepkit.model.layout import STATUS_ACTIVE, daily_size


@dataclass(frozen=True, kw_only=True, eq=False)
class Trajectory:
    """States of one run at the day boundaries.

    Attributes
    ----------
    states : ndarray, shape (days + 1, size)
        State at ``t = 0, 1, ..., days``.
    active : ndarray of bool, shape (days, interventions)
        True where an intervention was active during a day.
    """

    states: NDArray[np.float64]
    active: NDArray[np.bool_]


def simulate(
    model: CompiledModel,
    *,
    y0: NDArray[np.float64] | None = None,
    days: int | None = None,
    substeps: int | None = None,
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
        RK4 steps per day; default the model's.

    Returns
    -------
    Trajectory
        States at every day boundary and intervention activity.
    """
    start = model.y0 if y0 is None else np.asarray(y0, dtype=np.float64)
    horizon = model.horizon_days if days is None else int(days)
    steps = model.substeps if substeps is None else int(substeps)
    states, active = run_days(
        np.ascontiguousarray(start, dtype=np.float64),
        model.pc,
        model.lay,
        model.itab,
        model.iprio,
        model.cap,
        horizon,
        steps,
    )
    return Trajectory(states=states, active=active.astype(bool))


def simulate_reference(
    model: CompiledModel,
    *,
    y0: NDArray[np.float64] | None = None,
    days: int | None = None,
    rtol: float = 1e-10,
    atol_per_person: float = 1e-9,
) -> Trajectory:
    """Simulate with scipy's DOP853, day by day, taking the same daily decisions.

    Parameters
    ----------
    model : CompiledModel
        The run.
    y0 : ndarray, optional
        State at day 0; default the model's.
    days : int, optional
        Days to simulate [days]; default the plan horizon.
    rtol : float
        Relative tolerance of DOP853.
    atol_per_person : float
        Absolute tolerance as a share of the total population.

    Returns
    -------
    Trajectory
        States at every day boundary and intervention activity.

    References
    ----------
    Hairer E., Norsett S.P., Wanner G. (1993). Solving Ordinary Differential
    Equations I, 2nd ed., Springer (DOP853).
    """
    y = np.array(model.y0 if y0 is None else y0, dtype=np.float64)
    horizon = model.horizon_days if days is None else int(days)
    n_int = model.itab.shape[0]
    status = np.zeros(n_int, dtype=np.int64)
    started = np.zeros(n_int)
    pd = np.zeros(daily_size(model.layout.bands))
    scratch = np.empty(5 * model.layout.bands)
    states = np.empty((horizon + 1, y.size))
    active = np.zeros((horizon, n_int), dtype=bool)
    states[0] = y
    y_prev = y.copy()
    atol = atol_per_person * float(model.population.sum())

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
        sol = solve_ivp(fun, (day, day + 1.0), y, method="DOP853", rtol=rtol, atol=atol)
        if not sol.success:
            raise ModelError(f"reference integrator failed on day {day}: {sol.message}")
        y = np.ascontiguousarray(sol.y[:, -1])
        states[day + 1] = y
    return Trajectory(states=states, active=active)
