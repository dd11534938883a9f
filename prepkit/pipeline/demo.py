"""``prepkit demo``: the bundled sample city, run into a pack beside a copy of its workbook."""

from __future__ import annotations

import shlex
from importlib.resources import files
from pathlib import Path

from prepkit.errors import PipelineError
from prepkit.pipeline.manifest import file_sha256, read_manifest
from prepkit.pipeline.progress import Say
from prepkit.pipeline.run import RunOptions, run_to_pack

__all__ = ["DEMO_OUTDIR", "DEMO_WORKBOOK", "run_demo", "sample_workbook"]

#: The bundled sample workbook that ``prepkit demo`` runs.
DEMO_WORKBOOK = "vellmora_city.xlsx"

#: Default output folder of ``prepkit demo``.
DEMO_OUTDIR = Path("prepkit-demo")


def sample_workbook(name: str = DEMO_WORKBOOK) -> Path:
    """Path of a bundled sample workbook.

    Parameters
    ----------
    name : str
        File name, e.g. ``"vellmora_city.xlsx"`` or ``"tamsett_hollow.xlsx"``.

    Returns
    -------
    pathlib.Path
        The installed file (package ``prepkit.samples``), or the checkout's
        ``sample_workbooks/`` folder when running from a source tree whose
        editable install predates that package.

    Raises
    ------
    PipelineError
        When no such sample is bundled.
    """
    candidates: list[Path] = []
    try:
        root = files("prepkit.samples")
        if isinstance(root, Path):
            candidates.append(root / name)
    except ModuleNotFoundError:
        pass
    candidates.append(Path(__file__).resolve().parents[2] / "sample_workbooks" / name)
    for path in candidates:
        if path.is_file():
            return path
    raise PipelineError("sample workbook", "one of the bundled samples", repr(name))


def _keep_edited_demo_workbook(outdir: Path, command: str) -> None:
    """Refuse to replace a demo workbook the planner has edited since the demo wrote it."""
    copy = outdir / DEMO_WORKBOOK
    manifest = read_manifest(outdir)
    if manifest is None or not copy.is_file():
        return
    written = {entry.name: entry.sha256 for entry in manifest.files}.get(DEMO_WORKBOOK)
    if written is not None and file_sha256(copy) != written:
        raise PipelineError(
            "output folder",
            f"a folder whose {DEMO_WORKBOOK} is as the demo wrote it (the folder is replaced "
            "whole, which would lose your changes)",
            f"an edited {copy}; run it with '{command} run {shlex.quote(str(copy))} -o "
            f"{shlex.quote(str(_new_folder(outdir)))}', or move it out first",
        )


def run_demo(options: RunOptions, say: Say, *, command: str = "prepkit") -> str:
    """Run the bundled sample city and write its pack (``prepkit demo``).

    The sample workbook is copied into the output folder beside the pack,
    so the planner can open it, change a figure and run it again.

    Parameters
    ----------
    options : RunOptions
        As for :func:`run_workbook`; ``outdir`` None means ``prepkit-demo``.
    say : callable
        Receives progress messages.
    command : str, optional
        How the planner types ``prepkit`` in their shell, for the closing
        hint (e.g. ``.venv/bin/prepkit`` when it is not on the path).

    Returns
    -------
    str
        A short closing report, ending with a command to run the copy of
        the workbook into a folder that does not exist yet.
    """
    source = sample_workbook(DEMO_WORKBOOK)
    data = source.read_bytes()
    outdir = options.outdir if options.outdir is not None else DEMO_OUTDIR
    if not options.force:
        _keep_edited_demo_workbook(outdir, command)
    report = run_to_pack(
        source,
        options,
        say,
        default_outdir=DEMO_OUTDIR,
        extra={DEMO_WORKBOOK: data},
        extra_files=((DEMO_WORKBOOK, "The sample planning workbook this pack was made from."),),
    )
    copy = outdir / DEMO_WORKBOOK
    return report + (
        f"\nTry it: change a figure in {copy}, save it, then run\n"
        f"  {command} run {shlex.quote(str(copy))} -o {shlex.quote(str(_new_folder(outdir)))}"
    )


def _new_folder(outdir: Path) -> Path:
    """``<outdir>-2`` beside ``outdir``, or the first of -3, -4, ... that does not exist."""
    number = 2
    while (candidate := outdir.with_name(f"{outdir.name}-{number}")).exists():
        number += 1
    return candidate
