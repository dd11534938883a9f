"""The uncertainty ensemble of every scenario of a plan, with and without interventions.

Every scenario variant uses the same Latin hypercube sample (common draws),
so differences between scenarios are not sampling noise. The variants run
here, one after another on every core, or as tasks on any
``concurrent.futures`` executor (e.g. a Dask cluster) with the same results.
Progress goes to a callback only: drawing a bar is the caller's business.
"""

from __future__ import annotations

import time
from collections.abc import Callable, Sequence
from concurrent.futures import Executor, Future, as_completed
from typing import Any

import numpy as np
from numpy.typing import NDArray

from prepkit.plan import Plan
from prepkit.scenarios.runs import PlanResults
from prepkit.simulation.inputs import validate_plan
from prepkit.uncertainty.ensemble import DEFAULT_BLOCKS
from prepkit.uncertainty.fields import plan_dimensions, sample_quantiles
from prepkit.uncertainty.parameters import ENSEMBLE_MIN_SUBSTEPS
from prepkit.uncertainty.results import (
    DEFAULT_QUANTILES,
    EnsembleResult,
    ScenarioUncertainty,
    UncertaintyResults,
)
from prepkit.uncertainty.run import ValueCache, run_ensemble
from prepkit.uncertainty.summaries import reported_quantiles

Progress = Callable[[int, int], None] | None
"""A progress callback: gets ``(draws_done, draws_total)``."""


def _progress_ticker(progress: Progress, total: int) -> Callable[[int], None]:
    """A tick function (draws finished) that reports ``(done, total)`` to ``progress``."""
    if progress is None:
        return lambda count: None
    report = progress
    done = [0]

    def tick(count: int) -> None:
        done[0] += count
        report(done[0], total)

    return tick


def run_uncertainty(
    plan: Plan,
    results: PlanResults | None = None,
    *,
    draws: int | None = None,
    quantiles: Sequence[float] = DEFAULT_QUANTILES,
    progress: Progress = None,
    seed: int | None = None,
    min_substeps: int | None = ENSEMBLE_MIN_SUBSTEPS,
    blocks: int = DEFAULT_BLOCKS,
    executor: Executor | None = None,
) -> UncertaintyResults:
    """Run the uncertainty ensemble of every scenario of a plan, with and without interventions.

    Parameters
    ----------
    plan : Plan
        The plan.
    results : PlanResults, optional
        The engine's results of the plan (:func:`prepkit.scenarios.runs.run_plan`);
        when given, their numbers fill the ``scenario_run`` columns.
    draws : int, optional
        Draws per scenario variant [count]; default ``plan.details.draws``.
        0 turns the ensemble off (empty results).
    quantiles : sequence of float
        Quantiles to report [fraction]; the median is always added.
    progress : callable, optional
        Gets ``(draws_done, draws_total)`` after each block (the caller
        draws any progress bar); None (default) reports nothing.
    seed : int, optional
        Random seed; default ``plan.details.seed``.
    min_substeps : int or None
        Fewest RK4 steps per day; None uses the engine's rule.
    blocks : int
        Blocks per scenario variant (progress granularity).
    executor : concurrent.futures.Executor, optional
        Where to run the scenario variants: for large sweeps, a Dask cluster
        (``dask.distributed.Client(address).get_executor()``) or any other
        executor. Every variant uses the same Latin hypercube sample, so the
        results are the same wherever they run. None runs them here, on
        every core.

    Returns
    -------
    UncertaintyResults
        One :class:`ScenarioUncertainty` per scenario.
    """
    started = time.perf_counter()
    validate_plan(plan)
    count = plan.details.draws if draws is None else int(draws)
    used_seed = plan.details.seed if seed is None else int(seed)
    qs = reported_quantiles(quantiles)
    dims = plan_dimensions(plan)
    if count <= 0:
        return UncertaintyResults(draws=0, seed=used_seed, quantiles=qs, dimensions=dims,
                                  scenarios=(), seconds=time.perf_counter() - started)
    sample = sample_quantiles(plan, count, used_seed)
    if executor is not None:
        return _run_uncertainty_elsewhere(
            executor, plan, results, sample=sample, seed=used_seed, quantiles=qs, dims=dims,
            min_substeps=min_substeps, blocks=blocks, progress=progress, started=started,
        )
    tick = _progress_ticker(progress, count * 2 * len(plan.scenarios))
    out = _run_here(plan, results, sample=sample, seed=used_seed, quantiles=qs,
                    min_substeps=min_substeps, blocks=blocks, tick=tick)
    return UncertaintyResults(
        draws=count, seed=used_seed, quantiles=qs, dimensions=dims, scenarios=out,
        seconds=time.perf_counter() - started,
    )


def _run_here(
    plan: Plan,
    results: PlanResults | None,
    *,
    sample: NDArray[np.float64],
    seed: int,
    quantiles: tuple[float, ...],
    min_substeps: int | None,
    blocks: int,
    tick: Callable[[int], None],
) -> tuple[ScenarioUncertainty, ...]:
    """Both variants of every scenario in this process, PERT values shared between them."""
    cache = ValueCache(sample)
    out = []
    for scenario in plan.scenarios:
        pair = {}
        for flag in (True, False):
            run = None
            if results is not None:
                run = results[scenario.name].variant("with" if flag else "without")
            pair[flag] = run_ensemble(
                plan, scenario, flag, sample=sample, seed=seed, quantiles=quantiles,
                scenario_run=run, min_substeps=min_substeps, blocks=blocks,
                on_block=tick, _cache=cache,
            )
        out.append(ScenarioUncertainty(
            scenario=scenario.name,
            with_interventions=pair[True],
            without_interventions=pair[False],
        ))
    return tuple(out)


def _run_uncertainty_elsewhere(
    executor: Executor,
    plan: Plan,
    results: PlanResults | None,
    *,
    sample: NDArray[np.float64],
    seed: int,
    quantiles: tuple[float, ...],
    dims: Any,
    min_substeps: int | None,
    blocks: int,
    progress: Progress,
    started: float,
) -> UncertaintyResults:
    """:func:`run_uncertainty` with one task per scenario variant on ``executor``."""
    count = int(sample.shape[0])
    futures: dict[tuple[str, bool], Future[EnsembleResult]] = {}
    for scenario in plan.scenarios:
        for flag in (True, False):
            run = None
            if results is not None:
                run = results[scenario.name].variant("with" if flag else "without")
            futures[scenario.name, flag] = executor.submit(
                run_ensemble, plan, scenario, flag, sample=sample, seed=seed,
                quantiles=quantiles, scenario_run=run, min_substeps=min_substeps, blocks=blocks,
            )
    tick = _progress_ticker(progress, count * len(futures))
    for _done in as_completed(futures.values()):
        tick(count)
    out = tuple(
        ScenarioUncertainty(
            scenario=scenario.name,
            with_interventions=futures[scenario.name, True].result(),
            without_interventions=futures[scenario.name, False].result(),
        )
        for scenario in plan.scenarios
    )
    return UncertaintyResults(
        draws=count, seed=seed, quantiles=quantiles, dimensions=dims, scenarios=out,
        seconds=time.perf_counter() - started,
    )
