"""What the command line checks and prepares before the model loads, and how it words OS errors.

Nothing here runs at import: :mod:`prepkit.cli.main` calls these functions for
the commands that need them, inside its error handling, so a bad setting is
a clear message with exit code 2 rather than a failure before prepkit can
speak.

* :func:`check_environment`: ``SOURCE_DATE_EPOCH`` must be a whole number of
  seconds (libraries prepkit loads read it too, some at import, and fail on
  anything else); a blank value means unset.
* :func:`prepare_compiled_model`: numba keeps the compiled model in a cache
  folder (``NUMBA_CACHE_DIR``, ``__pycache__`` beside prepkit's code, or the
  user's cache folder) and refuses to load the model when none of them can
  be written. Then the model is compiled into a temporary folder for this
  run only, with a note saying so; the folder is removed at the end
  (:func:`remove_temporary_folders`).
* BLAS threads are not set here: the library limits them around its own
  work (:mod:`prepkit.base.blas`), for the command line and the Python API
  alike.
* :func:`in_ci` and :func:`on_terminal`: whether the run is under continuous
  integration (the ``CI`` variable), where step messages are left out, and
  whether progress goes to a terminal, where a progress bar may be drawn.
  prepkit reads ``CI`` and the terminal here only.
* :func:`os_error_message`: one sentence for an operating-system error
  (disk full, permission denied), naming the file.
"""

from __future__ import annotations

import errno
import importlib
import os
import shutil
import sys
import tempfile
from collections.abc import Iterator
from contextlib import contextmanager

__all__ = [
    "CACHE_NOTE",
    "check_environment",
    "compiled_model",
    "in_ci",
    "on_terminal",
    "os_error_message",
]

#: Module holding the model's compiled (numba) kernels.
KERNELS_MODULE = "prepkit.simulation.kernels"

#: What numba says when no cache folder can be written.
_NO_CACHE = "cannot cache function"

CACHE_NOTE = (
    "Note: no folder for the compiled model can be written (NUMBA_CACHE_DIR, the __pycache__ "
    "folder beside prepkit's code, or your user cache folder), so this run compiles the model "
    "in a temporary folder and every run will compile it again (about 40 s). To keep it, set "
    "NUMBA_CACHE_DIR to a folder you can write to."
)


def check_environment() -> None:
    """Check the environment variables prepkit and its libraries read.

    Raises
    ------
    prepkit.errors.SourceDateError
        When ``SOURCE_DATE_EPOCH`` is set to something other than a whole
        number of seconds. A blank value is removed (it means unset), so
        libraries that would fail on it never see it.
    """
    from prepkit.base.files import source_date

    raw = os.environ.get("SOURCE_DATE_EPOCH")
    if raw is not None and not raw.strip():
        del os.environ["SOURCE_DATE_EPOCH"]
        return
    source_date()


@contextmanager
def compiled_model() -> Iterator[str | None]:
    """Load the model's kernels, compiling into a temporary folder when no cache can be written.

    The temporary folder, when one is made, is removed when the ``with``
    block ends.

    Yields
    ------
    str or None
        :data:`CACHE_NOTE` when the temporary folder is used, else None.

    Raises
    ------
    OSError
        When not even a temporary folder can be made.
    """
    try:
        importlib.import_module(KERNELS_MODULE)
        cached = True
    except RuntimeError as exc:
        if _NO_CACHE not in str(exc):
            raise
        cached = False
    if cached:
        yield None
        return
    folder = tempfile.mkdtemp(prefix="prepkit-compiled-model-")
    try:
        os.environ["NUMBA_CACHE_DIR"] = folder
        from numba.core import config

        config.reload_config()
        sys.modules.pop(KERNELS_MODULE, None)
        importlib.import_module(KERNELS_MODULE)
        yield CACHE_NOTE
    finally:
        shutil.rmtree(folder, ignore_errors=True)


def in_ci() -> bool:
    """True when the ``CI`` environment variable is set to anything but ``0``, ``false`` or ``no``.

    Returns
    -------
    bool
        Whether step messages are left out (continuous integration logs).
    """
    value = os.environ.get("CI", "").strip().lower()
    return value not in ("", "0", "false", "no")


def on_terminal() -> bool:
    """True when standard error is a terminal, where a progress bar may be drawn."""
    return bool(getattr(sys.stderr, "isatty", lambda: False)())


_ADVICE = {
    errno.ENOSPC: "the disk is full; free some space and run again",
    errno.EDQUOT: "the disk quota is used up; free some space and run again",
    errno.EACCES: "permission denied; choose a file or folder you may use",
    errno.EPERM: "the operating system does not allow it; choose a file or folder you may use",
    errno.EROFS: "the disk is read-only; choose a folder you can write to",
    errno.EMFILE: "too many files are open; close some programs and run again",
}


def os_error_message(exc: OSError) -> str:
    """One sentence for an operating-system error, naming the file.

    Parameters
    ----------
    exc : OSError
        The error.

    Returns
    -------
    str
        E.g. ``"could not use /data/pack/results.xlsx: No space left on
        device (the disk is full; free some space and run again). Earlier
        outputs were left as they were."``
    """
    where = exc.filename if exc.filename is not None else "a file"
    reason = exc.strerror or str(exc) or type(exc).__name__
    advice = _ADVICE.get(exc.errno or 0)
    detail = f"{reason} ({advice})" if advice else reason
    return f"could not use {where}: {detail}. Earlier outputs were left as they were."
