"""One path: a single run and a one-draw ensemble of the same inputs agree.

Every input at Central (the scenario at central levels, every uncertain field
at its mode) and the engine's step rule: the ensemble's draw must give the
single run's daily series and metrics to 1e-12 relative, and exactly where the
two now call the same function on the same numbers (bed, surge, shortfall and
absence rules). Source of the check: common practice, no source.
"""

from __future__ import annotations

from typing import Any

import numpy as np
import pytest
from numpy.testing import assert_allclose, assert_array_equal
from test_uncertainty import uncertain_plan, with_draws  # noqa: F401  (fixture)

from prepkit.metrics.absence import employed_weights
from prepkit.metrics.beds import bed_loads, bed_supply, outbreak_demand
from prepkit.scenarios.runs import compile_scenario, run_scenario
from prepkit.uncertainty.draw_metrics import absence_share, draw_scalars, run_values
from prepkit.uncertainty.draws import mode_values, values_from
from prepkit.uncertainty.ensemble import simulate_draws
from prepkit.uncertainty.fields import scenario_fields
from prepkit.uncertainty.results import SUMMARY_METRICS

SCENARIO = "all measures"
RTOL = 1e-12


@pytest.fixture(scope="module", params=[True, False], ids=["with", "without"])
def both(request, uncertain_plan):  # noqa: F811
    plan = uncertain_plan
    fields = scenario_fields(plan, SCENARIO)
    values = values_from(mode_values(fields, 1), 1)
    model = compile_scenario(plan, SCENARIO, request.param)
    draws = simulate_draws(model, plan, values, min_substeps=None, dtype=np.float64, blocks=1)
    run = run_scenario(plan, SCENARIO, request.param)
    return plan, model, draws, run


def _close(found: np.ndarray, expected: np.ndarray) -> None:
    scale = float(np.max(np.abs(expected), initial=0.0))
    assert_allclose(found, expected, rtol=RTOL, atol=RTOL * scale)


def test_daily_series_agree(both: Any) -> None:
    # common practice, no source: the same inputs through both paths
    plan, model, draws, run = both
    for name in ("ward_census_persons", "icu_census_persons", "admissions_per_day",
                 "school_closure_intensity_share"):
        _close(draws.get(name)[0], run.daily[name].to_numpy())
    _, arrays = draw_scalars(plan, draws, {})
    _close(arrays["absence_share"][0], run.daily["absence_share"].to_numpy())
    assert_allclose(draws.beta[0], model.beta, rtol=RTOL)


def test_metrics_agree(both: Any) -> None:
    # common practice, no source: every summary metric of the draw is the run's
    plan, _, draws, run = both
    scalars, _ = draw_scalars(plan, draws, {})
    expected = run_values(run)
    for name in SUMMARY_METRICS:
        if name.endswith("_days_over_capacity_days") or "over_capacity_with_surge" in name:
            assert int(scalars[name][0]) == int(expected[name]), name
        else:
            assert_allclose(scalars[name][0], expected[name], rtol=RTOL, atol=1e-12,
                            err_msg=name)


def test_shared_rules_give_the_run_columns_exactly(
    both: Any,
) -> None:
    # common practice, no source: one function, the same numbers in, the same numbers out
    plan, _, _, run = both
    capacity = plan.capacity
    daily = run.daily
    for kind, (available, surge) in bed_supply(capacity).items():
        demand = outbreak_demand(daily[f"{kind}_census_persons"].to_numpy()[None, :], capacity)
        assert_array_equal(demand[0], daily[f"{kind}_demand_beds"].to_numpy())
        loads = bed_loads(demand, available, surge, capacity.surge_trigger_occupancy,
                          capacity.surge_days_to_open)
        assert_array_equal(loads["with_surge"][0],
                           daily[f"{kind}_available_with_surge_beds"].to_numpy())
        metrics = getattr(run.metrics, kind)
        assert int(loads["days_over"][0]) == metrics.days_over_capacity_days
        assert int(loads["days_over_surge"][0]) == metrics.days_over_capacity_with_surge_days
    onsets = run.daily_by_band["symptomatic_onsets_per_day"].to_numpy().reshape(
        len(daily), len(plan.bands))
    worker_onsets = onsets @ employed_weights(plan.bands, plan.workforce)
    share = absence_share(plan, worker_onsets[None, :],
                          daily["school_closure_intensity_share"].to_numpy()[None, :])
    assert_array_equal(share[0], daily["absence_share"].to_numpy())
