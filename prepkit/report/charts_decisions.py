"""The decide-by chart: the chance of staying within beds against the decision date."""

from __future__ import annotations

import datetime as dt
import math
from collections.abc import Callable

import matplotlib
import matplotlib.dates as mdates
import numpy as np
from matplotlib.figure import Figure

from prepkit.plan import Plan
from prepkit.report.charts_base import (
    Chart,
    chart_height,
    date_axis,
    legend_entries,
    make_chart,
    plot_series,
    render_chart,
    wrap_label,
)
from prepkit.report.style import CSS_COLORS, PageSize, figure_size
from prepkit.report.words.chart_words import ChartWords
from prepkit.report.words.decisions import LEVEL_WORDS
from prepkit.report.words.formatting import format_date, format_percent
from prepkit.uncertainty.decide_results import BED_LEVELS, DecisionResults, ScenarioDecisions

__all__ = ["DECIDE_CHART", "decide_chart", "decide_chart_jobs", "decide_words"]

DECIDE_CHART = "decide-by"
"""File stem of the chart."""


def _charted(decisions: DecisionResults) -> list[ScenarioDecisions]:
    return [item for item in decisions.scenarios if len(item.points) > 1]


def decide_words(plan: Plan, decisions: DecisionResults) -> ChartWords:
    """Title, caption and alternate text of the decide-by chart."""
    target = format_percent(decisions.target_share)
    now = format_date(plan.date_of(decisions.now_day))
    parts = []
    for item in _charted(decisions):
        first, last = item.points[0], item.points[-1]
        parts.append(
            f"{item.scenario}: deciding on {format_date(plan.date_of(first.decision_day))} keeps "
            f"{format_percent(first.within_share['conventional'])} of futures within staffed "
            f"beds and {format_percent(first.within_share['contingency'])} with surge beds; on "
            f"{format_date(plan.date_of(last.decision_day))}, "
            f"{format_percent(last.within_share['conventional'])} and "
            f"{format_percent(last.within_share['contingency'])}."
        )
    return ChartWords(
        title="The chance of staying within beds, by the date of the decision",
        caption=(
            "How to read it: the share of plausible futures in which ward and ICU demand never "
            "exceed the beds if the measures still to come are decided on that date. Above the "
            f"{target} line, deciding then is in time. Grey line: {now}, the first day to "
            "decide; dotted: the decision the planned dates imply."
        ),
        alt="Chance of staying within beds against the decision date. " + " ".join(parts),
    )


def decide_chart_jobs(plan: Plan, decisions: DecisionResults | None) -> list[Callable[[], Chart]]:
    """The decide-by chart as a job, when a scenario had measures to move."""
    if decisions is None or not _charted(decisions):
        return []
    return [lambda: decide_chart(plan, decisions, plan.details.page_size)]


def decide_chart(plan: Plan, decisions: DecisionResults, page_size: PageSize) -> Chart:
    """One panel per scenario whose measures the search moved (at least one)."""
    items = _charted(decisions)
    cols = 2 if len(items) == 4 else min(3, len(items))
    rows = math.ceil(len(items) / cols)
    start = plan.date_of(min(p.decision_day for item in items for p in item.points))
    end = plan.date_of(max(p.decision_day for item in items for p in item.points))
    window = (start, max(end, start + dt.timedelta(days=28)))

    def draw(fig: Figure) -> None:
        axes = np.atleast_1d(fig.subplots(rows, cols, sharex=True, sharey=True, squeeze=False))
        flat = axes.ravel()
        for ax, item in zip(flat, items, strict=False):
            x = [np.datetime64(plan.date_of(p.decision_day)) for p in item.points]
            surge = plan.capacity.surge_ward_beds + plan.capacity.surge_icu_beds > 0
            for index, level in enumerate(BED_LEVELS if surge else BED_LEVELS[:1]):
                y = [100.0 * p.within_share[level] for p in item.points]
                plot_series(ax, x, y, index, f"Within {LEVEL_WORDS[level]}")
            ax.axhline(100.0 * decisions.target_share, color=CSS_COLORS["caution"],
                       linewidth=1.0, label=f"{format_percent(decisions.target_share)} of futures")
            ax.axvline(mdates.date2num(plan.date_of(decisions.now_day)), color=CSS_COLORS["muted"],
                       linewidth=1.0)
            if item.planned_decision_day is not None:
                ax.axvline(mdates.date2num(plan.date_of(item.planned_decision_day)),
                           color=CSS_COLORS["ink"], linewidth=0.9, linestyle=":")
            ax.set_title(wrap_label(item.scenario, 30 if cols == 3 else 42), loc="left",
                         fontsize=8.5,
                         fontweight="bold")
            ax.set_ylim(0, 102)
            ax.yaxis.set_major_formatter(
                matplotlib.ticker.FuncFormatter(lambda v, _p: f"{v:g}%"))
            date_axis(ax, window)
        for ax in flat[len(items):]:
            ax.set_visible(False)
        for ax in axes[:, 0]:
            ax.set_ylabel("Futures within beds")
        handles, labels = legend_entries(list(flat[: len(items)]))
        fig.legend(handles, labels, loc="outside lower center", ncols=3, fontsize=8.5)

    width, _ = figure_size(page_size)
    images = render_chart(draw, size=(width, chart_height(page_size, 0.9 + 1.5 * rows)))
    return make_chart(DECIDE_CHART, decide_words(plan, decisions), images)
