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

import errno
import os
import secrets
import shutil
import time
from datetime import datetime
from pathlib import Path, PurePosixPath
from types import TracebackType

from prepkit.base.files import fsync_dir, hidden_prefix, source_date
from prepkit.errors import OutputError
from prepkit.pipeline.manifest import MANIFEST_NAME, Manifest, write_manifest
from prepkit.pipeline.pack_folder import (
    check_output_dir,
    check_pack_name,
    exchange_paths,
    recover_output_dir,
)

__all__ = ["PAUSE_ENV", "AtomicOutputDir"]

#: Test hook: seconds to pause after each file and before each step of the
#: swap, so a test can kill a run at a chosen point. Unset in normal use.
PAUSE_ENV = "PREPKIT_TEST_OUTPUT_PAUSE"


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
        self._make(parent, f"output folder {self.outdir}: expected to make the folder {parent} "
                           "it goes in", parents=True, exist_ok=True)
        recover_output_dir(self.outdir)
        self._refuse_foreign_files()
        staging = parent / f"{hidden_prefix(self.outdir)}staging-{self._token}"
        self._make(staging, "output folder: expected to create a staging folder beside it in "
                            f"{parent}")
        self._staging = staging
        return self

    def _make(self, folder: Path, expected: str, **options: bool) -> None:
        """Make ``folder``; an OSError becomes an OutputError: ``expected``, could not (why)."""
        try:
            folder.mkdir(**options)
        except OSError as error:
            raise OutputError(
                error.errno, f"{expected}, could not ({error.strerror})", str(self.outdir)
            ) from error

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
        relative = check_pack_name(name)
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
            manifest = write_manifest(staging, self.created or source_date())
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
            fsync_dir(parent)
            return
        if exchange_paths(staging, outdir):
            fsync_dir(parent)
            # staging now holds the previous pack.
            shutil.rmtree(staging, ignore_errors=True)
            return
        previous = parent / f"{hidden_prefix(outdir)}previous-{self._token}"
        os.rename(outdir, previous)
        try:
            fsync_dir(parent)
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
        fsync_dir(parent)
        shutil.rmtree(previous, ignore_errors=True)
