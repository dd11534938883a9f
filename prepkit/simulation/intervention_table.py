"""The intervention table and the bed capacity the kernels' decisions read.

Equations in words
------------------
See :mod:`prepkit.simulation.compile`: contact multipliers
``1 - compliance (1 - kept_s)``, school closure intensity, isolation
multipliers ``1 - eps (1 - theta)`` and dose ceilings; the end date is the
last day in force.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import NDArray

from prepkit.plan import SETTINGS, Intervention, Plan
from prepkit.simulation.inputs import ResolvedInputs
from prepkit.simulation.layout import (
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
    START_CODES,
    StateLayout,
)
from prepkit.simulation.natural_history import isolation_multiplier


def intervention_table(
    plan: Plan,
    items: list[Intervention],
    inputs: ResolvedInputs,
    layout: StateLayout,
) -> tuple[NDArray[np.float64], NDArray[np.int64]]:
    """The intervention table and the band priority order of a run.

    Parameters
    ----------
    plan : Plan
        The plan (dates to model days).
    items : list of Intervention
        The run's interventions, one row each.
    inputs : ResolvedInputs
        Numbers picked for the run (compliance, infectious period).
    layout : StateLayout
        Stage counts.

    Returns
    -------
    itab : ndarray
        One row per intervention, columns ``IT_*``.
    iprio : ndarray of int64
        Band priority order per intervention (vaccination), padded with -1.
    """
    nb = layout.bands
    wait_days = np.array(plan.severity.onset_to_admission_days, dtype=np.float64)
    itab = np.zeros((len(items), IT_FIXED_COLUMNS + nb))
    iprio = np.full((len(items), nb), -1, dtype=np.int64)
    for r, item in enumerate(items):
        comp = float(inputs.compliance.get(item.name, item.compliance.central))
        row = itab[r]
        _timing_columns(row, item, plan)
        row[IT_MULTIPLIER : IT_MULTIPLIER + N_SETTINGS] = 1.0
        row[IT_ISO_SYMPTOMATIC] = 1.0
        row[IT_ISO_WAITING : IT_ISO_WAITING + nb] = 1.0
        _measure_columns(row, iprio[r], item, comp, inputs, layout, wait_days)
    return itab, iprio


def _timing_columns(row: NDArray[np.float64], item: Intervention, plan: Plan) -> None:
    """Kind, start and end columns of one intervention's row."""
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


def _measure_columns(
    row: NDArray[np.float64],
    priority: NDArray[np.int64],
    item: Intervention,
    comp: float,
    inputs: ResolvedInputs,
    layout: StateLayout,
    wait_days: NDArray[np.float64],
) -> None:
    """Multiplier, dose and isolation columns of one intervention's row (compliance ``comp``)."""
    nb = layout.bands
    if item.kind == "contacts":
        for s, setting in enumerate(SETTINGS):
            kept = float(item.contacts_kept.get(setting, 1.0))
            row[IT_MULTIPLIER + s] = 1.0 - comp * (1.0 - kept)
        row[IT_SCHOOL_CLOSURE] = comp * (1.0 - float(item.contacts_kept.get("school", 1.0)))
    elif item.kind == "vaccination" and item.vaccination is not None:
        row[IT_DOSES] = item.vaccination.doses_per_day
        row[IT_CEILING] = item.vaccination.uptake_ceiling * comp
        order = list(item.vaccination.priority)
        priority[: len(order)] = order
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


def capacity_array(plan: Plan) -> NDArray[np.float64]:
    """Catchment share and available (non-surge) ward and ICU beds of the occupancy triggers."""
    capacity = plan.capacity
    cap = np.zeros(N_CAP)
    cap[CAP_CATCHMENT] = capacity.catchment_share
    cap[CAP_WARD_AVAILABLE] = capacity.ward_beds * (1.0 - capacity.ward_baseline_occupancy)
    cap[CAP_ICU_AVAILABLE] = capacity.icu_beds * (1.0 - capacity.icu_baseline_occupancy)
    return cap
