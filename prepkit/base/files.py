"""Writing one file so that a reader sees the old file or the new one, whole.

The low-level file helpers every stage that writes may use (the workbook
template, the report's documents, the pipeline's pack folder):

* :func:`atomic_write_with` and :func:`atomic_write_bytes`: one file is
  written beside its final path under a hidden temporary name, flushed to
  disk and renamed over the path, so the file at the path is always the old
  one or the new one, whole;
* :func:`fsync_file` and :func:`fsync_dir`: flush a file, or a folder's
  entries, to disk;
* :func:`source_date`: the date stamped on outputs, honouring
  ``SOURCE_DATE_EPOCH``;
* :func:`normalise_xlsx`: an ``.xlsx`` file rewritten so equal content gives
  equal bytes.

The pack folder, written whole and swapped into place, is
:class:`prepkit.pipeline.outputs.AtomicOutputDir`.
"""

from __future__ import annotations

import errno
import io
import os
import re
import secrets
import time
import zipfile
from collections.abc import Callable
from datetime import UTC, datetime
from pathlib import Path

from prepkit.errors import OutputError, SourceDateError

__all__ = [
    "ZIP_TIME",
    "atomic_write_bytes",
    "atomic_write_with",
    "fsync_dir",
    "fsync_file",
    "hidden_prefix",
    "normalise_xlsx",
    "run_is_gone",
    "source_date",
]

# Where process ids cannot be checked, leftovers older than this are stale.
_STALE_AFTER_SECONDS = 24 * 3600

def source_date(default: datetime | None = None) -> datetime:
    """Date to stamp on outputs, honouring ``SOURCE_DATE_EPOCH``.

    Following the reproducible-builds convention, when the environment
    variable ``SOURCE_DATE_EPOCH`` holds a whole number of seconds since
    1970-01-01 UTC, that moment is used, so two runs give identical files.

    Parameters
    ----------
    default : datetime.datetime, optional
        Returned unchanged when the variable is unset or empty. Without it,
        the current time (UTC, whole seconds).

    Returns
    -------
    datetime.datetime
        A timezone-aware date.

    Raises
    ------
    SourceDateError
        When the variable is set to something other than digits, or to a
        moment after the year 9999.
    """
    raw = os.environ.get("SOURCE_DATE_EPOCH", "").strip()
    if raw:
        if not re.fullmatch(r"[0-9]+", raw):
            raise SourceDateError(raw)
        try:
            return datetime.fromtimestamp(int(raw), tz=UTC)
        except (OverflowError, OSError, ValueError):  # beyond the year 9999
            raise SourceDateError(raw) from None
    if default is not None:
        return default
    return datetime.now(tz=UTC).replace(microsecond=0)


#: Time stamp given to every part of a normalised .xlsx file (the zip format
#: starts in 1980).
ZIP_TIME = (1980, 1, 1, 0, 0, 0)

_MODIFIED = re.compile(rb"(<dcterms:modified[^>]*>)[^<]*(</dcterms:modified>)")


def normalise_xlsx(data: bytes, modified: datetime | None = None) -> bytes:
    """Rewrite an ``.xlsx`` file so equal content gives equal bytes.

    openpyxl stamps each part in the zip with the time of saving and sets
    the document's "modified" date to the moment of saving; both are
    replaced here.

    Parameters
    ----------
    data : bytes
        The file as openpyxl saved it.
    modified : datetime.datetime, optional
        Date to store as the document's modification date (UTC); left as
        saved when None.

    Returns
    -------
    bytes
        The same parts, in the same order, each stamped 1980-01-01 00:00.
    """
    stamp = (
        modified.astimezone(UTC).strftime("%Y-%m-%dT%H:%M:%SZ").encode()
        if modified is not None
        else None
    )
    source = zipfile.ZipFile(io.BytesIO(data))
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w", compression=zipfile.ZIP_DEFLATED) as target:
        for info in source.infolist():
            body = source.read(info.filename)
            if stamp is not None and info.filename == "docProps/core.xml":
                body = _MODIFIED.sub(lambda m: m[1] + stamp + m[2], body)
            entry = zipfile.ZipInfo(info.filename, date_time=ZIP_TIME)
            entry.compress_type = zipfile.ZIP_DEFLATED
            entry.external_attr = 0o600 << 16
            target.writestr(entry, body)
    return out.getvalue()

def atomic_write_with(path: str | os.PathLike[str], writer: Callable[[Path], object]) -> Path:
    """Write one file so that ``path`` holds the old file or the new one, whole.

    ``writer`` is called with a temporary path beside ``path`` (same folder,
    same suffix, hidden name ``.<name>.prepkit-tmp-<pid>-<token><suffix>``);
    when it returns, the file is flushed to disk and renamed over ``path``
    with :func:`os.replace`, which is atomic on one file system. If
    ``writer`` raises, the temporary file is deleted and ``path`` is
    untouched. Temporary files left by killed runs are deleted by the next
    call for the same ``path``.

    Parameters
    ----------
    path : path-like
        File to write. Its folder is created if missing; a symbolic link is
        followed, so the file it points to is replaced, not the link.
    writer : callable
        Called as ``writer(temporary_path)``; must create that file (for
        example ``workbook.save`` or ``write_workbook``).

    Returns
    -------
    pathlib.Path
        The file written.

    Raises
    ------
    OutputError
        When ``writer`` wrote nothing, or the file cannot be put in place
        (for example ``path`` is a folder).
    """
    target = Path(path).expanduser().absolute()
    if target.is_symlink():
        target = target.resolve()
    try:
        target.parent.mkdir(parents=True, exist_ok=True)
        _remove_stale_temporary_files(target)
    except OSError as error:
        raise OutputError(
            error.errno,
            f"{target}: expected a folder to write it in, could not make or read "
            f"{target.parent} ({error.strerror or error})",
            str(target),
        ) from error
    temporary = target.with_name(
        f"{hidden_prefix(target)}tmp-{os.getpid()}-{secrets.token_hex(4)}{target.suffix}"
    )
    try:
        try:
            writer(temporary)
            if temporary.is_file():
                fsync_file(temporary)
        except OSError as error:
            if isinstance(error, OutputError):
                raise
            raise OutputError(
                error.errno,
                f"{target}: could not write the file ({error.strerror or error}); it was left "
                "as it was",
                str(target),
            ) from error
        if not temporary.is_file():
            raise OutputError(
                errno.ENOENT,
                f"{target.name}: expected the writer to create the file, found nothing written",
                str(target),
            )
        try:
            os.replace(temporary, target)
        except OSError as error:
            raise OutputError(
                error.errno,
                f"{target.name}: could not put the file in place ({error})",
                str(target),
            ) from error
        fsync_dir(target.parent)
    except BaseException:
        temporary.unlink(missing_ok=True)
        raise
    return target


def atomic_write_bytes(path: str | os.PathLike[str], data: bytes) -> Path:
    """Write bytes to one file atomically (see :func:`atomic_write_with`).

    Parameters
    ----------
    path : path-like
        File to write.
    data : bytes
        Its content.

    Returns
    -------
    pathlib.Path
        The file written.
    """
    return atomic_write_with(path, lambda temporary: temporary.write_bytes(data))


def _remove_stale_temporary_files(target: Path) -> None:
    pattern = re.compile(
        re.escape(hidden_prefix(target)) + r"tmp-([0-9]+)-[0-9a-f]+" + re.escape(target.suffix)
    )
    for entry in target.parent.iterdir():
        match = pattern.fullmatch(entry.name)
        if match and entry.is_file() and not entry.is_symlink():
            if run_is_gone(int(match[1]), entry):
                entry.unlink(missing_ok=True)


def hidden_prefix(outdir: Path) -> str:
    """Start of the hidden names of the temporary files and folders made beside ``outdir``."""
    return f".{outdir.name}.prepkit-"


def fsync_file(path: Path) -> None:
    """Flush a written file's bytes to disk."""
    with open(path, "rb") as handle:
        os.fsync(handle.fileno())


def fsync_dir(path: Path) -> None:
    """Flush a folder's entries (a rename, a new file) to disk; nothing where not POSIX."""
    # Needed on POSIX for a rename or a new file to survive power loss;
    # Windows cannot open folders this way and journals metadata itself.
    if os.name != "posix":
        return
    fd = os.open(path, os.O_RDONLY)
    try:
        os.fsync(fd)
    finally:
        os.close(fd)


def run_is_gone(pid: int, folder: Path) -> bool:
    """True when the run (process ``pid``) that left ``folder`` is no longer alive."""
    if pid == os.getpid():
        return False
    if os.name != "posix":
        # os.kill on Windows terminates the process, so only age is checked.
        return time.time() - folder.stat().st_mtime > _STALE_AFTER_SECONDS
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return True
    except PermissionError:
        return False
    return False
