"""The pack's charts, drawn with matplotlib in the style of :mod:`prepkit.report.style`.

Each chart is returned as a :class:`Chart`: SVG for the PDF and the HTML
page (vector, so it prints sharply), PNG for slides, an alternate text
written from the data (by the functions of :mod:`prepkit.report.words`)
and a caption.

The charts are drawn in six modules; this one lists them as jobs, in the
order of the pack, and is the one to import:

* :mod:`prepkit.report.charts_base`: the drawn chart, drawing and saving,
  date axes, chart heights for each paper;
* :mod:`prepkit.report.charts_limits`: axis limits that hold everything
  drawn on every panel sharing the axis;
* :mod:`prepkit.report.charts_windows`: the dates each chart shows;
* :mod:`prepkit.report.charts_beds`: bed demand per scenario, when beds
  run short;
* :mod:`prepkit.report.charts_compare`: daily admissions, totals and
  workforce absence across the scenarios;
* :mod:`prepkit.report.charts_uncertainty`: the charts of the uncertainty
  ensemble.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence

from prepkit.plan import Plan
from prepkit.report.charts_base import PNG_DPI, Chart, render_chart
from prepkit.report.charts_beds import demand_chart, gap_chart
from prepkit.report.charts_compare import absence_chart, admissions_chart, outcomes_chart
from prepkit.report.charts_uncertainty import (
    band_chart,
    ensemble_of,
    exceedance_chart,
    peak_date_chart,
    tornado_chart,
)
from prepkit.report.charts_windows import (
    chart_window,
    ensemble_window,
    exceedance_window,
    gap_window,
)
from prepkit.report.style import PageSize
from prepkit.report.words.views import ScenarioView
from prepkit.uncertainty.results import UncertaintyResults

__all__ = [
    "PNG_DPI",
    "Chart",
    "absence_chart",
    "admissions_chart",
    "band_chart",
    "chart_jobs",
    "chart_window",
    "demand_chart",
    "draw_charts",
    "draw_uncertainty_charts",
    "ensemble_window",
    "exceedance_chart",
    "exceedance_window",
    "gap_chart",
    "gap_window",
    "outcomes_chart",
    "peak_date_chart",
    "render_chart",
    "tornado_chart",
    "uncertainty_chart_jobs",
]


def uncertainty_chart_jobs(
    plan: Plan,
    views: Sequence[ScenarioView],
    uncertainty: UncertaintyResults,
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
    uncertainty : prepkit.uncertainty.results.UncertaintyResults or None
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
    # The ensemble's late futures widen the window of the other charts.
    window = ensemble_window(views, uncertainty, chart_window(views))
    gaps = exceedance_window(views, uncertainty, window)
    jobs: list[Callable[[], Chart]] = [
        lambda: exceedance_chart(views, uncertainty, gaps, size),
        lambda: band_chart(views, uncertainty, window, size),
        lambda: peak_date_chart(views, uncertainty, window, size),
    ]
    result = ensemble_of(uncertainty, focus)
    if result is not None and len(result.tornado_peak_icu):
        jobs.append(lambda: tornado_chart(focus, result, size))
    return jobs


def draw_uncertainty_charts(
    plan: Plan,
    views: Sequence[ScenarioView],
    uncertainty: UncertaintyResults,
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
    uncertainty : prepkit.uncertainty.results.UncertaintyResults or None
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


def chart_jobs(
    plan: Plan,
    views: Sequence[ScenarioView],
    *,
    page_size: PageSize | None = None,
) -> list[Callable[[], Chart]]:
    """The deterministic charts as jobs: each call draws one chart.

    Charts are independent of each other, so a caller may run the jobs in
    parallel (:mod:`prepkit.pipeline.jobs` does, in forked worker processes);
    the bytes are the same either way.

    Parameters
    ----------
    plan : Plan
        The plan.
    views : sequence of ScenarioView
        Every scenario (:func:`prepkit.report.words.views.scenario_views`).
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
    views: Sequence[ScenarioView],
    *,
    page_size: PageSize | None = None,
) -> tuple[Chart, ...]:
    """Every deterministic chart of the pack, drawn one after the other.

    Parameters
    ----------
    plan : Plan
        The plan.
    views : sequence of ScenarioView
        Every scenario (:func:`prepkit.report.words.views.scenario_views`).
    page_size : {"A4", "Letter"}, optional
        Paper size; defaults to the plan's.

    Returns
    -------
    tuple of Chart
        As listed by :func:`chart_jobs`.
    """
    return tuple(job() for job in chart_jobs(plan, views, page_size=page_size))
