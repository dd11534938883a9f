"""The pack's charts, drawn with matplotlib in the style of :mod:`prepkit.report.style`.

Each chart is returned as a :class:`Chart`: SVG for the PDF and the HTML
page (vector, so it prints sharply), PNG for slides, an alternate text
written from the data (by the functions of :mod:`prepkit.report.context`)
and a caption.

Charts are drawn on :class:`matplotlib.figure.Figure` objects with the Agg
canvas directly, never through ``pyplot``: no global figure registry, no
GUI backend, nothing to close, and safe to call from any thread.

Every series has a colour from the Okabe-Ito palette *and* a dash pattern
*and* a marker, so the charts read in black and white. weasyprint does not
draw SVG hatch patterns, so areas are told apart by lightness and outline
instead.
"""

from __future__ import annotations

import base64
import datetime as dt
import math
import textwrap
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any, Literal

import matplotlib
import matplotlib.dates as mdates
import numpy as np
import pandas as pd
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure
from matplotlib.patches import Patch

from prepkit.plan import Plan
from prepkit.report import context as words
from prepkit.report.style import (
    CSS_COLORS,
    OKABE_ITO,
    PageSize,
    chart_rcparams,
    figure_bytes,
    figure_size,
    series_style,
)

if TYPE_CHECKING:
    from matplotlib.axes import Axes

__all__ = [
    "PNG_DPI",
    "Chart",
    "absence_chart",
    "admissions_chart",
    "chart_jobs",
    "chart_window",
    "demand_chart",
    "band_chart",
    "draw_charts",
    "draw_uncertainty_charts",
    "exceedance_chart",
    "exceedance_window",
    "peak_date_chart",
    "tornado_chart",
    "uncertainty_chart_jobs",
    "gap_chart",
    "gap_window",
    "outcomes_chart",
    "render_chart",
]

#: Resolution of the PNG copies [dots per inch]: the PDF embeds them, so high
#: enough to print sharply; small enough to keep files and drawing time modest.
PNG_DPI = 200

#: Fill of days on which beds run short (light) and still short with surge (dark).
SHORT_FILL = "#F5C9AA"
STILL_SHORT_FILL = OKABE_ITO["vermillion"]

WITH_STYLE = series_style(0)
WITHOUT_STYLE = series_style(1)

#: Days shown after the last busy day (and after every peak), and what counts
#: as busy: demand of at least this share of the scenario's largest peak.
#: Importations keep a long, low tail going that would otherwise squeeze the
#: wave into a corner of each chart.
_TAIL_DAYS = 28
_BUSY_SHARE = 0.03


@dataclass(frozen=True, kw_only=True)
class Chart:
    """One drawn chart.

    Parameters
    ----------
    name : str
        File stem, e.g. ``"demand-1"``; the pack writes
        ``charts/<name>.svg`` and ``.png``.
    title : str
        Short title.
    caption : str
        Caption printed below the chart.
    alt : str
        Alternate text for readers who cannot see it, written from the data.
    svg : bytes
        The chart as SVG (text as paths), for the HTML page and print work.
    png : bytes
        The chart as PNG at :data:`PNG_DPI`, for the PDF and slides.
    """

    name: str
    title: str
    caption: str
    alt: str
    svg: bytes
    png: bytes

    def data_uri(self, fmt: Literal["svg", "png"] = "svg") -> str:
        """The chart as a ``data:`` URI for embedding in HTML.

        Parameters
        ----------
        fmt : {"svg", "png"}
            Which copy.

        Returns
        -------
        str
            ``data:image/svg+xml;base64,...`` or ``data:image/png;base64,...``.
        """
        media = "image/svg+xml" if fmt == "svg" else "image/png"
        body = self.svg if fmt == "svg" else self.png
        return f"data:{media};base64,{base64.b64encode(body).decode('ascii')}"


# ---- Shared helpers ------------------------------------------------------------------------------


def render_chart(
    draw: Callable[[Figure], None],
    *,
    size: tuple[float, float],
) -> tuple[bytes, bytes]:
    """Draw a figure and save it as SVG and PNG.

    Parameters
    ----------
    draw : callable
        Called with a fresh figure (constrained layout) to draw on.
    size : tuple of float
        Figure size [inches].

    Returns
    -------
    tuple of bytes
        SVG and PNG bytes, both reproducible.
    """
    settings: Any = chart_rcparams()
    with matplotlib.rc_context(settings):
        fig = Figure(figsize=size, layout="constrained", facecolor="white")
        FigureCanvasAgg(fig)
        draw(fig)
        # Lay out once, then freeze: each save would otherwise redo the
        # constrained layout, the slowest step of drawing a chart.
        engine = fig.get_layout_engine()
        if engine is not None:
            engine.execute(fig)
            fig.set_layout_engine("none")
        svg = figure_bytes(fig, "svg")
        with matplotlib.rc_context({"savefig.dpi": PNG_DPI}):
            png = figure_bytes(fig, "png")
    return svg, png


def chart_window(views: Sequence[words.ScenarioView]) -> tuple[dt.date, dt.date]:
    """Dates shown on the time axes: day 0 to four weeks after demand ends.

    Charts comparing scenarios share the window of all of them; a
    scenario's own chart uses its own window, so a short wave is not
    squeezed into a corner.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.

    Returns
    -------
    tuple of datetime.date
        First and last day shown (never after the last simulated day).
    """
    first: dt.date | None = None
    last: dt.date | None = None
    end_of_run: dt.date | None = None
    columns = ("ward_demand_beds", "icu_demand_beds")
    for view in views:
        runs = [
            run.daily
            for run in (view.item.with_interventions, view.item.without_interventions)
            if not run.daily.empty
        ]
        tops = {c: max((float(d[c].max()) for d in runs), default=0.0) for c in columns}
        for daily in runs:
            dates = daily.index
            first = min(first, _day(dates[0])) if first else _day(dates[0])
            end_of_run = max(end_of_run, _day(dates[-1])) if end_of_run else _day(dates[-1])
            for column in columns:
                series = daily[column].to_numpy(dtype=np.float64)
                if tops[column] <= 0.0 or float(series.max()) <= 0.0:
                    continue
                peak_day = _day(dates[int(np.argmax(series))]) + dt.timedelta(days=_TAIL_DAYS)
                busy = np.nonzero(series >= _BUSY_SHARE * tops[column])[0]
                candidate = (
                    max(peak_day, _day(dates[int(busy[-1])]) + dt.timedelta(days=_TAIL_DAYS))
                    if busy.size
                    else peak_day
                )
                last = max(last, candidate) if last else candidate
    if first is None or end_of_run is None:
        today = dt.date(2000, 1, 1)
        return today, today
    if last is None:
        return first, end_of_run
    return first, min(end_of_run, last)


def _day(stamp: Any) -> dt.date:
    return pd.Timestamp(stamp).date()


def _window_slice(daily: pd.DataFrame, window: tuple[dt.date, dt.date]) -> pd.DataFrame:
    start, end = (pd.Timestamp(day) for day in window)
    return daily.loc[(daily.index >= start) & (daily.index <= end)]


def _month_starts(start: dt.date, end: dt.date) -> list[dt.date]:
    first = dt.date(start.year, start.month, 1)
    if first < start:
        first = dt.date(first.year + (first.month == 12), first.month % 12 + 1, 1)
    out = []
    day = first
    while day <= end:
        out.append(day)
        day = dt.date(day.year + (day.month == 12), day.month % 12 + 1, 1)
    return out


def _date_axis(ax: Axes, window: tuple[dt.date, dt.date]) -> None:
    """Month ticks (every 1, 2 or 3 months), the year under the first and each January.

    The ticks are computed here once rather than by matplotlib's date
    locators, which recompute them with ``dateutil`` rules at every draw.
    """
    start, end = window
    months = _month_starts(start, end)
    step = 1 if len(months) <= 9 else (2 if len(months) <= 18 else 3)
    major = [m for m in months if (m.month - 1) % step == 0] or months[:1]
    labels = []
    for i, day in enumerate(major):
        name = words.format_date(day, year=False).split(" ", 1)[1]
        labels.append(f"{name}\n{day.year}" if i == 0 or day.month == 1 else name)
    ax.xaxis.set_major_locator(matplotlib.ticker.FixedLocator(mdates.date2num(major)))
    ax.xaxis.set_major_formatter(matplotlib.ticker.FixedFormatter(labels))
    ax.xaxis.set_minor_locator(matplotlib.ticker.FixedLocator(mdates.date2num(months)))
    ax.set_xlim(mdates.date2num(start), mdates.date2num(end))


def _marks(length: int, index: int, count: int = 10) -> tuple[int, int]:
    """``markevery`` giving about ``count`` markers, offset per series."""
    step = max(1, length // count)
    return (min(step - 1, (index * step) // 3), step)


def _wrap(text: str, width: int) -> str:
    return "\n".join(textwrap.wrap(text, width=width, max_lines=2, placeholder="...")) or text


def _plot_series(
    ax: Axes,
    x: Any,
    y: Any,
    style_index: int,
    label: str,
    *,
    linewidth: float = 1.6,
    zorder: float = 2.0,
) -> None:
    style = series_style(style_index)
    ax.plot(
        x, y, label=label, linewidth=linewidth, markevery=_marks(len(y), style_index),
        zorder=zorder, **style.plot_kwargs(),
    )


def _beds_axis(ax: Axes) -> None:
    ax.set_ylim(bottom=0)
    ax.yaxis.set_major_formatter(matplotlib.ticker.FuncFormatter(_tick_number))


def _tick_number(value: float, _pos: int) -> str:
    if abs(value) >= 1000:
        return f"{value:,.0f}"
    return f"{value:g}"


# ---- Bed demand, one chart per scenario ----------------------------------------------------------


def demand_chart(
    plan: Plan,
    view: words.ScenarioView,
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
        Dates shown (:func:`chart_window`).
    page_size : {"A4", "Letter"}
        Paper size of the pack.

    Returns
    -------
    Chart
        Two panels (ward above, ICU below) sharing the time axis; days with
        demand above the available beds are shaded.
    """
    with_daily = _window_slice(view.item.with_interventions.daily, window)
    without_daily = _window_slice(view.item.without_interventions.daily, window)
    has_measures = bool(view.item.scenario.interventions)
    observed = [o for o in plan.observed if window[0] <= o.date <= window[1]]

    def draw(fig: Figure) -> None:
        axes = fig.subplots(2, 1, sharex=True)
        x = with_daily.index.to_numpy()
        for ax, kind, title in (
            (axes[0], "ward", "Ward beds"),
            (axes[1], "icu", "Intensive care (ICU) beds"),
        ):
            demand = with_daily[f"{kind}_demand_beds"].to_numpy(dtype=np.float64)
            available = with_daily[f"{kind}_available_beds"].to_numpy(dtype=np.float64)
            surge = with_daily[f"{kind}_available_with_surge_beds"].to_numpy(dtype=np.float64)
            if np.any(demand > available):
                ax.fill_between(
                    x, 0, 1, where=demand > available, transform=ax.get_xaxis_transform(),
                    color=SHORT_FILL, alpha=0.7, linewidth=0, step="mid",
                    label="Days beds run short (with measures)",
                )
            _plot_series(
                ax, x, demand, 0, "Demand with measures" if has_measures else "Demand",
                linewidth=2.0, zorder=3,
            )
            if has_measures:
                _plot_series(
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
            points = [
                (o.date, o.ward_census if kind == "ward" else o.icu_census) for o in observed
            ]
            points = [(d, v) for d, v in points if v is not None]
            if points:
                ax.plot(
                    [np.datetime64(d) for d, _ in points], [v for _, v in points],
                    linestyle="none", marker="o", markersize=3.5, color=CSS_COLORS["ink"],
                    markerfacecolor="white", label="Observed patients",
                )
            ax.set_title(title, loc="left", fontweight="bold")
            ax.set_ylabel("Beds")
            _beds_axis(ax)
            _date_axis(ax, window)
        handles, labels = axes[0].get_legend_handles_labels()
        more_h, more_l = axes[1].get_legend_handles_labels()
        for h, label in zip(more_h, more_l, strict=True):
            if label not in labels:
                handles.append(h)
                labels.append(label)
        order = _legend_order(labels)
        fig.legend(
            [handles[i] for i in order], [labels[i] for i in order],
            loc="outside lower center", ncols=2, fontsize=8.5,
        )

    width, _ = figure_size(page_size)
    svg, png = render_chart(draw, size=(width, width * 0.64))
    ward = view.with_metrics.ward
    caption = (
        f"Beds needed by outbreak patients in the {view.name} scenario. Shaded: days on which "
        f"demand with measures is above the available beds (beds not needed by other "
        f"patients; {words.format_number(ward.available_beds)} ward and "
        f"{words.format_number(view.with_metrics.icu.available_beds)} ICU beds)."
    )
    return Chart(
        name=f"demand-scenario-{view.number}",
        title=f"Bed demand: {view.name}",
        caption=caption,
        alt=words.demand_alt(view, observed_days=len(observed)),
        svg=svg,
        png=png,
    )


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
    views: Sequence[words.ScenarioView],
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
    rows: list[tuple[str, str, pd.Series, pd.Series, pd.Series, int, int]] = []
    for view in views:
        daily = _window_slice(view.item.with_interventions.daily, window)
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

    def spans(demand: pd.Series, available: pd.Series) -> list[tuple[float, float]]:
        return [
            (float(mdates.date2num(p.start)) - 0.5, float(p.days))
            for p in words.periods_over(demand, available)
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
                ax.text(0.0, y + 0.75, _wrap(name, 70), transform=ax.get_yaxis_transform(),
                        va="bottom", ha="left", fontsize=8.5, fontweight="bold",
                        color=CSS_COLORS["ink"])
            ax.axhline(y, color="#E6E6E6", linewidth=0.6, zorder=0)
        ax.set_yticks(y_positions, [r[1] for r in rows])
        ax.set_ylim(min(y_positions) - 0.8, max(y_positions) + 1.6)
        ax.grid(False, axis="y")
        ax.tick_params(axis="y", length=0)
        ax.spines["left"].set_visible(False)
        _date_axis(ax, window)
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
    svg, png = render_chart(draw, size=(width, height))
    return Chart(
        name="capacity-gap-timeline",
        title="When beds run short",
        caption=(
            "Days on which outbreak patients need more beds than are available, with measures, "
            "for each scenario. Numbers at the right count the days (d)."
        ),
        alt=words.gap_alt(views),
        svg=svg,
        png=png,
    )


def gap_window(
    views: Sequence[words.ScenarioView], window: tuple[dt.date, dt.date]
) -> tuple[dt.date, dt.date]:
    """Dates shown on the capacity-gap timeline: day 0 to four weeks after the last gap.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.
    window : tuple of datetime.date
        The window of the other charts, used when no scenario runs short.

    Returns
    -------
    tuple of datetime.date
        First and last day shown, inside ``window``.
    """
    ends = [p.end for v in views for p in (*v.ward_periods, *v.icu_periods)]
    if not ends:
        return window
    return window[0], min(window[1], max(ends) + dt.timedelta(days=_TAIL_DAYS))


# ---- Daily admissions, small multiples -----------------------------------------------------------


def _panel_grid(count: int) -> tuple[int, int]:
    cols = 1 if count == 1 else 2
    return math.ceil(count / cols), cols


def admissions_chart(
    plan: Plan,
    views: Sequence[words.ScenarioView],
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
        (o.date, o.admissions)
        for o in plan.observed
        if o.admissions is not None and window[0] <= o.date <= window[1]
    ]

    def draw(fig: Figure) -> None:
        axes = np.atleast_1d(fig.subplots(rows, cols, sharex=True, sharey=True, squeeze=False))
        flat = axes.ravel()
        for ax, view in zip(flat, views, strict=False):
            with_daily = _window_slice(view.item.with_interventions.daily, window)
            x = with_daily.index.to_numpy()
            _plot_series(ax, x, with_daily["admissions_per_day"].to_numpy(), 0,
                         "With measures", linewidth=1.8, zorder=3)
            if view.item.scenario.interventions:
                without = _window_slice(view.item.without_interventions.daily, window)
                _plot_series(ax, x, without["admissions_per_day"].to_numpy(), 1,
                             "Without measures")
            if observed:
                ax.plot([np.datetime64(d) for d, _ in observed], [v for _, v in observed],
                        linestyle="none", marker="o", markersize=3, color=CSS_COLORS["ink"],
                        markerfacecolor="white", label="Observed admissions")
            ax.set_title(_wrap(view.name, 42), loc="left", fontsize=9, fontweight="bold")
            _beds_axis(ax)
            _date_axis(ax, window)
        for ax in flat[len(views):]:
            ax.set_visible(False)
        for ax in axes[:, 0]:
            ax.set_ylabel("Admissions per day")
        handles: list[Any] = []
        labels: list[str] = []
        for ax in flat[: len(views)]:
            for h, label in zip(*ax.get_legend_handles_labels(), strict=True):
                if label not in labels:
                    handles.append(h)
                    labels.append(label)
        fig.legend(handles, labels, loc="outside lower center", ncols=3, fontsize=8.5)

    width, _ = figure_size(page_size)
    height = 0.8 + 1.8 * rows
    svg, png = render_chart(draw, size=(width, height))
    return Chart(
        name="daily-admissions",
        title="Daily hospital admissions",
        caption=(
            "New hospital admissions of residents each day, with and without each scenario's "
            "measures. All panels share the same scales."
        ),
        alt=words.admissions_alt(views),
        svg=svg,
        png=png,
    )


# ---- Total outcomes ------------------------------------------------------------------------------


def outcomes_chart(views: Sequence[words.ScenarioView], page_size: PageSize) -> Chart:
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
    names = [_wrap(v.name, 20) for v in views]

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
                ax.text(value + 0.02 * top, yy, words.format_number(value), va="center",
                        fontsize=7.5)
            for yy, value in zip(y + 0.2, without_values, strict=True):
                ax.text(value + 0.02 * top, yy, words.format_number(value), va="center",
                        fontsize=7.5, color=CSS_COLORS["muted"])
            ax.set_xlim(0, top * 1.35)
            ax.set_title(title, loc="left", fontsize=9, fontweight="bold")
            ax.grid(False, axis="y")
            ax.tick_params(axis="x", labelsize=7.5)
            ax.xaxis.set_major_locator(matplotlib.ticker.MaxNLocator(3))
            ax.xaxis.set_major_formatter(matplotlib.ticker.FuncFormatter(_tick_number))
        axes[0].set_yticks(y, names)
        axes[0].invert_yaxis()
        axes[0].tick_params(axis="y", length=0)
        handles, labels = axes[0].get_legend_handles_labels()
        fig.legend(handles, labels, loc="outside lower center", ncols=2, fontsize=8.5)

    width, _ = figure_size(page_size)
    height = 1.2 + 0.55 * len(views)
    svg, png = render_chart(draw, size=(width, max(2.4, height)))
    return Chart(
        name="total-outcomes",
        title="Totals over the period",
        caption=(
            "Hospital admissions, ICU admissions and deaths among hospital patients over the "
            "whole period, by scenario, with and without measures."
        ),
        alt=words.outcomes_alt(views),
        svg=svg,
        png=png,
    )


# ---- Workforce absence ---------------------------------------------------------------------------


def absence_chart(
    views: Sequence[words.ScenarioView],
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
            daily = _window_slice(view.item.with_interventions.daily, window)
            _plot_series(ax, daily.index.to_numpy(),
                         100.0 * daily["absence_share"].to_numpy(dtype=np.float64), i,
                         _wrap(view.name, 40))
        ax.set_ylabel("Workers absent [%]")
        ax.set_ylim(bottom=0)
        ax.yaxis.set_major_formatter(matplotlib.ticker.FuncFormatter(lambda v, _p: f"{v:g}%"))
        _date_axis(ax, window)
        fig.legend(loc="outside lower center", ncols=2, fontsize=8.5)

    width, _ = figure_size(page_size)
    svg, png = render_chart(draw, size=(width, width * 0.42 + 0.25 * math.ceil(len(views) / 2)))
    return Chart(
        name="workforce-absence",
        title="Workforce absence",
        caption=(
            "Share of workers off work each day with each scenario's measures: ill workers plus "
            "workers caring for children while schools are closed."
        ),
        alt=words.absence_alt(views),
        svg=svg,
        png=png,
    )


# ---- The uncertainty ensemble --------------------------------------------------------------------

BAND_FILL = "#A6D2F0"


def _ensemble_of(uncertainty: Any, name: str) -> Any | None:
    item = words.scenario_ensemble(uncertainty, name)
    return None if item is None else item.with_interventions


def _with_ensembles(
    views: Sequence[words.ScenarioView], uncertainty: Any
) -> list[tuple[words.ScenarioView, Any]]:
    out = []
    for view in views:
        result = _ensemble_of(uncertainty, view.name)
        if result is not None:
            out.append((view, result))
    return out


def _q_columns(uncertainty: Any) -> tuple[str, str, str]:
    return words.band_columns(uncertainty.quantiles)


def band_chart(
    views: Sequence[words.ScenarioView],
    uncertainty: Any,
    window: tuple[dt.date, dt.date],
    page_size: PageSize,
) -> Chart:
    """Ward and ICU demand with their uncertainty bands, one row of panels per scenario.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.
    uncertainty : prepkit.uncertainty.UncertaintyResults
        The ensemble.
    window : tuple of datetime.date
        Dates shown.
    page_size : {"A4", "Letter"}
        Paper size of the pack.

    Returns
    -------
    Chart
        Median line and low-to-high percentile band of the draws (with
        measures), against the available beds.
    """
    q_low, q_mid, q_high = _q_columns(uncertainty)
    low_pct = round(100 * min(uncertainty.quantiles))
    high_pct = round(100 * max(uncertainty.quantiles))
    shown = _with_ensembles(views, uncertainty)

    def draw(fig: Figure) -> None:
        axes = np.atleast_2d(fig.subplots(len(shown), 2, sharex=True, squeeze=False))
        for row, (view, result) in enumerate(shown):
            daily = _window_slice(result.daily, window)
            x = daily.index.to_numpy()
            for col, (kind, title) in enumerate((("ward", "Ward"), ("icu", "ICU"))):
                ax = axes[row, col]
                ax.fill_between(
                    x, daily[f"{kind}_demand_beds_{q_low}"], daily[f"{kind}_demand_beds_{q_high}"],
                    color=BAND_FILL, alpha=0.8, linewidth=0,
                    label=f"{low_pct}th to {high_pct}th percentile",
                )
                _plot_series(ax, x, daily[f"{kind}_demand_beds_{q_mid}"].to_numpy(), 0,
                             "Median", linewidth=1.8, zorder=3)
                ax.plot(x, daily[f"{kind}_available_beds"].to_numpy(), color=CSS_COLORS["ink"],
                        linewidth=1.1, marker="none", linestyle="solid", label="Available beds")
                ax.set_title(f"{_wrap(view.name, 34)}: {title}" if col == 0 else title,
                             loc="left", fontsize=8.5, fontweight="bold")
                _beds_axis(ax)
                _date_axis(ax, window)
                ax.tick_params(labelsize=7.5)
            axes[row, 0].set_ylabel("Beds", fontsize=8)
        handles, labels = axes[0, 0].get_legend_handles_labels()
        fig.legend(handles, labels, loc="outside lower center", ncols=3, fontsize=8.5)

    width, _ = figure_size(page_size)
    height = min(8.6, 0.8 + 1.75 * len(shown))
    svg, png = render_chart(draw, size=(width, height))
    return Chart(
        name="uncertainty-bands",
        title="Bed demand across plausible futures",
        caption=(
            f"Ward (left) and ICU (right) demand with measures across "
            f"{int(uncertainty.draws):,} plausible futures per scenario: median line and the "
            f"band from the {low_pct}th to the {high_pct}th percentile. Scales differ between "
            "scenarios."
        ),
        alt=words.bands_alt(views, uncertainty),
        svg=svg,
        png=png,
    )


def exceedance_chart(
    views: Sequence[words.ScenarioView],
    uncertainty: Any,
    window: tuple[dt.date, dt.date],
    page_size: PageSize,
) -> Chart:
    """Daily chance that demand exceeds the available beds, one line per scenario.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.
    uncertainty : prepkit.uncertainty.UncertaintyResults
        The ensemble.
    window : tuple of datetime.date
        Dates shown.
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
                result = _ensemble_of(uncertainty, view.name)
                if result is None:
                    continue
                series = _window_slice(result.exceedance, window)[column]
                _plot_series(ax, series.index.to_numpy(), 100.0 * series.to_numpy(), i,
                             _wrap(view.name, 40))
            ax.axhline(50, color=CSS_COLORS["muted"], linewidth=0.8, linestyle=(0, (4, 3)))
            ax.set_title(title, loc="left", fontweight="bold")
            ax.set_ylim(0, 102)
            ax.yaxis.set_major_formatter(matplotlib.ticker.FuncFormatter(lambda v, _p: f"{v:g}%"))
            _date_axis(ax, window)
        axes[0].set_ylabel("Futures with beds short [%]")
        handles, labels = axes[0].get_legend_handles_labels()
        fig.legend(handles, labels, loc="outside lower center", ncols=2, fontsize=8.5)

    width, _ = figure_size(page_size)
    svg, png = render_chart(draw, size=(width, width * 0.36 + 0.25 * math.ceil(len(views) / 2)))
    return Chart(
        name="uncertainty-exceedance",
        title="Chance that beds run short, day by day",
        caption=(
            "Share of plausible futures in which demand with measures is above the available "
            "beds on each day. Above the dashed line it is more likely than not."
        ),
        alt=words.exceedance_alt(views, uncertainty),
        svg=svg,
        png=png,
    )


def peak_date_chart(
    views: Sequence[words.ScenarioView],
    uncertainty: Any,
    window: tuple[dt.date, dt.date],
    page_size: PageSize,
) -> Chart:
    """When ICU demand peaks across the plausible futures: weekly counts per scenario.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.
    uncertainty : prepkit.uncertainty.UncertaintyResults
        The ensemble.
    window : tuple of datetime.date
        Dates shown.
    page_size : {"A4", "Letter"}
        Paper size of the pack.

    Returns
    -------
    Chart
        One strip per scenario: share of futures whose ICU peak falls in
        each week, and the median peak date.
    """
    shown = _with_ensembles(views, uncertainty)
    _, q_mid, _ = _q_columns(uncertainty)

    def draw(fig: Figure) -> None:
        axes = np.atleast_1d(fig.subplots(len(shown), 1, sharex=True, squeeze=False)).ravel()
        for i, (ax, (view, result)) in enumerate(zip(axes, shown, strict=True)):
            counts = result.peak_date_histogram["icu_demand_peak_draws_count"]
            total = float(counts.sum())
            weekly = counts.resample("7D").sum() if total > 0 else counts.iloc[:0]
            style = series_style(i)
            if total > 0:
                ax.bar(weekly.index.to_numpy(), 100.0 * weekly.to_numpy() / total, width=6.0,
                       align="edge", color=style.color, edgecolor=CSS_COLORS["ink"],
                       linewidth=0.4)
                median = words.as_date(result.peak_dates.loc["icu_demand", q_mid])
                if median is not None:
                    ax.axvline(mdates.date2num(median), color=CSS_COLORS["ink"], linewidth=1.2,
                               linestyle=(0, (4, 2)))
            ax.set_title(_wrap(view.name, 70), loc="left", fontsize=8.5, fontweight="bold")
            ax.set_ylabel("%", fontsize=8)
            ax.set_ylim(bottom=0)
            ax.tick_params(labelsize=7.5)
            _date_axis(ax, window)

    width, _ = figure_size(page_size)
    svg, png = render_chart(draw, size=(width, 0.6 + 0.8 * len(shown)))
    return Chart(
        name="uncertainty-peak-dates",
        title="When ICU demand peaks",
        caption=(
            "Share of plausible futures whose ICU demand (with measures) peaks in each week; the "
            "dashed line marks the median peak date."
        ),
        alt=words.peak_dates_alt(views, uncertainty),
        svg=svg,
        png=png,
    )


#: Inputs shown on the sensitivity chart.
TORNADO_TOP = 8


def tornado_chart(name: str, result: Any, page_size: PageSize, top: int = TORNADO_TOP) -> Chart:
    """How the ICU peak of one scenario moves with each uncertain input (tornado chart).

    Parameters
    ----------
    name : str
        Scenario name.
    result : prepkit.uncertainty.EnsembleResult
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
            ax.text(value, yy, f" {words.format_number(value)} ", va="center", fontsize=7.5,
                    ha="left" if value >= base else "right")
        for yy, value in zip(y + 0.19, high, strict=True):
            ax.text(value, yy, f" {words.format_number(value)} ", va="center", fontsize=7.5,
                    ha="left" if value >= base else "right")
        ax.set_yticks(y, [_wrap(str(label), 30) for label in rows["label"]], fontsize=8)
        ax.invert_yaxis()
        ax.grid(False, axis="y")
        ax.tick_params(axis="y", length=0)
        spread = max(float(np.max(np.abs(np.r_[low, high] - base))) if len(rows) else 1.0, 1.0)
        ax.set_xlim(max(0.0, base - 1.35 * spread), base + 1.35 * spread)
        ax.set_xlabel("Peak ICU demand [beds]")
        fig.legend(loc="outside lower center", ncols=2, fontsize=8.5)

    width, _ = figure_size(page_size)
    svg, png = render_chart(draw, size=(width, 1.0 + 0.36 * max(len(rows), 1)))
    return Chart(
        name="uncertainty-tornado",
        title="Which inputs matter most",
        caption=(
            f"Peak ICU demand of {name}, with measures, when one input at a time is set to the "
            "low or the high end of its range and every other input to its most likely value "
            "(vertical line). Inputs given per age band move together."
        ),
        alt=words.tornado_alt(name, rows, len(rows)),
        svg=svg,
        png=png,
    )


def exceedance_window(
    views: Sequence[words.ScenarioView], uncertainty: Any, window: tuple[dt.date, dt.date]
) -> tuple[dt.date, dt.date]:
    """Dates shown on the exceedance chart: day 0 to four weeks after the last chance of a gap.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.
    uncertainty : prepkit.uncertainty.UncertaintyResults
        The ensemble.
    window : tuple of datetime.date
        The window of the other charts, used when no future runs short.

    Returns
    -------
    tuple of datetime.date
        First and last day shown, inside ``window``.
    """
    last: dt.date | None = None
    for view in views:
        result = _ensemble_of(uncertainty, view.name)
        if result is None:
            continue
        frame = result.exceedance
        busy = frame[(frame[["ward_exceedance_probability", "icu_exceedance_probability"]]
                      .max(axis=1) > 0.005)]
        if len(busy):
            day = _day(busy.index[-1])
            last = max(last, day) if last else day
    if last is None:
        return window
    return window[0], min(window[1], last + dt.timedelta(days=_TAIL_DAYS))


def uncertainty_chart_jobs(
    plan: Plan,
    views: Sequence[words.ScenarioView],
    uncertainty: Any,
    *,
    focus: str,
    page_size: PageSize | None = None,
) -> list[Callable[[], Chart]]:
    """The uncertainty charts as jobs to run, in order (see :func:`chart_jobs`).

    Parameters
    ----------
    plan : Plan
        The plan.
    views : sequence of ScenarioView
        Every scenario.
    uncertainty : prepkit.uncertainty.UncertaintyResults or None
        The ensemble; None or an empty one gives no jobs.
    focus : str
        Scenario of the sensitivity chart.
    page_size : {"A4", "Letter"}, optional
        Paper size; defaults to the plan's.

    Returns
    -------
    list of callable
        Exceedance, bands, peak dates and the tornado chart.
    """
    if uncertainty is None or not getattr(uncertainty, "scenarios", ()) or not views:
        return []
    size: PageSize = page_size or plan.details.page_size
    window = chart_window(views)
    gaps = exceedance_window(views, uncertainty, window)
    jobs: list[Callable[[], Chart]] = [
        lambda: exceedance_chart(views, uncertainty, gaps, size),
        lambda: band_chart(views, uncertainty, window, size),
        lambda: peak_date_chart(views, uncertainty, window, size),
    ]
    result = _ensemble_of(uncertainty, focus)
    if result is not None and len(result.tornado_peak_icu):
        jobs.append(lambda: tornado_chart(focus, result, size))
    return jobs


def draw_uncertainty_charts(
    plan: Plan,
    views: Sequence[words.ScenarioView],
    uncertainty: Any,
    *,
    focus: str,
    page_size: PageSize | None = None,
) -> tuple[Chart, ...]:
    """Every chart of the uncertainty section, drawn one after the other.

    Parameters
    ----------
    plan : Plan
        The plan.
    views : sequence of ScenarioView
        Every scenario.
    uncertainty : prepkit.uncertainty.UncertaintyResults or None
        The ensemble; None or an empty one gives no charts.
    focus : str
        Scenario of the sensitivity chart.
    page_size : {"A4", "Letter"}, optional
        Paper size; defaults to the plan's.

    Returns
    -------
    tuple of Chart
        Exceedance, bands, peak dates and the tornado chart.
    """
    jobs = uncertainty_chart_jobs(plan, views, uncertainty, focus=focus, page_size=page_size)
    return tuple(job() for job in jobs)


# ---- All of them ---------------------------------------------------------------------------------


def chart_jobs(
    plan: Plan,
    views: Sequence[words.ScenarioView],
    *,
    page_size: PageSize | None = None,
) -> list[Callable[[], Chart]]:
    """The deterministic charts as jobs: each call draws one chart.

    Charts are independent of each other, so a caller may run the jobs in
    parallel (:mod:`prepkit.pipeline` does, in forked worker processes);
    the bytes are the same either way.

    Parameters
    ----------
    plan : Plan
        The plan.
    views : sequence of ScenarioView
        Every scenario (:func:`prepkit.report.context.scenario_views`).
    page_size : {"A4", "Letter"}, optional
        Paper size; defaults to the plan's.

    Returns
    -------
    list of callable
        One demand chart per scenario, then the capacity-gap timeline, total
        outcomes, daily admissions and workforce absence.
    """
    size: PageSize = page_size or plan.details.page_size
    window = chart_window(views)
    jobs: list[Callable[[], Chart]] = [
        (lambda view=view: demand_chart(plan, view, chart_window([view]), size))  # type: ignore[misc]
        for view in views
    ]
    if views:
        gaps = gap_window(views, window)
        jobs += [
            lambda: gap_chart(views, gaps, size),
            lambda: outcomes_chart(views, size),
            lambda: admissions_chart(plan, views, window, size),
            lambda: absence_chart(views, window, size),
        ]
    return jobs


def draw_charts(
    plan: Plan,
    views: Sequence[words.ScenarioView],
    *,
    page_size: PageSize | None = None,
) -> tuple[Chart, ...]:
    """Every deterministic chart of the pack, drawn one after the other.

    Parameters
    ----------
    plan : Plan
        The plan.
    views : sequence of ScenarioView
        Every scenario (:func:`prepkit.report.context.scenario_views`).
    page_size : {"A4", "Letter"}, optional
        Paper size; defaults to the plan's.

    Returns
    -------
    tuple of Chart
        As listed by :func:`chart_jobs`.
    """
    return tuple(job() for job in chart_jobs(plan, views, page_size=page_size))
