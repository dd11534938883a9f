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
* **Scenarios the data rule out.** For each scenario as the planner wrote
  it (before the fit), 400 draws of its ensemble are run over the observed
  days with its measures, and each draw's expected admissions get negative
  binomial noise with the fitted dispersion (a prior predictive check, Box
  1980). A scenario is ruled out when the observed total of new admissions
  lies outside the central 95% of its draws' totals (below 2.5% or above
  97.5%), consistent otherwise.
* **How much the fit narrows the ranges.** The 90% range of the highest
  daily admissions of the observed course carried on to the horizon (no
  scenario measures), with the prior draws and with the posterior draws.

References
----------
Box G.E.P. (1980). Sampling and Bayes' inference in scientific modelling and
robustness. J. R. Stat. Soc. A 143:383-430. doi:10.2307/2982063
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from prepkit.fitting.fit import Fitted, NotFitted, fit_plan
from prepkit.fitting.growth import growth_rates, reproduction_numbers
from prepkit.fitting.inputs import CHANGE, INITIAL, SEVERITY, TRANSMISSIBILITY
from prepkit.fitting.sampler import dispersion_of
from prepkit.fitting.simulator import COURSE, course_plan, course_series
from prepkit.plan import SETTINGS, End, FittedValues, Intervention, Plan, Range3, Start
from prepkit.plan.fit import CHANGE_MEASURE
from prepkit.scenarios.runs import compile_scenario
from prepkit.simulation.draw_values import take_draws, with_fitted
from prepkit.uncertainty.ensemble import calibrate_beta
from prepkit.uncertainty.fields import sample_quantiles
from prepkit.uncertainty.run import draw_values

__all__ = ["CHECK_DRAWS", "RULED_OUT_TAILS", "Consistency", "Estimate", "FitOutcome", "FitReport",
           "Growth", "fit_report", "fit_stage", "fitted_plan", "fitted_values"]

CHECK_DRAWS = 400
"""Draws per scenario of the prior predictive check and of the narrowing [count]."""

RULED_OUT_TAILS = (0.025, 0.975)
"""A scenario is ruled out when the observed total lies below the first or above the second
quantile of its draws' totals [fraction]."""

BAND_QUANTILES = (0.05, 0.25, 0.5, 0.75, 0.95)
"""Quantiles of the fitted daily series: 90% and 50% bands and the median [fraction]."""


def fitted_values(fitted: Fitted, seed: int) -> FittedValues:
    """The kept posterior draws as fitted values, shuffled with ``seed``."""
    kept = fitted.posterior.samples()[:, :-1]
    order = np.random.default_rng(seed).permutation(kept.shape[0])
    return fitted.inputs.fitted(kept[order])


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
    values = fitted_values(fitted, plan.details.seed)
    names = fitted.inputs.names
    disease = plan.disease
    measure = disease.transmissibility_measure
    if TRANSMISSIBILITY in names and values.transmissibility is not None:
        spread = _quantiles(values.transmissibility)
        if measure == "r0":
            disease = dataclasses.replace(disease, r0=spread)
        elif measure == "doubling_time":
            disease = dataclasses.replace(disease, doubling_time_days=spread)
        else:
            disease = dataclasses.replace(disease, growth_rate_per_day=spread)
    if INITIAL in names and values.initial_infections is not None:
        disease = dataclasses.replace(
            disease, initial_infections=float(np.median(values.initial_infections)))
    disease = dataclasses.replace(
        disease, latent_period_days=Range3.point(disease.latent_period_days.central),
        infectious_period_days=Range3.point(disease.infectious_period_days.central))
    severity = plan.severity
    if SEVERITY in names:
        factor = _quantiles(fitted.posterior.column(SEVERITY))
        severity = dataclasses.replace(severity, admitted_share=tuple(
            Range3(low=s.central * factor.low, central=s.central * factor.central,
                   high=s.central * factor.high) for s in severity.admitted_share))
    interventions, _ = _from_the_day_after(plan.interventions, fitted.data.as_of)
    standing: tuple[str, ...] = ()
    if CHANGE in names and plan.fit.change_date is not None and values.change_factor is not None:
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


@dataclass(frozen=True, kw_only=True)
class Estimate:
    """One fitted input: its prior range and its posterior median and 90% interval [unit]."""

    key: str
    label: str
    unit: str
    median: float
    low: float
    high: float
    prior_low: float
    prior_high: float


@dataclass(frozen=True, kw_only=True)
class Growth:
    """Growth before or after the change date: medians and 90% intervals.

    Attributes
    ----------
    period : {"before", "after"}
        Before the change date (or the whole observed period), or after it.
    growth_rate : tuple of float
        (median, 5%, 95%) [1/day].
    reproduction_number : tuple of float
        (median, 5%, 95%) at the start of the figures [dimensionless].
    """

    period: str
    growth_rate: tuple[float, float, float]
    reproduction_number: tuple[float, float, float]

    @property
    def trend(self) -> str:
        """Direction of growth: "doubling", "halving" or "level".

        "doubling" when the 90% range of the growth rate is above 0, "halving"
        when below, "level" when it holds 0.
        """
        _, low, high = self.growth_rate
        return "doubling" if low > 0.0 else "halving" if high < 0.0 else "level"

    @property
    def doubling_days(self) -> tuple[float, float, float] | None:
        """(median, shortest, longest) doubling or halving time ``ln 2 / |r|`` [days].

        From the growth rate's median and 90% range; None when the range holds 0.
        """
        mid, low, high = self.growth_rate
        if self.trend == "doubling":
            return (math.log(2.0) / mid, math.log(2.0) / high, math.log(2.0) / low)
        if self.trend == "halving":
            return (math.log(2.0) / -mid, math.log(2.0) / -low, math.log(2.0) / -high)
        return None


@dataclass(frozen=True, kw_only=True)
class Consistency:
    """A scenario against the observed admissions (prior predictive check, module notes).

    Attributes
    ----------
    scenario : str
        Scenario name.
    observed_total : float
        New admissions in the fitted rows [persons].
    low, high : float
        2.5% and 97.5% of the scenario's draws' totals [persons].
    share_below : float
        Share of the scenario's draws with fewer admissions than observed [fraction].
    """

    scenario: str
    observed_total: float
    low: float
    high: float
    share_below: float

    @property
    def consistent(self) -> bool:
        """True unless the data rule the scenario out."""
        return RULED_OUT_TAILS[0] <= self.share_below <= RULED_OUT_TAILS[1]


@dataclass(frozen=True, kw_only=True, eq=False)
class FitReport:
    """What the fit says, for the pack and the results files.

    Attributes
    ----------
    fitted : Fitted
        The fit.
    as_of : datetime.date
        The last observed date.
    estimates : tuple of Estimate
        The fitted inputs (the dispersion last).
    growth : tuple of Growth
        Before, and when a change was fitted after, the change date.
    days : ndarray of int64, shape (days,)
        Model days of the fitted series [days since day 0].
    bands : dict of str to ndarray, shape (5, days)
        ``"admissions"``, ``"ward"``, ``"icu"``: quantiles :data:`BAND_QUANTILES` of the
        fitted daily admissions [persons/day] and census [persons].
    consistency : tuple of Consistency
        Every scenario of the planner's plan.
    narrowing : tuple of tuple of float
        (5%, 95%) of the peak daily admissions of the observed course to the horizon,
        with the prior draws and with the posterior draws [persons/day].
    usable : bool
        True when the projections start from the fit (its convergence checks passed).
    """

    fitted: Fitted
    as_of: dt.date
    estimates: tuple[Estimate, ...]
    growth: tuple[Growth, ...]
    days: NDArray[np.int64]
    bands: dict[str, NDArray[np.float64]]
    consistency: tuple[Consistency, ...]
    narrowing: tuple[tuple[float, float], tuple[float, float]]
    usable: bool

    @property
    def problems(self) -> tuple[str, ...]:
        """The failed checks, in plain words."""
        return self.fitted.checks.problems


def _triple(x: NDArray[np.float64]) -> tuple[float, float, float]:
    mid, low, high = np.quantile(x, [0.5, 0.05, 0.95])
    return float(mid), float(low), float(high)


def _growth(plan: Plan, fitted: Fitted, thinned: FittedValues) -> tuple[Growth, ...]:
    course = course_plan(plan, fitted.inputs, 1)
    model = compile_scenario(course, COURSE, True)
    values = with_fitted(take_draws(fitted.inputs.central,
                                    np.zeros(thinned.rows, dtype=np.int64)), thinned)
    beta = calibrate_beta(model, values)
    susceptible = 1.0 - np.asarray(plan.disease.prior_immunity, dtype=np.float64)
    periods = [("before", np.ones(thinned.rows))]
    if thinned.change_factor is not None:
        periods.append(("after", thinned.change_factor))
    out = []
    for period, factor in periods:
        rates = growth_rates(model.pc, model.layout, values, beta, factor, susceptible)
        rs = reproduction_numbers(model.pc, model.layout, values, beta, factor, susceptible)
        out.append(Growth(period=period, growth_rate=_triple(rates),
                          reproduction_number=_triple(rs)))
    return tuple(out)


def _estimates(fitted: Fitted) -> tuple[Estimate, ...]:
    out = []
    for prior in fitted.posterior.priors:
        median, low, high = fitted.interval(prior.name)
        out.append(Estimate(key=prior.name, label=prior.label, unit=prior.unit, median=median,
                            low=low, high=high, prior_low=prior.low, prior_high=prior.high))
    return tuple(out)


def _thinned(fitted: Fitted, seed: int) -> FittedValues:
    values = fitted_values(fitted, seed)
    return values.take(np.arange(min(CHECK_DRAWS, values.rows), dtype=np.int64))


def _bands(plan: Plan, fitted: Fitted, thinned: FittedValues) -> dict[str, NDArray[np.float64]]:
    days = fitted.data.days_needed
    course = course_plan(plan, fitted.inputs, days)
    model = compile_scenario(course, COURSE, True)
    values = with_fitted(take_draws(fitted.inputs.central,
                                    np.zeros(thinned.rows, dtype=np.int64)), thinned)
    runs = course_series(model, course, values)
    q = list(BAND_QUANTILES)
    return {
        name: np.asarray(np.nanquantile(series, q, axis=0), dtype=np.float64)
        for name, series in (("admissions", runs.admissions_per_day),
                             ("ward", runs.ward_census_persons),
                             ("icu", runs.icu_census_persons))
    }


def _consistency(plan: Plan, fitted: Fitted, seed: int) -> tuple[Consistency, ...]:
    data = fitted.data
    short = dataclasses.replace(plan, details=dataclasses.replace(
        plan.details, horizon_days=max(data.days_needed, 1)))
    sample = sample_quantiles(short, CHECK_DRAWS, seed)
    k = float(np.median(dispersion_of(fitted.posterior.column("dispersion_phi"))))
    observed = float(np.sum(data.admissions))
    rng = np.random.default_rng(seed)
    out = []
    for scenario in plan.scenarios:
        model = compile_scenario(short, scenario, True)
        values = draw_values(short, scenario, sample)
        runs = course_series(model, short, values)
        mean = np.nan_to_num(data.expected(runs.admissions_per_day))
        noisy = rng.negative_binomial(k, k / (k + np.maximum(mean, 1e-12)))
        totals = noisy.sum(axis=1).astype(np.float64)
        low, high = np.quantile(totals, RULED_OUT_TAILS)
        below = float(np.mean(totals < observed) + 0.5 * np.mean(totals == observed))
        out.append(Consistency(scenario=scenario.name, observed_total=observed,
                               low=float(low), high=float(high), share_below=below))
    return tuple(out)


def _narrowing(plan: Plan, fitted: Fitted, thinned: FittedValues, seed: int
               ) -> tuple[tuple[float, float], tuple[float, float]]:
    horizon = plan.details.horizon_days
    course = course_plan(plan, fitted.inputs, horizon)
    model = compile_scenario(course, COURSE, True)
    prior = draw_values(course, COURSE, sample_quantiles(course, CHECK_DRAWS, seed))
    posterior = with_fitted(prior, thinned)
    ranges = []
    for values in (prior, posterior):
        peaks = np.nanmax(course_series(model, course, values).admissions_per_day, axis=1)
        low, high = np.nanquantile(peaks, [0.05, 0.95])
        ranges.append((float(low), float(high)))
    return ranges[0], ranges[1]


def fit_report(plan: Plan, fitted: Fitted) -> FitReport:
    """What the fit of ``plan`` says (module notes).

    Parameters
    ----------
    plan : Plan
        The planner's plan (not the fitted one).
    fitted : Fitted
        Its fit.

    Returns
    -------
    FitReport
        Estimates, growth, fitted bands, scenario checks, narrowing.
    """
    seed = plan.details.seed
    thinned = _thinned(fitted, seed)
    data = fitted.data
    return FitReport(
        fitted=fitted,
        as_of=data.as_of,
        estimates=_estimates(fitted),
        growth=_growth(plan, fitted, thinned),
        days=np.arange(data.days_needed, dtype=np.int64),
        bands=_bands(plan, fitted, thinned),
        consistency=_consistency(plan, fitted, seed),
        narrowing=_narrowing(plan, fitted, thinned, seed),
        usable=fitted.checks.converged,
    )


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


def fit_stage(plan: Plan, say: Callable[[str], None] | None = None
              ) -> tuple[Plan, FitOutcome | None]:
    """Fit the plan when it asks for it and has enough figures; the plan to project from.

    Parameters
    ----------
    plan : Plan
        The planner's plan.
    say : callable, optional
        Told once, before the sampler starts (the slow step).

    Returns
    -------
    tuple of (Plan, FitOutcome or None)
        The fitted plan when the fit converged (else ``plan`` itself), and what
        came of the fit (None when the plan has no observed figures).
    """
    if not plan.observed:
        return plan, None
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
