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
from prepkit.simulation.natural_history import shares_before_isolation


def intervention_table(
    plan: Plan, items: list[Intervention], layout: StateLayout
) -> tuple[NDArray[np.float64], NDArray[np.int64]]:
    """The intervention table and the band priority order of a run, before compliance.

    The columns that depend on compliance (and on the infectious period)
    are left at "no effect" and written by :func:`compliance_columns`, for
    the one run and for every draw of the ensemble alike.

    Parameters
    ----------
    plan : Plan
        The plan (dates to model days).
    items : list of Intervention
        The run's interventions, one row each.
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
    itab = np.zeros((len(items), IT_FIXED_COLUMNS + nb))
    iprio = np.full((len(items), nb), -1, dtype=np.int64)
    for r, item in enumerate(items):
        row = itab[r]
        _timing_columns(row, item, plan)
        row[IT_MULTIPLIER : IT_MULTIPLIER + N_SETTINGS] = 1.0
        row[IT_ISO_SYMPTOMATIC] = 1.0
        row[IT_ISO_WAITING : IT_ISO_WAITING + nb] = 1.0
        if item.kind == "vaccination" and item.vaccination is not None:
            row[IT_DOSES] = item.vaccination.doses_per_day
            order = list(item.vaccination.priority)
            iprio[r, : len(order)] = order
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


def compliance_columns(
    itabs: NDArray[np.float64],
    row: int,
    item: Intervention,
    compliance: NDArray[np.float64],
    infectious_days: NDArray[np.float64],
    plan: Plan,
    layout: StateLayout,
) -> None:
    """Write the columns of one intervention that depend on compliance, for every draw.

    Parameters
    ----------
    itabs : ndarray, shape (draws, interventions, columns)
        Intervention tables; row ``row`` of each is written.
    row : int
        The intervention's row.
    item : Intervention
        The intervention.
    compliance : ndarray, shape (draws,)
        Compliance of each draw [fraction].
    infectious_days : ndarray, shape (draws,)
        Mean infectious period of each draw [days].
    plan : Plan
        The plan (onset-to-admission delays).
    layout : StateLayout
        Stage counts.

    Notes
    -----
    Contact multipliers ``1 - c (1 - kept_s)``, school closure intensity
    ``c (1 - kept_school)``, dose ceiling ``uptake c`` and isolation
    multipliers ``1 - eps (1 - theta)`` with ``eps = isolated share x c``
    (Fraser et al. 2004, PNAS 101:6146).
    """
    comp = np.asarray(compliance, dtype=np.float64)
    nb = layout.bands
    if item.kind == "contacts":
        for s, setting in enumerate(SETTINGS):
            kept = float(item.contacts_kept.get(setting, 1.0))
            itabs[:, row, IT_MULTIPLIER + s] = 1.0 - comp * (1.0 - kept)
        itabs[:, row, IT_SCHOOL_CLOSURE] = comp * (
            1.0 - float(item.contacts_kept.get("school", 1.0))
        )
    elif item.kind == "vaccination" and item.vaccination is not None:
        itabs[:, row, IT_CEILING] = item.vaccination.uptake_ceiling * comp
    elif item.kind == "isolation" and item.isolation is not None:
        eps = item.isolation.isolated_share * comp
        delay = item.isolation.days_from_onset
        theta = shares_before_isolation(delay, infectious_days, layout.infectious_stages)
        itabs[:, row, IT_ISO_SYMPTOMATIC] = 1.0 - eps * (1.0 - theta)
        wait_days = np.asarray(plan.severity.onset_to_admission_days, dtype=np.float64)
        theta_wait = shares_before_isolation(delay, wait_days, layout.wait_stages)
        itabs[:, row, IT_ISO_WAITING : IT_ISO_WAITING + nb] = 1.0 - eps[:, None] * (
            1.0 - theta_wait[None, :]
        )


def capacity_array(plan: Plan) -> NDArray[np.float64]:
    """Catchment share and available (non-surge) ward and ICU beds of the occupancy triggers."""
    capacity = plan.capacity
    cap = np.zeros(N_CAP)
    cap[CAP_CATCHMENT] = capacity.catchment_share
    cap[CAP_WARD_AVAILABLE] = capacity.ward_beds * (1.0 - capacity.ward_baseline_occupancy)
    cap[CAP_ICU_AVAILABLE] = capacity.icu_beds * (1.0 - capacity.icu_baseline_occupancy)
    return cap
