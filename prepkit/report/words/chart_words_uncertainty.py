"""Title, caption and alternate text of each chart of the uncertainty ensemble."""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import pandas as pd

from prepkit.report.words.chart_words import ChartWords
from prepkit.report.words.ensemble_format import (
    band_columns,
    inner_band_columns,
    range_tenths,
    spread_cells,
    summary_row,
)
from prepkit.report.words.formatting import (
    BED_NOUNS,
    as_date,
    format_date,
    format_number,
    format_percent,
)
from prepkit.report.words.views import ScenarioView, with_ensembles
from prepkit.uncertainty.results import UncertaintyResults


def bands_words(views: Sequence[ScenarioView], uncertainty: UncertaintyResults) -> ChartWords:
    """Title, caption and alternate text of the uncertainty-band chart.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.
    uncertainty : prepkit.uncertainty.results.UncertaintyResults
        The ensemble.

    Returns
    -------
    ChartWords
        The chart's words; the alternate text gives, for each scenario, the
        range of the ward and ICU peaks.
    """
    low_pct = round(100 * min(uncertainty.quantiles))
    high_pct = round(100 * max(uncertainty.quantiles))
    q_low, q_mid, q_high = band_columns(uncertainty.quantiles)
    parts = [
        f"Ward and ICU demand with measures: the middle line is the median of "
        f"{int(uncertainty.draws):,} plausible futures, the outer band runs from the "
        f"{low_pct}th to the {high_pct}th percentile."
    ]
    for view, result in with_ensembles(views, uncertainty):
        texts = []
        for kind in ("ward", "icu"):
            central, median, spread = spread_cells(
                getattr(view.with_metrics, kind).peak_demand_beds,
                summary_row(result, f"peak_{kind}_demand_beds"),
                q_low, q_mid, q_high,
            )
            texts.append(
                f"{BED_NOUNS[kind][1]} peak {spread} beds (median {median}, central run {central})"
            )
        parts.append(f"{view.name}: {'; '.join(texts)}.")
    alt = " ".join(parts)
    return ChartWords(
        title="Bed demand across plausible futures",
        caption=(
            f"Ward (left) and ICU (right) demand with measures across "
            f"{int(uncertainty.draws):,} plausible futures per scenario. How to read it: the "
            "line is the median future; "
            + ("the dark band holds the middle half of the futures (25th to 75th percentile) "
               "and the light band " if inner_band_columns(uncertainty.quantiles) else
               "the band ")
            + f"{range_tenths(uncertainty.quantiles)} in 10 "
            f"({low_pct}th to {high_pct}th percentile). On a day the black line of available "
            "beds lies below the median, beds run short in more than half of the futures; below "
            f"the top of the band, in more than {100 - high_pct} in 100. A wide band means the "
            "figure depends strongly on the workbook's ranges. Scales differ between scenarios."
        ),
        alt=alt,
    )


def exceedance_words(
    views: Sequence[ScenarioView], uncertainty: UncertaintyResults
) -> ChartWords:
    """Title, caption and alternate text of the daily exceedance-probability chart.

    The alternate text gives, for each scenario, the highest daily chance
    that ward and ICU beds run short, and when.
    """
    parts = ["Share of plausible futures in which demand is above the available beds, each day."]
    for view, result in with_ensembles(views, uncertainty):
        e = result.exceedance
        pieces = []
        for kind, column in (("ward", "ward_exceedance_probability"),
                             ("ICU", "icu_exceedance_probability")):
            series = e[column]
            top = float(series.max()) if len(series) else 0.0
            peak_day: Any = series.idxmax()
            when = format_date(pd.Timestamp(peak_day).date()) if top > 0 else "no day"
            pieces.append(f"{kind} highest {format_percent(top)} on {when}")
        parts.append(f"{view.name}: " + ", ".join(pieces) + ".")
    alt = " ".join(parts)
    return ChartWords(
        title="Chance that beds run short, day by day",
        caption=(
            "Share of plausible futures in which demand with measures is above the available "
            "beds on each day. Above the dashed line it is more likely than not."
        ),
        alt=alt,
    )


def peak_dates_words(
    views: Sequence[ScenarioView], uncertainty: UncertaintyResults
) -> ChartWords:
    """Title, caption and alternate text of the peak-date chart.

    The alternate text gives, for each scenario, the range and median of the
    ICU peak date.
    """
    q_low, q_mid, q_high = band_columns(uncertainty.quantiles)
    parts = ["When ICU demand peaks across the plausible futures, with measures, by week."]
    for view, result in with_ensembles(views, uncertainty):
        row = result.peak_dates.loc["icu_demand"]
        low, mid, high = (as_date(row[q]) for q in (q_low, q_mid, q_high))
        if mid is None:
            parts.append(f"{view.name}: no ICU demand.")
            continue
        parts.append(
            f"{view.name}: between {format_date(low)} and {format_date(high)}, median "
            f"{format_date(mid)}."
        )
    alt = " ".join(parts)
    return ChartWords(
        title="When ICU demand peaks",
        caption=(
            "Share of plausible futures whose ICU demand (with measures) peaks in each week; the "
            "dashed line marks the median peak date."
        ),
        alt=alt,
    )


def tornado_words(name: str, tornado: pd.DataFrame) -> ChartWords:
    """Title, caption and alternate text of the sensitivity chart.

    Parameters
    ----------
    name : str
        Scenario name.
    tornado : pandas.DataFrame
        The rows of ``tornado_peak_icu`` the chart shows.

    Returns
    -------
    ChartWords
        The chart's words; the alternate text gives the inputs in order of
        their effect on the ICU peak, with the peak at each end of their range.
    """
    rows = tornado
    base = float(rows["peak_icu_demand_baseline_beds"].iloc[0]) if len(rows) else 0.0
    parts = [
        f"How the ICU peak of {name} ({format_number(base)} beds at the most likely values) "
        "moves when one input at a time goes to the low or high end of its range, largest "
        "effect first."
    ]
    for _, row in rows.iterrows():
        parts.append(
            f"{row['label']}: {format_number(float(row['peak_icu_demand_at_low_beds']))} at the "
            f"low end, {format_number(float(row['peak_icu_demand_at_high_beds']))} at the high "
            "end."
        )
    alt = " ".join(parts)
    return ChartWords(
        title="Which inputs matter most",
        caption=(
            f"Peak ICU demand of {name}, with measures, when one input at a time is set to the "
            "low or the high end of its range and every other input to its most likely value "
            "(vertical line). Inputs given per age band move together."
        ),
        alt=alt,
    )
