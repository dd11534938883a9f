"""The dates each chart shows: from day 0 to four weeks after the busy days end.

Importations keep a long, low tail going that would otherwise squeeze the
wave into a corner of each chart, so each window ends four weeks
(:data:`~prepkit.report.charts_base.TAIL_DAYS`) after the last busy day,
and never before a peak. Charts comparing scenarios share the window of
all of them; the charts of the uncertainty ensemble widen it for the
futures that come later than the scenario runs.
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Sequence

import numpy as np

from prepkit.report.charts_base import BUSY_SHARE, TAIL_DAYS, as_day
from prepkit.report.charts_uncertainty import BAR_DAYS, weekly_peak_shares
from prepkit.report.words.ensemble_format import band_columns
from prepkit.report.words.views import ScenarioView, with_ensembles
from prepkit.uncertainty.results import UncertaintyResults

__all__ = ["chart_window", "ensemble_window", "exceedance_window", "gap_window"]


def chart_window(views: Sequence[ScenarioView]) -> tuple[dt.date, dt.date]:
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
            first = min(first, as_day(dates[0])) if first else as_day(dates[0])
            end_of_run = max(end_of_run, as_day(dates[-1])) if end_of_run else as_day(dates[-1])
            for column in columns:
                series = daily[column].to_numpy(dtype=np.float64)
                if tops[column] <= 0.0 or float(series.max()) <= 0.0:
                    continue
                peak_day = as_day(dates[int(np.argmax(series))]) + dt.timedelta(days=TAIL_DAYS)
                busy = np.nonzero(series >= BUSY_SHARE * tops[column])[0]
                candidate = (
                    max(peak_day, as_day(dates[int(busy[-1])]) + dt.timedelta(days=TAIL_DAYS))
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


def gap_window(
    views: Sequence[ScenarioView], window: tuple[dt.date, dt.date]
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
    return window[0], min(window[1], max(ends) + dt.timedelta(days=TAIL_DAYS))


def ensemble_window(
    views: Sequence[ScenarioView],
    uncertainty: UncertaintyResults,
    window: tuple[dt.date, dt.date],
) -> tuple[dt.date, dt.date]:
    """Dates shown on the band and peak-date charts: wide enough for the late futures.

    Futures drawn from the Low to High ranges can peak weeks after the
    scenario run itself, so the window of the other charts is widened to
    four weeks after the high band's busy days end (capped at the last
    simulated day) and to the end of the last week in which any future
    peaks.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.
    uncertainty : prepkit.uncertainty.results.UncertaintyResults
        The ensemble.
    window : tuple of datetime.date
        The window of the other charts (:func:`chart_window`).

    Returns
    -------
    tuple of datetime.date
        First and last day shown; never shorter than ``window``.
    """
    _, _, q_high = band_columns(uncertainty.quantiles)
    last = window[1]
    for _, result in with_ensembles(views, uncertainty):
        if result.daily.empty:
            continue
        daily = result.daily
        end_of_run = as_day(daily.index[-1])
        for kind in ("ward", "icu"):
            high = daily[f"{kind}_demand_beds_{q_high}"].to_numpy(dtype=np.float64)
            top = float(np.max(high))
            if top <= 0.0:
                continue
            busy = int(np.nonzero(high >= BUSY_SHARE * top)[0][-1])
            tail = as_day(daily.index[busy]) + dt.timedelta(days=TAIL_DAYS)
            last = max(last, min(tail, end_of_run))
        weekly = weekly_peak_shares(result)
        if len(weekly):
            last = max(last, as_day(weekly.index[-1]) + dt.timedelta(days=BAR_DAYS))
    return window[0], last


def exceedance_window(
    views: Sequence[ScenarioView],
    uncertainty: UncertaintyResults,
    window: tuple[dt.date, dt.date],
) -> tuple[dt.date, dt.date]:
    """Dates shown on the exceedance chart: day 0 to four weeks after the last chance of a gap.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.
    uncertainty : prepkit.uncertainty.results.UncertaintyResults
        The ensemble.
    window : tuple of datetime.date
        The window of the band charts (:func:`ensemble_window`), used when no future runs
        short.

    Returns
    -------
    tuple of datetime.date
        First and last day shown, inside ``window``.
    """
    last: dt.date | None = None
    for _, result in with_ensembles(views, uncertainty):
        frame = result.exceedance
        busy = frame[(frame[["ward_exceedance_probability", "icu_exceedance_probability"]]
                      .max(axis=1) > 0.005)]
        if len(busy):
            day = as_day(busy.index[-1])
            last = max(last, day) if last else day
    if last is None:
        return window
    return window[0], min(window[1], last + dt.timedelta(days=TAIL_DAYS))
