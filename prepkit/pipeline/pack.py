"""Every file of a briefing pack, made in memory, then written into its folder at once.

:func:`render_pack` draws the charts, writes the words and renders the HTML
and the tagged PDF, the results workbook, the CSV files and the JSON summary;
:func:`write_pack` puts them into the output folder
(:class:`~prepkit.pipeline.outputs.AtomicOutputDir`).
"""

from __future__ import annotations

import datetime as dt
import json
import re
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Literal

import markupsafe

from prepkit import __version__
from prepkit.base.files import source_date
from prepkit.fitting.project import FitOutcome
from prepkit.pipeline.changes import PreviousPack
from prepkit.pipeline.ensemble import ensemble_summary
from prepkit.pipeline.jobs import run_jobs
from prepkit.pipeline.manifest import MANIFEST_NAME
from prepkit.pipeline.outputs import AtomicOutputDir
from prepkit.pipeline.progress import Say
from prepkit.pipeline.summary import json_bytes, summary_payload
from prepkit.plan import Plan
from prepkit.report.changes import INPUTS_NAME, PackChanges, compare_packs, inputs_payload
from prepkit.report.charts import Chart, chart_jobs, uncertainty_chart_jobs
from prepkit.report.charts_decisions import DECIDE_CHART, decide_chart_jobs
from prepkit.report.charts_fit import FIT_CHART, fit_chart_jobs
from prepkit.report.render import html_to_pdf, render_html, templates_dir
from prepkit.report.results_workbook import results_workbook_bytes, uncertainty_sheets
from prepkit.report.results_workbook_changes import CHANGES_CSV, changes_sheets
from prepkit.report.results_workbook_decide import decide_sheets
from prepkit.report.results_workbook_fit import fit_sheets
from prepkit.report.results_workbook_resources import resource_sheets
from prepkit.report.tables import (
    changes_csv,
    columns_csv,
    daily_csv,
    decide_csv,
    fit_daily_csv,
    resources_csv,
    uncertainty_daily_csv,
)
from prepkit.report.words.changes import ChangeWords, change_words
from prepkit.report.words.pack import FigureView, PackFigures, build_context
from prepkit.report.words.uncertainty_text import ensemble_context
from prepkit.report.words.views import ScenarioView, scenario_views
from prepkit.scenarios.runs import PlanResults
from prepkit.uncertainty.results import UncertaintyResults

__all__ = ["PACK_FILES", "UNCERTAINTY_CSV", "Pack", "render_pack", "write_pack"]

#: File of the daily uncertainty bands (only when the ensemble ran).
UNCERTAINTY_CSV = "uncertainty-daily.csv"
FIT_CSV = "fit-daily.csv"
DECIDE_CSV = "decide-by.csv"

#: Default output folder of ``prepkit demo``.
DEMO_OUTDIR = Path("prepkit-demo")

#: Files of every pack and what each holds (charts are added per chart).
PACK_FILES: tuple[tuple[str, str], ...] = (
    ("briefing-pack.pdf", "This briefing pack, for printing (tagged, accessible PDF)."),
    ("briefing-pack.html", "The same pack as one web page, charts included."),
    ("results.xlsx", "Results workbook: summary, daily series, Excel charts, every input."),
    ("daily-series.csv", "Every daily series of every scenario, with and without measures."),
    ("daily-series-columns.csv", "Unit and meaning of each column of daily-series.csv."),
    ("resources.csv", "Need against supply of beds at three levels and after staff absence, "
                      "ventilators, oxygen, protective equipment and mortuary spaces."),
    ("summary.json", "Every metric of every scenario and variant, for other software."),
    (INPUTS_NAME, "Every input as read, cell by cell: the next pack in this folder lists "
                  "what changed since."),
    ("charts/*.svg, charts/*.png", "Each chart as a drawing (SVG) and a picture for slides (PNG)."),
    (MANIFEST_NAME, "Name, size and SHA-256 of every file, to check the pack is whole."),
)


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


_FONT_FACE = re.compile(r"@font-face\s*\{[^}]*\}\s*", re.DOTALL)


def _standalone_css() -> str:
    """pack.css for the HTML file: the same rules, without the bundled fonts.

    The HTML file travels alone, so it cannot point at font files; readers'
    browsers fall back to their own sans-serif.
    """
    css = (templates_dir() / "pack.css").read_text(encoding="utf-8")
    return _FONT_FACE.sub("", css)


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

    # the decisions' page comes first, right after the leader page, then the fit's
    decisions = view_of(by_name[DECIDE_CHART]) if DECIDE_CHART in by_name else None
    fit = view_of(by_name[FIT_CHART]) if FIT_CHART in by_name else None
    by_scenario = {}
    for view in views:
        chart = by_name.get(f"demand-scenario-{view.number}")
        if chart is not None:
            by_scenario[view.number] = view_of(chart)
    across = tuple(
        view_of(chart)
        for chart in charts
        if not chart.name.startswith(("demand-scenario-", "uncertainty-"))
        and chart.name not in (FIT_CHART, DECIDE_CHART)
    )
    uncertainty = tuple(view_of(chart) for chart in charts if chart.name.startswith("uncertainty-"))
    return PackFigures(by_scenario=by_scenario, across=across, uncertainty=uncertainty, fit=fit,
                       decisions=decisions)


def render_pack(
    plan: Plan,
    results: PlanResults,
    *,
    ensemble: UncertaintyResults | None = None,
    generated: dt.datetime | None = None,
    extra_files: Sequence[tuple[str, str]] = (),
    notes: Sequence[str] = (),
    say: Say | None = None,
    fit: FitOutcome | None = None,
    previous: PreviousPack | None = None,
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
        :func:`prepkit.base.files.source_date`.
    extra_files : sequence of (str, str)
        Further files the caller adds to the pack, listed in the provenance
        appendix with what they hold.
    notes : sequence of str
        Warnings found reading the workbook, listed in the provenance
        appendix.
    say : callable, optional
        Receives a message before each slow step.
    fit : FitOutcome, optional
        What came of fitting the plan to its observed figures
        (:func:`prepkit.fitting.project.fit_stage`); ``plan`` is then the plan
        the projections ran.
    previous : PreviousPack, optional
        The pack that was in the output folder
        (:func:`prepkit.pipeline.changes.previous_pack`): the new pack then
        lists what changed since.

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
    jobs += fit_chart_jobs(plan, fit)
    jobs += decide_chart_jobs(plan, None if ensemble is None else ensemble.decisions)
    charts = tuple(run_jobs(jobs))
    listed = [*PACK_FILES, *extra_files]
    fit_csv = fit_daily_csv(plan, fit)
    if fit_csv is not None:
        listed.insert(5, (FIT_CSV, "The observed figures beside the fitted model, day by day "
                                   "(median, 50% and 90% ranges)."))
    decisions = None if ensemble is None else ensemble.decisions
    decide = decide_csv(plan, decisions)
    if decide is not None:
        listed.insert(5, (DECIDE_CSV, "Every decision date the decide-by search tried, with "
                                      "the share of futures within beds."))
    bands_csv = uncertainty_daily_csv(ensemble)
    if bands_csv is not None:
        listed.insert(5, (UNCERTAINTY_CSV, "Daily uncertainty bands and chances of beds running "
                                           "short, every scenario and variant."))
    inputs = inputs_payload(plan)
    summary = summary_payload(plan, results, ensemble_summary(ensemble), when, fit=fit,
                              decisions=decisions)
    changes = _changes(previous, inputs, summary)
    changed_csv = changes_csv(changes)
    if changes is not None:
        summary["changes_since_last_pack"] = changes.summary()
    if changed_csv is not None:
        listed.insert(5, (CHANGES_CSV, "Every input that changed since the earlier pack in this "
                                       "folder: sheet, cell, old and new value."))
    words = change_words(changes)
    # The PDF gets the PNG copies: weasyprint lays out a PNG about ten times
    # faster than an SVG chart, and at 200 dpi it prints sharply. The HTML
    # page gets the SVG copies, which stay sharp at any zoom.
    base = build_context(
        plan, results, figures=_figures(views, charts, "png"), version=__version__,
        generated=when, files=listed, uncertainty=ensemble, notes=notes, fit=fit,
        changes=words,
    )
    html_context = {
        **base,
        "figures": _figures(views, charts, "svg"),
        "inline_css": markupsafe.Markup(_standalone_css()),
    }
    tell("Writing the briefing pack, the results workbook and the data files")
    out = _documents(plan, results, ensemble, base, html_context, when, fit,
                     changes=(changes, words))
    out["summary.json"] = json_bytes(summary)
    out[INPUTS_NAME] = json_bytes(inputs)
    if changed_csv is not None:
        out[CHANGES_CSV] = changed_csv
    if bands_csv is not None:
        out[UNCERTAINTY_CSV] = bands_csv
    if fit_csv is not None:
        out[FIT_CSV] = fit_csv
    if decide is not None:
        out[DECIDE_CSV] = decide
    for chart in charts:
        out[f"charts/{chart.name}.svg"] = chart.svg
        out[f"charts/{chart.name}.png"] = chart.png
    return Pack(files=out, charts=tuple(charts), title=plan.details.title)


def _changes(previous: PreviousPack | None, inputs: Mapping[str, Any],
             summary: Mapping[str, Any]) -> PackChanges | None:
    """The comparison with the earlier pack; None without one or when nothing changed."""
    if previous is None:
        return None
    # compared as the files hold them: the new summary through JSON, as the old one was read
    changes = compare_packs(previous.inputs, previous.summary, inputs,
                            json.loads(json_bytes(summary)))
    return changes if changes.any else None


def _documents(
    plan: Plan,
    results: PlanResults,
    ensemble: UncertaintyResults | None,
    base: Mapping[str, Any],
    html_context: Mapping[str, Any],
    when: dt.datetime,
    fit: FitOutcome | None,
    *,
    changes: tuple[PackChanges | None, ChangeWords | None],
) -> dict[str, bytes]:
    """The pack's documents and daily CSV files: PDF, HTML, results workbook."""
    title = f"{plan.details.title} ({plan.details.jurisdiction})"
    # The PDF is the slowest document; the others are written beside it.
    documents: list[Callable[[], bytes]] = [
        lambda: html_to_pdf(
            render_html("pack.html.j2", base), page_size=plan.details.page_size, title=title,
            lang="en", created=when,
        ),
        lambda: results_workbook_bytes(
            plan, results, version=__version__, generated=when,
            extra_sheets=(resource_sheets(results) + uncertainty_sheets(ensemble)
                          + decide_sheets(plan, None if ensemble is None else ensemble.decisions)
                          + fit_sheets(plan, fit)
                          + changes_sheets(changes[0], changes[1].since if changes[1] else "")),
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
        "resources.csv": resources_csv(results),
    }
    return out


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
        wrote them (otherwise :class:`~prepkit.errors.EditedFilesError`).

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
