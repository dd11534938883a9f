"""Paths a run may write to: never the workbook, never a file prepkit did not write.

A run writes two kinds of output: the pack folder (replaced whole, see
:mod:`prepkit.pipeline.outputs`) and, when asked, one JSON summary file
(``--summary-json``). Before any work is done, :func:`check_pack_folder` and
:func:`check_summary_path` refuse a path that

* is the planning workbook itself, or holds it, however it is spelled: the
  same file reached through a symbolic link, ``..``, a hard link or another
  letter case on a file system that ignores case is the same file
  (:func:`same_file` compares the files, not the spellings);
* lies inside the pack folder (the JSON file would be lost with the old pack
  or block the next run);
* is a folder, a device or a pipe, or lies under a file;
* already holds a file that is not a summary prepkit wrote.

Each refusal is a :class:`~prepkit.errors.PipelineError` naming the option,
what was expected and what was found.
"""

from __future__ import annotations

import json
import os
import stat
from pathlib import Path

from prepkit.errors import PipelineError

__all__ = [
    "MAX_SUMMARY_BYTES",
    "check_pack_folder",
    "check_summary_path",
    "is_inside",
    "is_prepkit_summary",
    "same_file",
]

#: Largest existing file read to tell whether it is a summary prepkit wrote [bytes]. A
#: summary with uncertainty bands for twenty scenarios over two years is about 10 MB.
MAX_SUMMARY_BYTES = 64 * 1024 * 1024

_SUMMARY_OPTION = "--summary-json"


def _absolute(path: Path) -> Path:
    return Path(os.path.abspath(Path(path).expanduser()))


def same_file(first: Path, second: Path) -> bool:
    """True when two paths name the same file or folder.

    Parameters
    ----------
    first, second : pathlib.Path
        Paths as given (relative, with ``..``, links or another case).

    Returns
    -------
    bool
        True when both exist and are one file (same device and inode), or
        when their resolved spellings are equal (compared without case where
        the operating system ignores it).
    """
    try:
        return os.path.samefile(first, second)
    except (OSError, ValueError):
        pass
    a = os.path.normcase(os.path.realpath(_absolute(first)))
    b = os.path.normcase(os.path.realpath(_absolute(second)))
    return a == b


def is_inside(path: Path, folder: Path) -> bool:
    """True when ``path`` is ``folder`` or lies anywhere below it.

    Parameters
    ----------
    path : pathlib.Path
        A file or folder; it need not exist.
    folder : pathlib.Path
        A folder; it need not exist.

    Returns
    -------
    bool
        Compared with :func:`same_file` for every existing ancestor of
        ``path`` (so links and case do not hide it), and by resolved
        spelling otherwise.
    """
    resolved = Path(os.path.realpath(_absolute(path)))
    target = Path(os.path.normcase(os.path.realpath(_absolute(folder))))
    exists = folder.exists()
    for candidate in (resolved, *resolved.parents):
        if exists and candidate.exists():
            if same_file(candidate, folder):
                return True
        elif Path(os.path.normcase(candidate)) == target:
            return True
    return False


def is_prepkit_summary(path: Path) -> bool:
    """True when ``path`` holds a JSON summary as prepkit writes them.

    Parameters
    ----------
    path : pathlib.Path
        An existing regular file.

    Returns
    -------
    bool
        True for a JSON object with ``summary_version`` and a ``run`` object
        naming ``prepkit_version`` and ``input_sha256``; False for anything
        else, or a file larger than :data:`MAX_SUMMARY_BYTES`.
    """
    try:
        with open(path, "rb") as handle:
            data = handle.read(MAX_SUMMARY_BYTES + 1)
        if len(data) > MAX_SUMMARY_BYTES:
            return False
        payload = json.loads(data.decode("utf-8"))
    except (OSError, ValueError):
        return False
    if not isinstance(payload, dict) or "summary_version" not in payload:
        return False
    run = payload.get("run")
    return isinstance(run, dict) and "prepkit_version" in run and "input_sha256" in run


def _file_above(path: Path) -> Path | None:
    """The nearest existing ancestor of ``path`` when it is not a folder, else None."""
    for ancestor in path.parents:
        try:
            if ancestor.is_dir():
                return None
            if ancestor.exists() or ancestor.is_symlink():
                return ancestor
        except OSError:
            continue
    return None


def check_pack_folder(outdir: Path, workbook: Path) -> None:
    """Refuse a pack folder that is, or holds, the planning workbook.

    Parameters
    ----------
    outdir : pathlib.Path
        The output folder (replaced whole by the run).
    workbook : pathlib.Path
        The planning workbook.

    Raises
    ------
    PipelineError
        When the folder is the workbook or holds it.
    """
    if same_file(outdir, workbook) or is_inside(workbook, outdir):
        raise PipelineError(
            "output folder",
            "a folder that does not hold the planning workbook (the whole folder is replaced)",
            str(outdir),
        )


def check_summary_path(summary: Path, *, workbook: Path, outdir: Path | None) -> None:
    """Refuse a ``--summary-json`` path that must not be written.

    Parameters
    ----------
    summary : pathlib.Path
        The path given.
    workbook : pathlib.Path
        The planning workbook.
    outdir : pathlib.Path or None
        The pack folder, when the run writes a pack.

    Raises
    ------
    PipelineError
        When the path is the workbook (however spelled), lies in the pack
        folder, is a folder or special file, lies under a file, or holds a
        file that is not a summary prepkit wrote.
    """
    given = _absolute(summary)
    # A link is followed when the file is written, so its target is what counts.
    target = Path(os.path.realpath(given)) if given.is_symlink() else given
    new_or_ours = "a new file or a summary prepkit wrote earlier (it is replaced)"
    if same_file(target, workbook) or same_file(given, workbook):
        raise PipelineError(
            _SUMMARY_OPTION, f"{new_or_ours}, never the planning workbook",
            f"the planning workbook itself ({summary}); name a .json file, such as "
            f"{Path(workbook).stem}-summary.json",
        )
    if outdir is not None and (is_inside(target, outdir) or is_inside(given, outdir)):
        raise PipelineError(
            _SUMMARY_OPTION,
            "a path outside the output folder (the pack already holds summary.json, and the "
            "folder is replaced whole)",
            f"{summary}, inside {outdir}",
        )
    above = _file_above(target)
    if above is not None:
        raise PipelineError(_SUMMARY_OPTION, "a path in a folder",
                            f"{summary}, under {above}, which is a file")
    try:
        info = target.stat()
    except FileNotFoundError:
        return
    except OSError as exc:
        raise PipelineError(_SUMMARY_OPTION, "a path that can be written",
                            f"{summary} ({exc.strerror or exc})") from None
    if stat.S_ISDIR(info.st_mode):
        raise PipelineError(_SUMMARY_OPTION, "a file name", f"{summary}, which is a folder")
    if not stat.S_ISREG(info.st_mode):
        raise PipelineError(_SUMMARY_OPTION, "a file name",
                            f"{summary}, which is a device, pipe or socket, not a file")
    if not is_prepkit_summary(target):
        raise PipelineError(
            _SUMMARY_OPTION, new_or_ours,
            f"{summary}, a file prepkit did not write; nothing was written: choose another "
            "name, or move that file",
        )
