"""The fit recovers known inputs from admissions the model itself produced."""

from __future__ import annotations

import dataclasses
import datetime as dt

import numpy as np
import pytest
from conftest import small_plan

from prepkit.fitting.fit import Fitted, NotFitted, fit_plan
from prepkit.fitting.inputs import CHANGE, INITIAL, SEVERITY, TRANSMISSIBILITY, fit_inputs
from prepkit.fitting.simulator import course_simulator
from prepkit.plan import FitSettings, Range3
from prepkit.plan.records import Observation

pytestmark = pytest.mark.slow  # an MCMC run through the compiled model

TRUTH = {TRANSMISSIBILITY: 2.0, CHANGE: 0.6, INITIAL: 15.0, SEVERITY: 1.2}


def _observed_plan(seed: int = 3):
    plan = small_plan()
    plan = dataclasses.replace(plan, fit=FitSettings(
        change_date=dt.date(2027, 2, 18), change_factor=Range3(low=0.3, central=0.7, high=1.2)))
    inputs = fit_inputs(plan)
    truth = np.array([[TRUTH[name] for name in inputs.names]])
    daily = course_simulator(plan, inputs, 75)(truth)[0]
    rng = np.random.default_rng(seed)
    k = 20.0
    counts = rng.negative_binomial(k, k / (k + np.maximum(daily, 1e-9)))
    observed = tuple(Observation(date=plan.details.day0 + dt.timedelta(days=d),
                                 admissions=float(counts[d])) for d in range(25, 75))
    return dataclasses.replace(plan, observed=observed)


def test_the_fit_recovers_the_inputs_that_made_the_observations() -> None:
    # A simulation-based check of the whole fit (common practice, no source): admissions made
    # by the model with known inputs and negative binomial noise; every known input lies in
    # its 90% posterior interval and the checks pass.
    fitted = fit_plan(_observed_plan(), walkers=24, steps=900, burn=300, seed=1)
    assert isinstance(fitted, Fitted)
    for name, value in TRUTH.items():
        _, low, high = fitted.interval(name)
        assert low < value < high, (name, low, high)
    r0_mid, r0_low, r0_high = fitted.interval(TRANSMISSIBILITY)
    assert r0_high - r0_low < 0.8 * (2.6 - 1.8)  # the data narrow the prior range
    assert fitted.checks.predictive.coverage > 0.8


def test_too_few_observations_are_not_fitted() -> None:
    plan = _observed_plan()
    short = dataclasses.replace(plan, observed=plan.observed[:4])
    got = fit_plan(short)
    assert isinstance(got, NotFitted)
    assert "Only 4 days of observed admissions" in got.reason
