"""Cell values: from what a spreadsheet cell holds to a typed value.

Planners type values in many shapes. This module accepts the common ones and
names the rest in plain words:

* numbers: numeric cells, or text such as ``"1200"``, ``"1,200"`` or
  ``"12.5"``; never NaN or infinity;
* shares: ``25%`` (a percent-formatted cell stores 0.25) or ``0.25``, or the
  text ``"25%"``; a bare number above 1 is an error, not a percentage, and
  one up to 100 gets the hint "did you mean 75%?";
* dates: spreadsheet dates, or ISO text ``"2027-01-15"``;
* choices: the shown entry, compared without case or extra spaces;
* lists: names separated by ``;`` or ``,``;
* formulas: their saved result; a formula without one is an error naming
  the formula.

Nothing here knows a sheet layout: :mod:`prepkit.workbook.reader` finds the
cells, this module reads one at a time.
"""

from __future__ import annotations

import datetime as dt
import math
import re
from dataclasses import dataclass

from prepkit.errors import BadValue
from prepkit.plan import Level
from prepkit.workbook.field_types import Field
from prepkit.workbook.schema import MAX_TEXT_LENGTH

#: Error values a spreadsheet may store in a cell.
ERROR_VALUES: frozenset[str] = frozenset(
    {"#NULL!", "#DIV/0!", "#VALUE!", "#REF!", "#NAME?", "#NUM!", "#N/A", "#GETTING_DATA",
     "#SPILL!", "#CALC!", "#FIELD!", "#UNKNOWN!", "#BLOCKED!", "#CONNECT!", "#BUSY!"}
)

#: Dates outside these are typing mistakes, not plans.
EARLIEST_DATE = dt.date(1900, 1, 1)
LATEST_DATE = dt.date(2199, 12, 31)

_NUMBER_TEXT = re.compile(
    r"^[+-]?(?:\d+|\d{1,3}(?:,\d{3})+)?(?:\.\d+)?(?:[eE][+-]?\d+)?$"
)
_ISO_DATE = re.compile(r"^(\d{4})-(\d{2})-(\d{2})$")
_LIST_SPLIT = re.compile(r"[;,]")
_DASHES = str.maketrans({"\u2010": "-", "\u2011": "-", "\u2012": "-", "\u2013": "-",
                         "\u2014": "-", "\u2212": "-", "\u00a0": " "})
_FOUND_TEXT_LIMIT = 60


@dataclass(frozen=True)
class RawCell:
    """What one spreadsheet cell holds.

    Attributes
    ----------
    value : object
        Stored value; for a formula, its saved result (None when the file
        has none).
    number_format : str
        The cell's number format, e.g. ``"0%"``.
    formula : str or None
        Formula text (``"=B4*2"``) when the cell holds a formula.
    error : bool
        True when the cell holds a spreadsheet error value such as
        ``#DIV/0!``.
    """

    value: object
    number_format: str = "General"
    formula: str | None = None
    error: bool = False

    @property
    def unresolved(self) -> bool:
        """True for a formula the file holds no saved result for."""
        return self.formula is not None and self.value is None

    @property
    def is_percent(self) -> bool:
        """True when the number format shows the value as a percentage."""
        return is_percent_format(self.number_format)

    @property
    def blank(self) -> bool:
        """True when the cell holds nothing (spaces count as nothing)."""
        if self.unresolved or self.error:
            return False
        return self.value is None or (isinstance(self.value, str) and not self.value.strip())


@dataclass(frozen=True)
class Got:
    """One input as found in the workbook: where, what, and its typed value.

    Attributes
    ----------
    field : Field
        Declaration of the input.
    level : {"low", "central", "high"}
        Column level for uncertain fields; ``"central"`` otherwise.
    sheet, cell : str
        Where it was read; ``cell`` is ``""`` when the row or column is
        missing.
    label : str
        Plain-words name with level and band or row key, for messages.
    value : object
        Typed value, the default when ``defaulted``; None when blank
        without a default, or unreadable.
    found : str
        What the cell holds, in plain words, for messages.
    blank : bool
        The cell was blank (or missing).
    bad : bool
        The cell could not be read; a problem has been recorded.
    defaulted : bool
        The default was used.
    percent : bool
        The value was given as a percentage (cell format or ``%`` text).
    """

    field: Field
    level: Level
    sheet: str
    cell: str
    label: str
    value: object
    found: str
    blank: bool
    bad: bool = False
    defaulted: bool = False
    percent: bool = False

    @property
    def ok(self) -> bool:
        """True when the value is there and readable."""
        return self.value is not None and not self.bad


Key = tuple[str, Level]
"""(canonical field name, level) of one input of an item block or a table row."""


@dataclass(frozen=True)
class TableRow:
    """One filled row of a table.

    Attributes
    ----------
    sheet : str
        Sheet of the table.
    row : int
        Spreadsheet row number.
    key : str
        Row key as text (band label, measure or scenario name, ISO date);
        ``""`` when blank or unreadable.
    key_cell : str
        Cell of the key, e.g. ``"A7"``.
    gots : dict of (field name, level) -> Got
        Every column of the row (missing columns as blank Gots).
    """

    sheet: str
    row: int
    key: str
    key_cell: str
    gots: dict[Key, Got]

    def get(self, name: str, level: Level = "central") -> Got:
        """Input of this row by canonical field name and level."""
        return self.gots[(name, level)]


def is_percent_format(number_format: str) -> bool:
    """True when a number format shows values as percentages."""
    # A % inside quotes or after a backslash is literal text, not scaling.
    unquoted = re.sub(r'"[^"]*"|\\.', "", number_format or "")
    return "%" in unquoted


def normalise_key(text: str) -> str:
    """Band label or name reduced for matching: case, spaces and dash kinds dropped."""
    return " ".join(text.translate(_DASHES).casefold().split())


def field_label(f: Field, level: Level | None = None, noun: str = "", key: str = "") -> str:
    """Plain-words name of an input, e.g. ``"ICU share of admissions, central, band 65-74"``."""
    parts = [f.label]
    if level is not None and f.uncertain:
        parts.append(level)
    if key:
        parts.append(f"{noun} {key}" if noun else key)
    return ", ".join(parts)


def show(raw: RawCell | None) -> str:
    """What a cell holds, in plain words, for messages."""
    if raw is None:
        return "a blank cell"
    if raw.unresolved:
        return (
            f"a formula with no saved result ({_clip(raw.formula or '')}); open and save the "
            "file in a spreadsheet program, or type the value"
        )
    value = raw.value
    if raw.error or (isinstance(value, str) and value.strip() in ERROR_VALUES):
        return f"an error value {str(value).strip()}"
    if raw.blank:
        return "a blank cell"
    if isinstance(value, bool):
        return "TRUE" if value else "FALSE"
    if isinstance(value, int | float):
        if raw.is_percent and math.isfinite(value):
            return f"{100 * value:.10g}%"
        return f"{value:.10g}"
    if isinstance(value, dt.datetime):
        if value.time() == dt.time(0, 0):
            return f"a date {value.date().isoformat()}"
        return f"a date and time {value.isoformat(sep=' ')}"
    if isinstance(value, dt.date):
        return f"a date {value.isoformat()}"
    if isinstance(value, dt.time):
        return f"a time {value.isoformat()}"
    if isinstance(value, dt.timedelta):
        return f"a duration {value}"
    return '"' + _clip(str(value)) + '"'


def _clip(text: str) -> str:
    text = " ".join(text.split())
    if len(text) <= _FOUND_TEXT_LIMIT:
        return text
    return text[: _FOUND_TEXT_LIMIT - 3] + "..."


def text_of(raw: RawCell | None) -> str:
    """Cell content as label text (``""`` for blanks, formulas without result, dates)."""
    if raw is None or raw.blank or raw.unresolved or raw.error:
        return ""
    value = raw.value
    if isinstance(value, str):
        return value.strip()
    if isinstance(value, bool):
        return ""
    if isinstance(value, int | float):
        return _number_as_text(value)
    return ""


def _number_as_text(value: float) -> str:
    if isinstance(value, float) and math.isfinite(value) and value.is_integer():
        return str(int(value))
    return f"{value:.15g}" if isinstance(value, float) else str(value)


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
        text = _number_as_text(value)
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
