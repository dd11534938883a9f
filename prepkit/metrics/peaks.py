"""Peaks of daily series and the dates of day indices."""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd


def as_date(stamp: object) -> dt.date:
    """The calendar date of a time stamp."""
    return pd.Timestamp(stamp).date()  # type: ignore[arg-type]


def date_of_day(index: pd.Index, day: int) -> dt.date | None:
    """Date of a day index in a daily index (None for -1; past the end, counted on)."""
    if day < 0:
        return None
    if day < len(index):
        return as_date(index[day])
    last = len(index) - 1
    return as_date(index[last]) + dt.timedelta(days=day - last)


def peak(series: pd.Series) -> tuple[float, dt.date | None]:
    """Largest value and the first date it occurs (None when the largest is <= 0).

    Parameters
    ----------
    series : pandas.Series
        Daily values indexed by date.

    Returns
    -------
    tuple
        Peak value (in the series' unit) and its date.
    """
    if series.empty:
        return 0.0, None
    values = series.to_numpy(dtype=np.float64)
    top = int(np.argmax(values))
    value = float(values[top])
    return value, (as_date(series.index[top]) if value > 0.0 else None)
