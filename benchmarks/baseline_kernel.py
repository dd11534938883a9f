"""The ensemble kernel as it was at a given revision, for side-by-side timing.

:func:`load` writes that revision's compiled modules (``git show
REV:prepkit/simulation/<module>.py``) into a package ``kernel_at_baseline`` under
a cache folder, with the imports between them pointed at the package, and
returns its ``run_draws``. numba caches the compiled code in that folder, so
only the first benchmark run for a revision compiles it. Nothing is copied
into the repository.
"""

from __future__ import annotations

import importlib
import re
import subprocess
import sys
from collections.abc import Callable
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[1]
BASELINE = "caad1f3"
"""The revision before issue 11's kernel work."""
MODULES = ("decisions", "flows", "kernels", "layout", "run_checks", "seasonality", "step_rule")
CACHE = Path.home() / ".cache" / "prepkit-benchmarks"


def load(revision: str = BASELINE) -> Callable[..., Any]:
    """``run_draws`` of ``revision``'s kernel, compiled from a package of its own."""
    folder = CACHE / f"kernel-{revision}"
    package = folder / "kernel_at_baseline"
    if not (package / "kernels.py").exists():
        package.mkdir(parents=True, exist_ok=True)
        for name in MODULES:
            text = subprocess.run(
                ["git", "-C", str(ROOT), "show", f"{revision}:prepkit/simulation/{name}.py"],
                check=True, capture_output=True, text=True).stdout
            pattern = r"from prepkit\.simulation\.(" + "|".join(MODULES) + r") import"
            text = re.sub(pattern, r"from kernel_at_baseline.\1 import", text)
            (package / f"{name}.py").write_text(text, encoding="utf-8")
        (package / "__init__.py").write_text(f'"""Kernel of {revision}."""\n', encoding="utf-8")
    if str(folder) not in sys.path:
        sys.path.insert(0, str(folder))
    return importlib.import_module("kernel_at_baseline.kernels").run_draws  # type: ignore[no-any-return]
