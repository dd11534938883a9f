"""Which inputs the fit estimates, their priors from the plan, and parameter sets as model inputs.

The fit estimates, from the observed admissions:

* the transmissibility before the change date, in the plan's own measure
  (R0, doubling time or growth rate), with the beta-PERT prior of its
  Low/Central/High range;
* the spread after the change date relative to before, when the Observed
  sheet gives a change date (prior: its Low/Central/High range);
* the infections at day 0, log-uniform between the Disease sheet's figure
  divided and multiplied by the planner's factor;
* a multiplier on every band's admitted share (how severe the disease is
  locally), with the beta-PERT prior of the population-weighted admitted
  share's range relative to its Central value.

An input whose range is a single value is not estimated: it stays at that
value. Every other input of a set takes its Central value.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from prepkit.fitting.priors import Prior
from prepkit.plan import FittedValues, Plan, Range3, Scenario
from prepkit.simulation.draw_values import DrawValues, take_draws, with_fitted
from prepkit.simulation.inputs import resolve_inputs

__all__ = ["CHANGE", "INITIAL", "SEVERITY", "TRANSMISSIBILITY", "FitInputs", "fit_inputs"]

TRANSMISSIBILITY = "transmissibility"
CHANGE = "change_factor"
INITIAL = "initial_infections"
SEVERITY = "admitted_share_multiplier"

_MEASURE_WORDS = {
    "r0": ("Basic reproduction number R0", ""),
    "doubling_time": ("Doubling time of infections", "days"),
    "growth_rate": ("Growth rate of infections", "per day"),
}
"""Label and unit of the estimated transmissibility by the plan's measure of it; with a change
date the label ends "before the change"."""


@dataclass(frozen=True, kw_only=True, eq=False)
class FitInputs:
    """The estimated inputs of a plan and how a parameter set becomes model inputs.

    Attributes
    ----------
    priors : tuple of Prior
        Priors of the estimated inputs, in column order.
    central : DrawValues
        Every input at its Central value (one row).
    change_day : int or None
        Model day from which the change applies [days since day 0].
    """

    priors: tuple[Prior, ...]
    central: DrawValues
    change_day: int | None

    @property
    def names(self) -> tuple[str, ...]:
        """Keys of the estimated inputs, in column order."""
        return tuple(p.name for p in self.priors)

    def fitted(self, theta: NDArray[np.float64]) -> FittedValues:
        """Parameter sets as fitted values.

        Parameters
        ----------
        theta : ndarray, shape (sets, estimated inputs)
            Values of the estimated inputs, columns in the order of :attr:`priors`.

        Returns
        -------
        FittedValues
            One row per set; the admitted share of each band is its Central
            value times the set's multiplier.
        """
        x = np.atleast_2d(np.asarray(theta, dtype=np.float64))
        column = {name: x[:, j] for j, name in enumerate(self.names)}
        multiplier = column.get(SEVERITY)
        return FittedValues(
            transmissibility=column.get(TRANSMISSIBILITY),
            change_factor=column.get(CHANGE),
            initial_infections=column.get(INITIAL),
            admitted_share=(None if multiplier is None
                            else self.central.admitted_share * multiplier[:, None]),
        )

    def sets(self, theta: NDArray[np.float64]) -> DrawValues:
        """Model inputs of parameter sets: the Central inputs with the fitted ones replaced.

        Parameters
        ----------
        theta : ndarray, shape (sets, estimated inputs)
            Values of the estimated inputs, columns in the order of :attr:`priors`.

        Returns
        -------
        DrawValues
            One row per set (:func:`prepkit.simulation.draw_values.with_fitted`).
        """
        return self.values(self.fitted(theta))

    def values(self, fitted: FittedValues) -> DrawValues:
        """Model inputs of fitted values, one row per fitted row.

        The Central inputs with the fitted ones replaced
        (:func:`prepkit.simulation.draw_values.with_fitted`).
        """
        central = take_draws(self.central, np.zeros(fitted.rows, dtype=np.int64))
        return with_fitted(central, fitted)


def _transmissibility(plan: Plan) -> tuple[str, Range3]:
    disease = plan.disease
    given = {"r0": disease.r0, "doubling_time": disease.doubling_time_days,
             "growth_rate": disease.growth_rate_per_day}
    measure: str = disease.transmissibility_measure
    chosen = given.get(measure)
    if chosen is None:
        measure, chosen = next((k, v) for k, v in given.items() if v is not None)
    return measure, chosen


def _weighted_admitted(plan: Plan) -> Range3:
    """Population-weighted admitted share per infection at each level [fraction]."""
    people = np.array([b.people for b in plan.bands], dtype=np.float64)
    weights = people / people.sum()
    shares = plan.severity.admitted_share
    return Range3(**{level: float(weights @ np.array([s.at(level) for s in shares]))
                     for level in ("low", "central", "high")})


def fit_inputs(plan: Plan) -> FitInputs:
    """The inputs the fit estimates for a plan, with their priors.

    Parameters
    ----------
    plan : Plan
        The plan (its Observed sheet settings in ``plan.fit``).

    Returns
    -------
    FitInputs
        Priors, Central values and the change day.
    """
    priors: list[Prior] = []
    measure, spread = _transmissibility(plan)
    settings = plan.fit
    if not spread.is_point:
        label, unit = _MEASURE_WORDS[measure]
        if settings.change_date is not None:
            label += " before the change"
        priors.append(Prior(name=TRANSMISSIBILITY, label=label, unit=unit, kind="pert",
                            low=spread.low, mode=spread.central, high=spread.high))
    change_day = None
    if settings.change_date is not None:
        change_day = plan.day_of(settings.change_date)
        factor = settings.change_factor
        if not factor.is_point:
            priors.append(Prior(name=CHANGE, label="Spread after the change, relative to before",
                                unit="ratio", kind="pert", low=factor.low,
                                mode=factor.central, high=factor.high))
    seeds = float(plan.disease.initial_infections)
    if seeds > 0.0:
        f = settings.initial_infections_factor
        priors.append(Prior(name=INITIAL, label="Infections at day 0", unit="persons",
                            kind="log_uniform", low=seeds / f, mode=seeds, high=seeds * f))
    admitted = _weighted_admitted(plan)
    if not admitted.is_point and admitted.central > 0.0:
        priors.append(Prior(name=SEVERITY, label="Admitted share, relative to Central",
                            unit="ratio", kind="pert", low=admitted.low / admitted.central,
                            mode=1.0, high=admitted.high / admitted.central))
    course = Scenario(name="Observed course", transmissibility_level="central",
                      severity_level="central", interventions=())
    central = DrawValues.of_inputs(resolve_inputs(plan, course))
    return FitInputs(priors=tuple(priors), central=central, change_day=change_day)
