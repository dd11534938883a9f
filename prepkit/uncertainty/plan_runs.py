"""The uncertainty ensemble of every scenario of a plan, with and without interventions.

Every scenario variant uses the same Latin hypercube sample (common draws),
so differences between scenarios are not sampling noise. The variants run
here, one after another on every core, or as tasks on any
``concurrent.futures`` executor (e.g. a Dask cluster) with the same results.
Progress goes to a callback only: drawing a bar is the caller's business.

Identical variants are computed once: the variants are grouped by
:func:`prepkit.uncertainty.run.ensemble_key` (equal keys: the same numbers
reach the solver for every draw, see :mod:`prepkit.simulation.identity`),
each group runs its draws and tornado once (here, or as one task on the
executor) and every member gets its own result from them. On the sample
city, the runs without measures of the two scenarios at central levels are
one group.
"""

from __future__ import annotations

import time
from collections.abc import Callable, Sequence
from concurrent.futures import Executor, Future, as_completed
from typing import Any

import numpy as np
from numpy.typing import NDArray

from prepkit.base.blas import one_blas_thread
from prepkit.errors import PrepkitError
from prepkit.plan import Plan, Scenario
from prepkit.scenarios.runs import PlanResults, ScenarioRun
from prepkit.simulation.identity import Shared
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
from prepkit.uncertainty.run import ValueCache, ensemble_key, run_ensemble
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


@one_blas_thread
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


Member = tuple[Scenario, bool, ScenarioRun | None]
"""A variant: its scenario, True with its interventions, and the engine's run of it."""


def _members(plan: Plan, results: PlanResults | None) -> list[Member]:
    """Every variant in plan order: each scenario with, then without, its interventions."""
    out: list[Member] = []
    for scenario in plan.scenarios:
        for flag in (True, False):
            run = None
            if results is not None:
                run = results[scenario.name].variant("with" if flag else "without")
            out.append((scenario, flag, run))
    return out


def _groups(plan: Plan, members: list[Member], sample: NDArray[np.float64],
            min_substeps: int | None, blocks: int, cache: ValueCache) -> list[list[int]]:
    """Indices of ``members`` grouped by equal ensemble key, groups in order of first member.

    A variant whose key cannot be made (its plan fails to compile) is a group
    of its own, so that its error is raised where it was before.
    """
    groups: dict[str, list[int]] = {}
    for index, (scenario, flag, _) in enumerate(members):
        try:
            key = ensemble_key(plan, scenario, flag, sample, min_substeps=min_substeps,
                               blocks=blocks, cache=cache)
        except PrepkitError:
            key = f"unique {index}"
        groups.setdefault(key, []).append(index)
    return list(groups.values())


def run_group(
    plan: Plan,
    group: Sequence[Member],
    *,
    sample: NDArray[np.float64],
    seed: int,
    quantiles: tuple[float, ...],
    min_substeps: int | None,
    blocks: int,
    on_block: Callable[[int], None] | None = None,
    cache: ValueCache | None = None,
) -> list[EnsembleResult]:
    """The ensembles of variants with one key: draws and tornado run once, then shared.

    Parameters
    ----------
    plan : Plan
        The plan.
    group : sequence of (Scenario, bool, ScenarioRun or None)
        The variants: scenario, with interventions, and the engine's run.
    sample, seed, quantiles, min_substeps, blocks, on_block
        As for :func:`prepkit.uncertainty.run.run_ensemble`.
    cache : ValueCache, optional
        PERT values shared between scenarios.

    Returns
    -------
    list of EnsembleResult
        One per variant, in the order given.
    """
    shared = Shared()
    return [
        run_ensemble(plan, scenario, flag, sample=sample, seed=seed, quantiles=quantiles,
                     scenario_run=run, min_substeps=min_substeps, blocks=blocks,
                     on_block=on_block, _cache=cache, _shared=shared)
        for scenario, flag, run in group
    ]


def _paired(plan: Plan, members: list[Member],
            got: dict[int, EnsembleResult]) -> tuple[ScenarioUncertainty, ...]:
    """Results by variant index, paired by scenario in plan order."""
    count = len(plan.scenarios)
    assert len(members) == 2 * count
    return tuple(
        ScenarioUncertainty(scenario=scenario.name, with_interventions=got[2 * i],
                            without_interventions=got[2 * i + 1])
        for i, scenario in enumerate(plan.scenarios)
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
    """Every variant in this process, one group of identical variants at a time."""
    cache = ValueCache(sample)
    members = _members(plan, results)
    got: dict[int, EnsembleResult] = {}
    for group in _groups(plan, members, sample, min_substeps, blocks, cache):
        done = run_group(plan, [members[i] for i in group], sample=sample, seed=seed,
                         quantiles=quantiles, min_substeps=min_substeps, blocks=blocks,
                         on_block=tick, cache=cache)
        got.update(zip(group, done, strict=True))
    return _paired(plan, members, got)


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
    """:func:`run_uncertainty` with one task per group of identical variants on ``executor``."""
    count = int(sample.shape[0])
    members = _members(plan, results)
    groups = _groups(plan, members, sample, min_substeps, blocks, ValueCache(sample))
    futures: dict[Future[list[EnsembleResult]], list[int]] = {}
    for group in groups:
        future = executor.submit(
            run_group, plan, [members[i] for i in group], sample=sample, seed=seed,
            quantiles=quantiles, min_substeps=min_substeps, blocks=blocks,
        )
        futures[future] = group
    tick = _progress_ticker(progress, count * len(members))
    for done in as_completed(futures):
        tick(count * len(futures[done]))
    got: dict[int, EnsembleResult] = {}
    for future, group in futures.items():
        got.update(zip(group, future.result(), strict=True))
    return UncertaintyResults(
        draws=count, seed=seed, quantiles=quantiles, dimensions=dims,
        scenarios=_paired(plan, members, got), seconds=time.perf_counter() - started,
    )
