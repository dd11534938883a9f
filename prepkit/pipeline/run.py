"""The one orchestrator: workbook -> plan -> results -> briefing pack.

``prepkit run`` calls :func:`run_workbook` (``prepkit demo`` calls
:func:`prepkit.pipeline.demo.run_demo`); tests and scripts can call
:func:`prepkit.pipeline.pack.render_pack` and
:func:`prepkit.pipeline.pack.write_pack` to make a pack from a plan in memory.

A run

1. hashes the planning workbook, reads it into a plan (every workbook
   mistake is a :class:`~prepkit.errors.WorkbookError`), and applies the
   ``--draws`` override;
2. runs every scenario with and without its measures (an impossible plan is
   a :class:`~prepkit.errors.ModelError`), and the uncertainty ensemble when
   it is available and asked for;
3. draws the charts, writes the words, renders the HTML and the tagged PDF,
   the results workbook, the CSV files and the JSON summary;
4. writes them all into the output folder at once
   (:class:`~prepkit.pipeline.outputs.AtomicOutputDir`), after checking that the
   workbook has not changed since it was read. The workbook is only ever
   read.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path

from prepkit.base.files import atomic_write_bytes, source_date
from prepkit.errors import InputChangedError
from prepkit.fitting.project import fit_stage
from prepkit.pipeline.changes import previous_pack
from prepkit.pipeline.ensemble import ensemble_summary, run_ensemble
from prepkit.pipeline.first_use import first_use_note
from prepkit.pipeline.guard import check_draws_option, check_ensemble_memory
from prepkit.pipeline.manifest import file_sha256
from prepkit.pipeline.outputs_guard import check_pack_folder, check_summary_path
from prepkit.pipeline.pack_folder import check_output_dir
from prepkit.pipeline.progress import Say, Steps
from prepkit.pipeline.summary import json_bytes, summary_payload
from prepkit.plan import Plan
from prepkit.report.words.leader import CAUTION_LINE, bottom_line
from prepkit.report.words.review import review_words
from prepkit.report.words.views import scenario_views
from prepkit.scenarios.runs import PlanResults, run_plan
from prepkit.workbook.describe import all_of
from prepkit.workbook.reader import read_plan_with_warnings

__all__ = ["RunOptions", "check_outdir", "default_outdir", "run_to_pack", "run_workbook"]


@dataclass(frozen=True)
class RunOptions:
    """What ``prepkit run`` and ``prepkit demo`` were asked to do.

    Parameters
    ----------
    outdir : pathlib.Path or None
        Output folder; None for the default (``<workbook stem>-pack``
        beside the workbook, or ``prepkit-demo`` for the demo).
    summary_json : pathlib.Path or None
        Also write the JSON summary here.
    draws : int or None
        Uncertainty draws per scenario, overriding the workbook; 0 turns
        the ensemble off.
    summary_only : bool
        Compute the metrics and write only the JSON summary.
    quiet : bool
        Print nothing but errors (the command line also sets it when the
        ``CI`` environment variable is set).
    scheduler : str or None
        Address of a Dask scheduler (``tcp://host:8786``) to run the
        uncertainty draws on; None runs them on this machine.
    force : bool
        Replace files of an earlier pack that were changed since prepkit
        wrote them (``--force``); files prepkit did not write are never
        replaced.
    terminal : bool
        Progress goes to a terminal, where a progress bar may be drawn (the
        command line says whether it does).
    fit : bool
        Fit the plan to its observed figures when it asks for it (``--no-fit``
        turns it off: the figures are only drawn).
    """

    outdir: Path | None
    summary_json: Path | None = None
    draws: int | None = None
    summary_only: bool = False
    quiet: bool = False
    scheduler: str | None = None
    force: bool = False
    terminal: bool = False
    fit: bool = True


def _read(path: Path) -> tuple[Plan, str, tuple[str, ...]]:
    """The plan, the SHA-256 of the bytes read (the file is read once) and its warnings."""
    plan, warnings = read_plan_with_warnings(path)
    return plan, plan.source.sha256, tuple(str(w) for w in warnings)


def _check_unchanged(path: Path, digest: str) -> None:
    try:
        now = file_sha256(path)
    except OSError:
        now = ""
    if now != digest:
        raise InputChangedError(path, digest, now)


def _with_draws(plan: Plan, draws: int | None) -> Plan:
    if draws is None:
        return plan
    check_draws_option(draws)
    return dataclasses.replace(plan, details=dataclasses.replace(plan.details, draws=draws))


def default_outdir(workbook: Path) -> Path:
    """Output folder used when none is given: ``<workbook stem>-pack`` beside the workbook.

    Parameters
    ----------
    workbook : pathlib.Path
        The planning workbook.

    Returns
    -------
    pathlib.Path
        The folder.
    """
    path = Path(workbook)
    return path.with_name(f"{path.stem}-pack")


def check_outdir(outdir: Path, workbook: Path, *, force: bool = False) -> None:
    """Refuse an output folder the pack may not replace; runs before any other work.

    Parameters
    ----------
    outdir : pathlib.Path
        The output folder.
    workbook : pathlib.Path
        The planning workbook, which may not lie inside it.
    force : bool, optional
        Accept files of an earlier pack edited since prepkit wrote them.

    Raises
    ------
    PipelineError
        When the folder is or holds the workbook (however the paths are spelled).
    prepkit.errors.OutputError
        When it is a file, lies under one, holds files that are not an
        earlier pack, or (without ``force``) holds edited pack files.
    """
    check_pack_folder(outdir, workbook)
    check_output_dir(outdir, replace_edited=force)


def _closing_report(plan: Plan, results: PlanResults, outdir: Path | None, json_path: Path | None
                    ) -> str:
    views = scenario_views(plan, results)
    lines = []
    if outdir is not None:
        lines.append(f"Briefing pack for {plan.details.jurisdiction} written to {outdir}")
        lines.append(f"  open {outdir / 'briefing-pack.pdf'}")
    if json_path is not None:
        lines.append(f"Summary of every metric written to {json_path}")
    lines.append("Bottom line: " + " ".join(bottom_line(views)))
    lines.append(f"Caution: {CAUTION_LINE}")
    return "\n".join(lines)


def run_to_pack(
    workbook: Path,
    options: RunOptions,
    say: Say,
    *,
    default_outdir: Path,
    extra: Mapping[str, bytes] | None = None,
    extra_files: Sequence[tuple[str, str]] = (),
) -> str:
    """Run ``workbook`` as ``options`` ask and write the pack (or only the summary).

    The steps of :func:`run_workbook`; ``default_outdir`` is the folder used
    when ``options.outdir`` is None, and ``extra`` and ``extra_files`` are
    further files for the pack and their lines in its list of files (the
    demo's copy of its workbook). Returns the closing report.
    """
    steps = Steps(say, quiet=options.quiet, terminal=options.terminal)
    generated = source_date()
    outdir = options.outdir if options.outdir is not None else default_outdir
    pack_dir = None if options.summary_only else outdir
    # Options and output paths first: nothing is read before them.
    check_draws_option(options.draws)
    if pack_dir is not None:
        check_outdir(pack_dir, workbook, force=options.force)
    previous = previous_pack(pack_dir)  # the earlier pack, for the page of changes
    if options.summary_json is not None:
        check_summary_path(options.summary_json, workbook=workbook, outdir=pack_dir)
    steps(f"Reading {workbook.name}")
    plan, digest, notes = _read(workbook)
    for note in notes:
        steps(f"Note: {note}")
    review = review_words(plan, generated)
    if review.passed:
        steps(f"Warning: {review.caution}")
    plan = _with_draws(plan, options.draws)
    check_ensemble_memory(plan, from_option=options.draws is not None,
                          remote=options.scheduler is not None)
    compiling = first_use_note()
    if compiling is not None:
        steps(compiling)
    plan, fit = fit_stage(plan, say=steps, asked=options.fit)
    if fit is not None and fit.reason:
        steps(f"Note: {fit.reason}")
    each = "with and" if len(plan.scenarios) == 1 else "each with and"
    steps(f"Running {all_of(len(plan.scenarios), 'scenario')}, {each} without its measures")
    results = run_plan(plan)
    ensemble = run_ensemble(plan, results, steps, options.scheduler)

    if options.summary_only:
        summary = json_bytes(summary_payload(
            plan, results, ensemble_summary(ensemble), generated, fit=fit,
            decisions=None if ensemble is None else ensemble.decisions))
        _check_unchanged(workbook, digest)
        if options.summary_json is not None:
            _write_summary(options.summary_json, summary, workbook, None)
        return _closing_report(plan, results, None, options.summary_json)

    # The charts and the PDF renderer are imported only for a pack (not for --summary-only).
    from prepkit.pipeline.pack import render_pack, write_pack

    pack = render_pack(plan, results, ensemble=ensemble, generated=generated, say=steps,
                       extra_files=extra_files, notes=notes, fit=fit, previous=previous)
    steps(f"Saving the pack to {outdir}")
    written = write_pack(
        outdir, pack, before_commit=lambda: _check_unchanged(workbook, digest), extra=extra,
        force=options.force,
    )
    if options.summary_json is not None:
        _write_summary(options.summary_json, pack.files["summary.json"], workbook, outdir)
    _check_unchanged(workbook, digest)
    return _closing_report(plan, results, written, options.summary_json)


def _write_summary(path: Path, data: bytes, workbook: Path, outdir: Path | None) -> None:
    """Write the ``--summary-json`` file, checking its path again (a file may have appeared)."""
    check_summary_path(path, workbook=workbook, outdir=outdir)
    atomic_write_bytes(path, data)


def run_workbook(workbook: Path, options: RunOptions, say: Say) -> str:
    """Run a planning workbook and write its briefing pack (``prepkit run``).

    Parameters
    ----------
    workbook : pathlib.Path
        The planning workbook; it is read, never written.
    options : RunOptions
        Output folder, JSON summary, draws, summary only, quiet.
    say : callable
        Receives progress messages (none when quiet).

    Returns
    -------
    str
        A short closing report: where the pack is and the bottom line.

    Raises
    ------
    prepkit.errors.WorkbookError
        For mistakes in the workbook (nothing is written).
    prepkit.errors.ModelError
        For a plan that cannot be simulated.
    PipelineError
        For a wrong option or output folder.
    InputChangedError
        When the workbook changed during the run (nothing is written).
    """
    path = Path(workbook)
    return run_to_pack(path, options, say, default_outdir=default_outdir(path))
