"""Bounds a run checks before it starts, and how its worker processes behave.

* :func:`check_draws_option`: ``--draws`` takes the same range as the
  workbook's "Uncertainty draws" field (read from the schema, so the two can
  never disagree).
* :func:`check_ensemble_memory`: the uncertainty ensemble's memory is
  estimated from draws x days x the daily series it keeps
  (:func:`ensemble_bytes`) and compared with the memory this machine has
  available, so a run too large is refused with a message saying how many
  draws would fit, instead of failing with a MemoryError after minutes.
* :func:`worker_setup`: worker processes end when the main process ends,
  however it ends (killed, interrupted), and print nothing.
"""

from __future__ import annotations

import ctypes
import os
import signal
import sys
from pathlib import Path

from prepkit.base.plural import counted
from prepkit.errors import PipelineError
from prepkit.plan import Plan
from prepkit.workbook.schema import FIELDS_BY_NAME

__all__ = [
    "BYTES_PER_DRAW_BAND",
    "BYTES_PER_DRAW_DAY",
    "BYTES_PER_DRAW_VARIANT",
    "ENSEMBLE_FIXED_BYTES",
    "MAX_DRAWS",
    "MEMORY_SHARE",
    "available_memory_bytes",
    "check_draws_option",
    "check_ensemble_memory",
    "draws_that_fit",
    "ensemble_bytes",
    "worker_setup",
]

_DRAWS = FIELDS_BY_NAME["details.draws"]

#: Most uncertainty draws per scenario variant: the workbook field's maximum.
MAX_DRAWS = int(_DRAWS.maximum) if _DRAWS.maximum is not None else 100_000

#: Memory per draw and day while one scenario variant runs [bytes]: the five daily series
#: the kernel keeps per draw (:data:`prepkit.uncertainty.draws.SERIES_NAMES`, float32: 20 B),
#: the daily absence share (float32: 4 B) and four over-capacity flags (bool: 4 B) that
#: :mod:`prepkit.uncertainty.run` derives from them, and the working copy np.quantile makes
#: of one series at a time (4 B): 32 B, with half again for temporaries. Measured with
#: tracemalloc on both sample workbooks at 1,000 and 4,000 draws: 31 to 36 B.
BYTES_PER_DRAW_DAY = 48

#: Memory per draw kept for each scenario variant until the pack is written [bytes]: the
#: per-draw table of inputs, totals, peaks and peak dates (measured: 460 to 600 B).
BYTES_PER_DRAW_VARIANT = 640

#: Memory per draw and age band while a variant runs [bytes]: its per-band inputs
#: (five float64 arrays) and the parameter block built from them.
BYTES_PER_DRAW_BAND = 64

#: Memory the ensemble needs whatever the number of draws [bytes] (measured: about 7 MB).
ENSEMBLE_FIXED_BYTES = 16 * 1024 * 1024

#: Share of the available memory the ensemble may take: the rest of the run (charts, the
#: PDF layout, the results workbook) and other programs need the remainder.
MEMORY_SHARE = 0.6


def check_draws_option(draws: int | None) -> None:
    """Refuse a ``--draws`` outside the workbook field's range, before anything is read.

    Parameters
    ----------
    draws : int or None
        The option's value; None when not given.

    Raises
    ------
    PipelineError
        When ``draws`` is below 0 or above :data:`MAX_DRAWS`.
    """
    if draws is not None and not 0 <= draws <= MAX_DRAWS:
        raise PipelineError(
            "--draws",
            f"0 to {MAX_DRAWS:,} uncertainty draws (the range of '{_DRAWS.label}' on the "
            f"{_DRAWS.sheet} sheet)",
            f"{draws:,}" if draws > MAX_DRAWS else str(draws),
        )


def ensemble_bytes(*, draws: int, days: int, variants: int, bands: int,
                   remote: bool = False) -> int:
    """Estimated peak memory of the uncertainty ensemble [bytes].

    Parameters
    ----------
    draws : int
        Draws per scenario variant [count].
    days : int
        Days simulated [days].
    variants : int
        Scenario variants run (two per scenario: with and without measures).
    bands : int
        Age bands.
    remote : bool, optional
        True when the draws run on a cluster: only the per-draw tables
        returned to this machine count.

    Returns
    -------
    int
        Bytes.
    """
    kept = draws * variants * BYTES_PER_DRAW_VARIANT
    if remote:
        return ENSEMBLE_FIXED_BYTES + kept
    running = draws * (days * BYTES_PER_DRAW_DAY + bands * BYTES_PER_DRAW_BAND)
    return ENSEMBLE_FIXED_BYTES + kept + running


def draws_that_fit(limit_bytes: int, *, days: int, variants: int, bands: int,
                   remote: bool = False) -> int:
    """Most draws whose :func:`ensemble_bytes` is at most ``limit_bytes``.

    Parameters
    ----------
    limit_bytes : int
        Memory allowed [bytes].
    days, variants, bands : int
        As for :func:`ensemble_bytes`.
    remote : bool, optional
        As for :func:`ensemble_bytes`.

    Returns
    -------
    int
        Draws [count], 0 when not even one fits.
    """
    one = ensemble_bytes(draws=1, days=days, variants=variants, bands=bands, remote=remote)
    per_draw = one - ENSEMBLE_FIXED_BYTES
    return max(0, (limit_bytes - ENSEMBLE_FIXED_BYTES) // per_draw)


def _meminfo_available() -> int | None:
    try:
        text = Path("/proc/meminfo").read_text(encoding="ascii")
    except (OSError, UnicodeDecodeError):
        return None
    for line in text.splitlines():
        if line.startswith("MemAvailable:"):
            parts = line.split()
            if len(parts) >= 2 and parts[1].isdigit():
                return int(parts[1]) * 1024
    return None


def _cgroup_room() -> int | None:
    """Memory left under this process's control-group limit [bytes], when there is one."""
    for limit_file, usage_file in (
        ("/sys/fs/cgroup/memory.max", "/sys/fs/cgroup/memory.current"),
        ("/sys/fs/cgroup/memory/memory.limit_in_bytes",
         "/sys/fs/cgroup/memory/memory.usage_in_bytes"),
    ):
        try:
            limit = Path(limit_file).read_text(encoding="ascii").strip()
            usage = Path(usage_file).read_text(encoding="ascii").strip()
        except (OSError, UnicodeDecodeError):
            continue
        if limit.isdigit() and usage.isdigit() and int(limit) < 1 << 60:
            return max(0, int(limit) - int(usage))
    return None


def available_memory_bytes() -> int | None:
    """Memory this process can still use [bytes], or None when it cannot be told.

    The kernel's estimate of memory available to new programs
    (``MemAvailable`` in ``/proc/meminfo``, which counts the file cache that
    can be dropped), else the free physical pages (``os.sysconf``); the
    smaller of that and the room left under a container's memory limit.

    Returns
    -------
    int or None
        Bytes.
    """
    found = _meminfo_available()
    if found is None:
        try:
            found = os.sysconf("SC_AVPHYS_PAGES") * os.sysconf("SC_PAGE_SIZE")
        except (AttributeError, ValueError, OSError):
            found = None
    room = _cgroup_room()
    if room is not None:
        found = room if found is None else min(found, room)
    return found


def _size(count: float) -> str:
    gigabytes = count / 1024**3
    if gigabytes >= 1:
        return f"{gigabytes:.1f} GB"
    return f"{max(1.0, count / 1024**2):.0f} MB"


def check_ensemble_memory(plan: Plan, *, from_option: bool, remote: bool = False) -> None:
    """Refuse an ensemble that would not fit in the memory available.

    Parameters
    ----------
    plan : Plan
        The plan, with the draws the run will use.
    from_option : bool
        True when the draws came from ``--draws`` (named in the message),
        else from the workbook (its cell is named).
    remote : bool, optional
        True when the draws run on a cluster (``--scheduler``).

    Raises
    ------
    PipelineError
        When :func:`ensemble_bytes` exceeds :data:`MEMORY_SHARE` of
        :func:`available_memory_bytes`.
    """
    draws = plan.details.draws
    available = available_memory_bytes()
    if draws <= 0 or available is None:
        return
    days, variants, bands = plan.details.horizon_days + 1, 2 * len(plan.scenarios), len(plan.bands)
    need = ensemble_bytes(draws=draws, days=days, variants=variants, bands=bands, remote=remote)
    limit = int(available * MEMORY_SHARE)
    if need <= limit:
        return
    fit = draws_that_fit(limit, days=days, variants=variants, bands=bands, remote=remote)
    if from_option:
        where = "--draws"
    else:
        record = next((r for r in plan.source.inputs if r.name == "details.draws"), None)
        cell = f"{record.sheet}!{record.cell}" if record is not None and record.cell else ""
        where = f"{_DRAWS.label} ({cell or _DRAWS.sheet + ' sheet'})"
    raise PipelineError(
        where,
        f"at most {fit:,} draws, which fit in the memory this machine has available "
        f"({_size(available)}, of which the uncertainty ensemble may use {_size(limit)})",
        f"{counted(draws, 'draw', 'draws')} for each of "
        f"{counted(variants, 'scenario variant', 'scenario variants')} over "
        f"{plan.details.horizon_days:,} days, which would need about {_size(need)}; "
        "ask for fewer draws, close other programs, or run the draws on a Dask cluster "
        "(--scheduler)",
    )


#: ``prctl`` option asking Linux to send a signal when the parent process ends.
_PR_SET_PDEATHSIG = 1


def worker_setup(parent_pid: int) -> None:
    """Make a forked worker process end with its parent, silently.

    Run as the worker pool's initializer. On Linux the kernel kills the
    worker (``SIGKILL``, which prints nothing) the moment the main process
    ends for any reason, so no worker outlives a killed run. Ctrl-C is left
    to the main process, which stops the pool itself; without this, every
    worker would print a traceback of its own interruption.

    Parameters
    ----------
    parent_pid : int
        Process id of the main process.
    """
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    if sys.platform.startswith("linux"):
        try:
            libc = ctypes.CDLL(None, use_errno=True)
            libc.prctl(_PR_SET_PDEATHSIG, int(signal.SIGKILL), 0, 0, 0)
        except (OSError, AttributeError):  # pragma: no cover - every Linux libc has prctl
            pass
    if os.getppid() != parent_pid:  # the parent ended before the request took effect
        os._exit(0)
