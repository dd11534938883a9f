"""What a fit says, for the pack and the results files: growth, fitted bands, scenario checks.

Rules in words
--------------
* **Growth** before and, when a change was fitted, after the change date:
  growth rate and reproduction number of each of :data:`CHECK_DRAWS`
  posterior draws (:mod:`prepkit.fitting.growth`), medians and 90% ranges,
  with the share still susceptible at day 0 and the seasonal multiplier in
  the middle of the period's observed days (R0 is the yearly average, season
  1); the doubling or halving time follows from the growth rate's.
* **Fitted bands**: quantiles :data:`BAND_QUANTILES` of the daily
  admissions and census of the same draws over the observed days.
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
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from prepkit.fitting.fit import Fitted
from prepkit.fitting.growth import growth_rates, reproduction_numbers
from prepkit.fitting.sampler import dispersion_of
from prepkit.fitting.simulator import COURSE, course_plan, course_series
from prepkit.plan import FittedValues, Plan
from prepkit.scenarios.runs import compile_scenario
from prepkit.simulation.compile import CompiledModel
from prepkit.simulation.draw_values import DrawValues, with_fitted
from prepkit.uncertainty.ensemble import calibrate_beta
from prepkit.uncertainty.fields import sample_quantiles
from prepkit.uncertainty.run import draw_values

__all__ = ["BAND_QUANTILES", "CHECK_DRAWS", "RULED_OUT_TAILS", "Consistency", "Estimate",
           "FitReport", "Growth", "fit_report"]

CHECK_DRAWS = 400
"""Draws per scenario of the prior predictive check and of the narrowing, and posterior draws
of the growth and the fitted bands [count]."""

RULED_OUT_TAILS = (0.025, 0.975)
"""A scenario is ruled out when the observed total lies below the first or above the second
quantile of its draws' totals [fraction]."""

BAND_QUANTILES = (0.05, 0.25, 0.5, 0.75, 0.95)
"""Quantiles of the fitted daily series: 90% and 50% bands and the median [fraction]."""


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
        (median, 5%, 95%) with the immunity at day 0 and the season in the middle of the
        period [dimensionless].
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


def _season_middles(fitted: Fitted) -> tuple[float, ...]:
    """Model day in the middle of the observed days before the change date, and after it [day].

    The first observed row covers its own day (a week for weekly totals); with no change date
    there is one period, the whole observed span.
    """
    data = fitted.data
    first = float(data.end_days[0]) - (6.0 if data.period == "weekly" else 0.0)
    last = float(data.end_days[-1])
    change = fitted.inputs.change_day if fitted.has_change else None
    if change is None:
        return ((first + last) / 2.0,)
    return ((first + change - 1.0) / 2.0, (change + last) / 2.0)


def _growth(plan: Plan, model: CompiledModel, values: DrawValues, fitted: Fitted,
            change_factor: NDArray[np.float64] | None) -> tuple[Growth, ...]:
    beta = calibrate_beta(model, values)
    susceptible = 1.0 - np.asarray(plan.disease.prior_immunity, dtype=np.float64)
    middles = _season_middles(fitted)
    periods = [("before", np.ones(values.size))]
    if change_factor is not None:
        periods.append(("after", change_factor))
    out = []
    for (period, factor), middle in zip(periods, middles, strict=True):
        at_season = factor * model.season(middle)
        rates = growth_rates(model.pc, model.layout, values, beta, at_season, susceptible)
        rs = reproduction_numbers(model.pc, model.layout, values, beta, at_season, susceptible)
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


def _bands(model: CompiledModel, course: Plan, values: DrawValues
           ) -> dict[str, NDArray[np.float64]]:
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
    drawn = fitted.draws(seed)
    thinned = drawn.take(np.arange(min(CHECK_DRAWS, drawn.rows), dtype=np.int64))
    data = fitted.data
    # the observed course, over the observed days: one compiled model for growth and bands
    course = course_plan(plan, fitted.inputs, data.days_needed)
    model = compile_scenario(course, COURSE, True)
    values = fitted.inputs.values(thinned)
    return FitReport(
        fitted=fitted,
        as_of=data.as_of,
        estimates=_estimates(fitted),
        growth=_growth(plan, model, values, fitted, thinned.change_factor),
        days=np.arange(data.days_needed, dtype=np.int64),
        bands=_bands(model, course, values),
        consistency=_consistency(plan, fitted, seed),
        narrowing=_narrowing(plan, fitted, thinned, seed),
        usable=fitted.checks.converged,
    )
