"""The workbook file itself: read once, within bounds, and checked to be an .xlsx archive.

:func:`read_file` reads the bytes once, refusing folders, named pipes, devices
and sockets without waiting on them (a command given a pipe never hangs), and
files larger than :data:`MAX_FILE_BYTES`. :func:`check_archive` names what the
bytes are when they are not a workbook, and refuses archives that unpack to
far more than any plan (:data:`MAX_UNPACKED_BYTES`, :data:`MAX_PART_BYTES`).
The file is only ever read.
"""

from __future__ import annotations

import io
import os
import stat
import zipfile

from prepkit.errors import Problem, WorkbookError
from prepkit.workbook.sniff import OLE_MAGIC, ZIP_MAGIC, what_file

__all__ = [
    "MAX_FILE_BYTES",
    "MAX_PART_BYTES",
    "MAX_UNPACKED_BYTES",
    "XLSX",
    "check_archive",
    "file_problem",
    "read_file",
]

#: Largest workbook file read [bytes]; planning workbooks are far smaller.
MAX_FILE_BYTES = 50 * 1024 * 1024
#: Largest total unpacked size of the parts of a workbook [bytes].
MAX_UNPACKED_BYTES = 400 * 1024 * 1024
#: Largest unpacked size of a part that is parsed whole: the list of parts, the workbook
#: part and its relationships, the styles [bytes]. Planning workbooks' parts are under 1 MB.
MAX_PART_BYTES = 32 * 1024 * 1024

XLSX = "an Excel workbook saved as .xlsx"

#: Parts parsed whole (lower-case names), and what a message calls them.
_WHOLE_PARTS = {
    "[content_types].xml": "list of parts",
    "xl/workbook.xml": "workbook part",
    "xl/_rels/workbook.xml.rels": "workbook relationships",
    "xl/styles.xml": "styles",
}


def file_problem(expected: str, found: str) -> WorkbookError:
    """A :class:`WorkbookError` about the whole file.

    Parameters
    ----------
    expected, found : str
        What the file should be, and what it is.

    Returns
    -------
    WorkbookError
        With one problem whose sheet and cell are empty.
    """
    return WorkbookError([Problem(sheet="", cell="", field="file", expected=expected,
                                  found=found)])


# ---- The file --------------------------------------------------------------------------------

_KINDS = (
    (stat.S_ISFIFO, "a named pipe"),
    (stat.S_ISCHR, "a device"),
    (stat.S_ISBLK, "a device"),
    (stat.S_ISSOCK, "a socket"),
)


def _not_a_file(mode: int, name: str) -> str | None:
    if stat.S_ISREG(mode):
        return None
    if stat.S_ISDIR(mode):
        return f"a folder, not a file ({name!r})"
    kind = next((words for test, words in _KINDS if test(mode)), "a special file")
    return f"{kind}, not a file ({name!r})"


def read_file(path: str | os.PathLike[str]) -> tuple[str, bytes]:
    """The path as text and the file's bytes, read once.

    A named pipe, device or socket is refused without reading from it (it
    is opened without waiting for a writer, then checked), so a command
    given one never hangs.

    Parameters
    ----------
    path : str or path-like
        The workbook.

    Returns
    -------
    name : str
        The path as given.
    data : bytes
        At most :data:`MAX_FILE_BYTES` + 1 bytes.

    Raises
    ------
    WorkbookError
        When there is no readable regular file at ``path`` or it is too big.
    """
    try:
        name = os.fspath(path)
    except TypeError:
        raise file_problem("a path to an .xlsx file", f"a {type(path).__name__}") from None
    if isinstance(name, bytes):
        name = os.fsdecode(name)
    try:
        try:
            info = os.stat(name)
        except FileNotFoundError:
            raise file_problem(XLSX, f"no file at {name!r}") from None
        problem = _not_a_file(info.st_mode, name)
        if problem is not None:
            raise file_problem(XLSX, problem)
        if info.st_size > MAX_FILE_BYTES:
            raise _too_big(info.st_size)
        fd = os.open(name, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_BINARY", 0))
        with os.fdopen(fd, "rb") as handle:
            problem = _not_a_file(os.fstat(handle.fileno()).st_mode, name)  # replaced meanwhile?
            if problem is not None:
                raise file_problem(XLSX, problem)
            data = handle.read(MAX_FILE_BYTES + 1)
    except WorkbookError:
        raise
    except OSError as exc:
        reason = exc.strerror or type(exc).__name__
        raise file_problem("a file that can be read", f"it cannot be read: {reason}") from None
    except ValueError as exc:  # e.g. a NUL character inside the path
        raise file_problem("a valid file path", f"an invalid path ({exc})") from None
    if len(data) > MAX_FILE_BYTES:
        raise _too_big(len(data))
    return name, data


def _too_big(size: int) -> WorkbookError:
    return file_problem(f"a workbook of at most {MAX_FILE_BYTES // (1024 * 1024)} MB",
                        f"a file of {size / (1024 * 1024):.0f} MB")


def check_archive(data: bytes) -> None:
    """Refuse bytes that are not an .xlsx archive of reasonable size, saying what they are.

    Parameters
    ----------
    data : bytes
        The file.

    Raises
    ------
    WorkbookError
        When the bytes are empty, another format (named), a damaged or
        encrypted zip file, not a workbook, or unpack to more than the bounds.
    """
    if not data:
        raise file_problem(XLSX, "an empty file")
    if data.startswith(OLE_MAGIC):
        raise file_problem(
            XLSX,
            "a password-protected workbook or an older .xls file; save it as .xlsx without a "
            "password",
        )
    if not data.startswith(ZIP_MAGIC):
        raise file_problem(XLSX, what_file(data))
    try:
        with zipfile.ZipFile(io.BytesIO(data)) as archive:
            infos = archive.infolist()
            names = {info.filename.lower() for info in infos}
            mimetype = archive.read("mimetype")[:200] if "mimetype" in names else b""
    except (zipfile.BadZipFile, zipfile.LargeZipFile, OSError, EOFError, ValueError,
            NotImplementedError, KeyError):
        raise file_problem(XLSX, "a damaged or incomplete zip file") from None
    if "xl/workbook.xml" not in names:
        if b"opendocument" in mimetype:
            raise file_problem(XLSX, "an OpenDocument spreadsheet; save it as .xlsx")
        raise file_problem(XLSX, "a zip file that is not an Excel workbook")
    if any(info.flag_bits & 0x1 for info in infos):
        raise file_problem(XLSX, "an encrypted zip file")
    unpacked = sum(info.file_size for info in infos)
    if unpacked > MAX_UNPACKED_BYTES:
        raise file_problem(
            "a workbook of reasonable size",
            f"a workbook that unpacks to {unpacked / (1024 * 1024):.0f} MB",
        )
    for info in infos:
        part = _WHOLE_PARTS.get(info.filename.lower())
        if part is not None and info.file_size > MAX_PART_BYTES:
            raise file_problem(
                f"a workbook whose {part} unpacks to at most "
                f"{MAX_PART_BYTES // (1024 * 1024)} MB",
                f"{info.file_size / (1024 * 1024):.0f} MB",
            )
