"""The compiled modules carry the digest of their sources, so numba's cache follows every edit.

numba keys the cache of a compiled function on its own file, but the machine
code holds what it calls from other modules (measured, see
:mod:`prepkit.simulation.kernels`). Each module of
:data:`prepkit.simulation.kernels.COMPILED` holds the digest of all of them:
an edit to one fails this test until the digest is written into every one,
which changes every file and makes numba compile them all again.
"""

from __future__ import annotations

import hashlib
import importlib
import re
from pathlib import Path

from prepkit.simulation.kernels import COMPILED

FOLDER = Path(__file__).resolve().parents[2] / "prepkit" / "simulation"
DIGEST_LINE = re.compile(r'^KERNEL_SOURCES = "[0-9a-f]*"\n', re.MULTILINE)


def sources_digest() -> str:
    """Digest of the compiled modules' text, their own digest lines left out."""
    hasher = hashlib.sha256()
    for name in COMPILED:
        text = (FOLDER / f"{name}.py").read_text(encoding="utf-8")
        hasher.update(DIGEST_LINE.sub("", text).encode("utf-8"))
    return hasher.hexdigest()[:16]


def test_every_compiled_module_carries_the_digest_of_all() -> None:
    # Engineering check, no external source: the digest of the sources as they are.
    want = sources_digest()
    wrong = [
        name for name in COMPILED
        if name != "layout"
        and getattr(importlib.import_module(f"prepkit.simulation.{name}"), "KERNEL_SOURCES", None)
        != want
    ]
    assert not wrong, (
        f'write KERNEL_SOURCES = "{want}" in prepkit/simulation/ {", ".join(wrong)} '
        "(numba's cache of each compiled module notices only edits to its own file)"
    )


def test_layout_holds_no_compiled_code() -> None:
    # layout's constants are frozen into the other modules' code; it has no cache to renew
    text = (FOLDER / "layout.py").read_text(encoding="utf-8")
    assert "@njit" not in text and "KERNEL_SOURCES" not in text.split('"""', 2)[2]
