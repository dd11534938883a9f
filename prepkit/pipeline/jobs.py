"""Running independent jobs side by side: the charts and documents of a pack.

:func:`run_jobs` runs them in forked worker processes where that helps
(Linux), and here otherwise; either way the results are the same bytes.
"""

from __future__ import annotations

import multiprocessing
import os
import sys
from collections.abc import Callable, Sequence
from typing import Any, TypeVar

from prepkit.errors import PipelineError
from prepkit.pipeline.guard import worker_setup

__all__ = ["PARALLEL_TIMEOUT_SECONDS", "WORKERS_ENV", "run_jobs", "worker_count"]

#: Environment variable giving the most worker processes for charts and documents
#: (``1`` runs everything in this process).
WORKERS_ENV = "PREPKIT_WORKERS"

#: Longest wait for the parallel jobs of one step [s]; after it, they run here instead.
PARALLEL_TIMEOUT_SECONDS = 300.0

T = TypeVar("T")

#: The jobs of the pool this process works for: set once, by :func:`_start_worker`, in each
#: forked worker (never in the process that runs the pack). A pool sends a worker only the
#: name of the function to call and its argument, so the jobs themselves (closures, which
#: cannot be pickled) must be found by name in the worker; forking hands them over as they
#: are, and the worker keeps them for its whole life. In the process that runs the pack it
#: stays empty; a job that itself calls :func:`run_jobs` in a worker finds it set and runs
#: its own jobs there, one after the other.
_WORKER_JOBS: list[Callable[[], Any]] = []


def _start_worker(parent: int, jobs: Sequence[Callable[[], Any]]) -> None:
    """Set up a forked worker (:func:`worker_setup`) and keep the jobs it may be given."""
    worker_setup(parent)
    _WORKER_JOBS[:] = jobs


def _run_job(index: int) -> Any:
    return _WORKER_JOBS[index]()


def worker_count() -> int:
    """Worker processes to use for charts and documents.

    Returns
    -------
    int
        ``PREPKIT_WORKERS`` when set, else the CPUs this process may use, at
        most 4; 1 where processes cannot be forked (Windows, macOS).
    """
    forkable = "fork" in multiprocessing.get_all_start_methods()
    if not sys.platform.startswith("linux") or not forkable:
        return 1
    raw = os.environ.get(WORKERS_ENV, "").strip()
    if raw:
        try:
            return max(1, int(raw))
        except ValueError:
            raise PipelineError(WORKERS_ENV, "a whole number of workers", repr(raw)) from None
    try:
        available = len(os.sched_getaffinity(0))
    except (AttributeError, OSError):
        available = os.cpu_count() or 1
    return max(1, min(4, available))


def run_jobs(jobs: Sequence[Callable[[], T]], workers: int | None = None) -> list[T]:
    """Run independent jobs, in forked worker processes when that helps.

    Forked workers inherit the jobs (closures over the plan and results),
    so nothing but the results is copied between processes. Any trouble
    with the workers (they cannot start, a result cannot be sent back, or
    they take longer than :data:`PARALLEL_TIMEOUT_SECONDS`) falls back to
    running the jobs here, so parallelism only ever changes the speed: the
    jobs' results are the same bytes either way. A job that fails in a
    worker is run again here, so its error is raised from this process.

    Parameters
    ----------
    jobs : sequence of callable
        Functions without arguments.
    workers : int, optional
        Most worker processes; default :func:`worker_count`.

    Returns
    -------
    list
        The jobs' results, in order.
    """
    count = worker_count() if workers is None else workers
    if count <= 1 or len(jobs) <= 1 or _WORKER_JOBS:
        return [job() for job in jobs]
    try:
        context = multiprocessing.get_context("fork")
        # Forked workers get initargs as they are (nothing is pickled), jobs included.
        with context.Pool(processes=min(count, len(jobs)), initializer=_start_worker,
                          initargs=(os.getpid(), list(jobs))) as pool:
            pending = pool.map_async(_run_job, range(len(jobs)), chunksize=1)
            results: list[T] = pending.get(PARALLEL_TIMEOUT_SECONDS)
            return results
    except Exception:  # noqa: BLE001 - any failure in a worker: run here, where errors are plain
        pass
    return [job() for job in jobs]
