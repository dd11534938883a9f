"""Charts: every series drawn, alternate text from the data, reproducible bytes, safe embedding."""

from __future__ import annotations

import datetime as dt
from typing import Any

import matplotlib
import pytest
from factories import banded_plan

from prepkit.engine import run_plan
from prepkit.report import charts, charts_base
from prepkit.report import context as words
from prepkit.report.safety import AssetFetcher

matplotlib.use("Agg")


@pytest.fixture(scope="module")
def setup() -> Any:
    plan = banded_plan(3, horizon=200)
    results = run_plan(plan)
    return plan, results, words.scenario_views(plan, results)


@pytest.fixture(scope="module")
def drawn(setup: Any) -> tuple[charts.Chart, ...]:
    plan, _, views = setup
    return charts.draw_charts(plan, views)


def test_one_demand_chart_per_scenario_then_the_comparisons(setup: Any, drawn: Any) -> None:
    _, _, views = setup
    names = [c.name for c in drawn]
    assert names == [f"demand-scenario-{v.number}" for v in views] + [
        "capacity-gap-timeline", "total-outcomes", "daily-admissions", "workforce-absence",
    ]
    for chart in drawn:
        assert chart.png.startswith(b"\x89PNG")
        assert b"<svg" in chart.svg[:2000]
        assert chart.alt and chart.caption and chart.title


def test_alt_text_is_written_from_the_data(setup: Any, drawn: Any) -> None:
    _, _, views = setup
    for view, chart in zip(views, drawn, strict=False):
        ward = view.with_metrics.ward
        assert (
            f"Ward demand with measures peaks at {words.format_number(ward.peak_demand_beds)} "
            f"beds on {words.format_date(ward.peak_date)}"
        ) in chart.alt
        assert f"against {words.format_number(ward.available_beds)} available beds" in chart.alt
    outcomes = next(c for c in drawn if c.name == "total-outcomes")
    total = views[0].with_metrics.total
    assert f"{words.format_number(total.admissions_persons)} admissions" in outcomes.alt


def test_charts_are_byte_reproducible(setup: Any, drawn: Any) -> None:
    plan, _, views = setup
    again = charts.draw_charts(plan, views)
    assert [(c.svg, c.png) for c in again] == [(c.svg, c.png) for c in drawn]
    assert b"<dc:date>" not in drawn[0].svg


def test_chart_jobs_give_the_same_charts(setup: Any, drawn: Any) -> None:
    plan, _, views = setup
    jobs = charts.chart_jobs(plan, views)
    assert [job().png for job in jobs[-2:]] == [c.png for c in drawn[-2:]]


def test_data_uris_are_the_types_the_fetcher_serves(drawn: Any) -> None:
    fetcher = AssetFetcher()
    chart = drawn[0]
    assert fetcher.fetch(chart.data_uri("svg")).read() == chart.svg
    assert fetcher.fetch(chart.data_uri("png")).read() == chart.png
    assert fetcher.refused == []


def test_window_covers_every_peak_and_trims_the_calm_tail(setup: Any) -> None:
    _, _, views = setup
    start, end = charts.chart_window(views)
    first_day = views[0].item.with_interventions.daily.index[0].date()
    last_day = views[0].item.with_interventions.daily.index[-1].date()
    assert start == first_day and end <= last_day
    for view in views:
        for metrics in (view.with_metrics, view.without_metrics):
            for bed in (metrics.ward, metrics.icu):
                assert bed.peak_date is None or bed.peak_date <= end
    gap_start, gap_end = charts.gap_window(views, (start, end))
    assert gap_start == start and gap_end <= end
    for view in views:
        for period in (*view.ward_periods, *view.icu_periods):
            assert period.end <= gap_end


def test_month_ticks_carry_the_year_on_the_first_and_on_january() -> None:
    from matplotlib.figure import Figure

    fig = Figure()
    ax = fig.subplots()
    charts_base.date_axis(ax, (dt.date(2026, 11, 20), dt.date(2027, 3, 10)))
    labels = [ax.xaxis.get_major_formatter()(v, i)
              for i, v in enumerate(ax.xaxis.get_major_locator()())]
    assert labels == ["Dec\n2026", "Jan\n2027", "Feb", "Mar"]


def test_uncertainty_charts(setup: Any) -> None:
    from prepkit.uncertainty import run_uncertainty

    plan, results, views = setup
    ensemble = run_uncertainty(plan, results, draws=16, progress=False)
    drawn = charts.draw_uncertainty_charts(plan, views, ensemble, focus=views[0].name)
    assert [c.name for c in drawn] == [
        "uncertainty-exceedance", "uncertainty-bands", "uncertainty-peak-dates",
        "uncertainty-tornado",
    ]
    assert all(c.png.startswith(b"\x89PNG") for c in drawn)
    assert views[0].name in drawn[-1].caption
    assert charts.draw_uncertainty_charts(plan, views, None, focus="") == ()
