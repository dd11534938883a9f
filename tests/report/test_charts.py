"""Charts: every series drawn, alternate text from the data, reproducible bytes, safe embedding,
and no plotted point outside its axes' limits."""

from __future__ import annotations

import dataclasses
import datetime as dt
import sys
from collections.abc import Callable, Iterator
from typing import Any

import matplotlib
import numpy as np
import pytest
from factories import banded_plan
from matplotlib.collections import Collection, PathCollection
from matplotlib.figure import Figure
from matplotlib.lines import Line2D
from matplotlib.patches import Patch
from matplotlib.text import Text

from prepkit.pipeline.demo import sample_workbook
from prepkit.report import charts, charts_base
from prepkit.report.safety import AssetFetcher
from prepkit.report.words.ensemble_format import band_columns, scenario_ensemble
from prepkit.report.words.formatting import format_date, format_number
from prepkit.report.words.uncertainty_text import ensemble_context
from prepkit.report.words.views import scenario_views
from prepkit.scenarios.runs import run_plan
from prepkit.uncertainty.plan_runs import run_uncertainty
from prepkit.workbook.reader import read_plan

pytestmark = pytest.mark.slow  # draws every chart of a pack

matplotlib.use("Agg")


@pytest.fixture(scope="module")
def setup() -> Any:
    plan = banded_plan(3, horizon=200)
    results = run_plan(plan)
    return plan, results, scenario_views(plan, results)


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
            f"Ward demand with measures peaks at {format_number(ward.peak_demand_beds)} "
            f"beds on {format_date(ward.peak_date)}"
        ) in chart.alt
        assert f"against {format_number(ward.available_beds)} available beds" in chart.alt
    outcomes = next(c for c in drawn if c.name == "total-outcomes")
    total = views[0].with_metrics.total
    assert f"{format_number(total.admissions_persons)} admissions" in outcomes.alt


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
    plan, results, views = setup
    ensemble = run_uncertainty(plan, results, draws=16)
    drawn = charts.draw_uncertainty_charts(plan, views, ensemble, focus=views[0].name)
    assert [c.name for c in drawn] == [
        "uncertainty-exceedance", "uncertainty-bands", "uncertainty-peak-dates",
        "uncertainty-tornado",
    ]
    assert all(c.png.startswith(b"\x89PNG") for c in drawn)
    assert views[0].name in drawn[-1].caption
    assert charts.draw_uncertainty_charts(plan, views, None, focus="") == ()


# ---- No chart clips its data ---------------------------------------------------------------------
#
# The walk below reads every plotted point of a drawn figure back from matplotlib and compares it,
# in display coordinates, with its axes box. Display coordinates treat data, axes and blended
# coordinates alike: a shading spanning the axes height is inside by construction, a line in data
# coordinates only when the limits cover it. Checked: every Line2D (lines and markers), every
# collection (fill_between bands and broken_barh strips as paths, scatter points as offsets),
# every patch (bars), and the anchor of every text in whichever of its coordinates are data.

#: How far a point may lie beyond its axes box [display pixels]: float noise of the transforms,
#: far below a printed line width.
TOLERANCE_PX = 0.01


def _display_points(artist: Any) -> Iterator[np.ndarray]:
    if isinstance(artist, Line2D):
        xy = np.asarray(artist.get_xydata(), dtype=np.float64)
        if xy.size:
            yield artist.get_transform().transform(xy)
    elif isinstance(artist, PathCollection):
        offsets = np.asarray(artist.get_offsets(), dtype=np.float64)
        if offsets.size:
            yield artist.get_offset_transform().transform(offsets)
    elif isinstance(artist, Collection):
        transform = artist.get_transform()
        for path in artist.get_paths():
            if len(path.vertices):
                yield transform.transform(np.asarray(path.vertices, dtype=np.float64))
    elif isinstance(artist, Patch):
        vertices = np.asarray(artist.get_path().vertices, dtype=np.float64)
        if vertices.size:
            yield artist.get_transform().transform(vertices)


def _data_coordinates(ax: Any, text: Text) -> tuple[bool, bool]:
    """Whether a text's x and y positions are in data coordinates."""
    transform = text.get_transform()
    if transform == ax.transData:
        return True, True
    if transform == ax.get_yaxis_transform():
        return False, True
    if transform == ax.get_xaxis_transform():
        return True, False
    return False, False


def points_outside(fig: Figure) -> list[str]:
    """One line per artist of a drawn figure with a point outside its axes' limits."""
    problems = []
    for number, ax in enumerate(fig.axes):
        if not ax.get_visible():
            continue
        box = ax.bbox
        where = f"axes {number} {ax.get_title(loc='left')!r} (x {ax.get_xlim()}, y {ax.get_ylim()})"
        for artist in (*ax.lines, *ax.collections, *ax.patches):
            if not artist.get_visible():
                continue
            for points in _display_points(artist):
                points = points[np.all(np.isfinite(points), axis=1)]
                if not len(points):
                    continue
                beyond = np.maximum.reduce([
                    box.x0 - points[:, 0], points[:, 0] - box.x1,
                    box.y0 - points[:, 1], points[:, 1] - box.y1,
                ])
                if np.any(beyond > TOLERANCE_PX):
                    worst = ax.transData.inverted().transform(points[int(np.argmax(beyond))])
                    problems.append(
                        f"{where}: {type(artist).__name__} {artist.get_label()!r} has "
                        f"{int(np.sum(beyond > TOLERANCE_PX))} of {len(points)} points outside, "
                        f"worst at {tuple(float(v) for v in worst)}"
                    )
        for text in ax.texts:
            check_x, check_y = _data_coordinates(ax, text)
            if not text.get_visible() or not (check_x or check_y):
                continue
            x, y = text.get_transform().transform(text.get_position())
            if (check_x and not box.x0 - TOLERANCE_PX <= x <= box.x1 + TOLERANCE_PX) or (
                check_y and not box.y0 - TOLERANCE_PX <= y <= box.y1 + TOLERANCE_PX
            ):
                problems.append(f"{where}: text {text.get_text()!r} at {text.get_position()}")
    return problems


def test_the_walk_finds_a_clipped_line_a_band_a_bar_a_point_and_a_label() -> None:
    fig = Figure()
    left, right = fig.subplots(1, 2, sharey=True)
    left.plot([0, 1, 2], [0, 1, 2], label="inside")
    right.fill_between([0, 1], [0, 0], [1, 1], transform=right.get_xaxis_transform())
    assert points_outside(fig) == []
    left.set_ylim(0, 1.5)
    right.bar([0.5], [3.0], label="bar")
    right.scatter([1.0], [4.0], label="points")
    right.text(0.5, 5.0, "label")
    right.text(1.02, 9.0, "margin note", transform=right.transAxes)
    problems = points_outside(fig)
    assert len(problems) == 4, problems
    assert "Line2D 'inside' has 1 of 3 points outside" in problems[0]
    assert "text 'label'" in problems[-1]


def _capture_figures(monkeypatch: pytest.MonkeyPatch) -> list[Figure]:
    """Record every figure the charts draw, after layout, just before it is saved."""
    module = sys.modules[charts.render_chart.__module__]
    save = module.figure_bytes
    drawn: list[Figure] = []

    def recording(fig: Figure, fmt: str) -> bytes:
        if not any(fig is seen for seen in drawn):
            drawn.append(fig)
        return save(fig, fmt)

    monkeypatch.setattr(module, "figure_bytes", recording)
    return drawn


@pytest.fixture(scope="module")
def smallest_first() -> Any:
    """The city sample with its scenarios reordered so the first has the smallest peak."""
    plan = read_plan(sample_workbook("vellmora_city.xlsx"))
    results = run_plan(plan)

    def peak(item: Any) -> float:
        return max(float(run.daily["admissions_per_day"].max())
                   for run in (item.with_interventions, item.without_interventions))

    order = sorted(results.scenarios, key=peak)
    names = [item.scenario.name for item in order]
    by_name = {s.name: s for s in plan.scenarios}
    plan = dataclasses.replace(plan, scenarios=tuple(by_name[n] for n in names))
    results = run_plan(plan)
    peaks = [peak(item) for item in results.scenarios]
    # The premise: the first panel's own range is the smallest of all.
    assert peaks[0] < min(peaks[1:]) / 2, peaks
    ensemble = run_uncertainty(plan, results, draws=24)
    return plan, results, scenario_views(plan, results), ensemble


def test_no_chart_of_the_pack_clips_its_data(
    smallest_first: Any, monkeypatch: pytest.MonkeyPatch
) -> None:
    plan, _, views, ensemble = smallest_first
    drawn = _capture_figures(monkeypatch)
    focus = ensemble_context(plan, views, ensemble)
    assert focus is not None
    jobs: list[Callable[[], charts.Chart]] = [
        *charts.chart_jobs(plan, views),
        *charts.uncertainty_chart_jobs(plan, views, ensemble, focus=focus.focus),
    ]
    made = [job() for job in jobs]
    assert len(drawn) == len(made) == len(views) + 4 + 4
    problems = [f"{chart.name}: {line}" for chart, fig in zip(made, drawn, strict=True)
                for line in points_outside(fig)]
    assert problems == []


def test_ensemble_window_holds_every_future_peak_and_the_busy_high_band(
    smallest_first: Any,
) -> None:
    _, _, views, ensemble = smallest_first
    base = charts.chart_window(views)
    start, end = charts.ensemble_window(views, ensemble, base)
    assert start == base[0] and end >= base[1]
    q_high = band_columns(ensemble.quantiles)[2]
    tail = dt.timedelta(days=charts_base.TAIL_DAYS)
    widened = False
    for view in views:
        result = scenario_ensemble(ensemble, view.name).with_interventions
        counts = result.peak_date_histogram["icu_demand_peak_draws_count"]
        assert counts[counts > 0].index.max().date() <= end
        for kind in ("ward", "icu"):
            high = result.daily[f"{kind}_demand_beds_{q_high}"]
            # The rule of chart_window, for the high percentile: the window runs four weeks past
            # the last day at or above the busy share of the peak, or to the end of the run.
            busy = high[high >= charts_base.BUSY_SHARE * float(high.max())].index.max().date()
            assert min(busy + tail, high.index[-1].date()) <= end
            widened |= busy + tail > base[1]
    # The sample's late futures do reach past the scenario runs' window, so the check bites.
    assert widened and end > base[1]


# ---- Fans ---------------------------------------------------------------------------------------

def test_the_demand_fans_nest_the_middle_half_inside_nine_in_ten(
    setup: Any, monkeypatch: pytest.MonkeyPatch
) -> None:
    # A fan chart draws the median inside the 25th-75th percentile band inside the 5th-95th
    # (quantiles nest by definition: common practice, no source); the caption says how to read it.
    plan, results, views = setup
    ensemble = run_uncertainty(plan, results, draws=40)
    figures = _capture_figures(monkeypatch)
    drawn = charts.draw_uncertainty_charts(plan, views, ensemble, focus=views[0].name)
    bands = next(c for c in drawn if c.name == "uncertainty-bands")
    assert "middle half of the futures (25th to 75th percentile)" in bands.caption
    assert "9 in 10 (5th to 95th percentile)" in bands.caption
    result = scenario_ensemble(ensemble, views[0].name)
    assert result is not None
    daily = result.with_interventions.daily
    for kind in ("ward", "icu"):
        cols = [daily[f"{kind}_demand_beds_{q}"].to_numpy() for q in
                ("q05", "q25", "q50", "q75", "q95")]
        for lower, upper in zip(cols, cols[1:], strict=False):
            assert np.all(lower <= upper + 1e-9)
        assert np.any(cols[1] > cols[0] + 1e-6) and np.any(cols[4] > cols[3] + 1e-6)
    fig = next(f for f in figures if any(ax.get_legend_handles_labels()[1]
                                          == ["5th to 95th percentile", "25th to 75th percentile",
                                              "Median", "Available beds"]
                                          for ax in f.axes))
    first = fig.axes[0]
    outer, inner = (c for c in first.collections if c.get_label().endswith("percentile"))
    # the inner band's vertices lie within the outer band's vertical extent
    assert inner.get_paths()[0].vertices[:, 1].max() <= outer.get_paths()[0].vertices[:, 1].max()
