"""The columns of ``results.xlsx``: their types, number formats and the key columns.

A :class:`SheetColumn` holds what a planner reads at the top of a column
(plain words, the unit in brackets), the name the same figure has in the
CSV and JSON files of the pack, the unit in words, the Excel number format
and what the column means. A :class:`SheetColumns` groups the columns of one
sheet with the file and place where its records live. The sheet writers
(:mod:`prepkit.report.results_workbook`), the Column guide sheet and the
tests all read these declarations; no other module names a column of the
workbook.

Number formats follow one rule: beds, people, doses and bed-days are shown
whole (``#,##0``) on the summary sheets and with one decimal on the daily
sheets, where they are model output for a single day; shares are stored as
fractions and shown as percentages; dates are dates. The stored values are
never rounded, so a planner can compute with them.

Each column is declared once: the scenario sheets in
:mod:`prepkit.report.results_workbook_columns_scenarios`, the sheets of the
uncertainty ensemble in :mod:`prepkit.report.results_workbook_columns_uncertainty`,
the Column guide itself here.
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = [
    "BED_TYPE",
    "BY_ROW",
    "DATE",
    "DAYS",
    "DECIMAL_DAYS",
    "GUIDE",
    "GuideRow",
    "KEYS",
    "ONE_DECIMAL",
    "PERCENT",
    "RATE",
    "RATIO",
    "TEXT",
    "VARIANT_RECORD",
    "WHOLE",
    "SheetColumn",
    "SheetColumns",
    "column",
    "key_columns",
]

WHOLE = "#,##0"
"""Beds, people, doses and bed-days on the summary sheets."""
ONE_DECIMAL = "#,##0.0"
"""Beds and people per day on the daily sheets."""
PERCENT = "0.0%"
"""Shares, stored as fractions in [0, 1]."""
DAYS = "0"
"""Counts of days and whole numbers (scenario numbers)."""
DECIMAL_DAYS = "0.0"
"""Durations in days with a fraction (doubling time, periods)."""
RATIO = "0.00"
"""Dimensionless ratios (R0)."""
RATE = "0.000"
"""Rates per day (growth rate)."""
DATE = "d mmm yyyy"
"""Calendar dates, as the briefing pack writes them."""
TEXT = "@"
"""Text: the column holds no numbers."""
BY_ROW = ""
"""Numbers whose format comes from their row (the metric or input the row is about)."""

#: Where the figures of one scenario variant sit in ``summary.json``; ``<variant>``
#: is ``with_interventions`` or ``without_interventions``.
VARIANT_RECORD = "scenarios[n].<variant>"

#: One row of the Column guide: sheet, header, file, name in the file, unit, meaning.
GuideRow = tuple[str, str, str, str, str, str]


@dataclass(frozen=True, kw_only=True)
class SheetColumn:
    """One column of a sheet of the results workbook.

    Parameters
    ----------
    header : str
        What the header cell says: plain words, the unit in brackets.
    name : str
        Name of the same figure in the file of :attr:`SheetColumns.file`
        (a CSV column, or a key path in the JSON record); also the
        attribute path the sheet writer reads the value from.
    unit : str
        Unit in words ("beds", "people", "%", "date", "text").
    number_format : str
        Excel number format of the column's cells (:data:`TEXT` for text).
    meaning : str
        What the column holds, in a sentence.
    width : float
        Column width [characters].
    absolute : bool
        True when :attr:`name` is the whole name in the file, not a name
        under the sheet's :attr:`SheetColumns.prefix` (key columns).
    """

    header: str
    name: str
    unit: str
    number_format: str
    meaning: str
    width: float = 11.0
    absolute: bool = False

    @property
    def numeric(self) -> bool:
        """True when the column holds numbers or dates."""
        return self.number_format != TEXT


@dataclass(frozen=True, kw_only=True)
class SheetColumns:
    """The columns of one sheet and where their figures live in the pack's files.

    Parameters
    ----------
    sheet : str
        Sheet name, or the pattern of the per-scenario sheets.
    file : str
        File of the pack that holds the same figures.
    prefix : str
        Key path in the file under which the names of the sheet's figures
        sit (``scenarios[n].<variant>``); empty for CSV columns.
    columns : tuple of SheetColumn
        Left to right.
    """

    sheet: str
    file: str
    prefix: str
    columns: tuple[SheetColumn, ...]

    def full_name(self, item: SheetColumn) -> str:
        """Name of a column's figures in :attr:`file`, prefix included."""
        if item.absolute or not self.prefix or not item.name:
            return item.name
        return f"{self.prefix}.{item.name}"

    def guide_rows(self, sheet: str | None = None) -> list[GuideRow]:
        """The Column guide's rows for these columns.

        Parameters
        ----------
        sheet : str, optional
            Sheet name to show (default :attr:`sheet`).

        Returns
        -------
        list of tuple of str
            Sheet, header, file, name in the file, unit and meaning of
            every column.
        """
        return [(sheet or self.sheet, c.header, self.file, self.full_name(c), c.unit, c.meaning)
                for c in self.columns]

    @property
    def headers(self) -> list[str]:
        """The header cells, left to right."""
        return [c.header for c in self.columns]

    @property
    def widths(self) -> list[float]:
        """Column widths [characters], left to right."""
        return [c.width for c in self.columns]


def column(header: str, name: str, unit: str, number_format: str, meaning: str,
           width: float = 11.0, *, absolute: bool = False) -> SheetColumn:
    """A :class:`SheetColumn` from its fields in order (width [characters])."""
    return SheetColumn(header=header, name=name, unit=unit, number_format=number_format,
                       meaning=meaning, width=width, absolute=absolute)


def key_columns(scenarios: str) -> tuple[SheetColumn, SheetColumn, SheetColumn]:
    """Scenario, scenario number and measures: the first columns of a per-scenario sheet.

    Parameters
    ----------
    scenarios : str
        Key path of the scenario list in ``summary.json``.

    Returns
    -------
    tuple of SheetColumn
        The three key columns.
    """
    return (
        column("Scenario", f"{scenarios}[n].name", "text", TEXT,
               "Scenario name as in the planning workbook.", 24, absolute=True),
        column("Scenario number", f"position in {scenarios}, from 1", "whole number", DAYS,
               "Order of the scenario in the planning workbook, from 1; the number of its "
               "Daily sheets. In the names of this guide [n] is the scenario's entry in the "
               "list (JSON counts from 0).", 9, absolute=True),
        column("Measures", "<variant>", "text", TEXT,
               "With the scenario's measures or without them: <variant> is with_interventions "
               "or without_interventions (the CSV files say 'with measures' or 'without "
               "measures').", 16, absolute=True),
    )


KEYS = key_columns("scenarios")

BED_TYPE = column("Beds", "<beds>", "text", TEXT,
                  "Ward beds or ICU beds: <beds> is ward or icu.", 7, absolute=True)

GUIDE = SheetColumns(
    sheet="Column guide", file="", prefix="",
    columns=(
        column("Sheet", "", "text", TEXT, "Sheet of this workbook.", 18),
        column("Column", "", "text", TEXT, "Header of the column on that sheet.", 34),
        column("File", "", "text", TEXT, "File of the pack with the same figures.", 13),
        column("Name in the file", "", "text", TEXT,
               "Column name (CSV) or key path (JSON) of the same figures in that file.", 50),
        column("Unit", "", "text", TEXT, "Unit of the figures.", 14),
        column("Meaning", "", "text", TEXT, "What the column holds.", 60),
    ),
)
