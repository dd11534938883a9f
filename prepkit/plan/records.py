"""What a plan holds of its sources: observed days, the inputs read, the file."""

from __future__ import annotations

import datetime as dt
from collections.abc import Sequence
from dataclasses import dataclass

__all__ = ["InputRecord", "Observation", "Source", "admissions_per_day"]


@dataclass(frozen=True, kw_only=True)
class Observation:
    """One row of observed hospital data (any figure may be missing).

    Attributes
    ----------
    date : datetime.date
        The day the figures refer to; for weekly figures
        (``Details.observed_period == "weekly"``) the last day of the week.
    admissions : float or None
        Residents newly admitted with the disease, ward or ICU [persons per
        day, or per week for weekly figures].
    icu_admissions : float or None
        Of those, admitted straight to ICU [persons per day or week].
    ward_census, icu_census : float or None
        Outbreak patients in ward and ICU beds of these hospitals on the
        date [persons].
    deaths : float or None
        Deaths among patients with the disease [persons per day or week].
    positive_share : float or None
        Share of tests that were positive [fraction].
    """

    date: dt.date
    admissions: float | None = None
    icu_admissions: float | None = None
    ward_census: float | None = None
    icu_census: float | None = None
    deaths: float | None = None
    positive_share: float | None = None


DAYS_PER_WEEK = 7
"""Days in one row of weekly totals [days]."""


def admissions_per_day(
    observed: Sequence[Observation], period: str
) -> list[tuple[dt.date, float]]:
    """Observed new admissions as a daily rate, for drawing beside the model's daily series.

    Parameters
    ----------
    observed : sequence of Observation
        The observed rows.
    period : {"daily", "weekly"}
        How the rows are kept (:attr:`prepkit.plan.details.Details.observed_period`).

    Returns
    -------
    list of (datetime.date, float)
        Rows with admissions: daily figures as they are [persons/day]; a
        week's total as its daily mean [persons/day] at the middle day of
        the week that ends on the row's date.
    """
    if period == "weekly":
        middle = dt.timedelta(days=DAYS_PER_WEEK // 2)
        return [(o.date - middle, o.admissions / DAYS_PER_WEEK)
                for o in observed if o.admissions is not None]
    return [(o.date, o.admissions) for o in observed if o.admissions is not None]


@dataclass(frozen=True, kw_only=True)
class InputRecord:
    """One input as read, for the assumptions appendix and the echo sheet.

    Attributes
    ----------
    sheet, cell : str
        Where it was read.
    name : str
        Canonical field name.
    label : str
        Plain-words label, with the band where it applies.
    value : str
        Value as shown to a reader, percentages at the edge.
    unit : str
        Unit as shown to a reader.
    defaulted : bool
        True when the cell was blank and the default was used.
    levels : tuple of (str, str, str)
        For an input with Low, Central and High values: each level's name
        (``low``, ``central``, ``high``), cell and value as shown; empty
        otherwise.
    """

    sheet: str
    cell: str
    name: str
    label: str
    value: str
    unit: str
    defaulted: bool = False
    levels: tuple[tuple[str, str, str], ...] = ()


@dataclass(frozen=True, kw_only=True)
class Source:
    """Where the plan was read from."""

    path: str = ""
    sha256: str = ""
    inputs: tuple[InputRecord, ...] = ()
