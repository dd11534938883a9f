"""Numbers, dates, counts of beds and people, and periods, as the pack prints them.

Every sentence of the pack that depends on the results is written by a small
function of :mod:`prepkit.report.words` that the tests call directly; the
templates only place the text. :func:`prepkit.report.words.pack.build_context`
gathers it all into the variables of ``templates/pack.html.j2``.

Writing rules, for readers who are not modellers:

* Bottom line first; one idea per sentence; the same words for the same
  things everywhere: *demand* (beds needed by outbreak patients from the
  jurisdiction), *available beds* (staffed beds not needed by other
  patients), *surge beds*, *measures*.
* Dates as ``27 Feb 2027``; bed and people counts as whole numbers from 10
  up and with one decimal below 10 (small towns have fractions of a bed of
  demand on average); large totals in sentences rounded to two
  significant figures (``about 1,800 admissions``), never in tables.
* Nothing is said more precisely than the model can support, and every
  figure in a sentence is formatted by the same function the tests use.
"""

from __future__ import annotations

import datetime as dt
import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any, Literal

import pandas as pd

BedKind = Literal["ward", "icu"]


_MONTHS = ("Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec")


#: How each bed type is named in sentences: (capitalised noun, noun).
BED_NOUNS: dict[BedKind, tuple[str, str]] = {
    "ward": ("Ward", "ward"),
    "icu": ("ICU", "ICU"),
}


LEVEL_WORDS: dict[str, str] = {"low": "Low", "central": "Central", "high": "High"}


def format_date(day: dt.date | None, *, year: bool = True, missing: str = "none") -> str:
    """A date as ``27 Feb 2027`` (English month abbreviations, any locale).

    Parameters
    ----------
    day : datetime.date or None
        The date.
    year : bool, optional
        Include the year.
    missing : str, optional
        Text for None.

    Returns
    -------
    str
        The date as printed in the pack.
    """
    if day is None:
        return missing
    text = f"{day.day} {_MONTHS[day.month - 1]}"
    return f"{text} {day.year}" if year else text


def format_period(start: dt.date, end: dt.date) -> str:
    """A span of dates, both ends included: ``9 Feb to 23 Mar 2027``.

    Parameters
    ----------
    start, end : datetime.date
        First and last day.

    Returns
    -------
    str
        The span; the year is printed once when both ends share it.
    """
    if start == end:
        return format_date(start)
    if start.year == end.year:
        return f"{format_date(start, year=False)} to {format_date(end)}"
    return f"{format_date(start)} to {format_date(end)}"


def format_number(value: float | None, *, missing: str = "n/a", words: bool = False) -> str:
    """A count of beds, people or bed-days as printed: a whole number.

    Beds and people are whole in every table and sentence of the pack
    (``1,750``, ``7``); decimals appear only in the methods appendix. A
    positive value that rounds to zero is ``<1`` (``under 1`` in sentences),
    so an average of a fraction of a bed is not shown as none.

    Parameters
    ----------
    value : float or None
        The number [beds, persons or bed-days].
    missing : str, optional
        Text for None, NaN or infinity.
    words : bool, optional
        For a sentence: ``under 1`` instead of ``<1``.

    Returns
    -------
    str
        The formatted number.
    """
    if value is None or not math.isfinite(value):
        return missing
    whole = round(value)
    if whole == 0:
        if abs(value) < 1e-9:
            return "0"
        return "under 1" if words else "<1"
    return f"{whole:,}"


def shortfall_beds(peak_beds: float, available_beds: float, largest_shortfall_beds: float) -> int:
    """The largest shortfall in whole beds, consistent with the rounded peak and beds.

    When the largest shortfall falls on the day of the peak against a fixed
    number of available beds (the usual case), it is the rounded peak minus
    the rounded available beds, so that "peaking at 69 beds, 51 more than
    the 18 available" adds up as printed; otherwise the rounded shortfall.

    Parameters
    ----------
    peak_beds : float
        Peak demand [beds].
    available_beds : float
        Available beds on the day of the peak [beds].
    largest_shortfall_beds : float
        Largest daily demand above the available beds [beds].

    Returns
    -------
    int
        Whole beds short (0 when demand never exceeds the beds).
    """
    if largest_shortfall_beds <= 0.0:
        return 0
    gap = peak_beds - available_beds
    if abs(largest_shortfall_beds - gap) <= 1e-6 * max(1.0, peak_beds):
        return max(round(peak_beds) - round(available_beds), 0)
    return round(largest_shortfall_beds)


def format_about(value: float) -> str:
    """A count rounded for a sentence: two significant figures from 1,000 up.

    Parameters
    ----------
    value : float
        The number [persons, beds or bed-days].

    Returns
    -------
    str
        ``1,750`` gives ``1,800``; ``302`` stays ``302``; below 10 as
        :func:`format_number`.
    """
    if not math.isfinite(value):
        return "n/a"
    if abs(value) >= 1000:
        digits = int(math.floor(math.log10(abs(value)))) - 1
        return f"{round(value, -digits):,.0f}"
    return format_number(value)


def count_phrase(value: float, singular: str, plural: str) -> str:
    """A rounded count with its noun, for sentences.

    Parameters
    ----------
    value : float
        The count [persons, beds ...].
    singular, plural : str
        The noun in both numbers.

    Returns
    -------
    str
        ``fewer than one death``, ``about one death``, ``about 14 deaths``,
        ``about 350 deaths``, ``about 1,800 admissions`` (two significant
        figures from 100 up).
    """
    if value < 0.5:
        return f"fewer than one {singular}"
    if round(value) == 1:
        return f"about one {singular}"
    if value >= 100:  # two significant figures, as in format_about
        digits = int(math.floor(math.log10(value))) - 1
        return f"about {round(value, -digits):,.0f} {plural}"
    return f"about {round(value)} {plural}"


def format_percent(share: float | None, *, missing: str = "n/a") -> str:
    """A share as a percentage: whole from 10% up, one decimal below.

    Parameters
    ----------
    share : float or None
        The share [fraction].
    missing : str, optional
        Text for None, NaN or infinity.

    Returns
    -------
    str
        ``60%``, ``4.5%``, ``<0.1%`` or ``0%``.
    """
    if share is None or not math.isfinite(share):
        return missing
    pct = 100.0 * share
    if pct == 0.0:
        return "0%"
    if abs(pct) >= 9.95:
        return f"{round(pct)}%"
    if abs(pct) < 0.05:
        return "<0.1%"
    return f"{pct:.1f}%"


def beds_phrase(value: float, kind: str = "") -> str:
    """Whole beds with their noun: ``1 bed``, ``33 ICU beds``, ``less than one ward bed``.

    Parameters
    ----------
    value : float
        Beds [beds].
    kind : str, optional
        A word before the noun (``ward``, ``ICU``).

    Returns
    -------
    str
        The phrase.
    """
    whole = round(value)
    noun = f"{kind} bed".strip()
    if whole == 0:
        return f"no {noun}s" if abs(value) < 1e-9 else f"less than one {noun}"
    return f"1 {noun}" if whole == 1 else f"{whole:,} {noun}s"


def quoted(name: str) -> str:
    """A scenario or measure name in typographic quotes: “Slow spread, mild, isolation only”."""
    return f"\u201c{name}\u201d"


def lower_first(text: str) -> str:
    """Text with its first letter in lower case, unless it starts an acronym (``ICU``)."""
    if len(text) > 1 and text[1].isupper():
        return text
    return text[:1].lower() + text[1:]


def format_days(days: int) -> str:
    """A whole number of days with its noun: ``1 day``, ``43 days``."""
    return "1 day" if days == 1 else f"{days:,} days"


def format_decimal(value: float | None, digits: int = 2, *, missing: str = "n/a") -> str:
    """A ratio or rate with a fixed number of decimals (``1.90``)."""
    if value is None or not math.isfinite(value):
        return missing
    return f"{value:.{digits}f}"


def as_date(value: Any) -> dt.date | None:
    """A date from a table cell: pandas timestamps and dates as dates, missing as None."""
    if value is None:
        return None
    try:
        if pd.isna(value):
            return None
    except (TypeError, ValueError):
        pass
    return pd.Timestamp(value).date()


@dataclass(frozen=True)
class Period:
    """A run of consecutive days, both ends included.

    Parameters
    ----------
    start, end : datetime.date
        First and last day.
    """

    start: dt.date
    end: dt.date

    @property
    def days(self) -> int:
        """Length [days]."""
        return (self.end - self.start).days + 1


def periods_over(demand: pd.Series, available: pd.Series | float) -> tuple[Period, ...]:
    """Runs of days on which demand is above the available beds.

    Parameters
    ----------
    demand : pandas.Series
        Daily demand indexed by date [beds].
    available : pandas.Series or float
        Available beds, daily or constant [beds].

    Returns
    -------
    tuple of Period
        In date order; their lengths add up to
        :func:`prepkit.metrics.beds.days_over_capacity`.
    """
    over = ((demand - available) > 0.0).to_numpy()
    dates = [pd.Timestamp(stamp).date() for stamp in demand.index]
    out: list[Period] = []
    start: int | None = None
    for i, flag in enumerate(over):
        if flag and start is None:
            start = i
        elif not flag and start is not None:
            out.append(Period(dates[start], dates[i - 1]))
            start = None
    if start is not None:
        out.append(Period(dates[start], dates[-1]))
    return tuple(out)


def when_over(periods: Sequence[Period], last_day: dt.date | None) -> str:
    """When demand is above the beds, in words: "from 9 Feb to 23 Mar 2027 (43 days)"."""
    total = sum(p.days for p in periods)
    if len(periods) == 1:
        only = periods[0]
        if last_day is not None and only.end >= last_day:
            return (
                f"from {format_date(only.start)} to the end of the period shown "
                f"({format_days(total)})"
            )
        return f"from {format_period(only.start, only.end)} ({format_days(total)})"
    first, last = periods[0], periods[-1]
    return f"on {format_days(total)} between {format_period(first.start, last.end)}"


def name_list(names: Sequence[str]) -> str:
    """Names joined for a sentence: "a and b", "a, b and c"."""
    if len(names) <= 2:
        return " and ".join(names)
    return ", ".join(names[:-1]) + " and " + names[-1]

