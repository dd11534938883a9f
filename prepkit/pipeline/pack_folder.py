"""The pack folder before and after a run: what may be replaced, and what killed runs left.

* :func:`check_output_dir`: refuse an output folder a pack may not replace
  (:mod:`prepkit.pipeline.manifest` says what a manifest licenses);
* :func:`recover_output_dir`: put back a previous pack a killed run left
  aside, and delete the staging folders of runs that are gone;
* :func:`exchange_paths`: swap two folders atomically on Linux;
* :func:`check_pack_name`: a file name allowed inside a pack.

:class:`prepkit.pipeline.outputs.AtomicOutputDir` writes the pack and uses
them.
"""

from __future__ import annotations

import ctypes
import errno
import os
import re
import shutil
import sys
from pathlib import Path, PurePosixPath

from prepkit.base.files import fsync_dir, hidden_prefix, run_is_gone
from prepkit.errors import EditedFilesError, OutputError, UnexpectedFilesError
from prepkit.pipeline.manifest import MANIFEST_NAME, survey_pack

__all__ = ["check_output_dir", "check_pack_name", "exchange_paths", "recover_output_dir"]

_AT_FDCWD = -100
_RENAME_EXCHANGE = 2  # from <linux/fs.h>

def check_output_dir(outdir: str | os.PathLike[str], *, replace_edited: bool = False) -> None:
    """Refuse an output folder that a pack may not replace, before any work is done.

    The same check runs again when the pack is written
    (:class:`AtomicOutputDir`), in case files arrive during the run; calling
    it first lets a run stop before reading the workbook or running the
    model. Nothing is changed on disk.

    Parameters
    ----------
    outdir : path-like
        Output folder; it may be absent.
    replace_edited : bool, optional
        Accept files of the earlier pack that were changed since prepkit
        wrote them (they are replaced); the planner's ``--force``.

    Raises
    ------
    OutputError
        When ``outdir`` is a file, or lies under one.
    UnexpectedFilesError
        When ``outdir`` holds files or folders its manifest does not list
        (desktop litter such as ``.DS_Store`` is allowed).
    EditedFilesError
        When files its manifest lists no longer have the bytes prepkit
        wrote, and ``replace_edited`` is False.
    """
    target = Path(outdir).expanduser().absolute()
    target = target.resolve() if target.is_symlink() else target
    if not target.exists():
        _refuse_a_file_above(target)
        return
    if not target.is_dir():
        raise OutputError(
            errno.ENOTDIR, "output folder: expected a folder, found a file", str(target)
        )
    survey = survey_pack(target)
    if survey.foreign:
        raise UnexpectedFilesError(target, survey.foreign)
    if survey.edited and not replace_edited:
        raise EditedFilesError(target, survey.edited)


def _refuse_a_file_above(target: Path) -> None:
    """Refuse an absent folder whose nearest existing ancestor is not a folder."""
    for ancestor in target.parents:
        try:
            is_dir = ancestor.is_dir()
            exists = is_dir or ancestor.exists() or ancestor.is_symlink()
        except OSError:
            continue
        if not exists:
            continue
        if not is_dir:
            raise OutputError(
                errno.ENOTDIR,
                f"output folder: expected a folder path, found that {ancestor} is a file, so "
                "no folder can be made under it",
                str(target),
            )
        return

def recover_output_dir(outdir: str | os.PathLike[str]) -> list[Path]:
    """Tidy what killed runs left beside ``outdir``.

    If ``outdir`` is missing and a killed run left the previous pack in a
    ``previous`` folder (killed between the two renames of the swap), that
    pack is put back. Staging and other leftover folders of runs that are no
    longer alive are deleted. Folders of live runs are left alone.

    Parameters
    ----------
    outdir : path-like
        Output folder.

    Returns
    -------
    list of pathlib.Path
        The leftover folders deleted or restored.
    """
    target = Path(outdir).absolute()
    parent = target.parent
    if not parent.is_dir():
        return []
    stale: list[tuple[str, Path]] = []
    pattern = re.compile(
        re.escape(hidden_prefix(target)) + r"(staging|previous)-([0-9]+)-[0-9a-f]+"
    )
    for entry in parent.iterdir():
        match = pattern.fullmatch(entry.name)
        if match is None or entry.is_symlink() or not entry.is_dir():
            continue
        if run_is_gone(int(match[2]), entry):
            stale.append((match[1], entry))
    handled = []
    previous = sorted(
        (path for kind, path in stale if kind == "previous"), key=lambda p: p.stat().st_mtime
    )
    if previous and not target.exists():
        newest = previous.pop()
        os.rename(newest, target)
        fsync_dir(parent)
        handled.append(newest)
    for _, path in stale:
        if path.exists():
            shutil.rmtree(path, ignore_errors=True)
            handled.append(path)
    return handled

def exchange_paths(first: Path, second: Path) -> bool:
    """Swap two folders atomically with Linux ``renameat2``; False if unsupported."""
    if not sys.platform.startswith("linux"):
        return False
    try:
        libc = ctypes.CDLL(None, use_errno=True)
        renameat2 = libc.renameat2
    except (OSError, AttributeError):
        return False
    renameat2.argtypes = [
        ctypes.c_int,
        ctypes.c_char_p,
        ctypes.c_int,
        ctypes.c_char_p,
        ctypes.c_uint,
    ]
    renameat2.restype = ctypes.c_int
    result = renameat2(
        _AT_FDCWD, os.fsencode(first), _AT_FDCWD, os.fsencode(second), _RENAME_EXCHANGE
    )
    if result == 0:
        return True
    code = ctypes.get_errno()
    if code in (errno.ENOSYS, errno.EINVAL, errno.EOPNOTSUPP, errno.ENOTSUP):
        return False
    raise OSError(code, os.strerror(code), str(second))


def check_pack_name(name: str) -> str:
    """``name`` as a plain relative path inside a pack, or ValueError saying what is wrong."""
    pure = PurePosixPath(name)
    problem = None
    if not name or "\\" in name or pure.is_absolute():
        problem = "a relative path with / separators"
    elif any(part in ("", ".", "..") or part.startswith(".") for part in name.split("/")):
        problem = "no empty, '.', '..' or hidden parts"
    elif str(pure) == MANIFEST_NAME:
        problem = f"a name other than {MANIFEST_NAME!r}"
    if problem:
        raise ValueError(f"output name: expected {problem}, found {name!r}")
    return str(pure)
