"""The one rule that gives draws their fitted values (fit and projections alike)."""

from __future__ import annotations

import numpy as np
from conftest import small_plan
from numpy.testing import assert_allclose

from prepkit.plan import FittedValues
from prepkit.plan.fit import CHANGE_MEASURE
from prepkit.scenarios.runs import compile_scenario
from prepkit.simulation.draw_values import take_draws, with_fitted
from prepkit.simulation.identity import draws_key
from prepkit.uncertainty.batch import run_batch
from prepkit.uncertainty.fields import sample_quantiles
from prepkit.uncertainty.run import draw_values


def _draws(count: int):  # type: ignore[no-untyped-def]
    plan = small_plan()
    scenario = plan.scenarios[0]
    return plan, scenario, draw_values(plan, scenario, sample_quantiles(plan, count, 7))


def test_fitted_rows_replace_the_fitted_inputs_and_cycle() -> None:
    # Engineering check, no external source: the replacement rule of with_fitted.
    plan, _, values = _draws(5)
    bands = len(plan.bands)
    fitted = FittedValues(transmissibility=np.array([1.5, 2.5]),
                          change_factor=np.array([0.6, 0.9]),
                          initial_infections=np.array([3.0, 30.0]),
                          admitted_share=np.full((2, bands), 0.02))
    got = with_fitted(values, fitted)
    assert_allclose(got.transmissibility_value, [1.5, 2.5, 1.5, 2.5, 1.5])
    assert_allclose(got.compliance[CHANGE_MEASURE], [0.4, 0.1, 0.4, 0.1, 0.4])
    assert got.initial_infections is not None
    assert_allclose(got.initial_infections, [3.0, 30.0, 3.0, 30.0, 3.0])
    assert_allclose(got.admitted_share, 0.02)
    assert_allclose(got.latent_period_days, values.latent_period_days)  # not fitted: kept
    assert_allclose(got.icu_share, values.icu_share)
    nothing = with_fitted(values, FittedValues())
    assert_allclose(nothing.transmissibility_value, values.transmissibility_value)


def test_infections_at_day_0_of_a_draw_reach_its_run_and_its_identity() -> None:
    # Common practice, no source: while nearly everyone is susceptible the epidemic grows
    # linearly in its seed (with the daily importations: affine), so the admissions of the
    # first weeks grow by equal steps for equal steps of the infections at day 0; draws that
    # differ only in their seeds are not one run.
    plan, scenario, values = _draws(1)
    model = compile_scenario(plan, scenario, False)
    three = take_draws(values, np.zeros(3, dtype=np.int64))
    seeded = with_fitted(three, FittedValues(initial_infections=np.array([2.0, 11.0, 20.0])))
    runs = run_batch(model, plan, seeded).admissions_per_day[:, 5:20]
    assert np.all(runs[2] > runs[1]) and np.all(runs[1] > runs[0])
    assert_allclose((runs[2] - runs[0]) / (runs[1] - runs[0]), 2.0, rtol=0.02)
    one = take_draws(seeded, np.array([0]))
    other = take_draws(seeded, np.array([1]))
    assert draws_key(model, plan, one) != draws_key(model, plan, other)
