"""Bed charts: demand against beds for one scenario, and when beds run short in each."""

from __future__ import annotations

import datetime as dt
from collections.abc import Sequence

import matplotlib.dates as mdates
import numpy as np
import pandas as pd
from matplotlib.axes import Axes
from matplotlib.figure import Figure
from matplotlib.patches import Patch

from prepkit.plan import Observation, Plan
from prepkit.report.charts_base import (
    SHORT_FILL,
    STILL_SHORT_FILL,
    Chart,
    beds_axis,
    chart_height,
    date_axis,
    legend_entries,
    make_chart,
    plot_series,
    render_chart,
    window_slice,
    wrap_label,
)
from prepkit.report.charts_limits import fit_limits
from prepkit.report.style import CSS_COLORS, PageSize, figure_size
from prepkit.report.words.chart_words import demand_words, gap_words
from prepkit.report.words.formatting import periods_over
from prepkit.report.words.views import ScenarioView

__all__ = ["demand_chart", "gap_chart"]

# ---- Bed demand, one chart per scenario ----------------------------------------------------------


def demand_chart(
    plan: Plan,
    view: ScenarioView,
    window: tuple[dt.date, dt.date],
    page_size: PageSize,
) -> Chart:
    """Ward and ICU demand against available and surge beds for one scenario.

    Parameters
    ----------
    plan : Plan
        The plan (observed figures).
    view : ScenarioView
        The scenario.
    window : tuple of datetime.date
        Dates shown (:func:`prepkit.report.charts_windows.chart_window`).
    page_size : {"A4", "Letter"}
        Paper size of the pack.

    Returns
    -------
    Chart
        Two panels (ward above, ICU below) sharing the time axis; days with
        demand above the available beds are shaded.
    """
    with_daily = window_slice(view.item.with_interventions.daily, window)
    without_daily = window_slice(view.item.without_interventions.daily, window)
    has_measures = bool(view.item.scenario.interventions)
    observed = [o for o in plan.observed if window[0] <= o.date <= window[1]]

    def draw(fig: Figure) -> None:
        axes = fig.subplots(2, 1, sharex=True)
        for ax, kind, title in (
            (axes[0], "ward", "Ward beds"),
            (axes[1], "icu", "Intensive care (ICU) beds"),
        ):
            _demand_panel(ax, kind, title, with_daily, without_daily, observed, window,
                          has_measures=has_measures)
        handles, labels = legend_entries(axes)
        order = _legend_order(labels)
        fig.legend(
            [handles[i] for i in order], [labels[i] for i in order],
            loc="outside lower center", ncols=2, fontsize=8.5,
        )

    width, _ = figure_size(page_size)
    images = render_chart(draw, size=(width, chart_height(page_size, width * 0.6)))
    words = demand_words(view, observed_days=len(observed))
    return make_chart(f"demand-scenario-{view.number}", words, images)


def _demand_panel(
    ax: Axes,
    kind: str,
    title: str,
    with_daily: pd.DataFrame,
    without_daily: pd.DataFrame,
    observed: Sequence[Observation],
    window: tuple[dt.date, dt.date],
    *,
    has_measures: bool,
) -> None:
    """One panel of :func:`demand_chart`: demand of one bed type against its beds."""
    x = with_daily.index.to_numpy()
    demand = with_daily[f"{kind}_demand_beds"].to_numpy(dtype=np.float64)
    available = with_daily[f"{kind}_available_beds"].to_numpy(dtype=np.float64)
    surge = with_daily[f"{kind}_available_with_surge_beds"].to_numpy(dtype=np.float64)
    if np.any(demand > available):
        ax.fill_between(
            x, 0, 1, where=demand > available, transform=ax.get_xaxis_transform(),
            color=SHORT_FILL, alpha=0.7, linewidth=0, step="mid",
            label="Days beds run short (with measures)",
        )
    plot_series(
        ax, x, demand, 0, "Demand with measures" if has_measures else "Demand",
        linewidth=2.0, zorder=3,
    )
    if has_measures:
        plot_series(
            ax, x, without_daily[f"{kind}_demand_beds"].to_numpy(dtype=np.float64), 1,
            "Demand without measures",
        )
    ax.plot(x, available, color=CSS_COLORS["ink"], linewidth=1.2, marker="none",
            linestyle="solid", label="Available beds")
    if np.any(surge > available + 1e-9):
        opened = np.where(surge > available + 1e-9, surge, np.nan)
        first_open = int(np.argmax(surge > available + 1e-9))
        if first_open > 0:
            opened[first_open - 1] = available[first_open - 1]
        ax.plot(
            x, opened, color=CSS_COLORS["muted"], linewidth=1.4, marker="none",
            linestyle=(0, (1.2, 1.6)), label="Available beds with surge beds open",
        )
    census = [
        (o.date, o.ward_census if kind == "ward" else o.icu_census) for o in observed
    ]
    points = [(d, v) for d, v in census if v is not None]
    if points:
        ax.plot(
            [np.datetime64(d) for d, _ in points], [v for _, v in points],
            linestyle="none", marker="o", markersize=3.5, color=CSS_COLORS["ink"],
            markerfacecolor="white", label="Observed patients",
        )
    ax.set_title(title, loc="left", fontweight="bold")
    ax.set_ylabel("Beds")
    beds_axis(ax)
    fit_limits([ax], "y")
    date_axis(ax, window)


_LEGEND_RANK = (
    "Demand with measures",
    "Demand",
    "Demand without measures",
    "Available beds",
    "Available beds with surge beds open",
    "Days beds run short (with measures)",
    "Observed patients",
)


def _legend_order(labels: Sequence[str]) -> list[int]:
    def rank(i: int) -> int:
        label = labels[i]
        return _LEGEND_RANK.index(label) if label in _LEGEND_RANK else len(_LEGEND_RANK)

    return sorted(range(len(labels)), key=rank)


# ---- Capacity-gap timeline -----------------------------------------------------------------------


def gap_chart(
    views: Sequence[ScenarioView],
    window: tuple[dt.date, dt.date],
    page_size: PageSize,
) -> Chart:
    """Days short of beds, one strip per scenario and bed type (with measures).

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
        Light bars: days demand exceeds the available beds; dark bars: days
        still short once surge beds are open. The number of days is written
        at the right of each strip.
    """
    rows = _gap_rows(views, window)

    def spans(demand: pd.Series, available: pd.Series) -> list[tuple[float, float]]:
        return [
            (float(mdates.date2num(p.start)) - 0.5, float(p.days))
            for p in periods_over(demand, available)
        ]

    def draw(fig: Figure) -> None:
        ax = fig.subplots()
        step = 1.0
        y_positions = []
        for i, (name, _kind, demand, available, surge, days, days_surge) in enumerate(rows):
            block = i // 2
            y = -(block * 3.0 * step + (i % 2) * step)
            y_positions.append(y)
            ax.broken_barh(spans(demand, available), (y - 0.38, 0.76), facecolors=SHORT_FILL,
                           edgecolor=STILL_SHORT_FILL, linewidth=0.4)
            ax.broken_barh(spans(demand, surge), (y - 0.38, 0.76), facecolors=STILL_SHORT_FILL,
                           linewidth=0)
            label = f"{days:,} d" if days else "none"
            if days and days_surge != days:
                label += f" ({days_surge:,} with surge)"
            ax.text(1.01, y, label, transform=ax.get_yaxis_transform(), va="center",
                    fontsize=8, color=CSS_COLORS["ink"])
            if i % 2 == 0:
                ax.text(0.0, y + 0.75, wrap_label(name, 70), transform=ax.get_yaxis_transform(),
                        va="bottom", ha="left", fontsize=8.5, fontweight="bold",
                        color=CSS_COLORS["ink"])
            ax.axhline(y, color="#E6E6E6", linewidth=0.6, zorder=0)
        ax.set_yticks(y_positions, [r[1] for r in rows])
        ax.set_ylim(min(y_positions) - 0.8, max(y_positions) + 1.6)
        ax.grid(False, axis="y")
        ax.tick_params(axis="y", length=0)
        ax.spines["left"].set_visible(False)
        date_axis(ax, window)
        fig.legend(
            handles=[
                Patch(facecolor=SHORT_FILL, edgecolor=STILL_SHORT_FILL, linewidth=0.4,
                      label="Demand above the available beds"),
                Patch(facecolor=STILL_SHORT_FILL, label="Still above with surge beds open"),
            ],
            loc="outside lower center", ncols=2, fontsize=8.5,
        )

    width, _ = figure_size(page_size)
    height = min(7.5, 0.9 + 0.34 * len(rows) + 0.22 * len(views))
    images = render_chart(draw, size=(width, chart_height(page_size, height)))
    return make_chart("capacity-gap-timeline", gap_words(views), images)


_GapRow = tuple[str, str, pd.Series, pd.Series, pd.Series, int, int]


def _gap_rows(views: Sequence[ScenarioView], window: tuple[dt.date, dt.date]) -> list[_GapRow]:
    """The strips of :func:`gap_chart`, one per scenario and bed type.

    Each is (scenario, bed type, demand, available beds, beds with surge,
    days short, days short with surge).
    """
    rows: list[_GapRow] = []
    for view in views:
        daily = window_slice(view.item.with_interventions.daily, window)
        m = view.with_metrics
        for kind, bed in (("ward", m.ward), ("icu", m.icu)):
            rows.append(
                (
                    view.name,
                    "Ward" if kind == "ward" else "ICU",
                    daily[f"{kind}_demand_beds"],
                    daily[f"{kind}_available_beds"],
                    daily[f"{kind}_available_with_surge_beds"],
                    bed.days_over_capacity_days,
                    bed.days_over_capacity_with_surge_days,
                )
            )
    return rows
