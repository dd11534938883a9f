"""Chances and ranges of the uncertainty ensemble in words, and finding a scenario's ensemble."""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

import pandas as pd

from prepkit.report.words.formatting import Period, format_number, periods_over
from prepkit.uncertainty.results import (
    FAN_QUANTILES,
    ScenarioUncertainty,
    UncertaintyResults,
    quantile_label,
)
from prepkit.uncertainty.run import EnsembleResult


def chance_phrase(share: float) -> str:
    """A probability as a count of plausible futures, to read "in ... plausible futures".

    Parameters
    ----------
    share : float
        Share of draws [fraction].

    Returns
    -------
    str
        ``none of the``, ``fewer than 1 in 10``, ``7 of 10``, ``more than 9
        of 10`` or ``all``.
    """
    if not math.isfinite(share) or share <= 0.0:
        return "none of the"
    if share >= 1.0:
        return "all"
    if share < 0.05:
        return "fewer than 1 in 10"
    if share > 0.95:
        return "more than 9 of 10"
    return f"{round(10 * share)} of 10"


def chance_cell(share: float) -> str:
    """:func:`chance_phrase` for a table cell: ``none``, ``7 of 10``, ``all``."""
    phrase = chance_phrase(share)
    return "none" if phrase == "none of the" else phrase


def likely_period(probability: pd.Series, threshold: float = 0.5) -> Period | None:
    """First run of days on which a daily probability is at least ``threshold``.

    Parameters
    ----------
    probability : pandas.Series
        Daily share of draws [fraction] indexed by date.
    threshold : float, optional
        Share to reach [fraction].

    Returns
    -------
    Period or None
        From the first to the last day of the first such run.
    """
    runs = periods_over(probability, threshold - 1e-12)
    return runs[0] if runs else None


def spread_cells(central: float, row: pd.Series, q_low: str, q_mid: str, q_high: str) -> tuple[
    str, str, str
]:
    """Central run, median and range of one quantity, formatted alike [beds or bed-days]."""
    return (
        format_number(central),
        format_number(float(row[q_mid])),
        f"{format_number(float(row[q_low]))} to {format_number(float(row[q_high]))}",
    )


def scenario_ensemble(
    uncertainty: UncertaintyResults | None, name: str
) -> ScenarioUncertainty | None:
    """The ensemble of scenario ``name``, or None when it has none (or there is no ensemble)."""
    for item in uncertainty.scenarios if uncertainty is not None else ():
        if item.scenario == name:
            return item
    return None


def any_day_chance(result: EnsembleResult, kind: str) -> float:
    """Share of draws in which ``kind`` beds ("ward" or "icu") run short on some day [fraction]."""
    value: Any = result.exceedance_any_day.loc[kind, "any_day_probability"]
    return float(value)


def summary_row(result: EnsembleResult, quantity: str) -> pd.Series:
    """One quantity of an ensemble's ``summary``: its quantiles, by column suffix."""
    row: Any = result.summary.loc[quantity]
    return row


def range_tenths(quantiles: Sequence[float]) -> int:
    """Futures in 10 that the reported range holds: 9 for the 5th to the 95th percentile [count]."""
    return round(10 * (max(quantiles) - min(quantiles)))


def inner_band_columns(quantiles: Sequence[float]) -> tuple[str, str] | None:
    """Suffixes of the fan charts' inner band, ``("q25", "q75")``, or None when not reported."""
    if not all(q in quantiles for q in FAN_QUANTILES):
        return None
    low, high = FAN_QUANTILES
    return quantile_label(low), quantile_label(high)


def band_columns(quantiles: Sequence[float]) -> tuple[str, str, str]:
    """Suffixes of the lower band, median and upper band columns, e.g. ``("q05", "q50", "q95")``."""
    return quantile_label(min(quantiles)), quantile_label(0.5), quantile_label(max(quantiles))

