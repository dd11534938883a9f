"""Rerun the pack whenever the planning workbook is saved (``prepkit watch``).

Planners rerun everything each time a health authority revises a figure.
``prepkit watch WORKBOOK`` builds the pack once, then waits for the workbook
to be saved again and rebuilds it, until interrupted. A save that leaves the
workbook with mistakes prints the problems and keeps the previous pack (or,
when there is none yet, says so); the next good save rebuilds it.

File-change notification comes from the ``watchfiles`` library, which
handles the save-to-temporary-then-rename dance spreadsheet programs do.
"""

from __future__ import annotations

import threading
from collections.abc import Callable, Iterable, Iterator
from pathlib import Path

from prepkit.errors import PrepkitError, WatchUnavailableError, WorkbookError
from prepkit.pipeline.manifest import file_sha256, read_manifest

Say = Callable[[str], None]

#: Quiet time after the last change before rebuilding [milliseconds]: a
#: spreadsheet program writes a file in several steps.
DEBOUNCE_MS = 800


def _require_watchfiles() -> None:
    try:
        import watchfiles  # noqa: F401
    except ImportError:
        raise WatchUnavailableError(
            "prepkit watch needs the watchfiles package: pip install 'prepkit[watch]'"
        ) from None


def _changes(folder: Path, stop: threading.Event | None) -> Iterator[set[tuple[object, str]]]:
    import watchfiles

    for batch in watchfiles.watch(folder, debounce=DEBOUNCE_MS, stop_event=stop,
                                  raise_interrupt=True):
        yield {(change, path) for change, path in batch}


def watch_workbook(
    workbook: Path,
    build: Callable[[], str],
    say: Say,
    *,
    outdir: Path | None = None,
    stop: threading.Event | None = None,
    changes: Iterable[set[tuple[object, str]]] | None = None,
) -> int:
    """Build once, then rebuild after every save of ``workbook``.

    Parameters
    ----------
    workbook : pathlib.Path
        The planning workbook to watch.
    build : callable
        Builds the pack and returns its closing report; raises
        :class:`~prepkit.errors.WorkbookError` (or another
        :class:`~prepkit.errors.PrepkitError`) for input problems.
    say : callable
        Receives every message for the planner.
    outdir : pathlib.Path, optional
        The pack's folder, to tell after a failed build whether a previous
        pack is there; without it, only packs built while watching count.
    stop : threading.Event, optional
        Set it to stop watching (used by tests; Ctrl-C stops it too).
    changes : iterable of sets of (change, path), optional
        Change batches to react to instead of the file system (tests).

    Returns
    -------
    int
        Number of builds that succeeded.
    """
    from prepkit.workbook.describe import describe_problems

    if changes is None:
        _require_watchfiles()
    target = workbook.resolve()
    built = 0
    last_hash: str | None = None

    def attempt() -> None:
        nonlocal built, last_hash
        try:
            last_hash = file_sha256(target)
        except OSError:
            say(f"Waiting for {target.name} to be saved again.")
            return
        try:
            say(build())
            built += 1
        except WorkbookError as exc:
            say(describe_problems(exc))
            say(f"{_kept(outdir, built)} Fix the workbook and save it again.")
        except PrepkitError as exc:
            say(f"prepkit: {exc}")
            say(_kept(outdir, built))

    attempt()
    say(f"Watching {target.name} for changes; press Ctrl-C to stop.")
    batches = changes if changes is not None else _changes(target.parent, stop)
    for batch in batches:
        if stop is not None and stop.is_set():
            break
        if not any(Path(path).resolve() == target for _change, path in batch):
            continue
        try:
            current = file_sha256(target)
        except OSError:
            continue  # mid-save: the rename that completes it comes as another change
        if current == last_hash:
            continue  # touched, not changed
        say(f"{target.name} changed; rebuilding.")
        attempt()
    return built


def _kept(outdir: Path | None, built: int) -> str:
    """What a failed build left: the previous pack, or none (``built`` packs so far)."""
    if outdir is None:
        return "The previous pack was kept." if built else "No pack was written."
    if read_manifest(outdir) is not None:
        return f"The previous pack in {outdir} was kept."
    return f"No pack was written to {outdir}."
