"""The assumptions appendix: every input of the plan, grouped by sheet."""

from __future__ import annotations

import re
from collections.abc import Sequence
from dataclasses import dataclass

from prepkit.plan.records import InputRecord
from prepkit.workbook import schema
from prepkit.workbook.sheets import MATRIX_SHEETS, SHEET_ORDER, SHEET_PURPOSE


@dataclass(frozen=True, kw_only=True)
class AssumptionRow:
    """One input of the appendix, listed on its own line.

    Parameters
    ----------
    cell, label, value, unit : str
        As read (choice values in the words the workbook shows).
    defaulted : bool
        True when the cell was blank and the default was used.
    """

    cell: str
    label: str
    value: str
    unit: str
    defaulted: bool


@dataclass(frozen=True, kw_only=True)
class GridCell:
    """One value of an :class:`AssumptionGrid` (empty when the sheet gave none there).

    Parameters
    ----------
    value : str
        Value as read.
    defaulted : bool
        True when the default was used.
    present : bool
        True when the cell holds an input (False for a gap in the grid).
    """

    value: str = ""
    defaulted: bool = False
    present: bool = False


@dataclass(frozen=True, kw_only=True)
class AssumptionGrid:
    """Inputs laid out as on their sheet: the cell of a value is its column letter and row.

    Parameters
    ----------
    columns : tuple of tuple of str
        (column letter, heading) of every column, left to right; the heading
        is a band label (contact matrices) or a field label with its unit.
    rows : tuple of tuple of (int, str, tuple of GridCell)
        Row number, row label (a band, for contact matrices) and the values
        along the row.
    """

    columns: tuple[tuple[str, str], ...]
    rows: tuple[tuple[int, str, tuple[GridCell, ...]], ...]

    @property
    def count(self) -> int:
        """Number of values in the grid."""
        return sum(1 for _, _, cells in self.rows for c in cells if c.present)


@dataclass(frozen=True, kw_only=True)
class AssumptionGroup:
    """The inputs read from one sheet.

    Parameters
    ----------
    sheet : str
        Sheet name.
    purpose : str
        What the sheet holds (from the schema).
    rows : tuple of AssumptionRow
        Inputs listed one per line (single items, and sparse tables).
    grids : tuple of AssumptionGrid
        Tables and contact matrices laid out as on the sheet.
    matrix : bool
        True for a contact-matrix sheet (rows: band making the contacts).
    unit : str
        Unit of every value of a contact matrix.
    defaulted : int
        How many inputs used their default.
    """

    sheet: str
    purpose: str
    rows: tuple[AssumptionRow, ...] = ()
    grids: tuple[AssumptionGrid, ...] = ()
    matrix: bool = False
    unit: str = ""
    defaulted: int = 0

    @property
    def count(self) -> int:
        """Number of inputs in the group."""
        return len(self.rows) + sum(g.count for g in self.grids)


def shown_value(record: InputRecord) -> str:
    """An input's value as the workbook shows it (choices in their words, e.g. "Fewer contacts")."""
    f = schema.FIELDS_BY_NAME.get(record.name)
    if f is not None and f.type == "choice":
        try:
            return schema.choice_shown(f, record.value)
        except KeyError:
            return record.value
    return record.value


_CELL = re.compile(r"^\$?([A-Z]{1,3})\$?([0-9]+)$")


_MEETING = re.compile(r", band (.+) meeting band (.+)$")


_ROW_KEY = re.compile(r", (?:band|measure|scenario|date) (.+)$")


#: Widest table laid out as a grid [columns], and the least share of its
#: cells that must hold a value; sparser or wider tables are listed instead.
GRID_MAX_COLUMNS = 9


GRID_MIN_FILL = 0.6


def _column_number(letters: str) -> int:
    number = 0
    for char in letters:
        number = number * 26 + (ord(char) - 64)
    return number


def _split_cell(cell: str) -> tuple[str, int] | None:
    match = _CELL.match(cell.upper())
    return (match[1], int(match[2])) if match else None


def _grid_heading(record: InputRecord) -> str:
    f = schema.FIELDS_BY_NAME.get(record.name)
    label = f.label if f is not None else record.label.split(",", 1)[0]
    unit = f.unit if f is not None else record.unit
    return f"{label} [{unit}]" if unit and unit != "date" else label


def _grid(records: Sequence[InputRecord], *, matrix: bool) -> AssumptionGrid | None:
    cells: dict[tuple[int, int], GridCell] = {}
    letters: dict[int, str] = {}
    headings: dict[int, str] = {}
    row_labels: dict[int, str] = {}
    for record in records:
        where = _split_cell(record.cell)
        if where is None:
            return None
        letter, row = where
        col = _column_number(letter)
        letters[col] = letter
        cells[(row, col)] = GridCell(
            value=record.value if matrix else shown_value(record), defaulted=record.defaulted,
            present=True,
        )
        if matrix:
            names = _MEETING.search(record.label)
            if names:
                row_labels.setdefault(row, names[1])
                headings.setdefault(col, names[2])
        else:
            headings.setdefault(col, _grid_heading(record))
            key = _ROW_KEY.search(record.label)
            if key:
                row_labels.setdefault(row, key[1])
    cols = sorted(letters)
    rows = sorted({r for r, _ in cells})
    for r in rows:  # a key column on the sheet already names the row
        if any(cells.get((r, c), GridCell()).value == row_labels.get(r) for c in cols):
            row_labels.pop(r, None)
    return AssumptionGrid(
        columns=tuple((letters[c], headings.get(c, "")) for c in cols),
        rows=tuple(
            (r, row_labels.get(r, ""), tuple(cells.get((r, c), GridCell()) for c in cols))
            for r in rows
        ),
    )


def _dense(records: Sequence[InputRecord]) -> bool:
    places = [_split_cell(r.cell) for r in records]
    if any(p is None for p in places) or not places:
        return False
    cols = {p[0] for p in places if p}
    rows = {p[1] for p in places if p}
    return len(cols) <= GRID_MAX_COLUMNS and len(places) >= GRID_MIN_FILL * len(cols) * len(rows)


def _row(record: InputRecord) -> AssumptionRow:
    return AssumptionRow(
        cell=record.cell, label=record.label, value=shown_value(record), unit=record.unit,
        defaulted=record.defaulted,
    )


def assumption_groups(records: Sequence[InputRecord]) -> tuple[AssumptionGroup, ...]:
    """Every input of the plan, grouped by sheet in workbook order.

    Single inputs are listed one per line with their cell. Tables (one row
    per band, measure, scenario or day) are laid out as on the sheet when
    they are narrow and dense enough, so the cell of each value is its
    column letter and row number; contact matrices always are.

    Parameters
    ----------
    records : sequence of InputRecord
        ``plan.source.inputs``.

    Returns
    -------
    tuple of AssumptionGroup
        One group per sheet that gave inputs.
    """
    by_sheet: dict[str, list[InputRecord]] = {}
    for record in records:
        by_sheet.setdefault(record.sheet, []).append(record)
    order = [s for s in SHEET_ORDER if s in by_sheet]
    order += [s for s in by_sheet if s not in order]
    matrix_sheets = set(MATRIX_SHEETS.values())
    groups = []
    for sheet in order:
        items = by_sheet[sheet]
        purpose = SHEET_PURPOSE.get(sheet, "")
        defaulted = sum(1 for r in items if r.defaulted)
        if sheet in matrix_sheets:
            grid = _grid(items, matrix=True)
            if grid is not None:
                groups.append(AssumptionGroup(
                    sheet=sheet, purpose=purpose, grids=(grid,), matrix=True,
                    unit=items[0].unit, defaulted=defaulted,
                ))
                continue
        singles: list[InputRecord] = []
        tables: dict[str, list[InputRecord]] = {}
        for record in items:
            f = schema.FIELDS_BY_NAME.get(record.name)
            if f is not None and f.table is not None:
                tables.setdefault(f.table, []).append(record)
            else:
                singles.append(record)
        rows = [_row(r) for r in singles]
        grids = []
        for table_records in tables.values():
            grid = _grid(table_records, matrix=False) if _dense(table_records) else None
            if grid is None:
                rows += [_row(r) for r in table_records]
            else:
                grids.append(grid)
        groups.append(AssumptionGroup(
            sheet=sheet, purpose=purpose, rows=tuple(rows), grids=tuple(grids),
            defaulted=defaulted,
        ))
    return tuple(groups)

