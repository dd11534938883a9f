"""Per-draw parameter vectors and intervention tables, and the ensemble's step rule.

The per-draw arrays come from
:func:`prepkit.simulation.parameters.draw_parameters`, the same builder the
single run uses with one row: the compiled central run of the scenario
variant supplies the fixed numbers and each draw's numbers are written over
them (the tests check that a draw's arrays equal those of a single run
compiled with the same numbers).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import NDArray

from prepkit.errors import ModelError
from prepkit.plan import Plan
from prepkit.simulation.compile import DEFAULT_SUBSTEPS, MAX_STEP_RATE, CompiledModel
from prepkit.simulation.draw_values import DrawValues
from prepkit.simulation.parameters import draw_parameters, draw_transmission

ENSEMBLE_MIN_SUBSTEPS = 1
"""Fewest RK4 steps per day in the ensemble. benchmarks/accuracy.py measures the relative
error of the peak census against the DOP853 reference at 1 step per day at 1e-6 to 3e-5,
and benchmarks/ensemble.py measures it on 24 draws of a 16-band plan at up to about 5e-5:
far below the 1e-3 target and far below the spread between draws (the engine's 4 steps
give about 2e-7). Pass ``min_substeps=None`` to use the engine's rule instead (then every
draw equals :func:`prepkit.scenarios.runs.run_scenario` with the same overrides)."""

ENSEMBLE_MAX_STEP_RATE = 1.0
"""Largest (rate x step) in the ensemble for the stage rates and the growth bound (the step
rule of :func:`prepkit.simulation.kernels.advance_day`); faster days get more steps. 1 is the
largest value for which an RK4 step keeps every compartment of a linear flow non-negative
(see :mod:`prepkit.simulation.health`); classical RK4 would stay stable up to 2.785 on the
negative real axis (Hairer, Norsett & Wanner 1993, Solving Ordinary Differential Equations
I, sec. IV.2, from memory), but with negative compartments on the way. The engine's own
limit is :data:`prepkit.simulation.compile.MAX_STEP_RATE`."""

ENSEMBLE_MAX_FORCE_STEP = 0.5
"""Largest (rate x step) in the ensemble for the dynamics of infection: what susceptibles lose
per capita (force of infection, importations, dosing) and the growth bound. Tighter than for
the stages, whose errors only shift fast transits a little: these feed every later
compartment. The hypothesis search (tests/simulation/test_model_search.py) met a draw
(growth rate 2 a day, 60-day periods, 100 million initial infections) whose peak ICU
census was 5.4e-3 off
the reference with them at 1 per step and 5.4e-4 at 0.5. On the sample plans the force stays
below 0.2 a day and the growth bound below 0.3, so 1 step a day still serves."""


def build_parameters(
    model: CompiledModel,
    plan: Plan,
    values: DrawValues,
    beta: NDArray[np.float64],
    *,
    min_substeps: int | None = ENSEMBLE_MIN_SUBSTEPS,
) -> tuple[NDArray[np.float64], NDArray[np.float64], NDArray[np.int64]]:
    """Parameter vectors, intervention tables and substeps of many draws.

    Parameters
    ----------
    model : CompiledModel
        Compiled central run of the scenario variant; its arrays are copied
        and the numbers a draw changes are overwritten.
    plan : Plan
        The plan (for the interventions' fixed inputs).
    values : DrawValues
        The draws.
    beta : ndarray, shape (draws,)
        Transmission scale of each draw [per contact] (:func:`calibrate_beta`).
    min_substeps : int or None
        Fewest RK4 steps per day; None uses the engine's
        (:data:`~prepkit.simulation.compile.DEFAULT_SUBSTEPS`).

    Returns
    -------
    pcs : ndarray, shape (draws, parameters)
        Parameter vectors.
    itabs : ndarray, shape (draws, interventions, columns)
        Intervention tables.
    substeps : ndarray of int64, shape (draws,)
        Fewest RK4 steps per day of each draw (the step rule adds more on
        days that need them).
    """
    layout = model.layout
    items = [plan.intervention(name) for name in model.intervention_names]
    pcs, itabs = draw_parameters(model.pc, model.itab, layout, plan, items, values)
    draw_transmission(
        pcs, layout, model.inputs.transmissibility_measure, values,
        plan.disease.seasonal_amplitude, beta,
    )
    floor, _, _ = step_rule(min_substeps)
    return pcs, itabs, np.full(values.size, floor, dtype=np.int64)


def step_rule(min_substeps: int | None) -> tuple[int, float, float]:
    """Fewest RK4 steps a day and the largest (rate x step) values of the ensemble.

    Parameters
    ----------
    min_substeps : int or None
        Fewest steps a day with :data:`ENSEMBLE_MAX_STEP_RATE` and
        :data:`ENSEMBLE_MAX_FORCE_STEP`; None for the engine's
        :data:`~prepkit.simulation.compile.DEFAULT_SUBSTEPS` and
        :data:`~prepkit.simulation.compile.MAX_STEP_RATE` for every rate.

    Returns
    -------
    tuple of int, float and float
        Fewest steps, largest (rate x step) for stage and growth rates and
        for the losses of susceptibles.
    """
    if min_substeps is None:
        return DEFAULT_SUBSTEPS, MAX_STEP_RATE, MAX_STEP_RATE
    if int(min_substeps) < 1:
        raise ModelError("substeps must be at least 1")
    return int(min_substeps), ENSEMBLE_MAX_STEP_RATE, ENSEMBLE_MAX_FORCE_STEP
