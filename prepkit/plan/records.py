"""What a plan holds of its sources: observed days, the inputs read, the file."""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

__all__ = ["InputRecord", "Observation", "Source"]


@dataclass(frozen=True, kw_only=True)
class Observation:
    """One day of observed hospital data (any field may be missing)."""

    date: dt.date
    admissions: float | None = None
    ward_census: float | None = None
    icu_census: float | None = None


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
    """

    sheet: str
    cell: str
    name: str
    label: str
    value: str
    unit: str
    defaulted: bool = False


@dataclass(frozen=True, kw_only=True)
class Source:
    """Where the plan was read from."""

    path: str = ""
    sha256: str = ""
    inputs: tuple[InputRecord, ...] = ()
