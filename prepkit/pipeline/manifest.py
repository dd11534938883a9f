"""The manifest of a pack, and what it does and does not license.

Every pack folder ends with ``prepkit-manifest.json``: the name, size and
SHA-256 of each file prepkit wrote there. A new pack replaces the folder
whole, so the manifest decides which files may go with the old pack. It
licenses that only for a file that

* it names as a plain path inside its own folder (no ``..``, no absolute
  path, no hidden part), and
* is still a regular file (not a link) with exactly the recorded size and
  SHA-256: the bytes prepkit wrote.

Anything else in the folder is either **foreign** (not named by the
manifest: the planner's own files, or everything when there is no manifest)
or **edited** (named, but its bytes changed since prepkit wrote them, for
example a results.xlsx the planner annotated; or a manifest copied from
another pack). A run stops on either (:class:`UnexpectedFilesError`,
:class:`EditedFilesError`); only the planner's ``--force`` lets edited files
be replaced, and foreign files are never replaced.
"""

from __future__ import annotations

import hashlib
import json
import os
import stat
from collections.abc import Iterator
from dataclasses import dataclass
from datetime import datetime
from pathlib import Path, PurePosixPath

from prepkit.base.files import fsync_dir, fsync_file

__all__ = [
    "DESKTOP_LITTER",
    "MANIFEST_FORMAT",
    "MANIFEST_NAME",
    "MAX_MANIFEST_BYTES",
    "Manifest",
    "ManifestEntry",
    "PackSurvey",
    "file_sha256",
    "plain_pack_name",
    "read_manifest",
    "relative_files",
    "survey_pack",
    "verify_pack",
    "write_manifest",
]

#: File name of the manifest written last into every pack.
MANIFEST_NAME = "prepkit-manifest.json"

MANIFEST_FORMAT = "prepkit-output-manifest/1"

#: Largest manifest read [bytes]. A pack of a hundred charts lists about 250 files in
#: under 40 kB; a larger file is not a manifest prepkit wrote.
MAX_MANIFEST_BYTES = 4 * 1024 * 1024

#: Files some desktops drop into any folder a person opens; they are not the
#: planner's work and go with the old pack.
DESKTOP_LITTER = frozenset({".DS_Store", "Thumbs.db", "desktop.ini"})

_CHUNK = 1 << 20


def file_sha256(path: str | os.PathLike[str]) -> str:
    """SHA-256 of a file's bytes.

    Parameters
    ----------
    path : path-like
        File to hash.

    Returns
    -------
    str
        Lower-case hexadecimal digest (64 characters).
    """
    digest = hashlib.sha256()
    with open(path, "rb") as handle:
        for chunk in iter(lambda: handle.read(_CHUNK), b""):
            digest.update(chunk)
    return digest.hexdigest()


@dataclass(frozen=True, kw_only=True)
class ManifestEntry:
    """One file of a pack.

    Parameters
    ----------
    name : str
        Path relative to the pack folder, with ``/`` separators.
    sha256 : str
        Hexadecimal SHA-256 of the file's bytes.
    size : int
        File size [bytes].
    """

    name: str
    sha256: str
    size: int


@dataclass(frozen=True, kw_only=True)
class Manifest:
    """List of the files of one complete pack, written last.

    Parameters
    ----------
    created : str
        ISO 8601 date of the run (from :func:`prepkit.base.files.source_date`).
    files : tuple of ManifestEntry
        Every file of the pack except the manifest, sorted by name.
    """

    created: str
    files: tuple[ManifestEntry, ...]

    def to_json(self) -> str:
        """Manifest as JSON text (stable key order, ending with a newline)."""
        payload = {
            "format": MANIFEST_FORMAT,
            "created": self.created,
            "files": [{"name": e.name, "sha256": e.sha256, "bytes": e.size} for e in self.files],
        }
        return json.dumps(payload, indent=2, sort_keys=True) + "\n"

    @classmethod
    def from_json(cls, text: str) -> Manifest:
        """Read a manifest written by :meth:`to_json`.

        Parameters
        ----------
        text : str
            JSON text.

        Returns
        -------
        Manifest
            The manifest.

        Raises
        ------
        ValueError
            When the text is not a prepkit manifest.
        """
        payload = json.loads(text)
        if not isinstance(payload, dict) or payload.get("format") != MANIFEST_FORMAT:
            raise ValueError(f"manifest: expected format {MANIFEST_FORMAT!r}, found other JSON")
        files = tuple(
            ManifestEntry(name=str(f["name"]), sha256=str(f["sha256"]), size=int(f["bytes"]))
            for f in payload["files"]
        )
        return cls(created=str(payload["created"]), files=files)


def read_manifest(outdir: str | os.PathLike[str]) -> Manifest | None:
    """Manifest of the pack in ``outdir``, or None when there is none.

    Parameters
    ----------
    outdir : path-like
        Pack folder.

    Returns
    -------
    Manifest or None
        None when the folder or its manifest is missing, unreadable, not a
        regular file, or larger than :data:`MAX_MANIFEST_BYTES`.
    """
    path = Path(outdir) / MANIFEST_NAME
    try:
        if path.is_symlink() or not path.is_file():
            return None
        with open(path, "rb") as handle:
            data = handle.read(MAX_MANIFEST_BYTES + 1)
        if len(data) > MAX_MANIFEST_BYTES:
            return None
        return Manifest.from_json(data.decode("utf-8"))
    except (OSError, ValueError, KeyError, TypeError):
        return None


def plain_pack_name(name: str) -> bool:
    """True when ``name`` is a plain relative path inside a pack folder.

    Parameters
    ----------
    name : str
        A manifest entry's name.

    Returns
    -------
    bool
        False for absolute paths, backslash separators, empty, ``.`` or ``..``
        parts, hidden parts and the manifest's own name.
    """
    if not name or "\\" in name or "\x00" in name or PurePosixPath(name).is_absolute():
        return False
    if any(part in ("", ".", "..") or part.startswith(".") for part in name.split("/")):
        return False
    return name != MANIFEST_NAME


@dataclass(frozen=True)
class PackSurvey:
    """What a folder holds, as far as replacing it is concerned.

    Attributes
    ----------
    foreign : tuple of str
        Files and folders the manifest does not name (relative paths,
        sorted): never replaced.
    edited : tuple of str
        Files the manifest names whose bytes are no longer those prepkit
        wrote (or that became links): replaced only with the planner's
        ``--force``.
    """

    foreign: tuple[str, ...]
    edited: tuple[str, ...]


def survey_pack(outdir: Path) -> PackSurvey:
    """Sort the contents of an existing folder into prepkit's, foreign and edited.

    Parameters
    ----------
    outdir : pathlib.Path
        An existing folder.

    Returns
    -------
    PackSurvey
        Foreign and edited entries; both empty when every file is one
        prepkit wrote, byte for byte (desktop litter aside).
    """
    manifest = read_manifest(outdir)
    entries = {e.name: e for e in manifest.files if plain_pack_name(e.name)} if manifest else {}
    allowed_dirs = {"."}
    for name in entries:
        allowed_dirs.update(str(p) for p in PurePosixPath(name).parents)
    foreign: list[str] = []
    edited: list[str] = []
    for root, dirs, names in os.walk(outdir):
        rel_root = PurePosixPath(Path(root).relative_to(outdir).as_posix())
        kept = []
        for d in dirs:
            rel = str(rel_root / d)
            if rel in allowed_dirs and not os.path.islink(os.path.join(root, d)):
                kept.append(d)
            else:  # a folder (or a link to one) prepkit never made, even in a listed place
                foreign.append(rel)
        dirs[:] = kept
        for n in names:
            rel = str(rel_root / n)
            if rel_root == PurePosixPath(".") and n == MANIFEST_NAME and manifest is not None:
                continue
            entry = entries.get(rel)
            if entry is None:
                if n not in DESKTOP_LITTER:
                    foreign.append(rel)
            elif not _as_written(Path(root) / n, entry):
                edited.append(rel)
    return PackSurvey(foreign=tuple(sorted(foreign)), edited=tuple(sorted(edited)))


def _as_written(path: Path, entry: ManifestEntry) -> bool:
    """True when ``path`` is a regular file with the entry's size and SHA-256."""
    try:
        info = path.lstat()
        if not stat.S_ISREG(info.st_mode) or info.st_size != entry.size:
            return False
        return file_sha256(path) == entry.sha256
    except OSError:
        return False


def verify_pack(outdir: str | os.PathLike[str]) -> list[str]:
    """Check a pack folder against its manifest.

    Parameters
    ----------
    outdir : path-like
        Pack folder.

    Returns
    -------
    list of str
        One plain-words problem per missing, changed or unlisted file; empty
        when the folder holds exactly the files its manifest lists, byte for
        byte.
    """
    root = Path(outdir)
    manifest = read_manifest(root)
    if manifest is None:
        return [f"{root}: no readable {MANIFEST_NAME}"]
    problems = []
    listed = {entry.name for entry in manifest.files}
    for entry in manifest.files:
        path = root / entry.name
        if not path.is_file():
            problems.append(f"{entry.name}: listed in the manifest, missing")
        elif path.stat().st_size != entry.size or file_sha256(path) != entry.sha256:
            problems.append(f"{entry.name}: differs from the manifest")
    for name in relative_files(root):
        if name != MANIFEST_NAME and name not in listed:
            problems.append(f"{name}: not listed in the manifest")
    return problems


def relative_files(root: Path) -> Iterator[str]:
    """Every file under ``root``, as a relative path with ``/`` separators."""
    for folder, _, names in os.walk(root):
        rel = Path(folder).relative_to(root)
        for name in names:
            yield (rel / name).as_posix()


def write_manifest(staging: Path, created: datetime) -> Manifest:
    """Write the manifest of every file under ``staging``, and flush it all to disk.

    Parameters
    ----------
    staging : pathlib.Path
        The folder of the new pack, every file written.
    created : datetime.datetime
        Date recorded in the manifest.

    Returns
    -------
    Manifest
        The manifest written (as :data:`MANIFEST_NAME` in ``staging``).
    """
    entries = []
    for name in sorted(relative_files(staging)):
        path = staging.joinpath(*name.split("/"))
        fsync_file(path)
        entries.append(
            ManifestEntry(name=name, sha256=file_sha256(path), size=path.stat().st_size)
        )
    manifest = Manifest(created=created.isoformat(), files=tuple(entries))
    manifest_path = staging / MANIFEST_NAME
    manifest_path.write_text(manifest.to_json(), encoding="utf-8", newline="\n")
    fsync_file(manifest_path)
    for folder, _, _ in os.walk(staging):
        fsync_dir(Path(folder))
    return manifest
