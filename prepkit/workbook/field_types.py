"""The declaration types of the workbook schema: a field, how it is sampled, a table."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Literal

FieldType = Literal["text", "integer", "number", "share", "date", "choice", "list"]

SampledRange = Literal["full", "transmissibility", "severity"]


@dataclass(frozen=True, kw_only=True)
class Sampled:
    """How the uncertainty ensemble draws an uncertain field.

    Attributes
    ----------
    key : str
        Dimension key of the Latin hypercube; ``{name}`` stands for the
        measure's name in per-measure fields.
    label : str
        Plain-words name in the sensitivity (tornado) results; ``{name}`` as
        for ``key``.
    unit : str
        Unit of the drawn values in the ensemble results.
    rank : int
        Place of the field in the Latin hypercube (plan fields first, then
        per measure), so that the order of the columns never depends on the
        order of the declarations.
    around : {"full", "transmissibility", "severity"}
        ``"full"`` draws over Low-High with mode Central; the others draw
        around the scenario's level of that name.
    inverted : bool
        A high level of ``around`` means the Low end (a short doubling time
        is fast spread).
    first_only : bool
        Per-measure fields: drawn only for the first measure of a scenario
        that has the value (one vaccine per scenario).
    outcome : bool
        Not an input of the model but a weight of its outcomes (the extra
        deaths of patients without a bed): drawn like the others, used by the
        metrics only, and left out of the one-at-a-time sensitivity runs.
    """

    key: str
    label: str
    unit: str
    rank: int
    around: SampledRange = "full"
    inverted: bool = False
    first_only: bool = False
    outcome: bool = False


@dataclass(frozen=True, kw_only=True)
class Field:
    """Declaration of one workbook input.

    Attributes
    ----------
    name : str
        Canonical name, ``<group>.<attribute>``; unique.
    sheet : str
        Sheet the field lives on.
    label : str
        Plain-words label shown in the workbook and the report.
    unit : str
        Unit shown beside the value ("%" for shares).
    type : FieldType
        Kind of value expected.
    minimum, maximum : float or None
        Allowed range, inclusive, in the internal unit (fractions for
        shares, days for times).
    default : object or None
        Value used when the cell is blank; None for no default.
    required : bool
        A blank cell is an error (only when ``default`` is None).
    help : str
        Guidance shown in the workbook and as the Excel input message.
    uncertain : bool
        Low / Central / High columns apply.
    choices : dict of str -> str
        Allowed entries for ``type="choice"`` (shown -> canonical).
    table : str or None
        Table the field is a column of; None for an item.
    target : str or None
        Where the value lands in the :class:`~prepkit.plan.Plan`, a dotted
        path: ``"capacity.icu_beds"`` (an item), ``"severity.icu_share[band]"``
        (one entry per age band, in the order of the bands),
        ``"contacts.setting_shares[band].home"`` (one key of a per-band dict)
        or ``"bands[].people"`` (one entry per table row). None for the key
        column of a per-band table (it only matches rows to bands).
    sampled : Sampled or None
        How the uncertainty ensemble draws the field (uncertain fields only).
    """

    name: str
    target: str | None = None
    sheet: str
    label: str
    unit: str
    type: FieldType
    help: str
    minimum: float | None = None
    maximum: float | None = None
    default: object | None = None
    required: bool = False
    uncertain: bool = False
    choices: Mapping[str, str] | None = None
    table: str | None = None
    width: float = 16.0
    sampled: Sampled | None = None

    @property
    def attribute(self) -> str:
        """Attribute part of the canonical name."""
        return self.name.split(".", 1)[1]

    def expected(self) -> str:
        """Plain-words description of an acceptable value, for messages."""
        if self.type == "share":
            lo = 0.0 if self.minimum is None else self.minimum
            hi = 1.0 if self.maximum is None else self.maximum
            return f"a share between {_num(lo)} and {_num(hi)} (e.g. 25% or 0.25)"
        if self.type == "date":
            return "a date (an Excel date or text like 2027-01-15)"
        if self.type == "choice":
            return "one of " + ", ".join(repr(c) for c in (self.choices or {}))
        if self.type == "text":
            return "some text"
        if self.type == "list":
            return "names separated by ';'"
        what = "a whole number" if self.type == "integer" else "a number"
        if self.minimum is not None and self.maximum is not None:
            return f"{what} between {_num(self.minimum)} and {_num(self.maximum)}"
        if self.minimum is not None:
            return f"{what} of at least {_num(self.minimum)}"
        if self.maximum is not None:
            return f"{what} of at most {_num(self.maximum)}"
        return what


def _num(x: float) -> str:
    # Whole numbers in full with thousands separators ("1,000,000", not "1e+06").
    if float(x).is_integer() and abs(x) < 1e15:
        return f"{int(x):,}"
    return f"{x:g}"


@dataclass(frozen=True, kw_only=True)
class Table:
    """A table-shaped block: its sheet, key column and Excel table name."""

    name: str
    sheet: str
    key: str
    excel_name: str
    template_rows: int
    per_band: bool = False
    help: str = ""
