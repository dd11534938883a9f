"""The uncertainty ensemble of a run, on this machine or on a Dask cluster (optional)."""

from __future__ import annotations

import contextlib
from collections.abc import Iterator
from concurrent.futures import Executor
from dataclasses import replace
from typing import Any

from prepkit.errors import PipelineError
from prepkit.pipeline.progress import Steps, draws_bar
from prepkit.plan import Plan
from prepkit.scenarios.runs import PlanResults
from prepkit.uncertainty.decide import SEARCH_DRAWS, decide_plan
from prepkit.uncertainty.plan_runs import run_uncertainty
from prepkit.uncertainty.results import UncertaintyResults
from prepkit.uncertainty.summary_json import uncertainty_summary_dict

__all__ = ["CLUSTER_TIMEOUT_SECONDS", "ensemble_summary", "run_ensemble"]


def run_ensemble(
    plan: Plan, results: PlanResults, steps: Steps, scheduler: str | None = None
) -> UncertaintyResults | None:
    """Uncertainty results, or None when the plan asks for no draws."""
    if plan.details.draws <= 0:
        return None
    steps(f"Running {plan.details.draws:,} plausible futures per scenario and variant")
    with contextlib.ExitStack() as stack:
        executor = None if scheduler is None else stack.enter_context(_cluster_executor(scheduler))
        with draws_bar(steps.interactive) as progress:
            ensemble = run_uncertainty(plan, results, progress=progress, executor=executor)
        steps(f"Searching the decide-by dates ({min(plan.details.draws, SEARCH_DRAWS):,} "
              "futures at each date tried)")
        return replace(ensemble, decisions=decide_plan(plan, executor=executor))


#: How long to wait for a Dask scheduler to answer [s].
CLUSTER_TIMEOUT_SECONDS = 10


@contextlib.contextmanager
def _cluster_executor(address: str) -> Iterator[Executor]:
    """A concurrent.futures executor on the Dask cluster at ``address``."""
    try:
        from dask.distributed import Client
    except ImportError:
        raise PipelineError(
            "--scheduler", "the dask.distributed package (pip install 'prepkit[cluster]')",
            "it is not installed",
        ) from None
    try:
        client = Client(address, timeout=CLUSTER_TIMEOUT_SECONDS)
    except (OSError, TimeoutError, ValueError) as exc:
        raise PipelineError("--scheduler", "the address of a running Dask scheduler",
                            f"{address!r} ({exc})") from None
    try:
        yield client.get_executor()
    finally:
        client.close()


def ensemble_summary(ensemble: UncertaintyResults | None) -> dict[str, Any] | None:
    """The uncertainty part of ``summary.json``, or None when the ensemble did not run."""
    return None if ensemble is None else uncertainty_summary_dict(ensemble)
