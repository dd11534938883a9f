"""Per-draw parameter vectors and intervention tables, and the ensemble's step rule.

Per-draw arrays are built from the compiled central run of the scenario
variant by overwriting only the numbers a draw changes, with the same
formulas as :func:`prepkit.simulation.compile.compile_model` (the tests check
that both give the same arrays):

* band fields: symptomatic share ``p``, admitted share ``h = min(h, p)``,
  admitted share of protected infections
  (:func:`prepkit.simulation.protected_admission.protected_admitted_share`),
  ICU share, and the ward and ICU stage rates ``q / T``;
* scalars: latent and infectious stage rates, vaccine efficacy against
  infection and the transmission scale ``beta``;
* intervention rows that depend on compliance (contact multipliers, school
  closure intensity, dose ceiling, isolation multipliers; the isolation
  multiplier of people at home also depends on the infectious period).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import NDArray
from scipy.special import gammainc

from prepkit.errors import ModelError
from prepkit.plan import SETTINGS, Plan
from prepkit.simulation.compile import DEFAULT_SUBSTEPS, MAX_STEP_RATE, CompiledModel
from prepkit.simulation.health import growth_bound
from prepkit.simulation.layout import (
    IT_CEILING,
    IT_ISO_SYMPTOMATIC,
    IT_ISO_WAITING,
    IT_MULTIPLIER,
    IT_SCHOOL_CLOSURE,
    P_ADMIT,
    P_ADMIT_PROTECTED,
    P_ICU,
    P_ICU_RATE,
    P_SYMPTOMATIC,
    P_WAIT_RATE,
    P_WARD_RATE,
    S_BETA,
    S_GROWTH_BOUND,
    S_INFECTIOUS_RATE,
    S_LATENT_RATE,
    S_VE_INFECTION,
    scalar_offset,
)
from prepkit.simulation.natural_history import share_before_isolation
from prepkit.simulation.protected_admission import protected_admitted_share
from prepkit.uncertainty.draws import DrawValues

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
    nb = layout.bands
    sc = scalar_offset(nb)
    n = values.size
    pcs = np.repeat(model.pc[None, :], n, axis=0)
    has_vaccine = "vaccination" in model.intervention_kinds

    p_sym = np.asarray(values.symptomatic_share, dtype=np.float64)
    h = np.minimum(np.asarray(values.admitted_share, dtype=np.float64), p_sym)
    if has_vaccine:
        ve_inf = np.asarray(values.efficacy_infection, dtype=np.float64)
        ve_sev = np.asarray(values.efficacy_severe, dtype=np.float64)
    else:
        ve_inf = np.zeros(n)
        ve_sev = np.zeros(n)
    hv = protected_admitted_share(p_sym, h, ve_inf, ve_sev)

    def put(field_index: int, block: NDArray[np.float64]) -> None:
        pcs[:, field_index * nb : (field_index + 1) * nb] = block

    put(P_SYMPTOMATIC, p_sym)
    put(P_ADMIT, h)
    put(P_ADMIT_PROTECTED, hv)
    put(P_ICU, np.asarray(values.icu_share, dtype=np.float64))
    put(P_WARD_RATE, layout.ward_stages / np.asarray(values.ward_stay_days, dtype=np.float64))
    put(P_ICU_RATE, layout.icu_stages / np.asarray(values.icu_stay_days, dtype=np.float64))
    infectious_days = np.asarray(values.infectious_period_days, dtype=np.float64)
    pcs[:, sc + S_LATENT_RATE] = layout.latent_stages / np.asarray(
        values.latent_period_days, dtype=np.float64
    )
    pcs[:, sc + S_INFECTIOUS_RATE] = layout.infectious_stages / infectious_days
    pcs[:, sc + S_VE_INFECTION] = ve_inf
    pcs[:, sc + S_BETA] = beta
    pcs[:, sc + S_GROWTH_BOUND] = _growth_bounds(model, plan, values, pcs)
    itabs = intervention_tables(model, plan, values, infectious_days)
    floor, _, _ = step_rule(min_substeps)
    return pcs, itabs, np.full(n, floor, dtype=np.int64)


def _growth_bounds(
    model: CompiledModel, plan: Plan, values: DrawValues, pcs: NDArray[np.float64]
) -> NDArray[np.float64]:
    """Growth bound of each draw (:func:`prepkit.simulation.health.growth_bound`) [1/day]."""
    layout = model.layout
    nb = layout.bands
    sc = scalar_offset(nb)
    return np.asarray(growth_bound(
        model.inputs.transmissibility_measure, values.transmissibility_value,
        latent=(pcs[:, sc + S_LATENT_RATE], layout.latent_stages),
        infectious=(pcs[:, sc + S_INFECTIOUS_RATE], layout.infectious_stages),
        waiting=(float(np.max(model.pc[P_WAIT_RATE * nb : (P_WAIT_RATE + 1) * nb])),
                 layout.wait_stages),
        amplitude=plan.disease.seasonal_amplitude,
    ), dtype=np.float64)


def intervention_tables(
    model: CompiledModel, plan: Plan, values: DrawValues, infectious_days: NDArray[np.float64]
) -> NDArray[np.float64]:
    """Intervention tables of many draws: the rows that depend on compliance.

    Parameters
    ----------
    model : CompiledModel
        Compiled central run of the scenario variant (its table is copied).
    plan : Plan
        The plan (for the interventions' fixed inputs).
    values : DrawValues
        The draws.
    infectious_days : ndarray, shape (draws,)
        Mean infectious period of each draw [days].

    Returns
    -------
    ndarray, shape (draws, interventions, columns)
        Contact multipliers, school closure intensity, dose ceiling and
        isolation multipliers of each draw, as
        :func:`prepkit.simulation.compile.compile_model` sets them.
    """
    layout = model.layout
    nb = layout.bands
    n = values.size
    itabs = np.repeat(model.itab[None, :, :], n, axis=0)
    wait_days = np.asarray(plan.severity.onset_to_admission_days, dtype=np.float64)
    for r, name in enumerate(model.intervention_names):
        item = plan.intervention(name)
        comp = values.compliance.get(name)
        comp = (
            np.full(n, float(item.compliance.central))
            if comp is None
            else np.asarray(comp, dtype=np.float64)
        )
        if item.kind == "contacts":
            for s, setting in enumerate(SETTINGS):
                kept = float(item.contacts_kept.get(setting, 1.0))
                itabs[:, r, IT_MULTIPLIER + s] = 1.0 - comp * (1.0 - kept)
            itabs[:, r, IT_SCHOOL_CLOSURE] = comp * (
                1.0 - float(item.contacts_kept.get("school", 1.0))
            )
        elif item.kind == "vaccination" and item.vaccination is not None:
            itabs[:, r, IT_CEILING] = item.vaccination.uptake_ceiling * comp
        elif item.kind == "isolation" and item.isolation is not None:
            eps = item.isolation.isolated_share * comp
            delay = item.isolation.days_from_onset
            theta = shares_before_isolation(delay, infectious_days, layout.infectious_stages)
            itabs[:, r, IT_ISO_SYMPTOMATIC] = 1.0 - eps * (1.0 - theta)
            theta_wait = np.array(
                [share_before_isolation(delay, float(t), layout.wait_stages) for t in wait_days]
            )
            itabs[:, r, IT_ISO_WAITING : IT_ISO_WAITING + nb] = 1.0 - eps[:, None] * (
                1.0 - theta_wait[None, :]
            )
    return itabs


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


def shares_before_isolation(
    delay_days: float, mean_days: NDArray[np.float64], stages: int
) -> NDArray[np.float64]:
    """Vectorised :func:`prepkit.simulation.natural_history.share_before_isolation`.

    Parameters
    ----------
    delay_days : float
        Days from symptom onset to isolation [days].
    mean_days : ndarray
        Mean infectious period of each draw [days].
    stages : int
        Erlang stage count of the infectious period.

    Returns
    -------
    ndarray
        ``theta = E[min(T, d)] / E[T]`` [fraction], the same numbers as the
        scalar function (same operations in the same order).

    References
    ----------
    Fraser C., Riley S., Anderson R.M., Ferguson N.M. (2004). Factors that
    make an infectious disease outbreak controllable. PNAS 101:6146-6151.
    doi:10.1073/pnas.0307506101
    """
    means = np.asarray(mean_days, dtype=np.float64)
    if delay_days <= 0.0:
        return np.zeros_like(means)
    scale = means / stages
    x = delay_days / scale
    expected_min = means * gammainc(stages + 1, x) + delay_days * (1.0 - gammainc(stages, x))
    return np.asarray(np.minimum(1.0, expected_min / means), dtype=np.float64)
