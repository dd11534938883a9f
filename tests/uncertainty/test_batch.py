"""The batch entry point: a set run in a batch is the single run of the same inputs.

A batch of one at the plan's own inputs gives the single run's daily
admissions and census (prepkit.scenarios.runs.run_scenario) to 1e-12
relative, the tolerance of tests/uncertainty/test_one_path.py; a set with
other initial infections gives the single run of the plan with those
infections, while the other sets of the batch are unchanged by it. Source of
the check: common practice, no source.
"""

from __future__ import annotations

from dataclasses import replace
from typing import Any

import numpy as np
import pytest
from numpy.testing import assert_allclose
from test_uncertainty import uncertain_plan  # noqa: F401  (fixture)

from prepkit.scenarios.runs import compile_scenario, run_scenario
from prepkit.simulation.draw_values import DrawValues, take_draws
from prepkit.uncertainty.batch import run_batch

SCENARIO = "all measures"
RTOL = 1e-12
NAMES = ("admissions_per_day", "ward_census_persons", "icu_census_persons")


def _close(found: np.ndarray, expected: np.ndarray) -> None:
    scale = float(np.max(np.abs(expected), initial=0.0))
    assert_allclose(found, expected, rtol=RTOL, atol=RTOL * scale)


@pytest.fixture(scope="module")
def central(uncertain_plan: Any) -> Any:  # noqa: F811
    plan = uncertain_plan
    model = compile_scenario(plan, SCENARIO, True)
    return plan, model, DrawValues.of_inputs(model.inputs)


def test_batch_of_one_is_the_single_run(central: Any) -> None:
    # common practice, no source: the same inputs through both paths
    plan, model, values = central
    got = run_batch(model, plan, values, min_substeps=None,
                    initial_infections=np.array([plan.disease.initial_infections]),
                    admitted_multiplier=np.ones(1))
    run = run_scenario(plan, SCENARIO, True)
    for name in NAMES:
        _close(getattr(got, name)[0], run.daily[name].to_numpy())


def test_each_set_has_its_own_initial_infections(central: Any) -> None:
    # common practice, no source: a set with 4x the seeds is the run of a plan with them
    plan, model, values = central
    three = take_draws(values, np.zeros(3, dtype=np.int64))
    seeds = plan.disease.initial_infections * np.array([1.0, 4.0, 1.0])
    got = run_batch(model, plan, three, min_substeps=None, initial_infections=seeds, blocks=2)
    seeded = replace(plan, disease=replace(plan.disease, initial_infections=float(seeds[1])))
    run = run_scenario(seeded, SCENARIO, True)
    for name in NAMES:
        series = getattr(got, name)
        _close(series[1], run.daily[name].to_numpy())
        assert np.array_equal(series[0], series[2])
        assert not np.allclose(series[0], series[1])


def test_admitted_multiplier_scales_admissions_before_any_measure(central: Any) -> None:
    # common practice, no source: admissions are (admitted share) x (onsets) and hospital
    # patients do not transmit, so while waiting patients are few the first days' admissions
    # scale with the multiplier; a product past the symptomatic share is cut to it, as in
    # every run (everyone with symptoms admitted)
    plan, model, values = central
    two = take_draws(values, np.zeros(2, dtype=np.int64))
    got = run_batch(model, plan, two, admitted_multiplier=np.array([1.0, 0.5]))
    ratio = got.admissions_per_day[1, :5] / got.admissions_per_day[0, :5]
    assert_allclose(ratio, 0.5, rtol=1e-2)
    huge = run_batch(model, plan, two, admitted_multiplier=np.array([1e6, 1e6]))
    everyone = replace(two, admitted_share=two.symptomatic_share)
    assert_allclose(huge.admissions_per_day, run_batch(model, plan, everyone).admissions_per_day,
                    rtol=1e-12)
