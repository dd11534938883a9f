"""The parameter vector and the day-0 state of a run.

Equations in words
------------------
See :mod:`prepkit.simulation.compile`: stage rates ``q / T``, the admission
share of protected infections ``h_v``, the day-0 state and beta from R0 or
the growth rate.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import NDArray

from prepkit.errors import ModelError
from prepkit.plan import Disease, Plan, Vaccination
from prepkit.simulation.beta_scaling import beta_for_targets
from prepkit.simulation.contacts import setting_matrices
from prepkit.simulation.health import growth_bound, growth_step
from prepkit.simulation.inputs import ResolvedInputs
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


def parameter_vector(
    plan: Plan,
    inputs: ResolvedInputs,
    layout: StateLayout,
    pop: NDArray[np.float64],
    vaccines: list[Vaccination],
    peak_day: float,
) -> NDArray[np.float64]:
    """The parameter vector of a run, beta not yet set.

    Parameters
    ----------
    plan : Plan
        The plan.
    inputs : ResolvedInputs
        Numbers picked for the run.
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
    ve_inf = inputs.efficacy_infection if vaccines else 0.0
    ve_sev = inputs.efficacy_severe if vaccines else 0.0
    days_to_protection = vaccines[0].days_to_protection if vaccines else 0.0

    p_sym = np.array(inputs.symptomatic_share, dtype=np.float64)
    h = np.minimum(np.array(inputs.admitted_share, dtype=np.float64), p_sym)
    hv = protected_admitted_share(p_sym, h, ve_inf, ve_sev)
    wait_days = np.array(severity.onset_to_admission_days, dtype=np.float64)
    ward_days = np.array(inputs.ward_stay_days, dtype=np.float64)
    icu_days = np.array(inputs.icu_stay_days, dtype=np.float64)
    pc = np.zeros(parameter_size(nb))

    def put(field: int, values: NDArray[np.float64] | tuple[float, ...]) -> None:
        pc[field * nb : (field + 1) * nb] = np.asarray(values, dtype=np.float64)

    put(P_POP, pop)
    put(P_SUSCEPTIBILITY, tuple(disease.relative_susceptibility))
    put(P_SYMPTOMATIC, p_sym)
    put(P_ADMIT, h)
    put(P_ADMIT_PROTECTED, hv)
    put(P_ICU, inputs.icu_share)
    put(P_WARD_FATALITY, tuple(severity.ward_fatality))
    put(P_ICU_FATALITY, tuple(severity.icu_fatality))
    put(P_WAIT_RATE, layout.wait_stages / wait_days)
    put(P_WARD_RATE, layout.ward_stages / ward_days)
    put(P_ICU_RATE, layout.icu_stages / icu_days)
    sc = scalar_offset(nb)
    pc[sc + S_LATENT_RATE] = layout.latent_stages / inputs.latent_period_days
    pc[sc + S_INFECTIOUS_RATE] = layout.infectious_stages / inputs.infectious_period_days
    pc[sc + S_RHO] = disease.asymptomatic_relative_infectiousness
    pc[sc + S_VE_INFECTION] = ve_inf
    if days_to_protection > 0.0:
        pc[sc + S_PROTECT_RATE] = 1.0 / days_to_protection
        pc[sc + S_DOSE_TO_WAITING] = 1.0
    pc[sc + S_SEASON_AMPLITUDE] = disease.seasonal_amplitude
    pc[sc + S_SEASON_PEAK_DAY] = peak_day
    pc[sc + S_IMPORTS] = disease.daily_importations
    pc[sc + S_TOTAL_POP] = total
    mo = matrix_offset(nb)
    pc[mo:] = setting_matrices(plan.contacts, pop).ravel()
    return pc


def calibrate_transmission(
    pc: NDArray[np.float64], layout: StateLayout, inputs: ResolvedInputs, disease: Disease
) -> None:
    """Set beta from the transmissibility input, and the growth bound and step, in ``pc``.

    Parameters
    ----------
    pc : ndarray
        Parameter vector; its beta, growth bound and growth step are written.
    layout : StateLayout
        Stage counts.
    inputs : ResolvedInputs
        Numbers picked for the run (the transmissibility measure and value).
    disease : Disease
        The plan's disease (seasonal amplitude, initial infections,
        importations).

    Raises
    ------
    ModelError
        When the doubling time is not positive or no transmission can give
        the transmissibility asked for.
    """
    nb = layout.bands
    sc = scalar_offset(nb)
    total = pc[sc + S_TOTAL_POP]
    measure, value = inputs.transmissibility_measure, inputs.transmissibility_value
    p_sym = pc[P_SYMPTOMATIC * nb : (P_SYMPTOMATIC + 1) * nb]
    h = pc[P_ADMIT * nb : (P_ADMIT + 1) * nb]
    beta = float(beta_for_targets(
        pc, layout, measure, [value],
        p_sym[None, :], h[None, :], [pc[sc + S_LATENT_RATE]], [pc[sc + S_INFECTIOUS_RATE]],
    )[0])
    pc[sc + S_BETA] = beta
    pc[sc + S_GROWTH_BOUND] = float(growth_bound(
        measure, value,
        latent=(pc[sc + S_LATENT_RATE], layout.latent_stages),
        infectious=(pc[sc + S_INFECTIOUS_RATE], layout.infectious_stages),
        waiting=(float(np.max(pc[P_WAIT_RATE * nb : (P_WAIT_RATE + 1) * nb])),
                 layout.wait_stages),
        amplitude=disease.seasonal_amplitude,
    ))
    pc[sc + S_GROWTH_STEP] = growth_step(
        total, disease.initial_infections + disease.daily_importations
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
    total = float(pop.sum())
    y0 = np.zeros(layout.size)
    seeded = disease.initial_infections * pop / total
    immune = np.asarray(disease.prior_immunity, dtype=np.float64) * pop
    y0[layout.stage(BLK_S)] = np.maximum(pop - immune - seeded, 0.0)
    y0[layout.stage(BLK_R)] = immune
    y0[layout.stage(BLK_E)] = seeded
    y0[layout.stage(BLK_CUM_INF)] = seeded
    return y0
