"""Every module of prepkit imports only from its own layer or an earlier one.

The layers, bottom to top: ``errors`` and ``base``, then
``plan``, ``workbook``, ``simulation``, ``metrics``, ``scenarios``,
``uncertainty``, ``fitting``, ``report``, ``pipeline`` and ``cli``. Each module is parsed
(never imported) and every import in it counts: at the top, inside functions,
and under ``if TYPE_CHECKING:``.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1] / "prepkit"

#: Stages from the bottom up; ``errors`` and ``base`` share the bottom layer with the
#: package itself (``prepkit/__init__.py`` holds only the version).
LAYERS: tuple[tuple[str, ...], ...] = (
    ("", "errors", "base"),
    ("plan",),
    ("workbook",),
    ("simulation",),
    ("metrics",),
    ("scenarios",),
    ("uncertainty",),
    ("fitting",),
    ("report",),
    ("pipeline",),
    ("cli",),
)

LEVEL = {stage: number for number, stages in enumerate(LAYERS) for stage in stages}

def _module_name(path: Path, root: Path = ROOT) -> str:
    parts = list(path.relative_to(root.parent).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


def _stage(module: str) -> str:
    """Stage of a module of prepkit: ``prepkit.report.render`` -> ``report``."""
    parts = module.split(".")
    return parts[1] if len(parts) > 1 else ""


def _imported(path: Path, root: Path) -> list[tuple[int, str]]:
    """(line, module) of every prepkit module ``path`` imports, wherever the import is."""
    module = _module_name(path, root)
    package = module if path.name == "__init__.py" else module.rpartition(".")[0]
    found = []
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"), str(path))):
        if isinstance(node, ast.Import):
            found += [(node.lineno, alias.name) for alias in node.names]
        elif isinstance(node, ast.ImportFrom):
            base = node.module or ""
            if node.level:
                anchor = package.split(".")[: len(package.split(".")) - node.level + 1]
                base = ".".join([*anchor, base] if base else anchor)
            # ``from prepkit import report`` names a stage, not a name in prepkit/__init__.py.
            if base == "prepkit":
                found += [(node.lineno, f"prepkit.{alias.name}") for alias in node.names
                          if alias.name in LEVEL]
            found.append((node.lineno, base))
    return sorted((line, name) for line, name in found if name.split(".")[0] == "prepkit")


def later_imports(path: Path, root: Path = ROOT) -> list[str]:
    """Imports in ``path`` from a layer later than its own, as ``line: module``."""
    own = LEVEL[_stage(_module_name(path, root))]
    return [
        f"{line}: {name}"
        for line, name in _imported(path, root)
        if LEVEL.get(_stage(name), 0) > own
    ]


MODULES = sorted(ROOT.rglob("*.py"))


def test_every_stage_has_a_layer() -> None:
    stages = {_stage(_module_name(path)) for path in MODULES}
    assert stages <= set(LEVEL), stages - set(LEVEL)


def test_the_check_sees_imports_inside_functions_and_type_checking(tmp_path: Path) -> None:
    folder = tmp_path / "prepkit" / "plan"
    folder.mkdir(parents=True)
    probe = folder / "probe.py"
    probe.write_text(
        "from typing import TYPE_CHECKING\n"
        "from prepkit import errors\n"
        "if TYPE_CHECKING:\n"
        "    from prepkit.report.render import html_to_pdf\n"
        "def f():\n"
        "    import prepkit.cli.main\n"
        "    from ..pipeline import run\n"
        "    from prepkit import uncertainty\n",
        encoding="utf-8",
    )
    assert later_imports(probe, tmp_path / "prepkit") == [
        "4: prepkit.report.render", "6: prepkit.cli.main", "7: prepkit.pipeline",
        "8: prepkit.uncertainty",
    ]


@pytest.mark.parametrize(
    "path",
    [
        pytest.param(path, id=_module_name(path))
        for path in MODULES
    ],
)
def test_imports_point_only_to_earlier_layers(path: Path) -> None:
    assert later_imports(path) == []
