"""The variables of ``templates/pack.html.j2``, gathered from the words modules."""

from __future__ import annotations

import datetime as dt
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

from prepkit.fitting.project import FitOutcome
from prepkit.plan import Plan
from prepkit.report.words.assumptions import assumption_groups
from prepkit.report.words.changes import ChangeWords
from prepkit.report.words.comparison import MEASURE_NAMES, comparison_tables, transmissibility_rows
from prepkit.report.words.decisions import DECISION_HEADS, DETAIL_HEADS, decision_words
from prepkit.report.words.fit_text import fit_context, fit_leader_line
from prepkit.report.words.formatting import format_date, format_days, format_number
from prepkit.report.words.leader import (
    CAUTION_LINE,
    DECISIONS_LINE,
    bottom_line,
    certainty_sentences,
    deaths_note,
    headline_measures_text,
    measures_headline,
    observed_flag,
)
from prepkit.report.words.limitations import limitations
from prepkit.report.words.measures import measure_rows
from prepkit.report.words.resources import first_short_sentence, gap_table
from prepkit.report.words.review import review_words
from prepkit.report.words.strain import (
    baseline_strain_note,
    brief_heads,
    strain_tables,
    with_strain,
)
from prepkit.report.words.uncertainty_text import ensemble_context
from prepkit.report.words.views import brief_cells, scenario_views, with_observations
from prepkit.scenarios.runs import PlanResults
from prepkit.uncertainty.results import UncertaintyResults


def provenance_line(plan: Plan, *, version: str, generated: dt.datetime,
                    as_of: str = "") -> str:
    """The footer line printed on every page.

    Parameters
    ----------
    plan : Plan
        The plan (its source file and hash, seed).
    version : str
        prepkit version.
    generated : datetime.datetime
        Run time (from :func:`prepkit.base.files.source_date`).
    as_of : str
        The last observed date the projections are fitted to, formatted; ""
        when they are not fitted.

    Returns
    -------
    str
        Jurisdiction, the review date with "scenario, not forecast", the date
        of the local figures (when fitted), input file name and short
        SHA-256, version, run time (UTC) and seed.
    """
    name = plan.source.path.replace("\\", "/").rsplit("/", 1)[-1] or "workbook"
    digest = plan.source.sha256[:12] if plan.source.sha256 else "not recorded"
    stamp = generated.astimezone(dt.UTC).strftime("%Y-%m-%d %H:%M UTC")
    fitted = f" · fitted to figures as of {as_of}" if as_of else ""
    review = f" · review by {format_date(plan.review_date)}: scenario, not forecast"
    return (
        f"{plan.details.jurisdiction}{review}{fitted} · input {name} (SHA-256 {digest}) · "
        f"prepkit {version} · run {stamp} · seed {plan.details.seed}"
    )


@dataclass(frozen=True, kw_only=True)
class FigureView:
    """A chart as the template places it.

    Parameters
    ----------
    name : str
        File stem under ``charts/``.
    src : str
        ``data:`` URI of the image.
    alt : str
        Alternate text written from the data.
    caption : str
        Caption.
    label : str
        ``Figure 3.``
    wide : bool
        True for tall charts given a page of their own.
    """

    name: str
    src: str
    alt: str
    caption: str
    label: str = ""
    wide: bool = False


@dataclass(frozen=True, kw_only=True)
class PackFigures:
    """Charts of the pack, by place.

    Parameters
    ----------
    by_scenario : mapping of int to FigureView
        Demand chart of each scenario, by scenario number.
    across : tuple of FigureView
        Charts comparing scenarios.
    uncertainty : tuple of FigureView
        Ensemble charts (empty when no ensemble was run).
    fit : FigureView or None
        The observed figures against the fitted model (None without a fit).
    decisions : FigureView or None
        The chance of staying within beds by decision date (None without a search).
    """

    by_scenario: Mapping[int, FigureView] = field(default_factory=dict)
    across: tuple[FigureView, ...] = ()
    uncertainty: tuple[FigureView, ...] = ()
    fit: FigureView | None = None
    decisions: FigureView | None = None


def build_context(
    plan: Plan,
    results: PlanResults,
    *,
    figures: PackFigures,
    version: str,
    generated: dt.datetime,
    uncertainty: UncertaintyResults | None = None,
    files: Sequence[tuple[str, str]] = (),
    notes: Sequence[str] = (),
    inline_css: str | None = None,
    fit: FitOutcome | None = None,
    changes: ChangeWords | None = None,
) -> dict[str, Any]:
    """Variables of ``pack.html.j2``.

    Parameters
    ----------
    plan : Plan
        The plan.
    results : PlanResults
        Its results.
    figures : PackFigures
        Charts, already drawn.
    version : str
        prepkit version.
    generated : datetime.datetime
        Run time.
    uncertainty : prepkit.uncertainty.results.UncertaintyResults, optional
        The ensemble, when it was run (its words come from
        :func:`ensemble_context`).
    files : sequence of (str, str)
        Files of the pack and what each holds, for the provenance appendix.
    notes : sequence of str
        Warnings found reading the workbook, for the provenance appendix.
    inline_css : str, optional
        Stylesheet text to inline (the standalone HTML file); None links
        ``pack.css`` (the PDF).
    fit : FitOutcome, optional
        What came of fitting the plan to its observed figures; ``plan`` is
        then the plan the projections ran.
    changes : ChangeWords, optional
        What changed since the earlier pack in the output folder
        (:func:`prepkit.report.words.changes.change_words`); None shows no such page.

    Returns
    -------
    dict
        Template variables. Every value is plain text or a dataclass of
        plain text: the templates escape all of it.
    """
    views = with_strain(with_observations(plan, scenario_views(plan, results), uncertainty),
                        uncertainty)
    ensemble = ensemble_context(plan, views, uncertainty)
    d = plan.details
    title = d.title
    headline = measures_headline(views)
    fit_words = fit_context(plan, fit)
    as_of = fit_words.as_of if fit_words is not None and fit_words.used else ""
    flag = fit_leader_line(plan, fit) if fit is not None else observed_flag(views)
    return {
        "title": title,
        "page_size": d.page_size,
        "lang": "en",
        "inline_css": inline_css,
        "provenance": provenance_line(plan, version=version, generated=generated, as_of=as_of),
        "plan": _plan_variables(plan),
        "run": _run_variables(plan, version=version, generated=generated),
        "caution": CAUTION_LINE,
        "decisions": DECISIONS_LINE,
        "bottom_line": bottom_line(views),
        "observed_flag": flag,
        "fit": fit_words,
        "decide": decision_words(plan, None if uncertainty is None else uncertainty.decisions),
        "decide_heads": DECISION_HEADS,
        "decide_detail_heads": DETAIL_HEADS,
        "as_of": as_of,
        "review": review_words(plan, generated),
        "deaths_note": deaths_note(views, uncertainty, plan.severity),
        "headline": headline,
        "headline_measures": headline_measures_text(headline) if headline else "",
        "certainty": certainty_sentences(plan, views, ensemble),
        "views": views,
        "briefs": tuple((view.name, brief_cells(view, d.day0.year)) for view in views),
        "brief_heads": brief_heads(views),
        "strain_note": baseline_strain_note(plan, views),
        "strain_tables": (strain_tables(views, uncertainty)
                          if uncertainty is not None and ensemble is not None else ()),
        "comparison": comparison_tables(views, d.day0.year),
        "transmissibility": transmissibility_rows(plan, results),
        "measures": measure_rows(plan, views),
        "figures": figures,
        "ensemble": ensemble,
        "assumptions": assumption_groups(plan.source.inputs),
        "limitations": limitations(plan, ensemble=ensemble is not None),
        "files": tuple(files),
        "notes": tuple(notes),
        "changes": changes,
        "gaps": gap_table(plan, views),
        "first_short": first_short_sentence(views),
    }


def _plan_variables(plan: Plan) -> dict[str, Any]:
    """The ``plan`` variables of the template: what the workbook describes."""
    d = plan.details
    last_day = plan.date_of(d.horizon_days - 1)
    return {
        "jurisdiction": d.jurisdiction,
        "title": d.title,
        "prepared_by": d.prepared_by,
        "day0": format_date(d.day0),
        "last_day": format_date(last_day),
        "horizon": format_days(d.horizon_days),
        "population": format_number(plan.population),
        "bands": len(plan.bands),
        "scenarios": len(plan.scenarios),
        "seed": d.seed,
        "draws": f"{d.draws:,}",
        "uses_matrices": plan.contacts.uses_matrices,
        "latent_stages": plan.disease.latent_stages,
        "infectious_stages": plan.disease.infectious_stages,
        "ward_stages": plan.severity.ward_stages,
        "icu_stages": plan.severity.icu_stages,
        "admission_stages": plan.severity.admission_delay_stages,
        "transmissibility_measure": MEASURE_NAMES.get(
            plan.disease.transmissibility_measure, ""
        ).split(" [")[0],
        "observed_days": len(plan.observed),
    }


def _run_variables(plan: Plan, *, version: str, generated: dt.datetime) -> dict[str, Any]:
    """The ``run`` variables of the template: when and from which file the pack was made."""
    return {
        "date": format_date(generated.date()),
        "stamp": generated.astimezone(dt.UTC).strftime("%Y-%m-%d %H:%M:%S UTC"),
        "version": version,
        "input_name": plan.source.path.replace("\\", "/").rsplit("/", 1)[-1],
        "input_sha256": plan.source.sha256,
        "input_count": f"{len(plan.source.inputs):,}",
    }
