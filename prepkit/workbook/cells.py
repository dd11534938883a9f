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

from prepkit.plan import Level
from prepkit.workbook.field_types import Field

#: Error values a spreadsheet may store in a cell.
ERROR_VALUES: frozenset[str] = frozenset(
    {"#NULL!", "#DIV/0!", "#VALUE!", "#REF!", "#NAME?", "#NUM!", "#N/A", "#GETTING_DATA",
     "#SPILL!", "#CALC!", "#FIELD!", "#UNKNOWN!", "#BLOCKED!", "#CONNECT!", "#BUSY!"}
)

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
        return number_as_text(value)
    return ""


def number_as_text(value: float) -> str:
    """A number as a planner would type it (whole numbers without ".0")."""
    if isinstance(value, float) and math.isfinite(value) and value.is_integer():
        return str(int(value))
    return f"{value:.15g}" if isinstance(value, float) else str(value)
