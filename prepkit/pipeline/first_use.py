"""The note shown before a run compiles the model for the first time.

numba compiles the model's kernels on their first call and keeps them in a
cache; :func:`first_use_note` says, before the run starts, when that is about
to happen and how long it takes.
"""

from __future__ import annotations

__all__ = ["FIRST_USE_NOTE", "FIRST_USE_SECONDS", "first_use_note", "kernels_need_compiling"]


#: Time numba takes to compile the model's kernels the first time they run [s]. Measured
#: with ``prepkit demo`` (numba 0.68, Python 3.11, two cores): a run without a cache took
#: 52.5 s of processor time against 17.6 s for a run with one, so compiling is about 35 s
#: of work (111.6 s against 28.3 s on the clock with the machine shared five ways).
#: Compiling happens once per version of ``kernels.py``.
FIRST_USE_SECONDS = 40

FIRST_USE_NOTE = (
    f"Preparing the compiled model for first use (about {FIRST_USE_SECONDS} s, longer on a "
    "busy machine; later runs skip this)."
)


def kernels_need_compiling() -> bool:
    """True when some model kernel has no compiled copy, in memory or in numba's cache.

    numba compiles each kernel on its first call and keeps the machine code
    in its cache (index files ``*.nbi`` in ``__pycache__`` beside
    ``kernels.py``, or under ``NUMBA_CACHE_DIR``). An index counts only when
    it was written for this numba version and this ``kernels.py`` (numba
    checks it against that file only; :mod:`prepkit.simulation.kernels` says what
    this means for the other compiled modules). Nothing is compiled
    or written here.

    Returns
    -------
    bool
        True when the next run will compile; False when it loads the cache,
        or when the cache cannot be looked at.
    """
    from prepkit.simulation import kernels

    try:
        from numba.core.dispatcher import Dispatcher
    except ImportError:  # pragma: no cover - numba is a dependency
        return False
    for value in vars(kernels).values():
        if not isinstance(value, Dispatcher) or value.overloads:
            continue
        index = getattr(getattr(value, "_cache", None), "_cache_file", None)
        load = getattr(index, "_load_index", None)
        if load is None:
            continue  # a kernel numba does not cache, or another numba: nothing to say
        try:
            if not load():
                return True
        except Exception:  # noqa: BLE001 - an unreadable index is recompiled by numba
            return True
    return False


def first_use_note() -> str | None:
    """The note to show before the first run compiles the model, or None.

    Returns
    -------
    str or None
        :data:`FIRST_USE_NOTE` when :func:`kernels_need_compiling`.
    """
    return FIRST_USE_NOTE if kernels_need_compiling() else None
