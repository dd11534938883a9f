"""From the fit to the projections: the ensemble starts from the data, scenarios are checked.

The observations are made by the model itself with known inputs and negative
binomial noise (a simulation-based check, common practice, no source), as in
``test_fit_model.py``.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import json
import math
from typing import Any

import numpy as np
import pytest
from conftest import small_plan
from test_fit_model import _observed_plan

from prepkit.fitting.findings import fit_report
from prepkit.fitting.fit import Fitted, fit_plan
from prepkit.fitting.project import fit_stage, fitted_plan
from prepkit.fitting.summary import fit_summary
from prepkit.plan import Range3
from prepkit.plan.fit import CHANGE_MEASURE
from prepkit.report.tables import fit_daily_csv
from prepkit.report.words.fit_text import fit_context, growth_phrase
from prepkit.scenarios.runs import run_plan
from prepkit.uncertainty.plan_runs import run_uncertainty

pytestmark = pytest.mark.slow  # an MCMC run through the compiled model


@pytest.fixture(scope="module")
def fitted() -> tuple[Any, Fitted]:
    plan = _observed_plan()
    # a Low transmissibility level far below the truth (R0 2.0): its scenario should be
    # ruled out by the figures
    plan = dataclasses.replace(plan, disease=dataclasses.replace(
        plan.disease, r0=Range3(low=1.1, central=2.0, high=2.6)))
    low = dataclasses.replace(plan.scenarios[0], name="Slow", transmissibility_level="low",
                              interventions=())
    central = dataclasses.replace(plan.scenarios[0], name="Central",
                                  transmissibility_level="central", interventions=())
    plan = dataclasses.replace(plan, scenarios=(low, central))
    got = fit_plan(plan, walkers=24, steps=700, burn=250, seed=2)
    assert isinstance(got, Fitted)
    return plan, got


def test_the_fitted_ensemble_starts_from_the_observed_admissions(fitted: Any) -> None:
    # The projections' draws take the posterior draws of the fitted inputs, so on the
    # observed days their admissions are the fit's (common practice, no source: a posterior
    # predictive of the projection); the planner's own ranges give a much wider spread.
    plan, fit = fitted
    report = fit_report(plan, fit)
    projected = fitted_plan(plan, fit)
    assert projected.standing == (CHANGE_MEASURE,)
    assert {s.transmissibility_level for s in projected.scenarios} == {"central"}
    days = report.days
    fitted_median = report.bands["admissions"][2]
    ens = run_uncertainty(projected, draws=300)
    prior = run_uncertainty(plan, draws=300)
    for item, before in zip(ens.scenarios, prior.scenarios, strict=True):
        daily = item.without_interventions.daily
        median = daily["admissions_per_day_q50"].to_numpy()[days]
        late = days >= 25  # the observed days
        assert np.allclose(median[late], fitted_median[late], rtol=0.12)
        spread = (daily["admissions_per_day_q95"] - daily["admissions_per_day_q05"]).to_numpy()
        spread_before = (before.without_interventions.daily["admissions_per_day_q95"]
                         - before.without_interventions.daily["admissions_per_day_q05"]
                         ).to_numpy()
        assert spread[days[-1]] < 0.6 * spread_before[days[-1]]
    # the single runs take the posterior medians
    runs = run_plan(projected)
    central = runs["Central"].without_interventions.daily["admissions_per_day"].to_numpy()
    assert np.allclose(central[days[late]], fitted_median[late], rtol=0.2)


def test_a_scenario_far_from_the_figures_is_ruled_out(fitted: Any) -> None:
    # Prior predictive check (Box 1980, J. R. Stat. Soc. A 143:383): R0 from 1.1 to 2.0
    # cannot make the admissions an R0 of 2.0 made.
    plan, fit = fitted
    verdicts = {c.scenario: c.consistent for c in fit_report(plan, fit).consistency}
    assert verdicts == {"Slow": False, "Central": True}


def test_the_files_and_the_words_carry_the_same_figures(fitted: Any) -> None:
    plan, fit = fitted
    projected, outcome = fit_stage(plan)
    assert outcome is not None and outcome.used and outcome.report is not None
    report = outcome.report
    summary = fit_summary(outcome)
    assert summary is not None
    json.dumps(summary, allow_nan=False)  # finite numbers only
    est = {e["input"]: e for e in summary["estimates"]}
    for e in report.estimates:
        assert est[e.key]["median"] == e.median and est[e.key]["low_5"] == e.low
    # doubling time and growth rate agree: ln 2 / r at the median and both ends
    g = report.growth[0]
    assert g.trend == "doubling" and g.doubling_days is not None
    assert math.isclose(g.doubling_days[0], math.log(2) / g.growth_rate[0])
    assert math.isclose(g.doubling_days[1], math.log(2) / g.growth_rate[2])
    words = fit_context(projected, outcome)
    assert words is not None and words.used
    assert any(growth_phrase(g, "infections") in s for s in words.lead)
    csv = fit_daily_csv(projected, outcome)
    assert csv is not None
    lines = csv.decode().strip().splitlines()
    assert len(lines) == 1 + report.days.size
    last = lines[-1].split(",")
    assert last[0] == (plan.details.day0 + dt.timedelta(days=int(report.days[-1]))).isoformat()


def test_a_plan_without_figures_is_not_fitted() -> None:
    plan = small_plan()
    assert fit_stage(dataclasses.replace(plan, observed=())) == (
        dataclasses.replace(plan, observed=()), None)
