"""Charts of the uncertainty ensemble: bands, chance of running short, peak dates, tornado."""

from __future__ import annotations

import datetime as dt
import math
from collections.abc import Sequence

import matplotlib
import matplotlib.dates as mdates
import numpy as np
import pandas as pd
from matplotlib.figure import Figure

from prepkit.report.charts_base import (
    WITH_STYLE,
    Chart,
    beds_axis,
    chart_height,
    date_axis,
    make_chart,
    plot_series,
    render_chart,
    window_slice,
    wrap_label,
)
from prepkit.report.charts_limits import fit_limits
from prepkit.report.style import CSS_COLORS, PageSize, figure_size, series_style
from prepkit.report.words.chart_words_uncertainty import (
    bands_words,
    exceedance_words,
    peak_dates_words,
    tornado_words,
)
from prepkit.report.words.ensemble_format import (
    band_columns,
    inner_band_columns,
    scenario_ensemble,
)
from prepkit.report.words.formatting import as_date, format_number
from prepkit.report.words.views import ScenarioView, with_ensembles
from prepkit.uncertainty.results import FAN_QUANTILES, UncertaintyResults
from prepkit.uncertainty.run import EnsembleResult

__all__ = [
    "BAR_DAYS",
    "BAND_FILL",
    "INNER_FILL",
    "TORNADO_TOP",
    "band_chart",
    "ensemble_of",
    "exceedance_chart",
    "peak_date_chart",
    "tornado_chart",
    "weekly_peak_shares",
]

BAND_FILL = "#A6D2F0"
"""Outer band of the fan charts (9 in 10 futures)."""

INNER_FILL = "#5DA8DC"
"""Inner band of the fan charts (the middle half of the futures), darker than the outer."""


def ensemble_of(uncertainty: UncertaintyResults, name: str) -> EnsembleResult | None:
    """The ensemble of a scenario with its measures, or None when it has none."""
    item = scenario_ensemble(uncertainty, name)
    return None if item is None else item.with_interventions


def band_chart(
    views: Sequence[ScenarioView],
    uncertainty: UncertaintyResults,
    window: tuple[dt.date, dt.date],
    page_size: PageSize,
) -> Chart:
    """Ward and ICU demand with their uncertainty bands, one row of panels per scenario.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.
    uncertainty : prepkit.uncertainty.results.UncertaintyResults
        The ensemble.
    window : tuple of datetime.date
        Dates shown (:func:`prepkit.report.charts_windows.ensemble_window`).
    page_size : {"A4", "Letter"}
        Paper size of the pack.

    Returns
    -------
    Chart
        A fan: the median line, the middle half of the draws (25th to 75th
        percentile, when reported) inside the low-to-high percentile band
        (with measures), against the available beds.
    """
    q_low, q_mid, q_high = band_columns(uncertainty.quantiles)
    low_pct = round(100 * min(uncertainty.quantiles))
    high_pct = round(100 * max(uncertainty.quantiles))
    inner = inner_band_columns(uncertainty.quantiles)
    inner_pct = tuple(round(100 * q) for q in FAN_QUANTILES)
    shown = with_ensembles(views, uncertainty)

    def draw(fig: Figure) -> None:
        axes = np.atleast_2d(fig.subplots(len(shown), 2, sharex=True, squeeze=False))
        for row, (view, result) in enumerate(shown):
            daily = window_slice(result.daily, window)
            x = daily.index.to_numpy()
            for col, (kind, title) in enumerate((("ward", "Ward"), ("icu", "ICU"))):
                ax = axes[row, col]
                ax.fill_between(
                    x, daily[f"{kind}_demand_beds_{q_low}"], daily[f"{kind}_demand_beds_{q_high}"],
                    color=BAND_FILL, alpha=0.8, linewidth=0,
                    label=f"{low_pct}th to {high_pct}th percentile",
                )
                if inner is not None:
                    ax.fill_between(
                        x, daily[f"{kind}_demand_beds_{inner[0]}"],
                        daily[f"{kind}_demand_beds_{inner[1]}"],
                        color=INNER_FILL, alpha=0.75, linewidth=0,
                        label=f"{inner_pct[0]}th to {inner_pct[1]}th percentile",
                    )
                plot_series(ax, x, daily[f"{kind}_demand_beds_{q_mid}"].to_numpy(), 0,
                             "Median", linewidth=1.8, zorder=3)
                ax.plot(x, daily[f"{kind}_available_beds"].to_numpy(), color=CSS_COLORS["ink"],
                        linewidth=1.1, marker="none", linestyle="solid", label="Available beds")
                ax.set_title(f"{wrap_label(view.name, 34)}: {title}" if col == 0 else title,
                             loc="left", fontsize=8.5, fontweight="bold")
                beds_axis(ax)
                fit_limits([ax], "y")
                date_axis(ax, window)
                ax.tick_params(labelsize=7.5)
            axes[row, 0].set_ylabel("Beds", fontsize=8)
        handles, labels = axes[0, 0].get_legend_handles_labels()
        fig.legend(handles, labels, loc="outside lower center", ncols=len(labels), fontsize=8)

    width, _ = figure_size(page_size)
    height = min(8.6, 0.8 + 1.75 * len(shown))
    images = render_chart(draw, size=(width, chart_height(page_size, height)))
    return make_chart("uncertainty-bands", bands_words(views, uncertainty), images)


def exceedance_chart(
    views: Sequence[ScenarioView],
    uncertainty: UncertaintyResults,
    window: tuple[dt.date, dt.date],
    page_size: PageSize,
) -> Chart:
    """Daily chance that demand exceeds the available beds, one line per scenario.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.
    uncertainty : prepkit.uncertainty.results.UncertaintyResults
        The ensemble.
    window : tuple of datetime.date
        Dates shown (:func:`prepkit.report.charts_windows.exceedance_window`).
    page_size : {"A4", "Letter"}
        Paper size of the pack.

    Returns
    -------
    Chart
        Two panels (ward, ICU), share of draws over capacity each day [%].
    """

    def draw(fig: Figure) -> None:
        axes = fig.subplots(1, 2, sharey=True)
        for ax, (column, title) in zip(
            axes,
            (("ward_exceedance_probability", "Ward beds"),
             ("icu_exceedance_probability", "ICU beds")),
            strict=True,
        ):
            for i, view in enumerate(views):
                result = ensemble_of(uncertainty, view.name)
                if result is None:
                    continue
                series = window_slice(result.exceedance, window)[column]
                plot_series(ax, series.index.to_numpy(), 100.0 * series.to_numpy(), i,
                             wrap_label(view.name, 40))
            ax.axhline(50, color=CSS_COLORS["muted"], linewidth=0.8, linestyle=(0, (4, 3)))
            ax.set_title(title, loc="left", fontweight="bold")
            ax.set_ylim(0, 102)
            ax.yaxis.set_major_formatter(matplotlib.ticker.FuncFormatter(lambda v, _p: f"{v:g}%"))
            date_axis(ax, window)
        axes[0].set_ylabel("Futures with beds short [%]")
        handles, labels = axes[0].get_legend_handles_labels()
        fig.legend(handles, labels, loc="outside lower center", ncols=2, fontsize=8.5)

    width, _ = figure_size(page_size)
    height = width * 0.36 + 0.25 * math.ceil(len(views) / 2)
    images = render_chart(draw, size=(width, chart_height(page_size, height)))
    return make_chart("uncertainty-exceedance", exceedance_words(views, uncertainty), images)


#: Width of a week's bar on the peak-date chart [days]; a gap of a day parts the weeks.
BAR_DAYS = 6.0


def weekly_peak_shares(result: EnsembleResult) -> pd.Series:
    """Share of futures whose ICU demand peaks in each week, for the weeks holding a peak.

    Parameters
    ----------
    result : prepkit.uncertainty.results.EnsembleResult
        One scenario's ensemble.

    Returns
    -------
    pandas.Series
        Share of draws [fraction], indexed by the first day of each week
        (weeks counted from day 0); weeks without a peak are left out.
    """
    counts = result.peak_date_histogram["icu_demand_peak_draws_count"]
    total = float(counts.sum())
    if total <= 0:
        return pd.Series(dtype=np.float64)
    weekly = counts.resample("7D").sum()
    return (weekly[weekly > 0] / total).astype(np.float64)


def peak_date_chart(
    views: Sequence[ScenarioView],
    uncertainty: UncertaintyResults,
    window: tuple[dt.date, dt.date],
    page_size: PageSize,
) -> Chart:
    """When ICU demand peaks across the plausible futures: weekly counts per scenario.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.
    uncertainty : prepkit.uncertainty.results.UncertaintyResults
        The ensemble.
    window : tuple of datetime.date
        Dates shown (:func:`prepkit.report.charts_windows.ensemble_window`).
    page_size : {"A4", "Letter"}
        Paper size of the pack.

    Returns
    -------
    Chart
        One strip per scenario: share of futures whose ICU peak falls in
        each week, and the median peak date.
    """
    shown = with_ensembles(views, uncertainty)
    _, q_mid, _ = band_columns(uncertainty.quantiles)

    def draw(fig: Figure) -> None:
        axes = np.atleast_1d(fig.subplots(len(shown), 1, sharex=True, squeeze=False)).ravel()
        for i, (ax, (view, result)) in enumerate(zip(axes, shown, strict=True)):
            weekly = weekly_peak_shares(result)
            style = series_style(i)
            if len(weekly):
                ax.bar(weekly.index.to_numpy(), 100.0 * weekly.to_numpy(), width=BAR_DAYS,
                       align="edge", color=style.color, edgecolor=CSS_COLORS["ink"],
                       linewidth=0.4)
                median = as_date(result.peak_dates.loc["icu_demand", q_mid])
                if median is not None:
                    ax.axvline(mdates.date2num(median), color=CSS_COLORS["ink"], linewidth=1.2,
                               linestyle=(0, (4, 2)))
            ax.set_title(wrap_label(view.name, 70), loc="left", fontsize=8.5, fontweight="bold")
            ax.set_ylabel("%", fontsize=8)
            fit_limits([ax], "y")
            ax.tick_params(labelsize=7.5)
            date_axis(ax, window)

    width, _ = figure_size(page_size)
    images = render_chart(draw, size=(width, chart_height(page_size, 0.6 + 0.8 * len(shown))))
    return make_chart("uncertainty-peak-dates", peak_dates_words(views, uncertainty), images)


#: Inputs shown on the sensitivity chart.
TORNADO_TOP = 8


def tornado_chart(
    name: str, result: EnsembleResult, page_size: PageSize, top: int = TORNADO_TOP
) -> Chart:
    """How the ICU peak of one scenario moves with each uncertain input (tornado chart).

    Parameters
    ----------
    name : str
        Scenario name.
    result : prepkit.uncertainty.results.EnsembleResult
        Its ensemble with measures.
    page_size : {"A4", "Letter"}
        Paper size of the pack.
    top : int, optional
        Inputs shown, largest effect first.

    Returns
    -------
    Chart
        For each input, bars from the peak at the most likely values to the
        peak with the input at the low end (light) and at the high end
        (dark).
    """
    table = result.tornado_peak_icu
    rows = table[table["swing_beds"] > 0.0].head(top)
    if rows.empty:
        rows = table.head(top)

    def draw(fig: Figure) -> None:
        ax = fig.subplots()
        y = np.arange(len(rows), dtype=np.float64)
        base = float(rows["peak_icu_demand_baseline_beds"].iloc[0]) if len(rows) else 0.0
        low = rows["peak_icu_demand_at_low_beds"].to_numpy(dtype=np.float64)
        high = rows["peak_icu_demand_at_high_beds"].to_numpy(dtype=np.float64)
        ax.barh(y - 0.19, low - base, left=base, height=0.36, color="white",
                edgecolor=CSS_COLORS["ink"], linewidth=0.8, label="Input at the low end")
        ax.barh(y + 0.19, high - base, left=base, height=0.36, color=WITH_STYLE.color,
                label="Input at the high end")
        ax.axvline(base, color=CSS_COLORS["ink"], linewidth=1.0)
        for yy, value in zip(y - 0.19, low, strict=True):
            ax.text(value, yy, f" {format_number(value)} ", va="center", fontsize=7.5,
                    ha="left" if value >= base else "right")
        for yy, value in zip(y + 0.19, high, strict=True):
            ax.text(value, yy, f" {format_number(value)} ", va="center", fontsize=7.5,
                    ha="left" if value >= base else "right")
        ax.set_yticks(y, [wrap_label(str(label), 30) for label in rows["label"]], fontsize=8)
        ax.invert_yaxis()
        ax.grid(False, axis="y")
        ax.tick_params(axis="y", length=0)
        spread = max(float(np.max(np.abs(np.r_[low, high] - base))) if len(rows) else 1.0, 1.0)
        ax.set_xlim(max(0.0, base - 1.35 * spread), base + 1.35 * spread)
        ax.set_xlabel("Peak ICU demand [beds]")
        fig.legend(loc="outside lower center", ncols=2, fontsize=8.5)

    width, _ = figure_size(page_size)
    height = 1.0 + 0.36 * max(len(rows), 1)
    images = render_chart(draw, size=(width, chart_height(page_size, height)))
    return make_chart("uncertainty-tornado", tornado_words(name, rows), images)


