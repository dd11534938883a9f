"""The model as the fit sees it: parameter sets in, expected daily admissions out.

The observed course is simulated without the scenarios' measures: what
changed while the figures were observed (measures taken, behaviour) is the
fitted change of spread from the change date on, a contact multiplier ``m``
on every setting. It is carried as one more row of the measure table (a
contacts measure from the change date with every setting kept at 0 and
compliance ``1 - m``, so the multiplier ``1 - c (1 - 0)`` is ``m``), through
the same compiled ensemble kernel and the same parameter builder as every
other run (:func:`prepkit.uncertainty.batch.run_batch`). Each set starts
from its own day-0 state: its fitted infections at day 0 spread across bands
by population.
"""

from __future__ import annotations

import dataclasses

import numpy as np
from numpy.typing import NDArray

from prepkit.errors import ModelError
from prepkit.fitting.inputs import FitInputs
from prepkit.fitting.sampler import Simulator
from prepkit.plan import SETTINGS, End, Intervention, Plan, Range3, Scenario, Start
from prepkit.plan.fit import CHANGE_MEASURE
from prepkit.scenarios.runs import compile_scenario
from prepkit.simulation.compile import CompiledModel
from prepkit.simulation.draw_values import DrawValues, take_draws
from prepkit.uncertainty.batch import BatchSeries, run_batch

__all__ = ["COURSE", "course_plan", "course_series", "course_simulator"]

COURSE = "Observed course"
"""Name of the scenario the fit simulates."""


def course_plan(plan: Plan, inputs: FitInputs, days: int) -> Plan:
    """The plan the fit simulates: ``days`` days, no measures but the fitted change."""
    items: tuple[Intervention, ...] = ()
    if inputs.change_day is not None and plan.fit.change_date is not None:
        items = (Intervention(
            name=CHANGE_MEASURE, kind="contacts",
            start=Start(kind="date", date=plan.fit.change_date), end=End(kind="horizon"),
            contacts_kept={s: 0.0 for s in SETTINGS}, compliance=Range3.point(0.0)),)
    course = Scenario(name=COURSE, transmissibility_level="central", severity_level="central",
                      interventions=tuple(i.name for i in items))
    return dataclasses.replace(
        plan, details=dataclasses.replace(plan.details, horizon_days=max(int(days), 1),
                                          draws=0),
        interventions=items, scenarios=(course,))


def course_simulator(plan: Plan, inputs: FitInputs, days: int) -> Simulator:
    """Expected daily admissions of parameter sets over the first ``days`` days.

    Parameters
    ----------
    plan : Plan
        The plan.
    inputs : FitInputs
        The estimated inputs and how a set becomes model inputs.
    days : int
        Days to simulate [days] (:attr:`prepkit.fitting.observations.FitData.days_needed`).

    Returns
    -------
    Simulator
        Sets of shape (sets, estimated inputs) to admissions of shape (sets,
        days) [persons/day]; sets the model refuses come back as NaN rows.
    """
    course = course_plan(plan, inputs, days)
    model = compile_scenario(course, COURSE, True)

    def simulate(theta: NDArray[np.float64]) -> NDArray[np.float64]:
        return course_series(model, course, inputs.sets(theta)).admissions_per_day

    return simulate


def course_series(model: CompiledModel, course: Plan, values: DrawValues) -> BatchSeries:
    """Daily admissions and census of parameter sets; sets the model refuses give NaN rows."""
    try:
        return run_batch(model, course, values)
    except ModelError:
        pass
    shape = (values.size, course.details.horizon_days)
    out = BatchSeries(admissions_per_day=np.full(shape, np.nan),
                      ward_census_persons=np.full(shape, np.nan),
                      icu_census_persons=np.full(shape, np.nan))
    for i in range(values.size):
        try:
            runs = run_batch(model, course, take_draws(values, np.array([i])))
        except ModelError:
            continue
        out.admissions_per_day[i] = runs.admissions_per_day[0]
        out.ward_census_persons[i] = runs.ward_census_persons[0]
        out.icu_census_persons[i] = runs.icu_census_persons[0]
    return out
