"""From a fit to the projections: the fitted plan, and what the fit says for the pack.

Rules in words
--------------
* **The fitted plan.** The posterior draws of the fitted inputs replace
  their prior draws in every scenario variant of the ensemble
  (:func:`prepkit.simulation.draw_values.with_fitted`): draw ``i`` takes
  posterior draw ``i`` (the kept draws, shuffled with the plan's seed), so the
  estimated inputs keep their correlations (a faster spread with fewer
  infections at day 0, say). The single runs use the posterior medians.
  Every scenario is run at Central transmissibility and severity: the data
  now say how fast and how severe, so the scenarios differ only by their
  measures. The latent and infectious periods stay at the Central values
  the fit assumed (their ranges would move the projection away from the
  data it was fitted to); every other input keeps its prior range. The
  fitted change of spread stays in force to the horizon in every variant,
  with and without the scenario's measures, as a standing measure.
* **Measures act from the day after the last figure.** The fit describes
  what happened up to the last observed date, measures or not; a scenario
  measure that starts on a date up to then starts the day after it instead
  (its length, when it has one, unchanged), so that every projection passes
  through the figures. Measures already in force belong in the change date.
  A measure that starts on a level of occupancy or admissions starts when the
  projection reaches it.

The report of the fit (growth, fitted bands, scenario checks) is made by
:mod:`prepkit.fitting.findings`.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from prepkit.fitting.findings import FitReport, fit_report
from prepkit.fitting.fit import Fitted, NotFitted, fit_plan
from prepkit.fitting.inputs import SEVERITY
from prepkit.plan import SETTINGS, End, Intervention, Plan, Range3, Start
from prepkit.plan.fit import CHANGE_MEASURE

__all__ = ["NOT_ASKED", "FitOutcome", "fit_stage", "fitted_plan", "moved_measures"]


def _quantiles(column: NDArray[np.float64]) -> Range3:
    low, mid, high = np.quantile(column, [0.05, 0.5, 0.95])
    return Range3(low=float(low), central=float(mid), high=float(high))


def _from_the_day_after(items: tuple[Intervention, ...], as_of: dt.date
                        ) -> tuple[tuple[Intervention, ...], tuple[str, ...]]:
    """Measures dated up to ``as_of`` moved to start the day after; the names of those moved."""
    out, moved = [], []
    for item in items:
        if item.start.kind == "date" and item.start.date is not None and item.start.date <= as_of:
            item = dataclasses.replace(item, start=dataclasses.replace(
                item.start, date=as_of + dt.timedelta(days=1)))
            moved.append(item.name)
        out.append(item)
    return tuple(out), tuple(moved)


def moved_measures(plan: Plan, fitted: Fitted) -> tuple[str, ...]:
    """Names of the measures the fitted plan starts the day after the last figure."""
    return _from_the_day_after(plan.interventions, fitted.data.as_of)[1]


def fitted_plan(plan: Plan, fitted: Fitted) -> Plan:
    """The plan the projections run: the fitted inputs from the posterior (module notes).

    Parameters
    ----------
    plan : Plan
        The planner's plan.
    fitted : Fitted
        Its fit.

    Returns
    -------
    Plan
        Ranges of the fitted inputs at the posterior's 5%, 50% and 95% (the
        single runs take the medians and the tornado their 90% ranges), the
        posterior draws in ``fitted``, every scenario at Central levels, the
        change of spread as a standing measure.
    """
    values = fitted.draws(plan.details.seed)
    disease = plan.disease
    measure = disease.transmissibility_measure
    if values.transmissibility is not None:
        spread = _quantiles(values.transmissibility)
        if measure == "r0":
            disease = dataclasses.replace(disease, r0=spread)
        elif measure == "doubling_time":
            disease = dataclasses.replace(disease, doubling_time_days=spread)
        else:
            disease = dataclasses.replace(disease, growth_rate_per_day=spread)
    if values.initial_infections is not None:
        disease = dataclasses.replace(
            disease, initial_infections=float(np.median(values.initial_infections)))
    disease = dataclasses.replace(
        disease, latent_period_days=Range3.point(disease.latent_period_days.central),
        infectious_period_days=Range3.point(disease.infectious_period_days.central))
    severity = plan.severity
    if SEVERITY in fitted.inputs.names:
        factor = _quantiles(fitted.posterior.column(SEVERITY))
        severity = dataclasses.replace(severity, admitted_share=tuple(
            Range3(low=s.central * factor.low, central=s.central * factor.central,
                   high=s.central * factor.high) for s in severity.admitted_share))
    interventions, _ = _from_the_day_after(plan.interventions, fitted.data.as_of)
    standing: tuple[str, ...] = ()
    if plan.fit.change_date is not None and values.change_factor is not None:
        change = _quantiles(values.change_factor)
        interventions += (Intervention(
            name=CHANGE_MEASURE, kind="contacts",
            start=Start(kind="date", date=plan.fit.change_date), end=End(kind="horizon"),
            contacts_kept={s: 0.0 for s in SETTINGS},
            compliance=Range3(low=1.0 - change.high, central=1.0 - change.central,
                              high=1.0 - change.low)),)
        standing = (CHANGE_MEASURE,)
    scenarios = tuple(dataclasses.replace(s, transmissibility_level="central",
                                          severity_level="central") for s in plan.scenarios)
    return dataclasses.replace(plan, disease=disease, severity=severity,
                               interventions=interventions, scenarios=scenarios,
                               standing=standing, fitted=values)


@dataclass(frozen=True, kw_only=True, eq=False)
class FitOutcome:
    """What came of trying to fit a plan, for the pack.

    Attributes
    ----------
    report : FitReport or None
        The fit's report; None when there was no fit.
    reason : str
        Why there was no fit, or why its projections are not used; "" when they are.
    moved : tuple of str
        Measures whose start the projections moved to the day after the last figure.
    """

    report: FitReport | None
    reason: str = ""
    moved: tuple[str, ...] = ()

    @property
    def used(self) -> bool:
        """True when the projections start from the fit."""
        return self.report is not None and self.report.usable


NOT_ASKED = ("This run was asked not to fit (--no-fit): the observed figures are drawn beside "
             "the scenarios, which start from the workbook's figures.")
"""Why a run with ``--no-fit`` is not fitted, in the pack's words."""


def fit_stage(plan: Plan, say: Callable[[str], None] | None = None, *, asked: bool = True
              ) -> tuple[Plan, FitOutcome | None]:
    """Fit the plan when it asks for it and has enough figures; the plan to project from.

    Parameters
    ----------
    plan : Plan
        The planner's plan.
    say : callable, optional
        Told once, before the sampler starts (the slow step).
    asked : bool
        False when the run was told not to fit (``--no-fit``).

    Returns
    -------
    tuple of (Plan, FitOutcome or None)
        The fitted plan when the fit converged (else ``plan`` itself), and what
        came of the fit (None when the plan has no observed figures).
    """
    if not plan.observed:
        return plan, None
    if not asked:
        return plan, FitOutcome(report=None, reason=NOT_ASKED)
    got = fit_plan(plan, before_sampling=say)
    if isinstance(got, NotFitted):
        return plan, FitOutcome(report=None, reason=got.reason)
    report = fit_report(plan, got)
    if not report.usable:
        return plan, FitOutcome(
            report=report,
            reason="The fit did not converge (" + "; ".join(report.problems) + "), so the "
                   "projections are not fitted: they start from the workbook's figures.")
    return fitted_plan(plan, got), FitOutcome(report=report, moved=moved_measures(plan, got))
