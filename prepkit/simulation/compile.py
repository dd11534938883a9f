"""Turn a plan, a scenario and its chosen levels into flat numeric arrays.

Equations in words
------------------
* Stage rates: a delay of mean ``T`` with ``q`` Erlang stages has stage
  rate ``q / T``.
* Admission share of infections of protected people:
  ``h_v = h (1 - VE_sev) / (1 - VE_inf)`` (capped at the symptomatic share;
  0 when ``VE_inf = 1``), so that the vaccine's overall effect on admission
  is ``VE_sev`` while infections drop by ``VE_inf``. The symptomatic share
  does not change, so the admissions removed become symptomatic cases at
  home.
* Contact multiplier of a measure in setting ``s``:
  ``1 - compliance (1 - kept_s)``; school closure intensity
  ``compliance (1 - kept_school)``.
* Isolation multiplier of a compartment: ``1 - eps (1 - theta)`` with
  ``eps = isolated share x compliance`` and ``theta`` the share of its
  infectious time before isolation (see
  :mod:`prepkit.simulation.natural_history`).
* Dose ceiling of a band: ``uptake ceiling x compliance x N_i``.
* Day 0: ``prior immunity x N_i`` move from ``S`` to ``R``; the initial
  infections, spread by band population, move from ``S`` to the first
  latent stage (and count as infections).
* Seasonal peak: the planner's month and day in the year of day 0, or the
  next year when that date is before day 0.
* beta: from R0, or from the growth rate (``ln 2 / doubling time``), with
  the next-generation machinery of :mod:`prepkit.simulation.transmissibility`.
"""

from __future__ import annotations

import datetime as dt
import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from prepkit.errors import ModelError
from prepkit.plan import SETTINGS, Plan, Scenario
from prepkit.simulation.contacts import setting_matrices
from prepkit.simulation.health import growth_bound, growth_step
from prepkit.simulation.inputs import ResolvedInputs
from prepkit.simulation.layout import (
    BLK_CUM_INF,
    BLK_E,
    BLK_R,
    BLK_S,
    CAP_CATCHMENT,
    CAP_ICU_AVAILABLE,
    CAP_WARD_AVAILABLE,
    END_CODES,
    IT_CEILING,
    IT_DOSES,
    IT_DURATION,
    IT_END_DAY,
    IT_END_KIND,
    IT_FIXED_COLUMNS,
    IT_ISO_SYMPTOMATIC,
    IT_ISO_WAITING,
    IT_KIND,
    IT_MULTIPLIER,
    IT_RELEASE_LEVEL,
    IT_SCHOOL_CLOSURE,
    IT_START_DAY,
    IT_START_KIND,
    IT_START_LEVEL,
    KIND_CODES,
    N_CAP,
    N_SETTINGS,
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
    START_CODES,
    StateLayout,
    matrix_offset,
    parameter_size,
    scalar_offset,
)
from prepkit.simulation.natural_history import isolation_multiplier
from prepkit.simulation.seasonality import season_factor
from prepkit.simulation.transmissibility import (
    NOBODY_INFECTS,
    Transmissibility,
    beta_for_growth_rate,
    beta_for_r0,
    doubling_time,
    growth_rate,
    mean_generation_time,
    reproduction_number,
    transmission_is_finite,
)

DEFAULT_SUBSTEPS = 4
"""Fewest RK4 steps per day of a single run. Measured against the DOP853 reference
(benchmarks/accuracy.py): the largest census error over a run, relative to the peak, is about
2e-7 (10-12 band plans) to 2e-5 (R0 4, one-day latent period) with 4 steps, 16 times less with
8; the target is 1e-3."""

MAX_STEP_RATE = 0.5
"""Largest (rate x step) of a single run, for every per-capita outflow rate met: Erlang stage
rates and the force of infection with importations and dosing (the step rule of
:func:`prepkit.simulation.step_rule.advance_day`); faster days get more steps. Below the 1 that
keeps RK4 steps non-negative (see :mod:`prepkit.simulation.health`), for accuracy."""


@dataclass(frozen=True, kw_only=True, eq=False)
class CompiledModel:
    """Everything one run needs, as flat arrays plus the names to read them back.

    Attributes
    ----------
    layout : StateLayout
        Stage counts and offsets of the state vector.
    lay : ndarray of int64
        The layout as the kernels read it.
    pc : ndarray
        Parameter vector (see :mod:`prepkit.simulation.layout`).
    itab : ndarray
        Intervention table, one row per intervention of the run.
    iprio : ndarray of int64
        Band priority order per intervention (vaccination), padded with -1.
    cap : ndarray
        Catchment share and available (non-surge) ward and ICU beds used by
        occupancy triggers.
    y0 : ndarray
        State at day 0.
    horizon_days : int
        Days to simulate [days].
    substeps : int
        Fewest RK4 steps per day.
    max_step_rate : float
        Largest (rate x step) of the step rule [dimensionless].
    intervention_names, intervention_kinds : tuple of str
        Names and kinds of the table rows.
    inputs : ResolvedInputs
        The numbers picked for this run.
    day0 : datetime.date
        Calendar date of day 0.
    with_interventions : bool
        False when the run leaves the scenario's interventions out.
    scenario_name : str
        Name of the scenario.
    plan : Plan or None
        The plan compiled (for naming inputs in errors).
    """

    layout: StateLayout
    lay: NDArray[np.int64]
    pc: NDArray[np.float64]
    itab: NDArray[np.float64]
    iprio: NDArray[np.int64]
    cap: NDArray[np.float64]
    y0: NDArray[np.float64]
    horizon_days: int
    substeps: int
    intervention_names: tuple[str, ...]
    intervention_kinds: tuple[str, ...]
    inputs: ResolvedInputs
    day0: dt.date
    with_interventions: bool = True
    max_step_rate: float = MAX_STEP_RATE
    scenario_name: str = ""
    plan: Plan | None = None

    @property
    def description(self) -> str:
        """The run in words, e.g. ``"Scenario 'Base' with its measures"``."""
        kind = "with" if self.with_interventions else "without"
        return f"Scenario {self.scenario_name!r} {kind} its measures"

    @property
    def beta(self) -> float:
        """Transmission scale [per contact]."""
        return float(self.pc[scalar_offset(self.layout.bands) + S_BETA])

    @property
    def population(self) -> NDArray[np.float64]:
        """Band populations at day 0 [persons]."""
        nb = self.layout.bands
        return np.asarray(self.pc[P_POP * nb : (P_POP + 1) * nb], dtype=np.float64)

    def season(self, t: float) -> float:
        """Seasonal multiplier at model time ``t`` [dimensionless]."""
        sc = scalar_offset(self.layout.bands)
        return float(
            season_factor(t, self.pc[sc + S_SEASON_AMPLITUDE], self.pc[sc + S_SEASON_PEAK_DAY])
        )


def seasonal_peak_day(day0: dt.date, peak: dt.date | None) -> float:
    """Model day of the seasonal peak: the month and day in the year of day 0 or after.

    Parameters
    ----------
    day0 : datetime.date
        Calendar date of day 0.
    peak : datetime.date or None
        Peak date; its year is ignored. None gives day 0.

    Returns
    -------
    float
        Day of the peak [days since day 0], in [0, 366).
    """
    if peak is None:
        return 0.0
    for year in (day0.year, day0.year + 1):
        try:
            candidate = dt.date(year, peak.month, peak.day)
        except ValueError:  # 29 February in a common year
            candidate = dt.date(year, 2, 28)
        if candidate >= day0:
            return float((candidate - day0).days)
    raise AssertionError("unreachable")  # pragma: no cover


def compile_model(
    plan: Plan,
    scenario: Scenario,
    inputs: ResolvedInputs,
    *,
    with_interventions: bool = True,
    substeps: int | None = None,
) -> CompiledModel:
    """Compile a plan, a scenario and its picked numbers into flat arrays.

    Parameters
    ----------
    plan : Plan
        The plan (checked by :func:`prepkit.simulation.inputs.validate_plan`).
    scenario : Scenario
        The scenario.
    inputs : ResolvedInputs
        Numbers picked for the run.
    with_interventions : bool
        False leaves every intervention out.
    substeps : int, optional
        Fewest RK4 steps per day; default :data:`DEFAULT_SUBSTEPS` (days
        with faster rates take more, see
        :func:`prepkit.simulation.step_rule.advance_day`).

    Returns
    -------
    CompiledModel
        The compiled run, beta calibrated.
    """
    disease = plan.disease
    severity = plan.severity
    bands = plan.bands
    nb = len(bands)
    layout = StateLayout(
        bands=nb,
        latent_stages=disease.latent_stages,
        infectious_stages=disease.infectious_stages,
        wait_stages=severity.admission_delay_stages,
        ward_stages=severity.ward_stages,
        icu_stages=severity.icu_stages,
    )
    pop = np.array([b.people for b in bands], dtype=np.float64)
    if np.any(pop <= 0.0):
        raise ModelError("every age band needs a positive population")
    total = float(pop.sum())

    names = tuple(scenario.interventions) if with_interventions else ()
    items = [plan.intervention(name) for name in names]
    vaccines = [item.vaccination for item in items if item.vaccination is not None]
    ve_inf = inputs.efficacy_infection if vaccines else 0.0
    ve_sev = inputs.efficacy_severe if vaccines else 0.0
    days_to_protection = vaccines[0].days_to_protection if vaccines else 0.0

    p_sym = np.array(inputs.symptomatic_share, dtype=np.float64)
    h = np.minimum(np.array(inputs.admitted_share, dtype=np.float64), p_sym)
    if ve_inf >= 1.0:
        hv = np.zeros(nb)
    else:
        hv = np.minimum(p_sym, h * (1.0 - ve_sev) / (1.0 - ve_inf))
    wait_days = np.array(severity.onset_to_admission_days, dtype=np.float64)
    ward_days = np.array(inputs.ward_stay_days, dtype=np.float64)
    icu_days = np.array(inputs.icu_stay_days, dtype=np.float64)
    if min(inputs.latent_period_days, inputs.infectious_period_days) <= 0.0:
        raise ModelError("latent and infectious periods must be positive")
    if np.any(wait_days <= 0.0) or np.any(ward_days <= 0.0) or np.any(icu_days <= 0.0):
        raise ModelError("onset-to-admission delays and stays must be positive")

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
    pc[sc + S_SEASON_PEAK_DAY] = seasonal_peak_day(plan.details.day0, disease.seasonal_peak)
    pc[sc + S_IMPORTS] = disease.daily_importations
    pc[sc + S_TOTAL_POP] = total
    mo = matrix_offset(nb)
    pc[mo:] = setting_matrices(plan.contacts, pop).ravel()

    measure, value = inputs.transmissibility_measure, inputs.transmissibility_value
    if measure == "r0":
        beta = beta_for_r0(value, pc, layout)
    elif measure == "growth_rate":
        beta = beta_for_growth_rate(value, pc, layout)
    else:
        if value <= 0.0:
            raise ModelError(f"doubling time must be positive, found {value:.4g} days")
        beta = beta_for_growth_rate(math.log(2.0) / value, pc, layout)
    if not transmission_is_finite(beta, pc, layout):
        raise ModelError(NOBODY_INFECTS)
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

    itab = np.zeros((len(items), IT_FIXED_COLUMNS + nb))
    iprio = np.full((len(items), nb), -1, dtype=np.int64)
    for r, item in enumerate(items):
        comp = float(inputs.compliance.get(item.name, item.compliance.central))
        row = itab[r]
        row[IT_KIND] = KIND_CODES[item.kind]
        row[IT_START_KIND] = START_CODES[item.start.kind]
        if item.start.date is not None:
            row[IT_START_DAY] = plan.day_of(item.start.date)
        row[IT_START_LEVEL] = item.start.level if item.start.level is not None else np.inf
        row[IT_END_KIND] = END_CODES[item.end.kind]
        if item.end.date is not None:
            # The end date is the last day in force: the measure stops at the
            # midnight that follows it.
            row[IT_END_DAY] = plan.day_of(item.end.date) + 1
        row[IT_DURATION] = item.end.duration_days or 0.0
        row[IT_RELEASE_LEVEL] = item.end.level if item.end.level is not None else -np.inf
        row[IT_MULTIPLIER : IT_MULTIPLIER + N_SETTINGS] = 1.0
        row[IT_ISO_SYMPTOMATIC] = 1.0
        row[IT_ISO_WAITING : IT_ISO_WAITING + nb] = 1.0
        if item.kind == "contacts":
            for s, setting in enumerate(SETTINGS):
                kept = float(item.contacts_kept.get(setting, 1.0))
                row[IT_MULTIPLIER + s] = 1.0 - comp * (1.0 - kept)
            row[IT_SCHOOL_CLOSURE] = comp * (1.0 - float(item.contacts_kept.get("school", 1.0)))
        elif item.kind == "vaccination" and item.vaccination is not None:
            row[IT_DOSES] = item.vaccination.doses_per_day
            row[IT_CEILING] = item.vaccination.uptake_ceiling * comp
            order = list(item.vaccination.priority)
            iprio[r, : len(order)] = order
        elif item.kind == "isolation" and item.isolation is not None:
            eps = item.isolation.isolated_share * comp
            delay = item.isolation.days_from_onset
            row[IT_ISO_SYMPTOMATIC] = isolation_multiplier(
                eps, delay, inputs.infectious_period_days, layout.infectious_stages
            )
            for i in range(nb):
                row[IT_ISO_WAITING + i] = isolation_multiplier(
                    eps, delay, float(wait_days[i]), layout.wait_stages
                )

    capacity = plan.capacity
    cap = np.zeros(N_CAP)
    cap[CAP_CATCHMENT] = capacity.catchment_share
    cap[CAP_WARD_AVAILABLE] = capacity.ward_beds * (1.0 - capacity.ward_baseline_occupancy)
    cap[CAP_ICU_AVAILABLE] = capacity.icu_beds * (1.0 - capacity.icu_baseline_occupancy)

    y0 = np.zeros(layout.size)
    seeded = disease.initial_infections * pop / total
    immune = np.asarray(disease.prior_immunity, dtype=np.float64) * pop
    y0[layout.stage(BLK_S)] = np.maximum(pop - immune - seeded, 0.0)
    y0[layout.stage(BLK_R)] = immune
    y0[layout.stage(BLK_E)] = seeded
    y0[layout.stage(BLK_CUM_INF)] = seeded

    steps = DEFAULT_SUBSTEPS if substeps is None else int(substeps)
    if steps < 1:
        raise ModelError("substeps must be at least 1")

    return CompiledModel(
        layout=layout,
        lay=layout.as_array(),
        pc=pc,
        itab=itab,
        iprio=iprio,
        cap=cap,
        y0=y0,
        horizon_days=int(plan.details.horizon_days),
        substeps=steps,
        intervention_names=names,
        intervention_kinds=tuple(item.kind for item in items),
        inputs=inputs,
        day0=plan.details.day0,
        with_interventions=with_interventions,
        scenario_name=scenario.name,
        plan=plan,
    )


def transmissibility_of(model: CompiledModel) -> Transmissibility:
    """Transmissibility figures of a compiled run.

    Parameters
    ----------
    model : CompiledModel
        The run.

    Returns
    -------
    Transmissibility
        R0, growth rate, doubling time and mean generation time (fully
        susceptible, no interventions, season 1) and the effective R at day
        0 (day-0 susceptibles, day-0 season, no interventions).
    """
    layout, pc = model.layout, model.pc
    r0 = reproduction_number(pc, layout)
    rate = growth_rate(pc, layout)
    pop = model.population
    unprotected = model.y0[layout.stage(BLK_S)] / pop
    r_day0 = reproduction_number(
        pc, layout, unprotected_share=unprotected, season=model.season(0.0)
    )
    return Transmissibility(
        measure=model.inputs.transmissibility_measure,
        level=model.inputs.transmissibility_level,
        given_value=model.inputs.transmissibility_value,
        beta_per_contact=model.beta,
        r0=r0,
        growth_rate_per_day=rate,
        doubling_time_days=doubling_time(rate),
        mean_generation_time_days=mean_generation_time(pc, layout),
        r_effective_day0=r_day0,
    )
