"""Read the contact-matrix sheets: one band x band matrix of daily contacts per setting."""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field

from prepkit.workbook.cells import Got, normalise_key, show, text_of
from prepkit.workbook.collect import Collector
from prepkit.workbook.headers import ref
from prepkit.workbook.load import Grid
from prepkit.workbook.schema import FIELDS_BY_NAME, MATRIX_FIELDS, normalise_header
from prepkit.workbook.sheets import BAND_HEADER, MATRIX_SHEETS

__all__ = ["Matrix", "MatrixReader"]


@dataclass
class Matrix:
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
    def scan(cls, grid: Grid, header_row: int, band_col: int) -> Matrix:
        """What a sheet holds around its ``Band`` header at ``header_row``, ``band_col``."""
        label_cols = tuple(c for c, raw in sorted(grid.row(header_row).items())
                           if c > band_col and not raw.blank)
        label_rows = tuple(r for r in grid.rows if r > header_row
                           and (raw := grid.get(r, band_col)) is not None and not raw.blank)
        filled = any(r > header_row and c > band_col and not raw.blank
                     for (r, c), raw in grid.cells.items())
        return cls(title=grid.title, grid=grid, header_row=header_row, band_col=band_col,
                   filled=filled, label_cols=label_cols, label_rows=label_rows)


class MatrixReader(Collector):
    """A collector that also reads the four contact-matrix sheets."""

    def __init__(self, book: dict[str, Grid], other_sheets: Mapping[str, str]) -> None:
        super().__init__(book, other_sheets)
        self.matrices_intended = False

    def read_matrices(self, bands: Sequence[str] | None) -> dict[str, Matrix] | None:
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
                self.report(matrix.title, ref(matrix.header_row + 1, matrix.band_col + 1),
                            MATRIX_FIELDS[setting].label,
                            "a filled contact matrix (fill all four contact sheets or none)",
                            "no numbers on this sheet")
            elif bands is not None:
                self.check_matrix(setting, matrix, bands)
        complete = {s: m for s, m in found.items() if m is not None}
        return complete if len(complete) == len(found) else None

    def read_matrix_sheet(self, setting: str) -> Matrix | None:
        """What the matrix sheet of a setting holds; None when there is no such sheet."""
        sheet = MATRIX_SHEETS[setting]
        grid = self.grid(sheet)
        if grid is None:
            return None
        band = normalise_header(BAND_HEADER)
        for r in grid.rows:
            for c, raw in sorted(grid.row(r).items()):
                if normalise_header(text_of(raw)) == band:
                    return Matrix.scan(grid, r, c)
        filled = any(isinstance(raw.value, int | float) and not isinstance(raw.value, bool)
                     for raw in grid.cells.values())
        return Matrix(title=grid.title, grid=grid, header_row=None, band_col=0, filled=filled)

    def check_matrix(self, setting: str, matrix: Matrix, bands: Sequence[str]) -> None:
        """Check the band labels and values of one filled matrix; keep its values."""
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
                got = self.got(label_field, "central", title, ref(r, c), raw,
                               f"{BAND_HEADER} ({where})")
                if not got.ok:
                    continue
                band = by_key.get(normalise_key(str(got.value)))
                if band is None:
                    self.report(title, ref(r, c), f"{BAND_HEADER} ({where})",
                                f"a band label from the Population sheet ({listing})", got.found)
                elif band in seen:
                    self.report(title, ref(r, c), f"{BAND_HEADER} ({where})",
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
                self.report(title, ref(r, c), f.label,
                            f"no value outside the labelled bands (this {where} has no band "
                            "label)", show(raw))
        values: dict[tuple[str, str], Got] = {}
        for row_band, (r, _) in row_labels.items():
            for col_band, (_, c) in col_labels.items():
                label = f"{f.label}, band {row_band} meeting band {col_band}"
                values[(row_band, col_band)] = self.got(f, "central", title, ref(r, c),
                                                        matrix.grid.get(r, c), label)
                if values[(row_band, col_band)].value is None and not values[
                        (row_band, col_band)].bad:
                    self.report(title, ref(r, c), label,
                                f"{f.expected()} (every cell of a filled matrix)", "a blank cell")
        matrix.values = values
