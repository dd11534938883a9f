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
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from prepkit.base.blas import one_blas_thread
from prepkit.errors import ModelError
from prepkit.plan import Plan, Scenario
from prepkit.simulation.draw_values import DrawValues
from prepkit.simulation.inputs import ResolvedInputs
from prepkit.simulation.intervention_table import capacity_array, intervention_table
from prepkit.simulation.layout import (
    BLK_S,
    P_POP,
    S_BETA,
    S_SEASON_AMPLITUDE,
    S_SEASON_PEAK_DAY,
    StateLayout,
    scalar_offset,
)
from prepkit.simulation.parameters import (
    check_durations,
    draw_parameters,
    draw_transmission,
    fixed_parameters,
    initial_state,
    model_layout,
)
from prepkit.simulation.seasonality import season_factor
from prepkit.simulation.transmissibility import (
    Transmissibility,
    doubling_time,
    growth_rate,
    mean_generation_time,
    reproduction_number,
)

DEFAULT_SUBSTEPS = 4
"""Fewest RK4 steps per day of a single run. Measured against the DOP853 reference
(benchmarks/accuracy.py): the largest census error over a run, relative to the peak, is about
2e-7 (10-12 band plans) to 2e-5 (R0 4, one-day latent period) with 4 steps, 16 times less with
8; the target is 1e-3."""

MAX_STEP_RATE = 0.5
"""Largest (rate x step) of a single run, for every per-capita outflow rate met: Erlang stage
rates and the force of infection with importations and dosing (the step rule of
:func:`prepkit.simulation.kernels.advance_day`); faster days get more steps. Below the 1 that
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


@one_blas_thread
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
        False leaves the scenario's interventions out (the plan's standing
        measures stay).
    substeps : int, optional
        Fewest RK4 steps per day; default :data:`DEFAULT_SUBSTEPS` (days
        with faster rates take more, see
        :func:`prepkit.simulation.kernels.advance_day`).

    Returns
    -------
    CompiledModel
        The compiled run, beta calibrated.
    """
    disease = plan.disease
    layout = model_layout(plan)
    pop = np.array([b.people for b in plan.bands], dtype=np.float64)
    if np.any(pop <= 0.0):
        raise ModelError("every age band needs a positive population")

    names = tuple(plan.standing) + (tuple(scenario.interventions) if with_interventions else ())
    items = [plan.intervention(name) for name in names]
    vaccines = [item.vaccination for item in items if item.vaccination is not None]
    check_durations(plan, inputs)
    peak_day = seasonal_peak_day(plan.details.day0, disease.seasonal_peak)
    one_run = DrawValues.of_inputs(inputs)
    base_itab, iprio = intervention_table(plan, items, layout)
    pcs, itabs = draw_parameters(
        fixed_parameters(plan, layout, pop, vaccines, peak_day), base_itab, layout, plan, items,
        one_run,
    )
    draw_transmission(
        pcs, layout, inputs.transmissibility_measure, one_run, disease.seasonal_amplitude
    )
    pc, itab = pcs[0], itabs[0]
    cap = capacity_array(plan)
    y0 = initial_state(layout, disease, pop)

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


@one_blas_thread
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
