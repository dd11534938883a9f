"""Find the header rows of item blocks and tables.

See the layout rules in :mod:`prepkit.workbook.schema`.
"""

from __future__ import annotations

from dataclasses import dataclass

from openpyxl.utils import get_column_letter

from prepkit.plan import Level
from prepkit.workbook import schema
from prepkit.workbook.cells import Key, text_of
from prepkit.workbook.load import Grid
from prepkit.workbook.schema import TABLES, header_text, normalise_header
from prepkit.workbook.sheets import (
    CENTRAL_HEADER,
    HIGH_HEADER,
    ITEM_HEADER,
    LOW_HEADER,
    VALUE_HEADER,
)

__all__ = ["ItemHeader", "TableHeader", "find_item_header", "find_table_header", "ref"]


def ref(row: int, col: int) -> str:
    """Cell reference of a row and column, e.g. ``"D7"``."""
    return f"{get_column_letter(col)}{row}"


@dataclass(frozen=True)
class ItemHeader:
    """Header row of an item block: its row, the item column and the value columns."""

    row: int
    item_col: int
    cols: dict[Level, int]


@dataclass(frozen=True)
class TableHeader:
    """Header row of a table: its row, the column of each (field, level), repeated headers."""

    row: int
    cols: dict[Key, int]
    duplicates: tuple[int, ...]


def find_item_header(grid: Grid) -> ItemHeader | None:
    """The first row holding the item header and a Value (or Central) header to its right."""
    item = normalise_header(ITEM_HEADER)
    value_heads: tuple[tuple[Level, str], ...] = (
        ("central", normalise_header(VALUE_HEADER)),
        ("central", normalise_header(CENTRAL_HEADER)),
        ("low", normalise_header(LOW_HEADER)),
        ("high", normalise_header(HIGH_HEADER)),
    )
    for r in grid.rows:
        cells = grid.row(r)
        texts = {c: normalise_header(text_of(raw)) for c, raw in sorted(cells.items())}
        item_col = next((c for c, text in texts.items() if text == item), None)
        if item_col is None:
            continue
        cols: dict[Level, int] = {}
        for c, text in texts.items():
            if c <= item_col:
                continue
            for level, head in value_heads:
                if text == head and level not in cols:
                    cols[level] = c
        if "central" in cols:
            return ItemHeader(row=r, item_col=item_col, cols=cols)
    return None


def _table_headings(table: str) -> dict[str, Key]:
    return {
        normalise_header(header_text(f, level)): (f.name, level)
        for f, level in schema.table_columns(table)
    }


def find_table_header(grid: Grid, table: str) -> TableHeader | None:
    """The row holding the key header and the most other column headers of a table.

    A row must hold one other header beside the key's (when the table has other columns):
    a lone cell reading like the key header, such as "date" in the Unit column of an item,
    is not a table.
    """
    headings = _table_headings(table)
    fewest = min(2, len(set(headings.values())))
    key: Key = (TABLES[table].key, "central")
    best: TableHeader | None = None
    for r in grid.rows:
        cols: dict[Key, int] = {}
        duplicates: list[int] = []
        for c, raw in sorted(grid.row(r).items()):
            found = headings.get(normalise_header(text_of(raw)))
            if found is None:
                continue
            if found in cols:
                duplicates.append(c)
            else:
                cols[found] = c
        if key in cols and len(cols) >= fewest and (best is None or len(cols) > len(best.cols)):
            best = TableHeader(row=r, cols=cols, duplicates=tuple(duplicates))
    return best
