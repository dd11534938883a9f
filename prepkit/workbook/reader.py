"""Read a planning workbook into a :class:`~prepkit.plan.Plan`.

Inputs are found by their labels and column headers (see the layout rules in
:mod:`prepkit.workbook.schema`), never by fixed cell addresses: planners may
insert rows, move item rows, put table rows in any order, reorder table
columns and add sheets of their own.

Every problem is collected before anything is raised, so one
:class:`~prepkit.errors.WorkbookError` lists all of them, each with its sheet
and cell. Non-fatal notes come back as warnings beside the plan.

The file is read once into memory and never written: the planner's workbook
is left exactly as it was. Only the sheets named in the schema are parsed,
within the bounds of :mod:`prepkit.workbook.load`.
"""

from __future__ import annotations

import hashlib
import os
from collections.abc import Sequence
from dataclasses import replace
from typing import cast

from prepkit.errors import Problem, WorkbookError
from prepkit.plan import Level, Plan, Setting
from prepkit.plan.records import Source
from prepkit.workbook import schema, validate, validate_plan
from prepkit.workbook.build import Recorder, build_plan
from prepkit.workbook.cells import Got, Key, TableRow, field_label, normalise_key, show, text_of
from prepkit.workbook.checks import CrossChecks
from prepkit.workbook.collect import levels
from prepkit.workbook.field_types import Field
from prepkit.workbook.headers import (
    ItemHeader,
    TableHeader,
    find_item_header,
    find_table_header,
    ref,
)
from prepkit.workbook.load import Grid, open_book
from prepkit.workbook.schema import (
    FIELDS_BY_NAME,
    TABLES,
    format_value,
    header_text,
    normalise_header,
)
from prepkit.workbook.sheets import (
    CENTRAL_HEADER,
    ITEM_HEADER,
    MATRIX_SHEETS,
    POPULATION,
    REQUIRED_SHEETS,
    SHEET_ORDER,
    VALUE_HEADER,
)
from prepkit.workbook.source_file import MAX_FILE_BYTES, read_file

__all__ = ["read_plan", "read_plan_with_warnings", "MAX_FILE_BYTES"]

_SHEET_KEYS = frozenset(normalise_key(name) for name in SHEET_ORDER)


# ---- Public ----------------------------------------------------------------------------------

def read_plan(path: str | os.PathLike[str]) -> Plan:
    """Read a planning workbook.

    Parameters
    ----------
    path : str or path-like
        The ``.xlsx`` file. It is read, never written.

    Returns
    -------
    Plan
        The plan, with :attr:`Plan.source` naming the file, its SHA-256 and
        every input used.

    Raises
    ------
    prepkit.errors.WorkbookError
        Listing every problem found, each with sheet, cell, field, what was
        expected and what was found.
    """
    plan, _warnings = read_plan_with_warnings(path)
    return plan


def read_plan_with_warnings(path: str | os.PathLike[str]) -> tuple[Plan, tuple[Problem, ...]]:
    """Read a planning workbook, returning the non-fatal warnings too.

    Parameters
    ----------
    path : str or path-like
        As for :func:`read_plan`.

    Returns
    -------
    plan : Plan
        As for :func:`read_plan`.
    warnings : tuple of Problem
        Notes that do not stop the plan being used (``severity="warning"``),
        in workbook order.

    Raises
    ------
    prepkit.errors.WorkbookError
        Listing every problem found (its ``warnings`` holds the warnings).
    """
    name, data = read_file(path)
    book = open_book(data, wanted=lambda title: normalise_key(title) in _SHEET_KEYS)
    source = Source(path=name, sha256=hashlib.sha256(data).hexdigest())
    return _Reader(book.grids, book.other_sheets).read(source)


# ---- The reader ------------------------------------------------------------------------------

class _Reader(CrossChecks):
    """Collects located inputs and problems, checks them, builds the plan."""

    def read(self, source: Source) -> tuple[Plan, tuple[Problem, ...]]:
        for sheet in SHEET_ORDER:
            if sheet in MATRIX_SHEETS.values():
                continue
            grid = self.grid(sheet)
            if grid is None and sheet in REQUIRED_SHEETS:
                self.report(sheet, "", "sheet", f"a sheet of cells named '{sheet}'",
                            self.missing(sheet))
            elif grid is None and self.no_grid(sheet) is not None:
                self.report(sheet, "", "sheet",
                            f"a sheet of cells named '{sheet}' (the sheet is ignored)",
                            self.missing(sheet), warning=True)
            self.read_sheet(sheet, grid)
        checked = self.check()
        problems = validate.sort_problems(self.problems)
        errors = [p for p in problems if p.severity == "error"]
        found_warnings = tuple(p for p in problems if p.severity != "error")
        if checked is None and not errors:  # every failed check reports; kept as a guard
            errors = [Problem(self.title(POPULATION), "", "Band",
                              "at least one readable age band", "none")]
        if errors or checked is None:
            raise WorkbookError(errors, found_warnings)
        rec = Recorder()
        matrix_values = None if checked.matrices is None else {
            cast(Setting, setting): matrix.values for setting, matrix in checked.matrices.items()}
        plan = build_plan(items=self.items, band_rows=checked.bands, per_band=checked.per_band,
                          matrix_values=matrix_values, tables=self.tables, rec=rec)
        whole = validate_plan.check_plan(
            plan, items=self.items, disease_rows=checked.per_band.get("band_disease", {}),
            scenario_rows=self.tables["scenarios"])
        if whole:
            raise WorkbookError(validate.sort_problems(whole), found_warnings)
        source = Source(path=source.path, sha256=source.sha256, inputs=rec.sorted_records())
        return replace(plan, source=source), found_warnings

    def read_sheet(self, sheet: str, grid: Grid | None) -> None:
        item_fields = schema.sheet_fields(sheet)
        tables = [t for t in TABLES.values() if t.sheet == sheet]
        title = grid.title if grid is not None else sheet
        item_header = find_item_header(grid) if grid is not None and item_fields else None
        table_headers = {
            t.name: find_table_header(grid, t.name) if grid is not None else None for t in tables
        }
        starts = sorted(
            ([item_header.row] if item_header else [])
            + [h.row for h in table_headers.values() if h is not None]
        )
        # An optional sheet whose items all have defaults may lack its item block (an
        # Observed sheet from before it had one means daily figures).
        items_needed = sheet in REQUIRED_SHEETS or any(f.default is None and f.required
                                                        for f in item_fields)
        if grid is not None and item_fields and item_header is None and items_needed:
            self.report(title, "", ITEM_HEADER,
                        f"a header row with '{ITEM_HEADER}' and "
                        f"'{VALUE_HEADER}' (or '{CENTRAL_HEADER}') columns",
                        "no such row")
        if item_header is not None and grid is not None:
            self.read_items(grid, sheet, item_header, _next_start(starts, item_header.row))
        else:
            for f in item_fields:
                for level in levels(f):
                    label = field_label(f, level)
                    self.items[(f.name, level)] = self.absent(f, level, title, label,
                                                              "no item block")
        for t in tables:
            header = table_headers[t.name]
            if grid is None:
                continue
            if header is None:
                key_head = header_text(FIELDS_BY_NAME[t.key])
                optional = t.sheet not in REQUIRED_SHEETS
                self.report(title, "", key_head,
                            f"a header row with a '{key_head}' column and the other column "
                            f"headers of the {t.sheet} table"
                            + (" (the sheet is ignored)" if optional else ""),
                            "no such row", warning=optional)
                continue
            self.read_table(grid, t.name, header, _next_start(starts, header.row))

    def read_items(self, grid: Grid, sheet: str, header: ItemHeader, stop: int | None) -> None:
        fields = {normalise_header(f.label): f for f in schema.sheet_fields(sheet)}
        rows: dict[str, int] = {}
        for r in grid.rows:
            if r <= header.row or (stop is not None and r >= stop):
                continue
            label_raw = grid.get(r, header.item_col)
            text = normalise_header(text_of(label_raw))
            f = fields.get(text)
            value_cells = [grid.get(r, c) for c in header.cols.values()]
            if f is None:
                if text and any(v is not None and not v.blank for v in value_cells):
                    self.report(grid.title, ref(r, header.item_col), ITEM_HEADER,
                                f"a label prepkit knows on the {sheet} sheet (the row is "
                                "ignored)", show(label_raw), warning=True)
                continue
            if f.name in rows:
                self.report(grid.title, ref(r, header.item_col), f.label,
                            "one row for this item", f"a second row (also row {rows[f.name]})")
                continue
            rows[f.name] = r
        for f in schema.sheet_fields(sheet):
            r_found = rows.get(f.name)
            if r_found is None:
                why = f"no row labelled '{f.label}'"
                if f.default is not None:
                    shown = format_value(f, f.default) if f.type != "choice" else f.default
                    self.report(grid.title, "", f.label,
                                f"a row labelled '{f.label}' (its default {shown} is used)",
                                "no such row", warning=True)
                for level in levels(f):
                    got = self.absent(f, level, grid.title, field_label(f, level), why)
                    if f.required and f.default is None and level == "central":
                        self.report(grid.title, "", got.label, f.expected(), why)
                    self.items[(f.name, level)] = got
                continue
            self.read_item_row(grid, f, header, r_found)

    def read_item_row(self, grid: Grid, f: Field, header: ItemHeader, r: int) -> None:
        central_col = header.cols["central"]
        central = self.got(f, "central", grid.title, ref(r, central_col),
                           grid.get(r, central_col), field_label(f, "central"))
        self.items[(f.name, "central")] = central
        for level in ("low", "high"):
            col = header.cols.get(level)
            raw = grid.get(r, col) if col is not None else None
            if f.uncertain:
                cell = ref(r, col) if col is not None else ""
                self.items[(f.name, level)] = self.got(
                    f, level, grid.title, cell, raw, field_label(f, level), fallback=central)
            elif raw is not None and not raw.blank and col is not None:
                self.report(grid.title, ref(r, col), f.label,
                            f"a blank cell ({f.label} has no Low or High); the value is not "
                            "used", show(raw), warning=True)

    def read_table(self, grid: Grid, table: str, header: TableHeader,
                   stop: int | None) -> None:
        t = TABLES[table]
        self.table_found[table] = True
        for c in header.duplicates:
            self.report(grid.title, ref(header.row, c), text_of(grid.get(header.row, c)),
                        "each column header once (the first one is read)", "a second column",
                        warning=True)
        columns = list(schema.table_columns(table))
        missing = [(f, lv) for f, lv in columns if (f.name, lv) not in header.cols]
        for f, lv in missing:
            if lv == "central" and f.required and f.default is None:
                self.report(grid.title, "", header_text(f, lv),
                            f"a column headed '{header_text(f, lv)}'", "no such column")
        noun = schema.key_noun(table)
        key_field = FIELDS_BY_NAME[t.key]
        key_col = header.cols[(t.key, "central")]
        last_row = header.row
        rows: list[TableRow] = []
        for r in grid.rows:
            if r <= header.row or (stop is not None and r >= stop):
                continue
            cells = [grid.get(r, c) for c in header.cols.values()]
            if all(raw is None or raw.blank for raw in cells):
                continue
            last_row = r
            key_cell = ref(r, key_col)
            key_got = self.got(key_field, "central", grid.title, key_cell, grid.get(r, key_col),
                               key_field.label)
            key = format_value(key_field, key_got.value) if key_got.ok else ""
            label_key = key or f"in row {r}"
            gots: dict[Key, Got] = {(t.key, "central"): key_got}
            for f, level in columns:
                if f.name == t.key or level != "central":
                    continue
                gots.update(self.read_table_cell(grid, f, header, r, noun, label_key))
            rows.append(TableRow(sheet=grid.title, row=r, key=key, key_cell=key_cell, gots=gots))
        self.tables[table] = rows
        self.empty_cells[table] = ref(last_row + 1, key_col)

    def read_table_cell(self, grid: Grid, f: Field, header: TableHeader, r: int, noun: str,
                        key: str) -> dict[Key, Got]:
        gots: dict[Key, Got] = {}
        central: Got | None = None
        levels: tuple[Level, ...] = ("central", "low", "high") if f.uncertain else ("central",)
        for lv in levels:
            col = header.cols.get((f.name, lv))
            label = field_label(f, lv, noun, key)
            if col is None:
                missing = f"no column headed '{header_text(f, lv)}'"
                got = self.got(f, lv, grid.title, "", None, label, fallback=central,
                               missing=missing, quiet=True)
            else:
                got = self.got(f, lv, grid.title, ref(r, col), grid.get(r, col), label,
                               fallback=central)
            if lv == "central":
                central = got
            gots[(f.name, lv)] = got
        return gots


def _next_start(starts: Sequence[int], row: int) -> int | None:
    return next((s for s in starts if s > row), None)
