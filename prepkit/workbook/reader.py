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

import datetime as dt
import hashlib
import os
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field, replace
from typing import cast

from openpyxl.utils import get_column_letter

from prepkit.errors import Problem, WorkbookError
from prepkit.plan import (
    LEVELS,
    Level,
    Plan,
    Setting,
    Source,
)
from prepkit.workbook import schema, validate, validate_plan
from prepkit.workbook.build import Recorder, build_plan
from prepkit.workbook.cells import (
    BadValue,
    Got,
    Key,
    RawCell,
    TableRow,
    field_label,
    normalise_key,
    parse,
    show,
    text_of,
)
from prepkit.workbook.load import Grid, open_book
from prepkit.workbook.schema import (
    BAND_HEADER,
    FIELDS_BY_NAME,
    MATRIX_FIELDS,
    MATRIX_SHEETS,
    REQUIRED_SHEETS,
    SHEET_ORDER,
    TABLES,
    Field,
    format_value,
    header_text,
    normalise_header,
)
from prepkit.workbook.source_file import MAX_FILE_BYTES, read_file

__all__ = ["read_plan", "read_plan_with_warnings", "MAX_FILE_BYTES"]

_SHARE_SETTINGS: tuple[Setting, ...] = ("home", "school", "work")
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
        The ``.xlsx`` file. It is read, never written.

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


def _ref(row: int, col: int) -> str:
    return f"{get_column_letter(col)}{row}"


# ---- Headers ---------------------------------------------------------------------------------

@dataclass(frozen=True)
class _ItemHeader:
    row: int
    item_col: int
    cols: dict[Level, int]


@dataclass(frozen=True)
class _TableHeader:
    row: int
    cols: dict[Key, int]
    duplicates: tuple[int, ...]


def _find_item_header(grid: Grid) -> _ItemHeader | None:
    item = normalise_header(schema.ITEM_HEADER)
    value_heads: tuple[tuple[Level, str], ...] = (
        ("central", normalise_header(schema.VALUE_HEADER)),
        ("central", normalise_header(schema.CENTRAL_HEADER)),
        ("low", normalise_header(schema.LOW_HEADER)),
        ("high", normalise_header(schema.HIGH_HEADER)),
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
            return _ItemHeader(row=r, item_col=item_col, cols=cols)
    return None


def _table_headings(table: str) -> dict[str, Key]:
    return {
        normalise_header(header_text(f, level)): (f.name, level)
        for f, level in schema.table_columns(table)
    }


def _find_table_header(grid: Grid, table: str) -> _TableHeader | None:
    headings = _table_headings(table)
    key: Key = (TABLES[table].key, "central")
    best: _TableHeader | None = None
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
        if key in cols and (best is None or len(cols) > len(best.cols)):
            best = _TableHeader(row=r, cols=cols, duplicates=tuple(duplicates))
    return best


# ---- The reader ------------------------------------------------------------------------------

class _Reader:
    """Collects located inputs and problems, checks them, builds the plan."""

    def __init__(self, book: dict[str, Grid], other_sheets: Mapping[str, str]) -> None:
        self.book = book
        self.other_sheets = other_sheets
        self.problems: list[Problem] = []
        self.items: dict[Key, Got] = {}
        self.tables: dict[str, list[TableRow]] = {name: [] for name in TABLES}
        self.table_found: dict[str, bool] = {name: False for name in TABLES}
        self.empty_cells: dict[str, str] = {name: "" for name in TABLES}
        self.titles: dict[str, str] = {}
        self.matrices_intended = False

    # -- messages

    def report(self, sheet: str, cell: str, label: str, expected: str, found: str,
               warning: bool = False) -> None:
        self.problems.append(Problem(sheet=sheet, cell=cell, field=label, expected=expected,
                                     found=found, severity="warning" if warning else "error"))

    @property
    def errors(self) -> list[Problem]:
        return [p for p in self.problems if p.severity == "error"]

    # -- located values

    def got(
        self,
        f: Field,
        level: Level,
        sheet: str,
        cell: str,
        raw: RawCell | None,
        label: str,
        *,
        fallback: Got | None = None,
        missing: str | None = None,
        quiet: bool = False,
    ) -> Got:
        """Read one input, reporting single-field problems.

        ``fallback`` is the Central value a blank Low or High takes;
        ``missing`` explains a row or column that is not there; ``quiet``
        leaves a required blank unreported (already reported elsewhere).
        """
        found = missing if missing is not None else show(raw)
        try:
            value, percent = parse(f, raw)
        except BadValue as exc:
            self.report(sheet, cell, label, exc.expected or f.expected(), exc.found)
            return Got(field=f, level=level, sheet=sheet, cell=cell, label=label, value=None,
                       found=exc.found, blank=False, bad=True)
        if value is not None:
            return Got(field=f, level=level, sheet=sheet, cell=cell, label=label, value=value,
                       found=found, blank=False, percent=percent)
        if fallback is not None:
            return Got(field=f, level=level, sheet=sheet, cell=cell, label=label,
                       value=fallback.value, found=found, blank=True, bad=fallback.bad,
                       percent=fallback.percent)
        if f.default is not None:
            return Got(field=f, level=level, sheet=sheet, cell=cell, label=label,
                       value=_default(f), found=found, blank=True, defaulted=True)
        if f.required and not quiet:
            self.report(sheet, cell, label, f.expected(), found)
        return Got(field=f, level=level, sheet=sheet, cell=cell, label=label, value=None,
                   found=found, blank=True)

    def absent(self, f: Field, level: Level, sheet: str, label: str, why: str) -> Got:
        """An input whose sheet or block is missing (already reported)."""
        value = _default(f) if f.default is not None and level == "central" else None
        return Got(field=f, level=level, sheet=sheet, cell="", label=label, value=value,
                   found=why, blank=True, defaulted=value is not None)

    # -- sheets

    def grid(self, name: str) -> Grid | None:
        grid = self.book.get(name)
        if grid is None:
            want = normalise_key(name)
            grid = next((g for t, g in self.book.items() if normalise_key(t) == want), None)
        if grid is not None:
            self.titles[name] = grid.title
        return grid

    def title(self, name: str) -> str:
        return self.titles.get(name, name)

    def no_grid(self, name: str) -> tuple[str, str] | None:
        """Title and kind of a sheet named ``name`` that holds no cells (a chart sheet), or None."""
        want = normalise_key(name)
        return next(((t, kind) for t, kind in self.other_sheets.items()
                     if normalise_key(t) == want), None)

    def missing(self, name: str) -> str:
        """What stands where the sheet ``name`` should be, for messages."""
        other = self.no_grid(name)
        if other is None:
            return "no such sheet"
        return f"{other[1]} named '{other[0]}', which holds no cells"

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
            errors = [Problem(self.title(schema.POPULATION), "", "Band",
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
        item_header = _find_item_header(grid) if grid is not None and item_fields else None
        table_headers = {
            t.name: _find_table_header(grid, t.name) if grid is not None else None for t in tables
        }
        starts = sorted(
            ([item_header.row] if item_header else [])
            + [h.row for h in table_headers.values() if h is not None]
        )
        if grid is not None and item_fields and item_header is None:
            self.report(title, "", schema.ITEM_HEADER,
                        f"a header row with '{schema.ITEM_HEADER}' and "
                        f"'{schema.VALUE_HEADER}' (or '{schema.CENTRAL_HEADER}') columns",
                        "no such row")
        if item_header is not None and grid is not None:
            self.read_items(grid, sheet, item_header, _next_start(starts, item_header.row))
        else:
            for f in item_fields:
                for level in _levels(f):
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

    def read_items(self, grid: Grid, sheet: str, header: _ItemHeader, stop: int | None) -> None:
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
                    self.report(grid.title, _ref(r, header.item_col), schema.ITEM_HEADER,
                                f"a label prepkit knows on the {sheet} sheet (the row is "
                                "ignored)", show(label_raw), warning=True)
                continue
            if f.name in rows:
                self.report(grid.title, _ref(r, header.item_col), f.label,
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
                for level in _levels(f):
                    got = self.absent(f, level, grid.title, field_label(f, level), why)
                    if f.required and f.default is None and level == "central":
                        self.report(grid.title, "", got.label, f.expected(), why)
                    self.items[(f.name, level)] = got
                continue
            self.read_item_row(grid, f, header, r_found)

    def read_item_row(self, grid: Grid, f: Field, header: _ItemHeader, r: int) -> None:
        central_col = header.cols["central"]
        central = self.got(f, "central", grid.title, _ref(r, central_col),
                           grid.get(r, central_col), field_label(f, "central"))
        self.items[(f.name, "central")] = central
        for level in ("low", "high"):
            col = header.cols.get(level)
            raw = grid.get(r, col) if col is not None else None
            if f.uncertain:
                cell = _ref(r, col) if col is not None else ""
                self.items[(f.name, level)] = self.got(
                    f, level, grid.title, cell, raw, field_label(f, level), fallback=central)
            elif raw is not None and not raw.blank and col is not None:
                self.report(grid.title, _ref(r, col), f.label,
                            f"a blank cell ({f.label} has no Low or High); the value is not "
                            "used", show(raw), warning=True)

    def read_table(self, grid: Grid, table: str, header: _TableHeader,
                   stop: int | None) -> None:
        t = TABLES[table]
        self.table_found[table] = True
        for c in header.duplicates:
            self.report(grid.title, _ref(header.row, c), text_of(grid.get(header.row, c)),
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
            key_cell = _ref(r, key_col)
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
        self.empty_cells[table] = _ref(last_row + 1, key_col)

    def read_table_cell(self, grid: Grid, f: Field, header: _TableHeader, r: int, noun: str,
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
                got = self.got(f, lv, grid.title, _ref(r, col), grid.get(r, col), label,
                               fallback=central)
            if lv == "central":
                central = got
            gots[(f.name, lv)] = got
        return gots

    # -- contact matrices

    def read_matrices(self, bands: Sequence[str] | None) -> dict[str, _Matrix] | None:
        """Contact matrices when any matrix sheet is filled, else None."""
        found = {setting: self.read_matrix_sheet(setting) for setting in MATRIX_SHEETS}
        if not any(m is not None and m.filled for m in found.values()):
            return None
        self.matrices_intended = True
        for setting, matrix in found.items():
            sheet = MATRIX_SHEETS[setting]
            if matrix is None:
                self.report(sheet, "", sheet,
                            "a filled contact-matrix sheet (fill all four or none)",
                            self.missing(sheet))
            elif matrix.header_row is None:
                self.report(matrix.title, "", BAND_HEADER,
                            f"a header row starting with '{BAND_HEADER}' and the band labels "
                            "(fill all four contact sheets or none)", "no such row")
            elif not matrix.filled:
                self.report(matrix.title, _ref(matrix.header_row + 1, matrix.band_col + 1),
                            MATRIX_FIELDS[setting].label,
                            "a filled contact matrix (fill all four contact sheets or none)",
                            "no numbers on this sheet")
            elif bands is not None:
                self.check_matrix(setting, matrix, bands)
        complete = {s: m for s, m in found.items() if m is not None}
        return complete if len(complete) == len(found) else None

    def read_matrix_sheet(self, setting: str) -> _Matrix | None:
        sheet = MATRIX_SHEETS[setting]
        grid = self.grid(sheet)
        if grid is None:
            return None
        band = normalise_header(BAND_HEADER)
        for r in grid.rows:
            for c, raw in sorted(grid.row(r).items()):
                if normalise_header(text_of(raw)) == band:
                    return _Matrix.scan(grid, r, c)
        filled = any(isinstance(raw.value, int | float) and not isinstance(raw.value, bool)
                     for raw in grid.cells.values())
        return _Matrix(title=grid.title, grid=grid, header_row=None, band_col=0, filled=filled)

    def check_matrix(self, setting: str, matrix: _Matrix, bands: Sequence[str]) -> None:
        f = MATRIX_FIELDS[setting]
        title = matrix.title
        assert matrix.header_row is not None
        by_key = {normalise_key(b): b for b in bands}
        listing = ", ".join(bands)
        label_field = FIELDS_BY_NAME["band.label"]

        def labels(cells: Iterable[tuple[int, int]], where: str) -> dict[str, tuple[int, int]]:
            seen: dict[str, tuple[int, int]] = {}
            for r, c in cells:
                raw = matrix.grid.get(r, c)
                got = self.got(label_field, "central", title, _ref(r, c), raw,
                               f"{BAND_HEADER} ({where})")
                if not got.ok:
                    continue
                band = by_key.get(normalise_key(str(got.value)))
                if band is None:
                    self.report(title, _ref(r, c), f"{BAND_HEADER} ({where})",
                                f"a band label from the Population sheet ({listing})", got.found)
                elif band in seen:
                    self.report(title, _ref(r, c), f"{BAND_HEADER} ({where})",
                                f"each band once as a {where}", f"{band} again")
                else:
                    seen[band] = (r, c)
            for b in bands:
                if b not in seen:
                    self.report(title, "", f"{BAND_HEADER} ({where})",
                                f"a {where} labelled {b} (every Population band, as in a "
                                "square matrix)", "none")
            return seen

        col_labels = labels(((matrix.header_row, c) for c in matrix.label_cols), "column")
        row_labels = labels(((r, matrix.band_col) for r in matrix.label_rows), "row")
        labelled_rows = {r for r, _ in row_labels.values()}
        labelled_cols = {c for _, c in col_labels.values()}
        for (r, c), raw in sorted(matrix.grid.cells.items()):
            if r <= matrix.header_row or c <= matrix.band_col or raw.blank:
                continue
            if r not in labelled_rows or c not in labelled_cols:
                if r in matrix.label_rows and c in matrix.label_cols:
                    continue  # under a label already reported
                where = "row" if r not in labelled_rows else "column"
                self.report(title, _ref(r, c), f.label,
                            f"no value outside the labelled bands (this {where} has no band "
                            "label)", show(raw))
        values: dict[tuple[str, str], Got] = {}
        for row_band, (r, _) in row_labels.items():
            for col_band, (_, c) in col_labels.items():
                label = f"{f.label}, band {row_band} meeting band {col_band}"
                values[(row_band, col_band)] = self.got(f, "central", title, _ref(r, c),
                                                        matrix.grid.get(r, c), label)
                if values[(row_band, col_band)].value is None and not values[
                        (row_band, col_band)].bad:
                    self.report(title, _ref(r, c), label,
                                f"{f.expected()} (every cell of a filled matrix)", "a blank cell")
        matrix.values = values

    # -- cross-field checks

    def check(self) -> _Checked | None:
        items = self.items
        self.problems += validate.check_levels(items)
        for rows in self.tables.values():
            for row in rows:
                self.problems += validate.check_levels(row.gots)
        self.problems += validate.check_transmissibility(items)
        self.problems += validate.check_working_ages(items)
        self.problems += validate.check_seasonal_peak(items)

        band_rows: list[TableRow] = []
        bands: list[str] | None = None
        if self.table_found["bands"]:
            found, band_rows = validate.check_bands(
                self.tables["bands"], self.empty_cells["bands"], self.title(schema.POPULATION))
            self.problems += found
            # Labels good enough to match the per-band tables and matrices by, even when
            # the ages have problems: every problem is then found in one pass.
            keys = [normalise_key(row.key) for row in band_rows]
            if (all(keys) and len(set(keys)) == len(keys)
                    and len(keys) <= schema.MAX_BANDS):
                bands = [row.key for row in band_rows]
        per_band: dict[str, Mapping[str, TableRow]] = {}
        matrices = self.read_matrices(bands)
        for table in ("band_contacts", "band_disease", "band_severity"):
            if table == "band_contacts" and self.matrices_intended:
                if any(not g.blank for row in self.tables[table] for (name, _), g in
                       row.gots.items() if name != TABLES[table].key):
                    first = self.tables[table][0]
                    self.report(first.sheet, first.key_cell,
                                FIELDS_BY_NAME["band_contacts.mean_daily"].label,
                                "blank simple contacts when the contact-matrix sheets are "
                                "filled (the matrices are used)", "numbers in the table",
                                warning=True)
                continue
            if bands is None or not self.table_found[table]:
                continue
            found_rows, by_band = validate.check_band_rows(
                self.tables[table], bands, TABLES[table].key, self.empty_cells[table],
                self.title(TABLES[table].sheet))
            self.problems += found_rows
            per_band[table] = by_band
        if "band_contacts" in per_band:
            contact_rows = list(per_band["band_contacts"].values())
            self.problems += validate.check_setting_shares(contact_rows)
            self.problems += validate.check_daily_contacts(contact_rows)
        if "band_severity" in per_band and "band_disease" in per_band:
            self.problems += validate.check_admitted_vs_symptomatic(
                per_band["band_severity"], per_band["band_disease"])
        day0 = items[("details.day0", "central")].value
        horizon = items[("details.horizon_days", "central")].value
        measure_rows = self.tables["measures"]
        self.problems += validate.check_measures(
            measure_rows, bands,
            day0 if isinstance(day0, dt.date) else None,
            horizon if isinstance(horizon, int) else None)
        measure_names = [row.key for row in measure_rows if row.key]
        if self.table_found["scenarios"]:
            self.problems += validate.check_scenarios(
                self.tables["scenarios"], measure_names, self.empty_cells["scenarios"],
                self.title(schema.SCENARIOS))
        self.problems += validate.check_observed(self.tables["observed"])
        if self.errors or bands is None:
            return None
        return _Checked(bands=band_rows, per_band=per_band, matrices=matrices)


# ---- Helpers ---------------------------------------------------------------------------------

@dataclass
class _Matrix:
    """What a contact-matrix sheet holds around its ``Band`` header."""

    title: str
    grid: Grid
    header_row: int | None
    band_col: int
    filled: bool
    label_cols: tuple[int, ...] = ()
    label_rows: tuple[int, ...] = ()
    values: dict[tuple[str, str], Got] = field(default_factory=dict)

    @classmethod
    def scan(cls, grid: Grid, header_row: int, band_col: int) -> _Matrix:
        label_cols = tuple(c for c, raw in sorted(grid.row(header_row).items())
                           if c > band_col and not raw.blank)
        label_rows = tuple(r for r in grid.rows if r > header_row
                           and (raw := grid.get(r, band_col)) is not None and not raw.blank)
        filled = any(r > header_row and c > band_col and not raw.blank
                     for (r, c), raw in grid.cells.items())
        return cls(title=grid.title, grid=grid, header_row=header_row, band_col=band_col,
                   filled=filled, label_cols=label_cols, label_rows=label_rows)


@dataclass(frozen=True)
class _Checked:
    """What the plan is built from once every check has passed."""

    bands: list[TableRow]
    per_band: dict[str, Mapping[str, TableRow]]
    matrices: dict[str, _Matrix] | None


def _levels(f: Field) -> tuple[Level, ...]:
    return LEVELS if f.uncertain else ("central",)


def _default(f: Field) -> object:
    default = f.default
    if f.type == "choice" and isinstance(default, str):
        return (f.choices or {}).get(default, default)
    if f.type == "list" and isinstance(default, list | tuple):
        return tuple(default)
    return default


def _next_start(starts: Sequence[int], row: int) -> int | None:
    return next((s for s in starts if s > row), None)
