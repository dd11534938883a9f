"""Many parameter sets through the ensemble kernel at once, for fitting and decide-by searches.

Equations in words
------------------
The model is the one of :mod:`prepkit.simulation.kernels`: each parameter set
is one draw of :func:`prepkit.uncertainty.ensemble.simulate_draws` (so the
same compiled :func:`~prepkit.simulation.kernels.run_draws`, the same step
rule and the same checks), built by the one parameter builder of single runs
and draws (:func:`prepkit.simulation.parameters.draw_parameters` and
:func:`~prepkit.simulation.parameters.draw_transmission`, through
:func:`prepkit.uncertainty.parameters.build_parameters`). A set is a row of
:class:`~prepkit.simulation.draw_values.DrawValues` (transmissibility value,
periods, shares, stays, efficacies, compliance, infections at day 0, spread
across bands by population, :func:`prepkit.simulation.parameters.initial_states`),
optionally with a multiplier on every band's admitted share.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np
from numpy.typing import NDArray

from prepkit.plan import Plan
from prepkit.simulation.compile import CompiledModel
from prepkit.simulation.draw_values import DrawValues
from prepkit.uncertainty.ensemble import simulate_draws
from prepkit.uncertainty.parameters import ENSEMBLE_MIN_SUBSTEPS


@dataclass(frozen=True)
class BatchSeries:
    """Daily series of every parameter set, shape (sets, days) each.

    Attributes
    ----------
    admissions_per_day : ndarray
        Admissions during each day [persons/day].
    ward_census_persons, icu_census_persons : ndarray
        Ward and ICU census at the end of each day [persons].
    """

    admissions_per_day: NDArray[np.float64]
    ward_census_persons: NDArray[np.float64]
    icu_census_persons: NDArray[np.float64]


def run_batch(
    model: CompiledModel,
    plan: Plan,
    values: DrawValues,
    *,
    initial_infections: NDArray[np.float64] | None = None,
    admitted_multiplier: NDArray[np.float64] | None = None,
    min_substeps: int | None = ENSEMBLE_MIN_SUBSTEPS,
    blocks: int = 1,
) -> BatchSeries:
    """Run ``values.size`` parameter sets of one scenario variant; daily admissions and census.

    Parameters
    ----------
    model : CompiledModel
        Compiled central run of the scenario variant
        (:func:`prepkit.scenarios.runs.compile_scenario`).
    plan : Plan
        The plan.
    values : DrawValues
        One row per set (:meth:`DrawValues.of_inputs` for the central run).
    initial_infections : ndarray, shape (sets,), optional
        Infections at day 0 of each set [persons]; default the plan's.
    admitted_multiplier : ndarray, shape (sets,), optional
        Factor on every band's admitted share of each set [dimensionless]
        (the share admitted when protected follows from it); default 1. A
        product above the symptomatic share is cut to it, as in every run.
    min_substeps : int or None
        Fewest RK4 steps a day (see :func:`~prepkit.uncertainty.ensemble.simulate_draws`;
        None is the single run's step rule).
    blocks : int
        Blocks the sets are run in.

    Returns
    -------
    BatchSeries
        Daily admissions and ward and ICU census of every set (float64).

    Raises
    ------
    ValueError
        When an array's length is not the number of sets.
    ModelError
        When a set fails a check of the engine (named with its inputs).
    """
    n = values.size
    if admitted_multiplier is not None:
        factor = _per_set(admitted_multiplier, n, "admitted_multiplier")
        values = replace(values, admitted_share=values.admitted_share * factor[:, None])
    if initial_infections is not None:
        seeds = _per_set(initial_infections, n, "initial_infections")
        values = replace(values, initial_infections=seeds)
    draws = simulate_draws(model, plan, values, min_substeps=min_substeps, blocks=blocks,
                           dtype=np.float64, what="parameter set")
    return BatchSeries(
        admissions_per_day=draws.get("admissions_per_day"),
        ward_census_persons=draws.get("ward_census_persons"),
        icu_census_persons=draws.get("icu_census_persons"),
    )


def _per_set(array: NDArray[np.float64], n: int, name: str) -> NDArray[np.float64]:
    """``array`` as float64 of shape (n,), or ValueError naming ``name``."""
    out = np.asarray(array, dtype=np.float64).reshape(-1)
    if out.shape != (n,):
        raise ValueError(f"{name} needs one value per parameter set ({n}), got {out.size}")
    return out
