"""Identical variants are computed once and shared, with the results of computing each alone.

The plan has four scenarios. Three are at central transmissibility and
severity ("No measures", "Schools", "Vaccine"), so their runs without measures
and the run of "No measures" with its (no) measures read the same numbers: one
distinct variant. With the runs with measures of "Schools", "Vaccine" and "All
measures" and the run of "All measures" without, the 8 variants are 5 distinct
ones. The counts below are of the solver's calls; the results are compared
with each variant computed on its own, with nothing shared.
"""

from __future__ import annotations

import dataclasses
from concurrent.futures import Executor, Future, ThreadPoolExecutor
from typing import Any

import numpy as np
import pytest
from conftest import small_plan

from prepkit.plan import Plan, Scenario
from prepkit.scenarios import runs as scenario_runs
from prepkit.scenarios.runs import compile_scenario, run_plan, run_scenario
from prepkit.simulation.identity import draws_key, model_key
from prepkit.uncertainty import run as ensemble_run
from prepkit.uncertainty import tornado as tornado_module
from prepkit.uncertainty.ensemble import calibrate_beta
from prepkit.uncertainty.fields import sample_quantiles
from prepkit.uncertainty.parameters import build_parameters
from prepkit.uncertainty.plan_runs import run_uncertainty
from prepkit.uncertainty.results import EnsembleResult
from prepkit.uncertainty.run import ValueCache, draw_values, run_ensemble

DISTINCT = 5
"""Distinct variants of :func:`shared_plan` (see the module notes)."""


def shared_plan(draws: int = 12, horizon: int = 80) -> Plan:
    plan = small_plan()
    extra = (
        Scenario(name="Schools", transmissibility_level="central", severity_level="central",
                 interventions=("School closure",)),
        Scenario(name="Vaccine", transmissibility_level="central", severity_level="central",
                 interventions=("Vaccine",)),
    )
    details = dataclasses.replace(plan.details, draws=draws, horizon_days=horizon)
    return dataclasses.replace(plan, details=details, scenarios=plan.scenarios + extra)


def counting(monkeypatch: pytest.MonkeyPatch, module: Any, name: str) -> list[int]:
    """Replace ``module.name`` by a wrapper that counts its calls; return the counter."""
    calls = [0]
    original = getattr(module, name)

    def counted(*args: Any, **kwargs: Any) -> Any:
        calls[0] += 1
        return original(*args, **kwargs)

    monkeypatch.setattr(module, name, counted)
    return calls


def test_single_runs_simulate_each_distinct_variant_once(
    monkeypatch: pytest.MonkeyPatch,
) -> None:
    plan = shared_plan()
    simulated = counting(monkeypatch, scenario_runs, "simulate")
    results = run_plan(plan)
    assert simulated[0] == DISTINCT
    base = results["No measures"].without_interventions
    for name in ("Schools", "Vaccine"):
        run = results[name].without_interventions
        assert run.daily is base.daily and run.metrics is base.metrics  # shared, not copied
        assert run.scenario == name and run.inputs.compliance.keys() == set(
            plan.scenario(name).interventions)
    assert results["No measures"].with_interventions.daily is base.daily


def test_shared_single_runs_equal_the_runs_made_alone() -> None:
    plan = shared_plan()
    results = run_plan(plan)
    for item in results:
        for flag, run in ((True, item.with_interventions), (False, item.without_interventions)):
            alone = run_scenario(plan, item.scenario, flag)
            assert run.daily.equals(alone.daily)
            assert run.daily_by_band.equals(alone.daily_by_band)
            assert repr(run.metrics) == repr(alone.metrics)
            assert run.inputs == alone.inputs and run.substeps == alone.substeps
        assert repr(item.transmissibility) == repr(
            scenario_runs.transmissibility_of(compile_scenario(plan, item.scenario, False)))


def test_transmissibility_table_is_unchanged_by_sharing() -> None:
    plan = shared_plan()
    shared = run_plan(plan).transmissibility_by_level
    assert repr(shared) == repr(scenario_runs.transmissibility_table(plan))


def _same(x: EnsembleResult, y: EnsembleResult) -> None:
    assert (x.scenario, x.variant, x.draws) == (y.scenario, y.variant, y.draws)
    for name in ("daily", "exceedance", "exceedance_any_day", "summary", "peak_dates",
                 "peak_date_histogram", "tornado_peak_icu", "tornado_unmet", "per_draw",
                 "sampling"):
        assert getattr(x, name).equals(getattr(y, name)), name


def test_ensemble_runs_each_distinct_variant_once(monkeypatch: pytest.MonkeyPatch) -> None:
    plan = shared_plan()
    results = run_plan(plan)
    draws = counting(monkeypatch, ensemble_run, "simulate_draws")
    tornadoes = counting(monkeypatch, tornado_module, "simulate_draws")
    seen: list[tuple[int, int]] = []
    got = run_uncertainty(plan, results, progress=lambda d, t: seen.append((d, t)))
    assert (draws[0], tornadoes[0]) == (DISTINCT, DISTINCT)
    total = plan.details.draws * 2 * len(plan.scenarios)
    assert seen[-1] == (total, total)
    monkeypatch.undo()
    sample = sample_quantiles(plan, plan.details.draws)
    for item in got:
        for flag in (True, False):
            variant = "with" if flag else "without"
            alone = run_ensemble(plan, item.scenario, flag, sample=sample,
                                 scenario_run=results[item.scenario].variant(variant))
            _same(item.variant(variant), alone)


class CountingExecutor(Executor):
    """A thread pool that counts the tasks it is given."""

    def __init__(self) -> None:
        self.pool = ThreadPoolExecutor(max_workers=2)
        self.tasks = 0

    def submit(self, fn: Any, /, *args: Any, **kwargs: Any) -> Future[Any]:
        self.tasks += 1
        return self.pool.submit(fn, *args, **kwargs)

    def shutdown(self, wait: bool = True, **kwargs: Any) -> None:
        self.pool.shutdown(wait=wait)


def test_an_executor_gets_one_task_per_distinct_variant() -> None:
    plan = shared_plan(draws=8, horizon=60)
    results = run_plan(plan)
    here = run_uncertainty(plan, results)
    with CountingExecutor() as pool:
        there = run_uncertainty(plan, results, executor=pool)
    assert pool.tasks == DISTINCT
    for left, right in zip(here, there, strict=True):
        _same(left.with_interventions, right.with_interventions)
        _same(left.without_interventions, right.without_interventions)


def test_equal_keys_mean_equal_solver_inputs() -> None:
    # The proof the sharing rests on: the arrays the compiled loop reads, draw by draw.
    plan = shared_plan()
    sample = sample_quantiles(plan, plan.details.draws)
    cache = ValueCache(sample)
    built, keys = [], []
    for name in ("No measures", "Schools", "Vaccine"):
        model = compile_scenario(plan, name, False)
        values = draw_values(plan, name, sample, cache=cache)
        beta = calibrate_beta(model, values)
        built.append((model, build_parameters(model, plan, values, beta), beta))
        keys.append(draws_key(model, plan, values, 1))
    assert len(set(keys)) == 1
    first_model, (pcs, itabs, floors), beta = built[0]
    for model, (other_pcs, other_itabs, other_floors), other_beta in built[1:]:
        assert model_key(model) == model_key(first_model)
        for a, b in ((pcs, other_pcs), (itabs, other_itabs), (floors, other_floors),
                     (beta, other_beta), (model.y0, first_model.y0),
                     (model.cap, first_model.cap), (model.lay, first_model.lay)):
            assert a.shape == b.shape and np.array_equal(a, b)


def test_keys_differ_when_a_number_read_differs() -> None:
    plan = shared_plan()
    sample = sample_quantiles(plan, plan.details.draws)
    model = compile_scenario(plan, "Schools", False)
    values = draw_values(plan, "Schools", sample)
    key = draws_key(model, plan, values, 1)
    moved = values.latent_period_days.copy()
    moved[3] *= 1.0 + 1e-12
    assert draws_key(model, plan, dataclasses.replace(values, latent_period_days=moved),
                     1) != key
    assert draws_key(model, plan, values, None) != key  # another step rule
    with_measure = compile_scenario(plan, "Schools", True)
    assert draws_key(with_measure, plan, values, 1) != key
    # compliance of a measure the run leaves out is not read, so it does not count
    ignored = {k: v * 0.5 for k, v in values.compliance.items()}
    assert draws_key(model, plan, dataclasses.replace(values, compliance=ignored), 1) == key
    # ... but for the run with the measure it does
    assert draws_key(with_measure, plan, dataclasses.replace(values, compliance=ignored),
                     1) != draws_key(with_measure, plan, values, 1)
