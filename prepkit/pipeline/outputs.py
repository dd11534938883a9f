"""Writing a pack's output folder so that a run never leaves half a pack.

A planner who stops a run (Ctrl-C, a closed laptop, a killed job) must not be
left holding a briefing pack whose PDF is from today and whose workbook is
from last week, or a PDF cut off half way. :class:`AtomicOutputDir` gives
this guarantee:

**At every moment, OUTDIR is either absent or holds one complete pack: the
previous one or the new one, never a partial file and never a mix of the
two.**

How:

1. Every file of the new pack is written into a *staging folder* beside
   OUTDIR, ``.<name>.prepkit-staging-<pid>-<token>`` in OUTDIR's parent.
   Nothing is written inside OUTDIR while the pack is produced.
2. When the whole pack is written, a manifest (``prepkit-manifest.json``:
   every file's name, size and SHA-256) is added, and all files and folders
   are flushed to disk (``fsync``).
3. The staging folder then takes OUTDIR's place:

   * on Linux, with one ``renameat2(RENAME_EXCHANGE)`` call that swaps the
     two folders atomically: readers see the old pack or the new one, and
     OUTDIR never disappears;
   * elsewhere (or on a file system without that call), with two renames:
     OUTDIR to ``.<name>.prepkit-previous-<pid>-<token>``, then the staging
     folder to OUTDIR. A kill between the two renames leaves OUTDIR absent
     and the previous pack whole in the ``previous`` folder; the next run
     puts it back before doing anything else.

4. The old pack is deleted.

If the run raises (including ``KeyboardInterrupt``), the staging folder is
deleted and OUTDIR is untouched. If the process is killed (``SIGKILL``,
power loss), the staging folder stays behind under its hidden name, never
inside OUTDIR; the next run for the same OUTDIR deletes it once the process
that made it is gone.

OUTDIR belongs to prepkit: since it is replaced whole, a run refuses to start
(:class:`UnexpectedFilesError`) when OUTDIR holds anything its manifest does
not list, so files a planner saved there are never deleted; and it refuses
(:class:`EditedFilesError`) when a file the manifest lists no longer has the
bytes prepkit wrote (a results.xlsx the planner annotated), unless asked to
replace edited files (``--force``). Both checks run before any work, when
the staging folder is made, and once more just before the swap
(:mod:`prepkit.pipeline.manifest` says what a manifest licenses).

Single files written outside a pack (such as ``prepkit template``'s
workbook) use :func:`atomic_write_with`: the file at the path is always the
old one or the new one, whole.

Limits, stated plainly: the guarantee covers processes on one machine writing
to a local file system; two runs writing the same OUTDIR at the same time are
not coordinated (one of them fails at the swap, or the later one wins); on
systems other than POSIX a leftover staging folder is deleted only once it is
a day old, since process ids cannot be checked safely there.
"""

from __future__ import annotations

import ctypes
import errno
import io
import os
import re
import secrets
import shutil
import sys
import time
import zipfile
from collections.abc import Callable, Iterator
from datetime import UTC, datetime
from pathlib import Path, PurePosixPath
from types import TracebackType

from prepkit.errors import OutputError, PrepkitError
from prepkit.pipeline.manifest import (
    MANIFEST_NAME,
    EditedFilesError,
    Manifest,
    ManifestEntry,
    UnexpectedFilesError,
    file_sha256,
    read_manifest,
    relative_files,
    survey_pack,
    verify_pack,
)

__all__ = [
    "normalise_xlsx",
    "MANIFEST_NAME",
    "PAUSE_ENV",
    "AtomicOutputDir",
    "EditedFilesError",
    "Manifest",
    "ManifestEntry",
    "SourceDateError",
    "UnexpectedFilesError",
    "atomic_write_bytes",
    "atomic_write_with",
    "check_output_dir",
    "file_sha256",
    "read_manifest",
    "recover_output_dir",
    "source_date",
    "verify_pack",
]

#: Test hook: seconds to pause after each file and before each step of the
#: swap, so a test can kill a run at a chosen point. Unset in normal use.
PAUSE_ENV = "PREPKIT_TEST_OUTPUT_PAUSE"

# Where process ids cannot be checked, leftovers older than this are stale.
_STALE_AFTER_SECONDS = 24 * 3600

_AT_FDCWD = -100
_RENAME_EXCHANGE = 2  # from <linux/fs.h>


class SourceDateError(ValueError, PrepkitError):
    """``SOURCE_DATE_EPOCH`` is set but is not a whole number of seconds.

    Parameters
    ----------
    value : str
        The variable's value.
    """

    def __init__(self, value: str) -> None:
        self.value = value
        super().__init__(
            f"SOURCE_DATE_EPOCH: expected a whole number of seconds since 1970-01-01 UTC "
            f"(the run time stamped on the pack), found {value!r}; set it to a number such as "
            "1700000000, or unset it to stamp the current time"
        )


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


class AtomicOutputDir:
    """Context manager that writes a whole pack, then puts it in place.

    Files are written into a hidden staging folder beside ``outdir``; on a
    clean exit a manifest is added and the staging folder replaces
    ``outdir`` (see the module docstring for the exact guarantee). On an
    exception the staging folder is deleted and ``outdir`` is untouched.

    Parameters
    ----------
    outdir : path-like
        Output folder. Created (with its parents) if missing. It must be
        empty or hold only a previous prepkit pack.
    created : datetime.datetime, optional
        Date recorded in the manifest; defaults to :func:`source_date`.
    pause : float, optional
        Test hook: seconds to pause after each file and before each swap
        step [s]. Defaults to the ``PREPKIT_TEST_OUTPUT_PAUSE`` environment
        variable, else 0.
    replace_edited : bool, optional
        Replace files of the previous pack that were changed since prepkit
        wrote them, instead of refusing (:class:`EditedFilesError`); files
        its manifest does not list are refused either way.

    Examples
    --------
    >>> with AtomicOutputDir("pack") as out:  # doctest: +SKIP
    ...     out.write_bytes("briefing.pdf", pdf_bytes)
    ...     workbook.save(out.path("results.xlsx"))
    """

    def __init__(
        self,
        outdir: str | os.PathLike[str],
        *,
        created: datetime | None = None,
        pause: float | None = None,
        replace_edited: bool = False,
    ) -> None:
        target = Path(outdir).expanduser().absolute()
        # A symlinked OUTDIR is followed, so the link itself is never replaced.
        self.outdir = target.resolve() if target.is_symlink() else target
        self.created = created
        self.replace_edited = replace_edited
        self.pause = float(os.environ.get(PAUSE_ENV, "0") or 0) if pause is None else pause
        self.manifest: Manifest | None = None
        self._token = f"{os.getpid()}-{secrets.token_hex(4)}"
        self._staging: Path | None = None
        self._names: list[str] = []

    # -- context manager --------------------------------------------------

    def __enter__(self) -> AtomicOutputDir:
        parent = self.outdir.parent
        self._refuse_foreign_files()
        try:
            parent.mkdir(parents=True, exist_ok=True)
        except OSError as error:
            raise OutputError(
                error.errno,
                f"output folder {self.outdir}: expected to make the folder {parent} it goes in, "
                f"could not ({error.strerror})",
                str(self.outdir),
            ) from error
        recover_output_dir(self.outdir)
        self._refuse_foreign_files()
        staging = parent / f"{_prefix(self.outdir)}staging-{self._token}"
        try:
            staging.mkdir()
        except OSError as error:
            raise OutputError(
                error.errno,
                f"output folder: expected to create a staging folder beside it in {parent}, "
                f"could not ({error.strerror})",
                str(self.outdir),
            ) from error
        self._staging = staging
        return self

    def __exit__(
        self,
        exc_type: type[BaseException] | None,
        exc: BaseException | None,
        tb: TracebackType | None,
    ) -> None:
        if exc_type is not None:
            self.abort()
            return
        try:
            self.commit()
        except BaseException:
            self.abort()
            raise

    # -- writing ------------------------------------------------------------

    @property
    def staging(self) -> Path:
        """Staging folder of this run (exists only inside the ``with`` block)."""
        if self._staging is None:
            raise RuntimeError("AtomicOutputDir is not open: use it in a with block")
        return self._staging

    @property
    def names(self) -> tuple[str, ...]:
        """Names handed out so far, in order."""
        return tuple(self._names)

    def path(self, name: str) -> Path:
        """Staging path for a file that another library writes itself.

        Parameters
        ----------
        name : str
            Path inside the pack, with ``/`` separators, e.g.
            ``"results.xlsx"`` or ``"csv/peaks.csv"``.

        Returns
        -------
        pathlib.Path
            Where to write the file now; it moves into OUTDIR at the end.

        Raises
        ------
        ValueError
            When ``name`` is absolute, climbs out with ``..``, starts a part
            with ``.``, is the manifest's name, or was already used.
        """
        relative = _check_name(name)
        if relative in self._names:
            raise ValueError(f"output name: expected a new name, found {relative!r} again")
        self._pause()
        path = self.staging.joinpath(*PurePosixPath(relative).parts)
        path.parent.mkdir(parents=True, exist_ok=True)
        self._names.append(relative)
        return path

    def write_bytes(self, name: str, data: bytes) -> Path:
        """Write one file of the pack.

        Parameters
        ----------
        name : str
            Path inside the pack (see :meth:`path`).
        data : bytes
            File content.

        Returns
        -------
        pathlib.Path
            The staging path written.
        """
        path = self.path(name)
        try:
            with open(path, "xb") as handle:
                handle.write(data)
                handle.flush()
                os.fsync(handle.fileno())
        except OSError as error:
            raise self._write_error(name, error) from error
        return path

    def write_text(self, name: str, text: str, encoding: str = "utf-8") -> Path:
        """Write one text file of the pack, with Unix (LF) line endings.

        Parameters
        ----------
        name : str
            Path inside the pack (see :meth:`path`).
        text : str
            File content.
        encoding : str, optional
            Text encoding.

        Returns
        -------
        pathlib.Path
            The staging path written.
        """
        return self.write_bytes(name, text.encode(encoding))

    # -- finishing ----------------------------------------------------------

    def commit(self) -> Manifest:
        """Add the manifest and put the pack in place of OUTDIR.

        Called by the ``with`` block on a clean exit; call it directly only
        outside one.

        Returns
        -------
        Manifest
            The manifest written.

        Raises
        ------
        OutputError
            When a file named through :meth:`path` was never written, or the
            swap fails (the previous pack is then put back).
        """
        staging = self.staging
        missing = [n for n in self._names if not staging.joinpath(*n.split("/")).is_file()]
        if missing:
            raise OutputError(
                errno.ENOENT,
                f"output files: expected every named file to be written, missing {missing}",
                str(staging),
            )
        try:
            manifest = self._write_manifest(staging)
        except OSError as error:
            if isinstance(error, OutputError):
                raise
            raise self._write_error(MANIFEST_NAME, error) from error
        self._pause()
        # Last look before the old pack goes: a file edited or saved there during the run stops it.
        self._refuse_foreign_files()
        try:
            self._swap_into_place()
        except OSError as error:
            if isinstance(error, OutputError):
                raise
            raise OutputError(
                error.errno,
                f"output folder {self.outdir}: could not put the new pack in place "
                f"({error.strerror or error}); the previous pack is as it was",
                str(self.outdir),
            ) from error
        self._staging = None
        self.manifest = manifest
        return manifest

    def _write_manifest(self, staging: Path) -> Manifest:
        entries = []
        for name in sorted(relative_files(staging)):
            path = staging.joinpath(*name.split("/"))
            _fsync_file(path)
            entries.append(
                ManifestEntry(name=name, sha256=file_sha256(path), size=path.stat().st_size)
            )
        created = self.created if self.created is not None else source_date()
        manifest = Manifest(created=created.isoformat(), files=tuple(entries))
        manifest_path = staging / MANIFEST_NAME
        manifest_path.write_text(manifest.to_json(), encoding="utf-8", newline="\n")
        _fsync_file(manifest_path)
        for folder in _folders(staging):
            _fsync_dir(folder)
        return manifest

    def _write_error(self, name: str, error: OSError) -> OutputError:
        return OutputError(
            error.errno,
            f"output folder {self.outdir}: could not write {name} of the new pack "
            f"({error.strerror or error}); nothing was changed in the folder",
            str(self.outdir),
        )

    def abort(self) -> None:
        """Delete the staging folder; OUTDIR stays as it was."""
        if self._staging is not None:
            shutil.rmtree(self._staging, ignore_errors=True)
            self._staging = None

    # -- internals ----------------------------------------------------------

    def _pause(self) -> None:
        if self.pause > 0:
            time.sleep(self.pause)

    def _refuse_foreign_files(self) -> None:
        check_output_dir(self.outdir, replace_edited=self.replace_edited)

    def _swap_into_place(self) -> None:
        staging, outdir, parent = self.staging, self.outdir, self.outdir.parent
        if not outdir.exists():
            os.rename(staging, outdir)
            _fsync_dir(parent)
            return
        if _exchange_paths(staging, outdir):
            _fsync_dir(parent)
            # staging now holds the previous pack.
            shutil.rmtree(staging, ignore_errors=True)
            return
        previous = parent / f"{_prefix(outdir)}previous-{self._token}"
        os.rename(outdir, previous)
        try:
            _fsync_dir(parent)
            self._pause()
            os.rename(staging, outdir)
        except BaseException as error:
            # Includes KeyboardInterrupt: put the previous pack back at once
            # rather than leave it to the next run's recovery.
            if not outdir.exists():
                os.rename(previous, outdir)
            if isinstance(error, OSError):
                raise OutputError(
                    error.errno,
                    f"output folder: could not put the new pack in place ({error})",
                    str(outdir),
                ) from error
            raise
        _fsync_dir(parent)
        shutil.rmtree(previous, ignore_errors=True)


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
    pattern = re.compile(re.escape(_prefix(target)) + r"(staging|previous)-([0-9]+)-[0-9a-f]+")
    for entry in parent.iterdir():
        match = pattern.fullmatch(entry.name)
        if match is None or entry.is_symlink() or not entry.is_dir():
            continue
        if _run_is_gone(int(match[2]), entry):
            stale.append((match[1], entry))
    handled = []
    previous = sorted(
        (path for kind, path in stale if kind == "previous"), key=lambda p: p.stat().st_mtime
    )
    if previous and not target.exists():
        newest = previous.pop()
        os.rename(newest, target)
        _fsync_dir(parent)
        handled.append(newest)
    for _, path in stale:
        if path.exists():
            shutil.rmtree(path, ignore_errors=True)
            handled.append(path)
    return handled


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
        f"{_prefix(target)}tmp-{os.getpid()}-{secrets.token_hex(4)}{target.suffix}"
    )
    try:
        try:
            writer(temporary)
            if temporary.is_file():
                _fsync_file(temporary)
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
        _fsync_dir(target.parent)
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
        re.escape(_prefix(target)) + r"tmp-([0-9]+)-[0-9a-f]+" + re.escape(target.suffix)
    )
    for entry in target.parent.iterdir():
        match = pattern.fullmatch(entry.name)
        if match and entry.is_file() and not entry.is_symlink():
            if _run_is_gone(int(match[1]), entry):
                entry.unlink(missing_ok=True)


def _prefix(outdir: Path) -> str:
    return f".{outdir.name}.prepkit-"


def _check_name(name: str) -> str:
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


def _folders(root: Path) -> Iterator[Path]:
    for folder, _, _ in os.walk(root):
        yield Path(folder)


def _fsync_file(path: Path) -> None:
    with open(path, "rb") as handle:
        os.fsync(handle.fileno())


def _fsync_dir(path: Path) -> None:
    # Needed on POSIX for a rename or a new file to survive power loss;
    # Windows cannot open folders this way and journals metadata itself.
    if os.name != "posix":
        return
    fd = os.open(path, os.O_RDONLY)
    try:
        os.fsync(fd)
    finally:
        os.close(fd)


def _run_is_gone(pid: int, folder: Path) -> bool:
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


def _exchange_paths(first: Path, second: Path) -> bool:
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
