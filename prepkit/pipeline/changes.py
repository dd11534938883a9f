"""The earlier pack in the output folder, for the page of changes.

:func:`previous_pack` reads the earlier pack's ``summary.json`` and
``inputs.json`` when its manifest names them and their bytes are still those
prepkit wrote (a file the planner edited is not evidence of what the earlier
pack said). Anything else (no folder, no manifest, a file missing, edited or
not JSON) means there is nothing to compare with, never an error: the new
pack is made as usual.
"""

from __future__ import annotations

import json
from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from prepkit.pipeline.manifest import MAX_MANIFEST_BYTES, file_sha256, read_manifest
from prepkit.report.changes import INPUTS_FORMAT, INPUTS_NAME

__all__ = ["PreviousPack", "previous_pack"]

_SUMMARY = "summary.json"
#: Largest earlier summary or inputs file read [bytes]; the city's are well under 1 MB.
_MAX_BYTES = 16 * MAX_MANIFEST_BYTES


@dataclass(frozen=True)
class PreviousPack:
    """What the earlier pack said.

    Attributes
    ----------
    summary : mapping
        Its ``summary.json``.
    inputs : mapping or None
        Its ``inputs.json``; None when it kept none.
    """

    summary: Mapping[str, Any]
    inputs: Mapping[str, Any] | None


def _read_json(folder: Path, name: str, sha256: dict[str, str]) -> Any:
    digest = sha256.get(name)
    path = folder / name
    try:
        if digest is None or path.is_symlink() or not path.is_file():
            return None
        if path.stat().st_size > _MAX_BYTES or file_sha256(path) != digest:
            return None
        return json.loads(path.read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return None


def previous_pack(outdir: Path | None) -> PreviousPack | None:
    """The earlier pack in ``outdir``, or None when there is none to compare with.

    Parameters
    ----------
    outdir : pathlib.Path or None
        The output folder (None: no pack is written).

    Returns
    -------
    PreviousPack or None
        Its summary and inputs, read only when the manifest vouches for them.
    """
    if outdir is None:
        return None
    manifest = read_manifest(outdir)
    if manifest is None:
        return None
    sha256 = {entry.name: entry.sha256 for entry in manifest.files}
    summary = _read_json(outdir, _SUMMARY, sha256)
    if not isinstance(summary, Mapping) or not isinstance(summary.get("scenarios"), list):
        return None
    inputs = _read_json(outdir, INPUTS_NAME, sha256)
    if not isinstance(inputs, Mapping) or inputs.get("format") != INPUTS_FORMAT:
        inputs = None
    return PreviousPack(summary=summary, inputs=inputs)
