"""The fitted growth rate against an independent estimator, and fits to few figures.

The observations are made by the model itself with known inputs and negative
binomial noise (a simulation-based check, common practice, no source), over
the exponential phase of a plan ten times the size of the test plan (so the
counts reach tens a day).
"""

from __future__ import annotations

import dataclasses
import datetime as dt

import numpy as np
import pytest
import statsmodels.api as sm
from conftest import small_plan

from prepkit.fitting.findings import fit_report
from prepkit.fitting.fit import Fitted, NotFitted, fit_plan
from prepkit.fitting.inputs import INITIAL, SEVERITY, TRANSMISSIBILITY, fit_inputs
from prepkit.fitting.priors import Prior
from prepkit.fitting.project import fit_stage
from prepkit.fitting.simulator import course_simulator
from prepkit.plan import Plan, Range3
from prepkit.plan.fit import FEW_FIT_POINTS, MIN_FIT_POINTS
from prepkit.plan.records import Observation
from prepkit.report.words.fit_text import fit_context, fit_leader_line
from prepkit.scenarios.runs import run_plan
from prepkit.uncertainty.plan_runs import run_uncertainty

pytestmark = pytest.mark.slow  # MCMC runs through the compiled model

TRUTH = {TRANSMISSIBILITY: 2.0, INITIAL: 150.0, SEVERITY: 1.2}
FIRST_DAY, LAST_DAY = 14, 38
"""The exponential phase of the truth: its daily growth of admissions stays within 0.133 to
0.137 per day from day 14 to day 38, before the loss of susceptible people slows it [day]."""


def _large_plan() -> Plan:
    """The test plan ten times larger, with a weakly informative range of R0 (1.2 to 3.2):
    the comparison with a regression that knows nothing but the counts is about what the
    counts say, not about a prior that pulls towards its mode."""
    plan = small_plan()
    bands = tuple(dataclasses.replace(b, people=10.0 * b.people) for b in plan.bands)
    return dataclasses.replace(plan, bands=bands, disease=dataclasses.replace(
        plan.disease, initial_infections=150.0, r0=Range3(low=1.2, central=2.2, high=3.2)))


def _observed(plan: Plan, first: int, last: int, seed: int) -> Plan:
    inputs = fit_inputs(plan)
    truth = np.array([[TRUTH[name] for name in inputs.names]])
    daily = course_simulator(plan, inputs, last + 1)(truth)[0]
    k = 30.0  # dispersion of the counts: variance mu + mu^2 / k
    counts = np.random.default_rng(seed).negative_binomial(k, k / (k + np.maximum(daily, 1e-9)))
    rows = tuple(Observation(date=plan.details.day0 + dt.timedelta(days=d),
                             admissions=float(counts[d])) for d in range(first, last + 1))
    return dataclasses.replace(plan, observed=rows)


def _prior_width(prior: Prior, share: float = 0.9) -> float:
    tail = (1.0 - share) / 2.0
    low, high = prior.quantile(np.array([tail, 1.0 - tail]))
    return float(high - low)


def test_the_fitted_growth_rate_agrees_with_a_log_linear_regression() -> None:
    # Independent estimator: a log-linear Poisson regression of the daily counts on the day
    # (statsmodels GLM, log link), with its standard errors scaled by the Pearson chi-square
    # for the counts' overdispersion (quasi-Poisson; McCullagh & Nelder 1989, Generalized
    # Linear Models, 2nd ed., sect. 6.2), estimates the exponential growth rate as the slope
    # of log mu on the day; the fit's growth rate (the dominant eigenvalue of the fitted
    # model, Wallinga & Lipsitch 2007) must lie within one standard error of that slope.
    plan = _observed(_large_plan(), FIRST_DAY, LAST_DAY, seed=11)
    fitted = fit_plan(plan, walkers=24, steps=700, burn=250, seed=4)
    assert isinstance(fitted, Fitted) and fitted.checks.converged
    growth = fit_report(plan, fitted).growth[0]
    days = np.array([(o.date - plan.details.day0).days for o in plan.observed], dtype=float)
    counts = np.array([o.admissions for o in plan.observed])
    regression = sm.GLM(counts, sm.add_constant(days), family=sm.families.Poisson()).fit(
        scale="X2")
    slope, error = float(regression.params[1]), float(regression.bse[1])
    print(f"fitted growth {growth.growth_rate}, regression {slope:.4f} (SE {error:.4f})")
    assert abs(growth.growth_rate[0] - slope) < error, (growth.growth_rate, slope, error)
    # and both find the truth's growth (0.133 to 0.137 per day over these days; 0.138 by the
    # model's rule at the season of the figures) within their ranges
    assert abs(slope - 0.135) < 3 * error
    assert growth.growth_rate[1] < 0.138 < growth.growth_rate[2]


def test_five_days_of_figures_give_a_wide_fit_and_the_run_completes() -> None:
    # Few data (common practice, no source): five days say little about the growth, so the
    # 90% range of the reproduction number stays at least half as wide as the prior's, and
    # four times wider than a fit to 25 days; the pack warns; the run goes on from the fit.
    assert MIN_FIT_POINTS["daily"] == 5 < FEW_FIT_POINTS["daily"]
    base = _large_plan()
    few = _observed(base, 30, 34, seed=5)
    fitted = fit_plan(few, walkers=24, steps=600, burn=200, seed=5)
    assert isinstance(fitted, Fitted)
    _, low, high = fitted.interval(TRANSMISSIBILITY)
    prior = next(p for p in fitted.posterior.priors if p.name == TRANSMISSIBILITY)
    assert high - low > 0.5 * _prior_width(prior)
    many = fit_plan(_observed(base, FIRST_DAY, LAST_DAY, seed=11), walkers=24, steps=700,
                    burn=250, seed=4)
    assert isinstance(many, Fitted)
    _, many_low, many_high = many.interval(TRANSMISSIBILITY)
    assert high - low > 2.0 * (many_high - many_low)

    projected, outcome = fit_stage(few)
    assert outcome is not None and outcome.report is not None
    words = fit_context(projected, outcome)
    assert words is not None
    caution = "The fit rests on only 5 days of figures: its ranges are wide"
    assert outcome.used, outcome.reason
    assert any(w.startswith(caution) for w in words.warnings)
    assert caution in fit_leader_line(projected, outcome)
    small = dataclasses.replace(projected, details=dataclasses.replace(projected.details,
                                                                       draws=40))
    ensemble = run_uncertainty(small, run_plan(small))
    assert len(ensemble.scenarios) == len(small.scenarios)


def test_four_days_are_not_fitted_and_none_give_the_unfitted_run() -> None:
    # The fewest-points rule (a project rule, stated in the workbook's help): below it the
    # run goes on unfitted, with the reason in words; without figures there is no fit at all.
    base = _large_plan()
    four = _observed(base, 30, 33, seed=5)
    got = fit_plan(four)
    assert isinstance(got, NotFitted)
    assert "Only 4 days of observed admissions" in got.reason
    projected, outcome = fit_stage(four)
    assert projected is four and outcome is not None and not outcome.used
    none = dataclasses.replace(base, observed=())
    assert fit_stage(none) == (none, None)
