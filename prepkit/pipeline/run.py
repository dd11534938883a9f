"""The one orchestrator: workbook -> plan -> results -> briefing pack.

``prepkit run`` and ``prepkit demo`` call :func:`run_workbook` and
:func:`run_demo`; tests and scripts can call :func:`render_pack` and
:func:`write_pack` to make a pack from a plan in memory.

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

Small eigenproblems and matrix products run faster on one thread than on
many, so when this module is imported before numpy it asks OpenBLAS and MKL
for one thread (only where the environment does not already say otherwise).
"""

from __future__ import annotations

import os
import sys


def _prefer_single_threaded_blas() -> None:
    """Default BLAS libraries to one thread, if numpy is not loaded yet.

    The settings are read once, when numpy loads its BLAS library; after
    that, changing them has no effect, so this does nothing then. Values a
    user has set are kept.
    """
    if "numpy" in sys.modules:
        return
    for name in ("OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):
        os.environ.setdefault(name, "1")


_prefer_single_threaded_blas()

# The imports below load numpy; they must follow the call above.
import contextlib  # noqa: E402
import dataclasses  # noqa: E402
import datetime as dt  # noqa: E402
import json  # noqa: E402
import multiprocessing  # noqa: E402
import re  # noqa: E402
import shlex  # noqa: E402
from collections.abc import Callable, Iterator, Mapping, Sequence  # noqa: E402
from concurrent.futures import Executor  # noqa: E402
from dataclasses import dataclass  # noqa: E402
from importlib.resources import files  # noqa: E402
from pathlib import Path  # noqa: E402
from typing import Any, Literal, TypeVar  # noqa: E402

import markupsafe  # noqa: E402

from prepkit import __version__  # noqa: E402
from prepkit.errors import PipelineError, PrepkitError  # noqa: E402
from prepkit.pipeline.guard import (  # noqa: E402
    check_draws_option,
    check_ensemble_memory,
    worker_setup,
)
from prepkit.pipeline.outputs import (  # noqa: E402
    MANIFEST_NAME,
    AtomicOutputDir,
    atomic_write_bytes,
    check_output_dir,
    file_sha256,
    read_manifest,
    source_date,
)
from prepkit.pipeline.outputs_guard import check_pack_folder, check_summary_path  # noqa: E402
from prepkit.pipeline.summary import summary_dict  # noqa: E402
from prepkit.plan import Plan  # noqa: E402
from prepkit.report.charts import Chart, chart_jobs, uncertainty_chart_jobs  # noqa: E402
from prepkit.report.render import html_to_pdf, render_html, templates_dir  # noqa: E402
from prepkit.report.results_workbook import (  # noqa: E402
    results_workbook_bytes,
    uncertainty_sheets,
)
from prepkit.report.tables import columns_csv, daily_csv, uncertainty_daily_csv  # noqa: E402
from prepkit.report.words.leader import CAUTION_LINE, bottom_line  # noqa: E402
from prepkit.report.words.pack import FigureView, PackFigures, build_context  # noqa: E402
from prepkit.report.words.uncertainty_text import ensemble_context  # noqa: E402
from prepkit.report.words.views import ScenarioView, scenario_views  # noqa: E402
from prepkit.scenarios.runs import PlanResults, run_plan  # noqa: E402
from prepkit.uncertainty.run import (  # noqa: E402
    UncertaintyResults,
    run_uncertainty,
    uncertainty_summary_dict,
)
from prepkit.workbook.describe import all_of  # noqa: E402
from prepkit.workbook.reader import read_plan_with_warnings  # noqa: E402

__all__ = [
    "DEMO_OUTDIR",
    "DEMO_WORKBOOK",
    "FIRST_USE_NOTE",
    "FIRST_USE_SECONDS",
    "PACK_FILES",
    "PARALLEL_TIMEOUT_SECONDS",
    "UNCERTAINTY_CSV",
    "WORKERS_ENV",
    "InputChangedError",
    "Pack",
    "PipelineError",
    "RunOptions",
    "check_outdir",
    "default_outdir",
    "first_use_note",
    "kernels_need_compiling",
    "render_pack",
    "run_demo",
    "run_workbook",
    "run_jobs",
    "sample_workbook",
    "worker_count",
    "write_pack",
]

Say = Callable[[str], None]

#: The bundled sample workbook that ``prepkit demo`` runs.
DEMO_WORKBOOK = "vellmora_city.xlsx"

#: File of the daily uncertainty bands (only when the ensemble ran).
UNCERTAINTY_CSV = "uncertainty-daily.csv"

#: Default output folder of ``prepkit demo``.
DEMO_OUTDIR = Path("prepkit-demo")

#: Files of every pack and what each holds (charts are added per chart).
PACK_FILES: tuple[tuple[str, str], ...] = (
    ("briefing-pack.pdf", "This briefing pack, for printing (tagged, accessible PDF)."),
    ("briefing-pack.html", "The same pack as one web page, charts included."),
    ("results.xlsx", "Results workbook: summary, daily series, Excel charts, every input."),
    ("daily-series.csv", "Every daily series of every scenario, with and without measures."),
    ("daily-series-columns.csv", "Unit and meaning of each column of daily-series.csv."),
    ("summary.json", "Every metric of every scenario and variant, for other software."),
    ("charts/*.svg, charts/*.png", "Each chart as a drawing (SVG) and a picture for slides (PNG)."),
    (MANIFEST_NAME, "Name, size and SHA-256 of every file, to check the pack is whole."),
)


class InputChangedError(RuntimeError, PrepkitError):
    """The planning workbook changed while prepkit was running.

    Parameters
    ----------
    path : pathlib.Path
        The workbook.
    before, after : str
        Its SHA-256 when read and at the end of the run.
    """

    def __init__(self, path: Path, before: str, after: str) -> None:
        self.path = path
        self.before = before
        self.after = after
        super().__init__(
            f"{path.name} changed while prepkit was running (SHA-256 {before[:12]} when read, "
            f"{after[:12] or 'missing'} at the end), so the results may not match it; nothing "
            "was written. Save the workbook, close it and run prepkit again."
        )


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
        Print nothing but errors.
    scheduler : str or None
        Address of a Dask scheduler (``tcp://host:8786``) to run the
        uncertainty draws on; None runs them on this machine.
    force : bool
        Replace files of an earlier pack that were changed since prepkit
        wrote them (``--force``); files prepkit did not write are never
        replaced.
    """

    outdir: Path | None
    summary_json: Path | None = None
    draws: int | None = None
    summary_only: bool = False
    quiet: bool = False
    scheduler: str | None = None
    force: bool = False


@dataclass(frozen=True, kw_only=True)
class Pack:
    """Every file of a briefing pack, in memory.

    Parameters
    ----------
    files : mapping of str to bytes
        File name inside the pack (``/`` separators) to its bytes.
    charts : tuple of Chart
        The charts drawn.
    title : str
        Title of the pack.
    """

    files: Mapping[str, bytes]
    charts: tuple[Chart, ...]
    title: str


# ---- Progress ------------------------------------------------------------------------------------


def _in_ci() -> bool:
    value = os.environ.get("CI", "").strip().lower()
    return value not in ("", "0", "false", "no")


class _Steps:
    """Step messages through ``say``: shown unless quiet or in CI."""

    def __init__(self, say: Say, *, quiet: bool) -> None:
        self.enabled = not quiet and not _in_ci()
        self._say = say

    def __call__(self, message: str) -> None:
        if self.enabled:
            self._say(message)

    @property
    def interactive(self) -> bool:
        """True when a progress bar may be drawn on the terminal."""
        return self.enabled and sys.stderr.isatty()


#: Time numba takes to compile the model's kernels the first time they run [s]. Measured
#: with ``prepkit demo`` (numba 0.68, Python 3.11, two cores): a run without a cache took
#: 52.5 s of processor time against 17.6 s for a run with one, so compiling is about 35 s
#: of work (111.6 s against 28.3 s on the clock with the machine shared five ways).
#: Compiling happens once per version of ``kernels.py``.
FIRST_USE_SECONDS = 40

FIRST_USE_NOTE = (
    f"Preparing the compiled model for first use (about {FIRST_USE_SECONDS} s, longer on a "
    "busy machine; later runs skip this)."
)


def kernels_need_compiling() -> bool:
    """True when some model kernel has no compiled copy, in memory or in numba's cache.

    numba compiles each kernel on its first call and keeps the machine code
    in its cache (index files ``*.nbi`` in ``__pycache__`` beside
    ``kernels.py``, or under ``NUMBA_CACHE_DIR``). An index counts only when
    it was written for this numba version and this ``kernels.py`` (numba
    keys it on the source file's time stamp and size). Nothing is compiled
    or written here.

    Returns
    -------
    bool
        True when the next run will compile; False when it loads the cache,
        or when the cache cannot be looked at.
    """
    from prepkit.simulation import kernels

    try:
        from numba.core.dispatcher import Dispatcher
    except ImportError:  # pragma: no cover - numba is a dependency
        return False
    for value in vars(kernels).values():
        if not isinstance(value, Dispatcher) or value.overloads:
            continue
        index = getattr(getattr(value, "_cache", None), "_cache_file", None)
        load = getattr(index, "_load_index", None)
        if load is None:
            continue  # a kernel numba does not cache, or another numba: nothing to say
        try:
            if not load():
                return True
        except Exception:  # noqa: BLE001 - an unreadable index is recompiled by numba
            return True
    return False


def first_use_note() -> str | None:
    """The note to show before the first run compiles the model, or None.

    Returns
    -------
    str or None
        :data:`FIRST_USE_NOTE` when :func:`kernels_need_compiling`.
    """
    return FIRST_USE_NOTE if kernels_need_compiling() else None


# ---- The uncertainty ensemble (optional) ---------------------------------------------------------


def _run_ensemble(
    plan: Plan, results: PlanResults, steps: _Steps, scheduler: str | None = None
) -> UncertaintyResults | None:
    """Uncertainty results, or None when the plan asks for no draws."""
    if plan.details.draws <= 0:
        return None
    steps(f"Running {plan.details.draws:,} plausible futures per scenario and variant")
    if scheduler is None:
        return run_uncertainty(plan, results, progress=steps.interactive)
    with _cluster_executor(scheduler) as executor:
        return run_uncertainty(plan, results, progress=steps.interactive, executor=executor)


#: How long to wait for a Dask scheduler to answer [s].
CLUSTER_TIMEOUT_SECONDS = 10


@contextlib.contextmanager
def _cluster_executor(address: str) -> Iterator[Executor]:
    """A concurrent.futures executor on the Dask cluster at ``address``."""
    try:
        from dask.distributed import Client
    except ImportError:
        raise PipelineError(
            "--scheduler", "the dask.distributed package (pip install 'prepkit[cluster]')",
            "it is not installed",
        ) from None
    try:
        client = Client(address, timeout=CLUSTER_TIMEOUT_SECONDS)
    except (OSError, TimeoutError, ValueError) as exc:
        raise PipelineError("--scheduler", "the address of a running Dask scheduler",
                            f"{address!r} ({exc})") from None
    try:
        yield client.get_executor()
    finally:
        client.close()


def _ensemble_summary(ensemble: UncertaintyResults | None) -> dict[str, Any] | None:
    return None if ensemble is None else uncertainty_summary_dict(ensemble)


# ---- Running independent jobs side by side -------------------------------------------------------

#: Environment variable giving the most worker processes for charts and documents
#: (``1`` runs everything in this process).
WORKERS_ENV = "PREPKIT_WORKERS"

#: Longest wait for the parallel jobs of one step [s]; after it, they run here instead.
PARALLEL_TIMEOUT_SECONDS = 300.0

T = TypeVar("T")
_JOBS: list[Callable[[], Any]] = []


def _run_job(index: int) -> Any:
    return _JOBS[index]()


def worker_count() -> int:
    """Worker processes to use for charts and documents.

    Returns
    -------
    int
        ``PREPKIT_WORKERS`` when set, else the CPUs this process may use, at
        most 4; 1 where processes cannot be forked (Windows, macOS).
    """
    forkable = "fork" in multiprocessing.get_all_start_methods()
    if not sys.platform.startswith("linux") or not forkable:
        return 1
    raw = os.environ.get(WORKERS_ENV, "").strip()
    if raw:
        try:
            return max(1, int(raw))
        except ValueError:
            raise PipelineError(WORKERS_ENV, "a whole number of workers", repr(raw)) from None
    try:
        available = len(os.sched_getaffinity(0))
    except (AttributeError, OSError):
        available = os.cpu_count() or 1
    return max(1, min(4, available))


def run_jobs(jobs: Sequence[Callable[[], T]], workers: int | None = None) -> list[T]:
    """Run independent jobs, in forked worker processes when that helps.

    Forked workers inherit the jobs (closures over the plan and results),
    so nothing but the results is copied between processes. Any trouble
    with the workers (they cannot start, a result cannot be sent back, or
    they take longer than :data:`PARALLEL_TIMEOUT_SECONDS`) falls back to
    running the jobs here, so parallelism only ever changes the speed: the
    jobs' results are the same bytes either way. A job that fails in a
    worker is run again here, so its error is raised from this process.

    Parameters
    ----------
    jobs : sequence of callable
        Functions without arguments.
    workers : int, optional
        Most worker processes; default :func:`worker_count`.

    Returns
    -------
    list
        The jobs' results, in order.
    """
    global _JOBS
    count = worker_count() if workers is None else workers
    if count <= 1 or len(jobs) <= 1 or _JOBS:
        return [job() for job in jobs]
    _JOBS = list(jobs)
    try:
        context = multiprocessing.get_context("fork")
        with context.Pool(processes=min(count, len(jobs)), initializer=worker_setup,
                          initargs=(os.getpid(),)) as pool:
            pending = pool.map_async(_run_job, range(len(jobs)), chunksize=1)
            results: list[T] = pending.get(PARALLEL_TIMEOUT_SECONDS)
            return results
    except Exception:  # noqa: BLE001 - any failure in a worker: run here, where errors are plain
        pass
    finally:
        _JOBS = []
    return [job() for job in jobs]


# ---- Pack ----------------------------------------------------------------------------------------


_FONT_FACE = re.compile(r"@font-face\s*\{[^}]*\}\s*", re.DOTALL)


def _standalone_css() -> str:
    """pack.css for the HTML file: the same rules, without the bundled fonts.

    The HTML file travels alone, so it cannot point at font files; readers'
    browsers fall back to their own sans-serif.
    """
    css = (templates_dir() / "pack.css").read_text(encoding="utf-8")
    return _FONT_FACE.sub("", css)


def _summary_bytes(
    plan: Plan,
    results: PlanResults,
    ensemble_summary: dict[str, Any] | None,
    generated: dt.datetime,
) -> bytes:
    payload = summary_dict(plan, results)
    payload["run"] = {
        "prepkit_version": __version__,
        "generated": generated.astimezone(dt.UTC).strftime("%Y-%m-%dT%H:%M:%SZ"),
        "input_file": Path(plan.source.path).name if plan.source.path else "",
        "input_sha256": plan.source.sha256,
        "seed": plan.details.seed,
        "draws": plan.details.draws,
    }
    if ensemble_summary is not None:
        payload["uncertainty"] = ensemble_summary
    return (json.dumps(payload, indent=2, ensure_ascii=False, allow_nan=False) + "\n").encode()


def _figures(
    views: Sequence[ScenarioView], charts: Sequence[Chart], fmt: Literal["svg", "png"]
) -> PackFigures:
    by_name = {chart.name: chart for chart in charts}
    number = 0

    def view_of(chart: Chart) -> FigureView:
        nonlocal number
        number += 1
        return FigureView(
            name=chart.name, src=chart.data_uri(fmt), alt=chart.alt, caption=chart.caption,
            label=f"Figure {number}.",
        )

    by_scenario = {}
    for view in views:
        chart = by_name.get(f"demand-scenario-{view.number}")
        if chart is not None:
            by_scenario[view.number] = view_of(chart)
    across = tuple(
        view_of(chart)
        for chart in charts
        if not chart.name.startswith(("demand-scenario-", "uncertainty-"))
    )
    uncertainty = tuple(view_of(chart) for chart in charts if chart.name.startswith("uncertainty-"))
    return PackFigures(by_scenario=by_scenario, across=across, uncertainty=uncertainty)


def render_pack(
    plan: Plan,
    results: PlanResults,
    *,
    ensemble: UncertaintyResults | None = None,
    generated: dt.datetime | None = None,
    extra_files: Sequence[tuple[str, str]] = (),
    notes: Sequence[str] = (),
    say: Say | None = None,
) -> Pack:
    """Make every file of the briefing pack in memory.

    Parameters
    ----------
    plan : Plan
        The plan that was run.
    results : PlanResults
        Its results (:func:`prepkit.scenarios.runs.run_plan`).
    ensemble : object, optional
        Uncertainty results, when the ensemble was run.
    generated : datetime.datetime, optional
        Run time printed in the pack; defaults to
        :func:`prepkit.pipeline.outputs.source_date`.
    extra_files : sequence of (str, str)
        Further files the caller adds to the pack, listed in the provenance
        appendix with what they hold.
    notes : sequence of str
        Warnings found reading the workbook, listed in the provenance
        appendix.
    say : callable, optional
        Receives a message before each slow step.

    Returns
    -------
    Pack
        File name to bytes, and the charts.
    """
    tell = say or (lambda _message: None)
    when = generated or source_date()
    views = scenario_views(plan, results)
    tell("Drawing the charts")
    ensemble_words = ensemble_context(plan, views, ensemble)
    jobs = chart_jobs(plan, views)
    if ensemble is not None and ensemble_words is not None:
        jobs += uncertainty_chart_jobs(plan, views, ensemble, focus=ensemble_words.focus)
    charts = tuple(run_jobs(jobs))
    listed = [*PACK_FILES, *extra_files]
    bands_csv = uncertainty_daily_csv(ensemble)
    if bands_csv is not None:
        listed.insert(5, (UNCERTAINTY_CSV, "Daily uncertainty bands and chances of beds running "
                                           "short, every scenario and variant."))
    # The PDF gets the PNG copies: weasyprint lays out a PNG about ten times
    # faster than an SVG chart, and at 200 dpi it prints sharply. The HTML
    # page gets the SVG copies, which stay sharp at any zoom.
    base = build_context(
        plan, results, figures=_figures(views, charts, "png"), version=__version__,
        generated=when, files=listed, uncertainty=ensemble, notes=notes,
    )
    html_context = {
        **base,
        "figures": _figures(views, charts, "svg"),
        "inline_css": markupsafe.Markup(_standalone_css()),
    }
    title = f"{plan.details.title} ({plan.details.jurisdiction})"
    tell("Writing the briefing pack, the results workbook and the data files")
    # The PDF is the slowest document; the others are written beside it.
    documents: list[Callable[[], bytes]] = [
        lambda: html_to_pdf(
            render_html("pack.html.j2", base), page_size=plan.details.page_size, title=title,
            lang="en", created=when,
        ),
        lambda: results_workbook_bytes(
            plan, results, version=__version__, generated=when,
            extra_sheets=uncertainty_sheets(ensemble),
        ),
        lambda: render_html("pack.html.j2", html_context).encode("utf-8"),
        lambda: daily_csv(results),
    ]
    pdf, xlsx, html, daily = run_jobs(documents)
    out: dict[str, bytes] = {
        "briefing-pack.pdf": pdf,
        "briefing-pack.html": html,
        "results.xlsx": xlsx,
        "daily-series.csv": daily,
        "daily-series-columns.csv": columns_csv(),
        "summary.json": _summary_bytes(
            plan, results, _ensemble_summary(ensemble), when
        ),
    }
    if bands_csv is not None:
        out[UNCERTAINTY_CSV] = bands_csv
    for chart in charts:
        out[f"charts/{chart.name}.svg"] = chart.svg
        out[f"charts/{chart.name}.png"] = chart.png
    return Pack(files=out, charts=tuple(charts), title=plan.details.title)


def write_pack(
    outdir: Path,
    pack: Pack,
    *,
    before_commit: Callable[[], None] | None = None,
    extra: Mapping[str, bytes] | None = None,
    force: bool = False,
) -> Path:
    """Write a pack into ``outdir`` at once (the previous pack or nothing until it is whole).

    Parameters
    ----------
    outdir : pathlib.Path
        Output folder; it must be empty, absent or hold a previous pack.
    pack : Pack
        The files.
    before_commit : callable, optional
        Called when every file is written, before the folder is swapped in;
        raising from it leaves ``outdir`` as it was.
    extra : mapping of str to bytes, optional
        Further files (the demo's copy of its workbook).
    force : bool, optional
        Replace files of the previous pack that were edited since prepkit
        wrote them (otherwise :class:`~prepkit.pipeline.outputs.EditedFilesError`).

    Returns
    -------
    pathlib.Path
        The output folder.
    """
    with AtomicOutputDir(outdir, created=None, replace_edited=force) as out:
        for name, data in {**pack.files, **(extra or {})}.items():
            out.write_bytes(name, data)
        if before_commit is not None:
            before_commit()
    return out.outdir


# ---- Entry points --------------------------------------------------------------------------------


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


def _run(
    workbook: Path,
    options: RunOptions,
    say: Say,
    *,
    default_outdir: Path,
    extra: Mapping[str, bytes] | None = None,
    extra_files: Sequence[tuple[str, str]] = (),
) -> str:
    steps = _Steps(say, quiet=options.quiet)
    generated = source_date()
    outdir = options.outdir if options.outdir is not None else default_outdir
    pack_dir = None if options.summary_only else outdir
    # Options and output paths first: nothing is read before them.
    check_draws_option(options.draws)
    if pack_dir is not None:
        check_outdir(pack_dir, workbook, force=options.force)
    if options.summary_json is not None:
        check_summary_path(options.summary_json, workbook=workbook, outdir=pack_dir)
    steps(f"Reading {workbook.name}")
    plan, digest, notes = _read(workbook)
    for note in notes:
        steps(f"Note: {note}")
    plan = _with_draws(plan, options.draws)
    check_ensemble_memory(plan, from_option=options.draws is not None,
                          remote=options.scheduler is not None)
    compiling = first_use_note()
    if compiling is not None:
        steps(compiling)
    each = "with and" if len(plan.scenarios) == 1 else "each with and"
    steps(f"Running {all_of(len(plan.scenarios), 'scenario')}, {each} without its measures")
    results = run_plan(plan)
    ensemble = _run_ensemble(plan, results, steps, options.scheduler)

    if options.summary_only:
        summary = _summary_bytes(plan, results, _ensemble_summary(ensemble),
                                 generated)
        _check_unchanged(workbook, digest)
        if options.summary_json is not None:
            _write_summary(options.summary_json, summary, workbook, None)
        return _closing_report(plan, results, None, options.summary_json)

    pack = render_pack(plan, results, ensemble=ensemble, generated=generated, say=steps,
                       extra_files=extra_files, notes=notes)
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
        Receives progress messages (none when quiet or when the ``CI``
        environment variable is set).

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
    return _run(path, options, say, default_outdir=default_outdir(path))


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
    candidates.append(Path(__file__).resolve().parents[1] / "sample_workbooks" / name)
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
    report = _run(
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
