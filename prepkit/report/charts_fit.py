"""The chart of the fit: observed figures against the fitted model with its 50% and 90% bands."""

from __future__ import annotations

import datetime as dt
from collections.abc import Callable
from typing import TYPE_CHECKING, Any

import matplotlib.dates as mdates
import numpy as np
from matplotlib.figure import Figure
from numpy.typing import NDArray

from prepkit.fitting.findings import FitReport
from prepkit.fitting.project import FitOutcome
from prepkit.plan import Plan
from prepkit.plan.records import admissions_per_day
from prepkit.report.charts_base import (
    Chart,
    beds_axis,
    chart_height,
    date_axis,
    legend_entries,
    make_chart,
    render_chart,
)
from prepkit.report.style import CSS_COLORS, OKABE_ITO, PageSize, figure_size
from prepkit.report.words.fit_text import fit_chart_words

if TYPE_CHECKING:
    from matplotlib.axes import Axes

__all__ = ["FIT_CHART", "fit_chart", "fit_chart_jobs"]

FIT_CHART = "fit-to-figures"
"""File stem of the chart."""

WEEKLY_TICKS_DAYS = 120
"""Windows up to this long get a date mark every Monday [days]."""

OUTER_FILL = "#CFE5F5"
INNER_FILL = "#8CC2E8"


def fit_chart_jobs(plan: Plan, fit: FitOutcome | None) -> list[Callable[[], Chart]]:
    """The fit's chart as a job (none without a fit report)."""
    if fit is None or fit.report is None:
        return []
    report = fit.report
    return [lambda: fit_chart(plan, report, plan.details.page_size)]


def _bands(ax: Axes, x: NDArray[Any], q: NDArray[np.float64], color: str, label: str) -> None:
    ax.fill_between(x, q[0], q[4], color=OUTER_FILL, linewidth=0,
                    label="90% range" if label else None)
    ax.fill_between(x, q[1], q[3], color=INNER_FILL, linewidth=0,
                    label="50% range" if label else None)
    ax.plot(x, q[2], color=color, linewidth=1.6, linestyle="-", marker="",
            label=f"Fitted model, median{label}")


def fit_chart(plan: Plan, report: FitReport, page_size: PageSize) -> Chart:
    """Observed admissions and patients in beds against the fitted model.

    Parameters
    ----------
    plan : Plan
        The plan (day 0, the observed figures and how they are kept).
    report : FitReport
        The fit.
    page_size : {"A4", "Letter"}
        Paper size of the pack.

    Returns
    -------
    Chart
        Two panels: new admissions a day, and ward and ICU patients.
    """
    day0 = plan.details.day0
    x = np.array([np.datetime64(day0 + dt.timedelta(days=int(d))) for d in report.days])
    first = min(o.date for o in plan.observed)
    window = (min(first, day0 + dt.timedelta(days=int(report.days[-1]) - 6)), report.as_of)
    admitted = admissions_per_day(plan.observed, plan.details.observed_period)
    ward = [(o.date, o.ward_census) for o in plan.observed if o.ward_census is not None]
    icu = [(o.date, o.icu_census) for o in plan.observed if o.icu_census is not None]
    weekly = plan.details.observed_period == "weekly"

    def dots(ax: Axes, points: list[tuple[dt.date, float]], label: str, marker: str) -> None:
        if points:
            ax.plot([np.datetime64(d) for d, _ in points], [v for _, v in points],
                    linestyle="none", marker=marker, markersize=3.5, color=CSS_COLORS["ink"],
                    markerfacecolor="white", label=label, zorder=4)

    def draw(fig: Figure) -> None:
        left, right = fig.subplots(1, 2, sharex=True)
        _bands(left, x, report.bands["admissions"], OKABE_ITO["blue"], "")
        dots(left, [(d, v) for d, v in admitted],
             "Observed, weekly mean" if weekly else "Observed", "o")
        left.set_title("New admissions a day", loc="left", fontsize=9, fontweight="bold")
        _bands(right, x, report.bands["ward"], OKABE_ITO["blue"], " (ward)")
        _bands(right, x, report.bands["icu"], OKABE_ITO["vermillion"], " (ICU)")
        dots(right, ward, "Observed ward patients", "o")
        dots(right, icu, "Observed ICU patients", "s")
        right.set_title("Patients in beds", loc="left", fontsize=9, fontweight="bold")
        for ax in (left, right):
            beds_axis(ax)
            date_axis(ax, window)
            ax.set_xlim(np.datetime64(window[0]), np.datetime64(window[1]))
            if (window[1] - window[0]).days <= WEEKLY_TICKS_DAYS:
                ax.xaxis.set_major_locator(mdates.WeekdayLocator(byweekday=mdates.MO))
                ax.xaxis.set_major_formatter(mdates.DateFormatter("%-d %b"))
            ax.set_ylim(bottom=0)
        handles, labels = legend_entries((left, right))
        fig.legend(handles, labels, loc="outside lower center", ncols=3, fontsize=8)

    width, _ = figure_size(page_size)
    images = render_chart(draw, size=(width, chart_height(page_size, 3.4)))
    return make_chart(FIT_CHART, fit_chart_words(plan, report), images)
