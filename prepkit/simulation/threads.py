"""Threads for the ensemble: numba's thread count and NumPy work spread over threads."""

from __future__ import annotations

import os
from collections.abc import Callable, Sequence
from concurrent.futures import ThreadPoolExecutor
from typing import Any

import numba
from numpy.typing import NDArray


def use_all_cores() -> int:
    """Let numba use every core of the machine; returns the thread count."""
    # numba's config module is typed without its run-time settings
    ceiling = int(numba.config.NUMBA_NUM_THREADS)  # type: ignore[attr-defined]
    wanted = max(1, min(os.cpu_count() or 1, ceiling))
    numba.set_num_threads(wanted)
    return wanted


def in_threads(
    func: Callable[[Any], NDArray[Any]], parts: Sequence[Any]
) -> list[NDArray[Any]]:
    """``[func(part) for part in parts]`` on up to numba's thread count of threads.

    Meant for NumPy work that releases the GIL (batched eigenvalues, partitions); each part
    is computed exactly as it would be on its own, so the numbers do not change.

    Parameters
    ----------
    func : callable
        Function of one part.
    parts : sequence
        The parts.

    Returns
    -------
    list of ndarray
        ``func`` of each part, in order.
    """
    workers = min(len(parts), max(1, numba.get_num_threads()))
    if workers <= 1:
        return [func(part) for part in parts]
    return list(_pool(workers).map(func, parts))


_POOLS: dict[int, ThreadPoolExecutor] = {}


def _pool(workers: int) -> ThreadPoolExecutor:
    """One lasting pool per thread count.

    Starting threads costs milliseconds, which a fit calling the model thousands of times
    would pay on every call.
    """
    if workers not in _POOLS:
        _POOLS[workers] = ThreadPoolExecutor(max_workers=workers,
                                             thread_name_prefix="prepkit-numpy")
    return _POOLS[workers]
