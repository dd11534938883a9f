"""Typed values of cells: a cell read as its field's type and checked against its range."""

from __future__ import annotations

import datetime as dt
import math
import re

from prepkit.errors import BadValue
from prepkit.workbook.cells import ERROR_VALUES, RawCell, normalise_key, number_as_text, show
from prepkit.workbook.field_types import Field
from prepkit.workbook.schema import MAX_TEXT_LENGTH

__all__ = ["EARLIEST_DATE", "LATEST_DATE", "clean_list", "date_of", "number_from_text", "parse",
           "percent_hint", "share_of"]

#: Dates outside these are typing mistakes, not plans.
EARLIEST_DATE = dt.date(1900, 1, 1)
LATEST_DATE = dt.date(2199, 12, 31)

_NUMBER_TEXT = re.compile(
    r"^[+-]?(?:\d+|\d{1,3}(?:,\d{3})+)?(?:\.\d+)?(?:[eE][+-]?\d+)?$"
)
_ISO_DATE = re.compile(r"^(\d{4})-(\d{2})-(\d{2})$")
_LIST_SPLIT = re.compile(r"[;,]")


def parse(f: Field, raw: RawCell | None) -> tuple[object | None, bool]:
    """Typed value of a cell for a field.

    Parameters
    ----------
    f : Field
        Declaration of the input the cell holds.
    raw : RawCell or None
        The cell; None when it does not exist.

    Returns
    -------
    value : object or None
        None when the cell is blank; otherwise a ``str``, ``int``,
        ``float`` (shares as fractions [fraction]), ``datetime.date`` or
        ``tuple`` of ``str``, by field type.
    percent : bool
        True when the value was given as a percentage.

    Raises
    ------
    BadValue
        When the cell holds something the field cannot take.
    """
    if raw is None or raw.blank:
        return None, False
    if raw.unresolved:
        raise BadValue(show(raw), expected="a value")
    if raw.error or (isinstance(raw.value, str) and raw.value.strip() in ERROR_VALUES):
        raise BadValue(show(raw))
    if f.type == "text":
        return _text(raw), False
    if f.type == "integer":
        number = _number(raw)
        if not number.is_integer():
            raise BadValue(show(raw))
        _check_range(f, number, raw)
        return int(number), False
    if f.type == "number":
        if "%" in f.unit:
            # Trigger levels: a share of beds or a count per day, by measure.
            number, percent = share_of(raw)
            _check_range(f, number, raw)
            return number, percent
        number = _number(raw)
        _check_range(f, number, raw)
        return number, False
    if f.type == "share":
        share, percent = share_of(raw)
        try:
            _check_range(f, share, raw, low=0.0, high=1.0)
        except BadValue as exc:
            hint = percent_hint(share, f.minimum if f.minimum is not None else 0.0,
                                f.maximum if f.maximum is not None else 1.0)
            if not hint:
                raise
            raise BadValue(f"{exc.found} ({hint})", exc.expected) from None
        return share, percent
    if f.type == "date":
        return date_of(raw), False
    if f.type == "choice":
        return _choice(f, raw), False
    if f.type == "list":
        return clean_list(tuple(_LIST_SPLIT.split(_text(raw)))), False
    raise AssertionError(f"unknown field type {f.type!r} of {f.name}")  # schema bug


def clean_list(items: tuple[str, ...]) -> tuple[str, ...]:
    """List entries with spaces trimmed and empty entries dropped."""
    return tuple(s.strip() for s in items if s.strip())


def _text(raw: RawCell) -> str:
    value = raw.value
    if isinstance(value, str):
        text = value.strip()
    elif isinstance(value, bool) or not isinstance(value, int | float):
        hint = ""
        if isinstance(value, dt.date | dt.datetime):
            hint = (
                " (the spreadsheet may have turned text such as 5-9 into a date: format the "
                "cell as Text and type it again)"
            )
        raise BadValue(show(raw) + hint)
    elif not math.isfinite(value):
        raise BadValue(show(raw))
    else:
        text = number_as_text(value)
    if len(text) > MAX_TEXT_LENGTH:
        raise BadValue(
            f"text of {len(text)} characters",
            expected=f"some text of at most {MAX_TEXT_LENGTH} characters",
        )
    return text


def _number(raw: RawCell) -> float:
    value = raw.value
    if isinstance(value, bool):
        raise BadValue(show(raw))
    if isinstance(value, int | float):
        number = float(value)
    elif isinstance(value, str):
        parsed = number_from_text(value)
        if parsed is None:
            raise BadValue(show(raw))
        number = parsed
    else:
        raise BadValue(show(raw))
    if not math.isfinite(number):
        raise BadValue(show(raw))
    return number


def number_from_text(text: str) -> float | None:
    """Number written as text (``"1200"``, ``"1,200"``, ``"12.5"``), or None."""
    text = text.strip().replace("\u00a0", "").replace(" ", "")
    if not text or not _NUMBER_TEXT.match(text) or not any(c.isdigit() for c in text):
        return None
    try:
        number = float(text.replace(",", ""))
    except ValueError:  # "e5" passes the pattern but is no number
        return None
    return number if math.isfinite(number) else None


def share_of(raw: RawCell) -> tuple[float, bool]:
    """Fraction held by a share cell, and whether it was given as a percentage.

    A number is the fraction itself (a spreadsheet stores 25% as 0.25);
    text may end in ``%``.

    Raises
    ------
    BadValue
        When the cell holds no number.
    """
    value = raw.value
    if isinstance(value, str) and value.strip().endswith("%"):
        number = number_from_text(value.strip()[:-1])
        if number is None:
            raise BadValue(show(raw))
        return number / 100.0, True
    return _number(raw), raw.is_percent


def percent_hint(share: float, low: float = 0.0, high: float = 1.0) -> str:
    """A hint for a share typed as a whole percentage, or ``""``.

    "75" in a share cell is 75 times the whole (a percent-formatted cell
    shows it as 7500%); the planner almost surely meant 75%. The hint is
    given when the value is above 1, at most 100, and a hundredth of it
    lies in the field's range.

    Parameters
    ----------
    share : float
        The value as read [fraction].
    low, high : float
        The field's range [fraction].

    Returns
    -------
    str
        E.g. ``"did you mean 75%? Type 75% or 0.75"``, or ``""``.
    """
    if not 1.0 < share <= 100.0 or not low <= share / 100.0 <= high:
        return ""
    return f"did you mean {share:.6g}%? Type {share:.6g}% or {share / 100.0:.6g}"


def date_of(raw: RawCell) -> dt.date:
    """Date held by a cell (a spreadsheet date, or ISO text).

    Raises
    ------
    BadValue
        When the cell holds no date, or one outside 1900 to 2199.
    """
    value = raw.value
    if isinstance(value, dt.datetime):
        day = value.date()
    elif isinstance(value, dt.date):
        day = value
    elif isinstance(value, str):
        match = _ISO_DATE.match(value.strip())
        if not match:
            raise BadValue(show(raw))
        try:
            day = dt.date(int(match[1]), int(match[2]), int(match[3]))
        except ValueError:
            raise BadValue(show(raw)) from None
    else:
        raise BadValue(show(raw))
    if not EARLIEST_DATE <= day <= LATEST_DATE:
        raise BadValue(
            show(raw),
            expected=f"a date between {EARLIEST_DATE.isoformat()} and {LATEST_DATE.isoformat()}",
        )
    return day


def _choice(f: Field, raw: RawCell) -> str:
    text = normalise_key(_text(raw))
    for shown, canonical in (f.choices or {}).items():
        if text in (normalise_key(shown), normalise_key(canonical)):
            return canonical
    raise BadValue(show(raw))


def _check_range(
    f: Field, number: float, raw: RawCell, low: float | None = None, high: float | None = None
) -> None:
    lo = f.minimum if f.minimum is not None else low
    hi = f.maximum if f.maximum is not None else high
    if (lo is not None and number < lo) or (hi is not None and number > hi):
        raise BadValue(show(raw))
