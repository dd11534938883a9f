"""The parameter vector and the day-0 state of a run.

Equations in words
------------------
See :mod:`prepkit.simulation.compile`: stage rates ``q / T``, the admission
share of protected infections ``h_v``, the day-0 state and beta from R0 or
the growth rate.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
from numpy.typing import NDArray

from prepkit.errors import ModelError
from prepkit.plan import Disease, Intervention, Plan, Vaccination
from prepkit.simulation.beta_scaling import beta_for_targets
from prepkit.simulation.contacts import setting_matrices
from prepkit.simulation.draw_values import DrawValues
from prepkit.simulation.health import growth_bound, growth_step
from prepkit.simulation.inputs import ResolvedInputs
from prepkit.simulation.intervention_table import compliance_columns
from prepkit.simulation.layout import (
    BLK_CUM_INF,
    BLK_E,
    BLK_R,
    BLK_S,
    P_ADMIT,
    P_ADMIT_PROTECTED,
    P_ICU,
    P_ICU_FATALITY,
    P_ICU_RATE,
    P_POP,
    P_SUSCEPTIBILITY,
    P_SYMPTOMATIC,
    P_WAIT_RATE,
    P_WARD_FATALITY,
    P_WARD_RATE,
    S_BETA,
    S_DOSE_TO_WAITING,
    S_GROWTH_BOUND,
    S_GROWTH_STEP,
    S_IMPORTS,
    S_INFECTIOUS_RATE,
    S_LATENT_RATE,
    S_PROTECT_RATE,
    S_RHO,
    S_SEASON_AMPLITUDE,
    S_SEASON_PEAK_DAY,
    S_TOTAL_POP,
    S_VE_INFECTION,
    StateLayout,
    matrix_offset,
    parameter_size,
    scalar_offset,
)
from prepkit.simulation.protected_admission import protected_admitted_share


def model_layout(plan: Plan) -> StateLayout:
    """The stage counts of a plan's run.

    Parameters
    ----------
    plan : Plan
        The plan.

    Returns
    -------
    StateLayout
        Bands and Erlang stage counts of every chain.
    """
    disease = plan.disease
    severity = plan.severity
    return StateLayout(
        bands=len(plan.bands),
        latent_stages=disease.latent_stages,
        infectious_stages=disease.infectious_stages,
        wait_stages=severity.admission_delay_stages,
        ward_stages=severity.ward_stages,
        icu_stages=severity.icu_stages,
    )


def check_durations(plan: Plan, inputs: ResolvedInputs) -> None:
    """Refuse periods, delays and stays that are not positive.

    Raises
    ------
    ModelError
        When the latent or infectious period, an onset-to-admission delay or
        a stay is not positive.
    """
    severity = plan.severity
    wait_days = np.array(severity.onset_to_admission_days, dtype=np.float64)
    ward_days = np.array(inputs.ward_stay_days, dtype=np.float64)
    icu_days = np.array(inputs.icu_stay_days, dtype=np.float64)
    if min(inputs.latent_period_days, inputs.infectious_period_days) <= 0.0:
        raise ModelError("latent and infectious periods must be positive")
    if np.any(wait_days <= 0.0) or np.any(ward_days <= 0.0) or np.any(icu_days <= 0.0):
        raise ModelError("onset-to-admission delays and stays must be positive")


def fixed_parameters(
    plan: Plan,
    layout: StateLayout,
    pop: NDArray[np.float64],
    vaccines: list[Vaccination],
    peak_day: float,
) -> NDArray[np.float64]:
    """The parameter vector of a run with the numbers no draw changes.

    The numbers that change from draw to draw are written by
    :func:`draw_parameters` and beta by :func:`draw_transmission`.

    Parameters
    ----------
    plan : Plan
        The plan.
    layout : StateLayout
        Stage counts.
    pop : ndarray
        Band populations [persons].
    vaccines : list of Vaccination
        The run's vaccination campaigns (the first gives the days to
        protection; none means no vaccine effect).
    peak_day : float
        Day of the seasonal peak [days since day 0].

    Returns
    -------
    ndarray
        Parameter vector (see :mod:`prepkit.simulation.layout`).
    """
    disease = plan.disease
    severity = plan.severity
    nb = layout.bands
    total = float(pop.sum())
    days_to_protection = vaccines[0].days_to_protection if vaccines else 0.0
    wait_days = np.array(severity.onset_to_admission_days, dtype=np.float64)
    pc = np.zeros(parameter_size(nb))

    def put(field: int, values: NDArray[np.float64] | tuple[float, ...]) -> None:
        pc[field * nb : (field + 1) * nb] = np.asarray(values, dtype=np.float64)

    put(P_POP, pop)
    put(P_SUSCEPTIBILITY, tuple(disease.relative_susceptibility))
    put(P_WARD_FATALITY, tuple(severity.ward_fatality))
    put(P_ICU_FATALITY, tuple(severity.icu_fatality))
    put(P_WAIT_RATE, layout.wait_stages / wait_days)
    sc = scalar_offset(nb)
    pc[sc + S_RHO] = disease.asymptomatic_relative_infectiousness
    if days_to_protection > 0.0:
        pc[sc + S_PROTECT_RATE] = 1.0 / days_to_protection
        pc[sc + S_DOSE_TO_WAITING] = 1.0
    pc[sc + S_SEASON_AMPLITUDE] = disease.seasonal_amplitude
    pc[sc + S_SEASON_PEAK_DAY] = peak_day
    pc[sc + S_IMPORTS] = disease.daily_importations
    pc[sc + S_TOTAL_POP] = total
    pc[sc + S_GROWTH_STEP] = growth_step(
        total, disease.initial_infections + disease.daily_importations
    )
    mo = matrix_offset(nb)
    pc[mo:] = setting_matrices(plan.contacts, pop).ravel()
    return pc


def draw_parameters(
    pc: NDArray[np.float64],
    itab: NDArray[np.float64],
    layout: StateLayout,
    plan: Plan,
    items: Sequence[Intervention],
    values: DrawValues,
) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Parameter vectors and intervention tables of one run or of many draws.

    The one builder of the numbers that change from draw to draw, used by
    :func:`prepkit.simulation.compile.compile_model` (one row,
    :meth:`DrawValues.of_inputs`) and by the ensemble (one row per draw).

    Parameters
    ----------
    pc : ndarray
        Parameter vector with the fixed numbers (:func:`fixed_parameters`);
        copied.
    itab : ndarray
        Intervention table before compliance
        (:func:`prepkit.simulation.intervention_table.intervention_table`); copied.
    layout : StateLayout
        Stage counts.
    plan : Plan
        The plan.
    items : sequence of Intervention
        The run's interventions, in the rows of ``itab``.
    values : DrawValues
        The numbers of each draw.

    Returns
    -------
    pcs : ndarray, shape (draws, parameters)
        Parameter vectors, beta and the growth bound not yet set
        (:func:`draw_transmission`).
    itabs : ndarray, shape (draws, interventions, columns)
        Intervention tables.

    Notes
    -----
    Band fields: symptomatic share ``p``, admitted share ``h = min(h, p)``,
    admitted share of protected infections
    (:func:`prepkit.simulation.protected_admission.protected_admitted_share`),
    ICU share and the ward and ICU stage rates ``q / T``; scalars: latent
    and infectious stage rates ``q / T`` and the vaccine efficacy against
    infection (0 without a vaccination).
    """
    nb = layout.bands
    sc = scalar_offset(nb)
    n = values.size
    pcs = np.repeat(pc[None, :], n, axis=0)
    has_vaccine = any(item.vaccination is not None for item in items)
    p_sym = np.asarray(values.symptomatic_share, dtype=np.float64)
    h = np.minimum(np.asarray(values.admitted_share, dtype=np.float64), p_sym)
    ve_inf = np.asarray(values.efficacy_infection, dtype=np.float64) if has_vaccine else np.zeros(n)
    ve_sev = np.asarray(values.efficacy_severe, dtype=np.float64) if has_vaccine else np.zeros(n)

    def put(field_index: int, block: NDArray[np.float64]) -> None:
        pcs[:, field_index * nb : (field_index + 1) * nb] = block

    put(P_SYMPTOMATIC, p_sym)
    put(P_ADMIT, h)
    put(P_ADMIT_PROTECTED, protected_admitted_share(p_sym, h, ve_inf, ve_sev))
    put(P_ICU, np.asarray(values.icu_share, dtype=np.float64))
    put(P_WARD_RATE, layout.ward_stages / np.asarray(values.ward_stay_days, dtype=np.float64))
    put(P_ICU_RATE, layout.icu_stages / np.asarray(values.icu_stay_days, dtype=np.float64))
    infectious_days = np.asarray(values.infectious_period_days, dtype=np.float64)
    pcs[:, sc + S_LATENT_RATE] = layout.latent_stages / np.asarray(
        values.latent_period_days, dtype=np.float64
    )
    pcs[:, sc + S_INFECTIOUS_RATE] = layout.infectious_stages / infectious_days
    pcs[:, sc + S_VE_INFECTION] = ve_inf

    itabs = np.repeat(itab[None, :, :], n, axis=0)
    for r, item in enumerate(items):
        comp = values.compliance.get(item.name)
        comp = np.full(n, float(item.compliance.central)) if comp is None else comp
        compliance_columns(itabs, r, item, comp, infectious_days, plan, layout)
    return pcs, itabs


def draw_betas(
    pc: NDArray[np.float64], layout: StateLayout, measure: str, values: DrawValues
) -> NDArray[np.float64]:
    """Transmission scale of each draw from its transmissibility measure [per contact].

    Parameters
    ----------
    pc : ndarray
        A parameter vector of the run (fixes contacts, populations,
        susceptibility and the onset-to-admission delays).
    layout : StateLayout
        Stage counts.
    measure : {"r0", "doubling_time", "growth_rate"}
        Measure of ``values.transmissibility_value``.
    values : DrawValues
        The numbers of each draw.

    Returns
    -------
    ndarray, shape (draws,)
        beta of each draw (:func:`prepkit.simulation.beta_scaling.beta_for_targets`).
    """
    return beta_for_targets(
        pc, layout, measure,
        values.transmissibility_value, values.symptomatic_share, values.admitted_share,
        layout.latent_stages / np.asarray(values.latent_period_days, dtype=np.float64),
        layout.infectious_stages / np.asarray(values.infectious_period_days, dtype=np.float64),
    )


def draw_transmission(
    pcs: NDArray[np.float64],
    layout: StateLayout,
    measure: str,
    values: DrawValues,
    amplitude: float,
    beta: NDArray[np.float64] | None = None,
) -> None:
    """Write beta and the growth bound of each draw into ``pcs``.

    Parameters
    ----------
    pcs : ndarray, shape (draws, parameters)
        Parameter vectors from :func:`draw_parameters`; their beta and
        growth bound are written.
    layout : StateLayout
        Stage counts.
    measure : {"r0", "doubling_time", "growth_rate"}
        Measure of ``values.transmissibility_value``.
    values : DrawValues
        The numbers of each draw.
    amplitude : float
        Seasonal amplitude [fraction].
    beta : ndarray, optional
        beta of each draw when already known (default :func:`draw_betas`).

    Raises
    ------
    ModelError
        When a doubling time is not positive or no transmission can give
        the transmissibility asked for.
    """
    nb = layout.bands
    sc = scalar_offset(nb)
    pcs[:, sc + S_BETA] = draw_betas(pcs[0], layout, measure, values) if beta is None else beta
    pcs[:, sc + S_GROWTH_BOUND] = growth_bound(
        measure, values.transmissibility_value,
        latent=(pcs[:, sc + S_LATENT_RATE], layout.latent_stages),
        infectious=(pcs[:, sc + S_INFECTIOUS_RATE], layout.infectious_stages),
        waiting=(float(np.max(pcs[0, P_WAIT_RATE * nb : (P_WAIT_RATE + 1) * nb])),
                 layout.wait_stages),
        amplitude=amplitude,
    )


def initial_state(
    layout: StateLayout, disease: Disease, pop: NDArray[np.float64]
) -> NDArray[np.float64]:
    """State at day 0: prior immunity in ``R``, the initial infections in the first latent stage.

    Parameters
    ----------
    layout : StateLayout
        Stage counts.
    disease : Disease
        Initial infections and prior immunity.
    pop : ndarray
        Band populations [persons].

    Returns
    -------
    ndarray
        State vector at day 0.
    """
    seeds = np.array([float(disease.initial_infections)])
    return initial_states(layout, disease, pop, seeds)[0]


def initial_states(
    layout: StateLayout, disease: Disease, pop: NDArray[np.float64],
    initial_infections: NDArray[np.float64],
) -> NDArray[np.float64]:
    """States at day 0 of several runs that differ only in their infections at day 0.

    Parameters
    ----------
    layout : StateLayout
        Stage counts.
    disease : Disease
        Prior immunity (its ``initial_infections`` is not read).
    pop : ndarray, shape (bands,)
        Band populations [persons].
    initial_infections : ndarray, shape (runs,)
        Infections at day 0 of each run [persons], spread across bands by population.

    Returns
    -------
    ndarray, shape (runs, size)
        State vectors at day 0.
    """
    seeds = np.asarray(initial_infections, dtype=np.float64).reshape(-1)
    y0 = np.zeros((seeds.size, layout.size))
    seeded = seeds[:, None] * pop[None, :] / float(pop.sum())
    immune = np.asarray(disease.prior_immunity, dtype=np.float64) * pop
    y0[:, layout.stage(BLK_S)] = np.maximum(pop - immune - seeded, 0.0)
    y0[:, layout.stage(BLK_R)] = immune
    y0[:, layout.stage(BLK_E)] = seeded
    y0[:, layout.stage(BLK_CUM_INF)] = seeded
    return y0
