"""Charts comparing the scenarios: daily admissions, totals, workforce absence."""

from __future__ import annotations

import datetime as dt
import math
from collections.abc import Sequence

import matplotlib
import numpy as np
from matplotlib.figure import Figure

from prepkit.plan import Plan
from prepkit.plan.records import admissions_per_day
from prepkit.report.charts_base import (
    WITH_STYLE,
    Chart,
    beds_axis,
    chart_height,
    date_axis,
    legend_entries,
    make_chart,
    plot_series,
    render_chart,
    tick_number,
    window_slice,
    wrap_label,
)
from prepkit.report.charts_limits import fit_limits
from prepkit.report.style import CSS_COLORS, PageSize, figure_size
from prepkit.report.words.chart_words import absence_words, admissions_words, outcomes_words
from prepkit.report.words.formatting import format_number
from prepkit.report.words.views import ScenarioView

__all__ = ["absence_chart", "admissions_chart", "outcomes_chart"]

# ---- Daily admissions, small multiples -----------------------------------------------------------


def _panel_grid(count: int) -> tuple[int, int]:
    cols = 1 if count == 1 else 2
    return math.ceil(count / cols), cols


def admissions_chart(
    plan: Plan,
    views: Sequence[ScenarioView],
    window: tuple[dt.date, dt.date],
    page_size: PageSize,
) -> Chart:
    """Daily hospital admissions with and without measures, one panel per scenario.

    Parameters
    ----------
    plan : Plan
        The plan (observed admissions).
    views : sequence of ScenarioView
        Every scenario.
    window : tuple of datetime.date
        Dates shown.
    page_size : {"A4", "Letter"}
        Paper size of the pack.

    Returns
    -------
    Chart
        Panels share both axes, so scenarios compare at a glance.
    """
    rows, cols = _panel_grid(len(views))
    observed = [
        (day, rate)
        for day, rate in admissions_per_day(plan.observed, plan.details.observed_period)
        if window[0] <= day <= window[1]
    ]

    observed_label = ("Observed, weekly mean"
                      if plan.details.observed_period == "weekly" else "Observed admissions")

    def draw(fig: Figure) -> None:
        axes = np.atleast_1d(fig.subplots(rows, cols, sharex=True, sharey=True, squeeze=False))
        flat = axes.ravel()
        for ax, view in zip(flat, views, strict=False):
            with_daily = window_slice(view.item.with_interventions.daily, window)
            x = with_daily.index.to_numpy()
            plot_series(ax, x, with_daily["admissions_per_day"].to_numpy(), 0,
                         "With measures", linewidth=1.8, zorder=3)
            if view.item.scenario.interventions:
                without = window_slice(view.item.without_interventions.daily, window)
                plot_series(ax, x, without["admissions_per_day"].to_numpy(), 1,
                             "Without measures")
            if observed:
                ax.plot([np.datetime64(d) for d, _ in observed], [v for _, v in observed],
                        linestyle="none", marker="o", markersize=3, color=CSS_COLORS["ink"],
                        markerfacecolor="white", label=observed_label)
            ax.set_title(wrap_label(view.name, 42), loc="left", fontsize=9, fontweight="bold")
            beds_axis(ax)
            date_axis(ax, window)
        for ax in flat[len(views):]:
            ax.set_visible(False)
        # One scale for every panel, from the largest series of any of them.
        fit_limits(list(flat[: len(views)]), "y")
        for ax in axes[:, 0]:
            ax.set_ylabel("Admissions per day")
        handles, labels = legend_entries(list(flat[: len(views)]))
        fig.legend(handles, labels, loc="outside lower center", ncols=3, fontsize=8.5)

    width, _ = figure_size(page_size)
    height = 0.8 + 1.8 * rows
    images = render_chart(draw, size=(width, chart_height(page_size, height)))
    return make_chart("daily-admissions", admissions_words(views), images)


# ---- Total outcomes ------------------------------------------------------------------------------


def outcomes_chart(views: Sequence[ScenarioView], page_size: PageSize) -> Chart:
    """Total admissions, ICU admissions and deaths by scenario, with and without measures.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.
    page_size : {"A4", "Letter"}
        Paper size of the pack.

    Returns
    -------
    Chart
        Three panels of paired horizontal bars, values written at the bar
        ends. With measures: solid dark bars; without: white bars with a
        dark outline.
    """
    measures = (
        ("Hospital admissions", "admissions_persons"),
        ("ICU admissions", "icu_admissions_persons"),
        ("Deaths among\nhospital patients", "hospital_deaths_persons"),
    )
    names = [wrap_label(v.name, 20) for v in views]

    def draw(fig: Figure) -> None:
        axes = fig.subplots(1, len(measures), sharey=True)
        y = np.arange(len(views), dtype=np.float64)
        for ax, (title, key) in zip(axes, measures, strict=True):
            with_values = [getattr(v.with_metrics.total, key) for v in views]
            without_values = [getattr(v.without_metrics.total, key) for v in views]
            top = max([*with_values, *without_values, 1e-9])
            ax.barh(y - 0.2, with_values, height=0.38, color=WITH_STYLE.color,
                    label="With measures")
            ax.barh(y + 0.2, without_values, height=0.38, color="white",
                    edgecolor=CSS_COLORS["ink"], linewidth=0.8, label="Without measures")
            for yy, value in zip(y - 0.2, with_values, strict=True):
                ax.text(value + 0.02 * top, yy, format_number(value), va="center",
                        fontsize=7.5)
            for yy, value in zip(y + 0.2, without_values, strict=True):
                ax.text(value + 0.02 * top, yy, format_number(value), va="center",
                        fontsize=7.5, color=CSS_COLORS["muted"])
            ax.set_xlim(0, top * 1.35)
            ax.set_title(title, loc="left", fontsize=9, fontweight="bold")
            ax.grid(False, axis="y")
            ax.tick_params(axis="x", labelsize=7.5)
            ax.xaxis.set_major_locator(matplotlib.ticker.MaxNLocator(3))
            ax.xaxis.set_major_formatter(matplotlib.ticker.FuncFormatter(tick_number))
        axes[0].set_yticks(y, names)
        axes[0].invert_yaxis()
        axes[0].tick_params(axis="y", length=0)
        handles, labels = axes[0].get_legend_handles_labels()
        fig.legend(handles, labels, loc="outside lower center", ncols=2, fontsize=8.5)

    width, _ = figure_size(page_size)
    height = 1.2 + 0.55 * len(views)
    images = render_chart(draw, size=(width, chart_height(page_size, max(2.4, height))))
    return make_chart("total-outcomes", outcomes_words(views), images)


# ---- Workforce absence ---------------------------------------------------------------------------


def absence_chart(
    views: Sequence[ScenarioView],
    window: tuple[dt.date, dt.date],
    page_size: PageSize,
) -> Chart:
    """Share of workers absent each day, one line per scenario (with measures).

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.
    window : tuple of datetime.date
        Dates shown.
    page_size : {"A4", "Letter"}
        Paper size of the pack.

    Returns
    -------
    Chart
        Absence from illness plus carers kept home by school closures.
    """

    def draw(fig: Figure) -> None:
        ax = fig.subplots()
        for i, view in enumerate(views):
            daily = window_slice(view.item.with_interventions.daily, window)
            plot_series(ax, daily.index.to_numpy(),
                         100.0 * daily["absence_share"].to_numpy(dtype=np.float64), i,
                         wrap_label(view.name, 40))
        ax.set_ylabel("Workers absent [%]")
        fit_limits([ax], "y")
        ax.yaxis.set_major_formatter(matplotlib.ticker.FuncFormatter(lambda v, _p: f"{v:g}%"))
        date_axis(ax, window)
        fig.legend(loc="outside lower center", ncols=2, fontsize=8.5)

    width, _ = figure_size(page_size)
    height = width * 0.42 + 0.25 * math.ceil(len(views) / 2)
    images = render_chart(draw, size=(width, chart_height(page_size, height)))
    return make_chart("workforce-absence", absence_words(views), images)


