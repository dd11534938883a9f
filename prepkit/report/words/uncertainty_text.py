"""Words and table rows from the uncertainty ensemble."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import pandas as pd

from prepkit.plan import Plan
from prepkit.report.words.comparison import TableRow
from prepkit.report.words.ensemble_format import (
    any_day_chance,
    band_columns,
    chance_cell,
    chance_phrase,
    likely_period,
    range_tenths,
    scenario_ensemble,
    spread_cells,
    summary_row,
)
from prepkit.report.words.formatting import as_date, format_date, format_number, lower_first, quoted
from prepkit.report.words.views import ScenarioView, with_ensembles
from prepkit.uncertainty.results import UncertaintyResults
from prepkit.uncertainty.run import EnsembleResult


@dataclass(frozen=True, kw_only=True)
class EnsembleWords:
    """Words and table rows from the uncertainty ensemble, as the pack places them.

    Parameters
    ----------
    draws : str
        Runs per scenario and variant, formatted (``1,000``).
    seed : int
        Random seed of the draws.
    sentences : tuple of str
        The leader page's sentences on how certain the figures are.
    rows : tuple of TableRow
        Chance of running short and ward peak dates, one row per scenario.
    spread_rows : tuple of TableRow
        Central run, median and range of the peaks and unmet bed-days.
    drivers : str
        Which inputs move the ICU peak most ("" when none does).
    range_words : str
        Share of the futures within the ranges (``9 of 10``).
    focus : str
        Scenario of the sensitivity chart ("" without scenarios).
    low_pct, high_pct : int
        Percentiles that bound the ranges.
    """

    draws: str
    seed: int
    sentences: tuple[str, ...]
    rows: tuple[TableRow, ...]
    spread_rows: tuple[TableRow, ...]
    drivers: str
    range_words: str
    focus: str
    low_pct: int
    high_pct: int


def _exceedance_sentence(view: ScenarioView, result: EnsembleResult) -> str:
    icu = any_day_chance(result, "icu")
    ward = any_day_chance(result, "ward")
    text = (
        f"In {chance_phrase(icu)} plausible futures of {quoted(view.name)}, ICU demand exceeds "
        f"the available beds at some point"
    )
    window = likely_period(result.exceedance["icu_exceedance_probability"])
    if window is not None:
        text += (
            f", most likely from {format_date(window.start)} (more likely than not until "
            f"{format_date(window.end)})"
        )
    elif icu > 0.0:
        text += ", though on no single day is that more likely than not"
    return text + f". Ward beds run short in {chance_phrase(ward)} plausible futures."


def ensemble_context(
    plan: Plan, views: Sequence[ScenarioView], uncertainty: UncertaintyResults | None
) -> EnsembleWords | None:
    """Words and table rows from the uncertainty ensemble.

    Parameters
    ----------
    plan : Plan
        The plan.
    views : sequence of ScenarioView
        Every scenario.
    uncertainty : prepkit.uncertainty.results.UncertaintyResults or None
        The ensemble; None or an empty one gives None.

    Returns
    -------
    EnsembleWords or None
        The numbers and sentences the pack shows; the prose around them
        (what the runs are, the methods and their references) is in the
        templates.
    """
    if uncertainty is None or not uncertainty.scenarios:
        return None
    range_words = f"{range_tenths(uncertainty.quantiles)} of 10"
    draws = int(uncertainty.draws)
    short = [v for v in views if v.short_of_beds]
    focus = max(short, key=lambda v: v.unmet_bed_days) if short else (views[0] if views else None)
    sentences = _focus_sentences(uncertainty, focus, range_words)
    chances, rows, spread = _ensemble_rows(views, uncertainty)
    if len(chances) > 1:
        sentences.append(
            "Chance that ICU beds run short at some point, with measures: "
            + "; ".join(chances) + "."
        )
    drivers = ""
    if focus is not None:
        result = scenario_ensemble(uncertainty, focus.name)
        if result is not None:
            drivers = drivers_sentence(focus.name, result.with_interventions.tornado_peak_icu)
    return EnsembleWords(
        draws=f"{draws:,}",
        sentences=tuple(sentences),
        rows=tuple(rows),
        spread_rows=tuple(spread),
        drivers=drivers,
        seed=uncertainty.seed,
        range_words=range_words,
        focus=focus.name if focus is not None else "",
        low_pct=round(100 * min(uncertainty.quantiles)),
        high_pct=round(100 * max(uncertainty.quantiles)),
    )


def _focus_sentences(
    uncertainty: UncertaintyResults, focus: ScenarioView | None, range_words: str
) -> list[str]:
    """The leader page's first sentences on the ensemble, on the scenario shortest of beds."""
    q_low, _, q_high = band_columns(uncertainty.quantiles)
    draws = int(uncertainty.draws)
    sentences = [
        f"Each scenario was also run {draws:,} times, each time drawing the uncertain inputs "
        "from the workbook's Low to High ranges."
    ]
    if focus is not None:
        result = scenario_ensemble(uncertainty, focus.name)
        if result is not None:
            sentences.append(_exceedance_sentence(focus, result.with_interventions))
            peak = summary_row(result.with_interventions, "peak_icu_demand_beds")
            sentences.append(
                f"Its ICU peak lies between {format_number(float(peak[q_low]), words=True)} and "
                f"{format_number(float(peak[q_high]), words=True)} beds in {range_words} "
                "futures (the central run quoted elsewhere in this pack: "
                f"{format_number(focus.with_metrics.icu.peak_demand_beds, words=True)})."
            )
    return sentences


def _ensemble_rows(
    views: Sequence[ScenarioView], uncertainty: UncertaintyResults
) -> tuple[list[str], list[TableRow], list[TableRow]]:
    """Each scenario's chance of ICU beds running short, its chance table row and spread row."""
    q_low, q_mid, q_high = band_columns(uncertainty.quantiles)
    chances = []
    rows = []
    spread = []
    for view, e in with_ensembles(views, uncertainty):
        chances.append(f"{quoted(view.name)} {chance_cell(any_day_chance(e, 'icu'))}")
        ward_peak_dates: Any = e.peak_dates.loc["ward_demand"]
        rows.append(
            TableRow(
                label=view.name,
                cells=(
                    chance_cell(any_day_chance(e, "ward")),
                    chance_cell(any_day_chance(e, "icu")),
                    (
                        f"{format_date(as_date(ward_peak_dates[q_low]), year=False)} to "
                        f"{format_date(as_date(ward_peak_dates[q_high]), year=False)}"
                        if ward_peak_dates[q_low] is not None
                        else "–"
                    ),
                ),
            )
        )
        m = view.with_metrics
        spread.append(
            TableRow(
                label=view.name,
                cells=(
                    *spread_cells(m.ward.peak_demand_beds, summary_row(e, "peak_ward_demand_beds"),
                                  q_low, q_mid, q_high),
                    *spread_cells(m.icu.peak_demand_beds, summary_row(e, "peak_icu_demand_beds"),
                                  q_low, q_mid, q_high),
                    *spread_cells(view.unmet_bed_days, summary_row(e, "total_unmet_bed_days"),
                                  q_low, q_mid, q_high),
                ),
            )
        )
    return chances, rows, spread


def drivers_sentence(name: str, tornado: pd.DataFrame, top: int = 3) -> str:
    """Which inputs move the ICU peak most, from a one-at-a-time sensitivity table.

    Parameters
    ----------
    name : str
        Scenario name.
    tornado : pandas.DataFrame
        ``tornado_peak_icu`` of the ensemble (largest swing first).
    top : int, optional
        How many inputs to name.

    Returns
    -------
    str
        E.g. "In “Central figures, three measures” the ICU peak depends most on R0 (22
        to 117 beds across its range), then ..."; ``""`` when no input moves
        it.
    """
    rows = tornado[tornado["swing_beds"] > 0.5].head(top)
    if rows.empty:
        return ""
    parts = []
    for i, (_, row) in enumerate(rows.iterrows()):
        low = format_number(float(row["peak_icu_demand_at_low_beds"]))
        high = format_number(float(row["peak_icu_demand_at_high_beds"]))
        label = lower_first(str(row["label"]))
        if i == 0:
            parts.append(
                f"{label}: {low} beds with it at the low end of its range, {high} at the high end"
            )
        else:
            parts.append(f"{label} ({low} and {high})")
    text = f"In {quoted(name)} the ICU peak depends most on {parts[0]}"
    if len(parts) > 1:
        text += "; then on " + " and ".join(parts[1:])
    return text + "."
