"""One BLAS thread around prepkit's own work, set by the library and not by the environment.

prepkit's linear algebra is small (eigenvalues of next-generation matrices of
a few hundred rows, many of them): on one thread it is fastest. OpenBLAS
otherwise starts one thread per core, hands each small product to all of
them, and its idle threads spin after each call, taking the cores numba's
parallel loops need. Measured with ``benchmarks/startup.py``: a 16-band
single run through the Python API took about 0.6 s with OpenBLAS's own
threads, 0.02 s with one.

:func:`one_blas_thread` (a decorator) limits every BLAS library numpy and
scipy loaded (threadpoolctl) to one thread while the decorated function
runs, and puts the previous limits back afterwards, so a caller's own numpy
work keeps its threads. Nothing is read from or written to the environment,
and nothing happens at import. The limit is process-wide while it holds (BLAS
libraries have no per-thread setting); nested calls keep it.
"""

from __future__ import annotations

import functools
import threading
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from typing import Any, TypeVar

__all__ = ["blas_limited", "one_blas_thread", "set_enabled"]

Func = TypeVar("Func", bound=Callable[..., Any])

_state: dict[str, Any] = {"enabled": True, "controller": None, "depth": 0}
_lock = threading.Lock()


def set_enabled(enabled: bool) -> None:
    """Switch the limit on (the default) or off, e.g. to measure without it (benchmarks)."""
    _state["enabled"] = bool(enabled)


def _controller() -> Any:
    """The thread pools threadpoolctl finds loaded, listed once (a few milliseconds)."""
    if _state["controller"] is None:
        import numpy  # noqa: F401 - its BLAS must be loaded before the pools are listed
        import scipy.linalg  # noqa: F401 - scipy ships a BLAS library of its own
        from threadpoolctl import ThreadpoolController

        _state["controller"] = ThreadpoolController()
    return _state["controller"]


@contextmanager
def blas_limited() -> Iterator[None]:
    """Within the ``with`` block, every loaded BLAS library uses one thread.

    The first block to enter sets the limit (about 12 microseconds); the
    last to leave, in any thread, puts the previous limits back.
    """
    if not _state["enabled"]:
        yield
        return
    with _lock:
        if _state["depth"] == 0:
            _state["limiter"] = _controller().limit(limits=1, user_api="blas")
        _state["depth"] += 1
    try:
        yield
    finally:
        with _lock:
            _state["depth"] -= 1
            if _state["depth"] == 0:
                _state.pop("limiter").restore_original_limits()


def one_blas_thread(func: Func) -> Func:
    """Decorator: ``func`` runs within :func:`blas_limited`."""

    @functools.wraps(func)
    def limited(*args: Any, **kwargs: Any) -> Any:
        with blas_limited():
            return func(*args, **kwargs)

    return limited  # type: ignore[return-value]
