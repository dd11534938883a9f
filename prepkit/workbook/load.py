"""Opening a workbook file: read once, only the sheets prepkit uses, within bounds.

:func:`read_file` reads the file's bytes once (refusing folders, pipes and
devices without waiting on them); :func:`open_book` turns them into the
filled cells of the sheets prepkit reads, and nothing more:

* Only the sheets the caller wants are parsed, each in one streaming pass;
  other sheets (a planner's own notes, a pasted line list of ten million
  cells, chart sheets) are never opened. Chart, dialog and macro sheets are
  only named, so the reader can say "found a chart sheet" where a sheet of
  cells belongs.
* Each cell gives its saved value, its number format and, for a formula,
  the formula text, in the same pass: there is no second load for the
  saved results of formulas.
* A spreadsheet's TRUE and FALSE are booleans, however they are stored: a
  cell of type ``b``, or a ``=TRUE()`` / ``=FALSE()`` formula whose saved
  result is the number 1 or 0 (LibreOffice saves a TRUE typed into a
  number-formatted cell that way). The reader then reports "found TRUE" at
  that cell instead of using 1, or a band "0".
* Shared strings are kept only for the cells read.
* Bounds (:data:`MAX_FILLED_CELLS_PER_SHEET`, :data:`MAX_ENTRIES_PER_SHEET`,
  :data:`MAX_FILLED_CELLS`, :data:`MAX_PART_BYTES`) stop a file far larger
  than any plan with a problem naming the sheet, in seconds and in bounded
  memory, instead of minutes and gigabytes.

Everything here is read-only: the file is never written.
"""

from __future__ import annotations

import io
import re
import warnings
from collections.abc import Callable, Iterator
from dataclasses import dataclass, field
from typing import Any

from openpyxl.cell.text import Text
from openpyxl.reader.excel import ExcelReader
from openpyxl.styles.numbers import BUILTIN_FORMATS, BUILTIN_FORMATS_MAX_SIZE
from openpyxl.styles.stylesheet import apply_stylesheet
from openpyxl.worksheet._reader import (
    CELL_TAG,
    FORMULA_TAG,
    ROW_TAG,
    WorkSheetParser,
)
from openpyxl.xml.constants import SHEET_MAIN_NS
from openpyxl.xml.functions import iterparse

from prepkit.errors import Problem, SheetTooBig, WorkbookError
from prepkit.workbook.cells import RawCell
from prepkit.workbook.source_file import XLSX, check_archive, file_problem

__all__ = [
    "MAX_ENTRIES_PER_SHEET",
    "MAX_FILLED_CELLS",
    "MAX_FILLED_CELLS_PER_SHEET",
    "Book",
    "Grid",
    "open_book",
]

#: Most filled cells read from one sheet. The largest sheet of a plan, Observed, holds two
#: years of daily figures in five columns (under 4,000 cells); a 20-band contact matrix has
#: 441; the template's guidance text a few hundred. 200,000 is fifty times the largest and
#: is read in about a second; beyond it, a sheet holds something other than a plan.
MAX_FILLED_CELLS_PER_SHEET = 200_000
#: Most entries (rows and cells, filled or only formatted) parsed from one sheet. A planner
#: may format whole blocks of empty cells; a million entries are parsed in a few seconds.
MAX_ENTRIES_PER_SHEET = 1_000_000
#: Most filled cells read from all of prepkit's sheets together (bounds the memory used).
MAX_FILLED_CELLS = 500_000

#: Sheet kinds that hold no cells, by the end of their relationship type.
_OTHER_KINDS = (
    ("chartsheet", "a chart sheet"),
    ("dialogsheet", "a dialog sheet"),
    ("xlMacrosheet", "a macro sheet"),
    ("xlIntlMacrosheet", "a macro sheet"),
)

_BOOLEAN_FORMULA = re.compile(r"^\s*=?\s*(TRUE|FALSE)\s*\(\s*\)\s*$", re.IGNORECASE)
_STRING_TAG = f"{{{SHEET_MAIN_NS}}}si"


# ---- Sheets as grids -------------------------------------------------------------------------

@dataclass
class Grid:
    """The filled cells of one sheet."""

    title: str
    cells: dict[tuple[int, int], RawCell]
    by_row: dict[int, dict[int, RawCell]] = field(default_factory=dict)
    rows: list[int] = field(default_factory=list)

    def index(self) -> None:
        """Index the cells by row (call once the cells are all in)."""
        self.by_row = {}
        for (row, col), raw in self.cells.items():
            self.by_row.setdefault(row, {})[col] = raw
        self.rows = sorted(self.by_row)

    def get(self, row: int, col: int) -> RawCell | None:
        """The cell at a row and column (1-based), or None."""
        return self.cells.get((row, col))

    def row(self, row: int) -> dict[int, RawCell]:
        """Filled cells of a row, by column."""
        return self.by_row.get(row, {})


@dataclass(frozen=True)
class Book:
    """The sheets of a workbook that were read.

    Attributes
    ----------
    grids : dict of str to Grid
        The sheets of cells read, by title.
    other_sheets : dict of str to str
        Sheets that hold no cells, by title, with their kind in words
        (``"a chart sheet"``).
    """

    grids: dict[str, Grid]
    other_sheets: dict[str, str]


def open_book(data: bytes, wanted: Callable[[str], bool]) -> Book:
    """Read the sheets of the workbook in ``data`` whose titles ``wanted`` accepts.

    Parameters
    ----------
    data : bytes
        The file, as :func:`read_file` gave it.
    wanted : callable
        Called with each sheet title; True for the sheets to read.

    Returns
    -------
    Book
        The sheets read, and the titles of sheets that hold no cells.

    Raises
    ------
    WorkbookError
        When the file is not a readable .xlsx workbook, or a sheet read is
        larger than the bounds allow (each such sheet is named).
    """
    check_archive(data)
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            reader = ExcelReader(io.BytesIO(data), read_only=True, keep_vba=False,
                                 data_only=True, keep_links=False)
            reader.read_manifest()
            reader.read_workbook()
            apply_stylesheet(reader.archive, reader.wb)
            found = list(reader.parser.find_sheets())
    except Exception as exc:  # openpyxl raises many kinds on damaged files; all mean the same
        raise _unopenable(exc) from None
    with warnings.catch_warnings():  # openpyxl warns of cells it repairs; problems say more
        warnings.simplefilter("ignore")
        return _read_sheets(reader, found, wanted)


def _read_sheets(reader: ExcelReader, found: list[Any], wanted: Callable[[str], bool]) -> Book:
    strings = _SharedStrings(reader)
    valid = set(reader.valid_files)
    raw: dict[str, list[_Entry]] = {}
    other: dict[str, str] = {}
    problems: list[Problem] = []
    total = 0
    for sheet, rel in found:
        title = sheet.name
        kind = next((words for end, words in _OTHER_KINDS if rel.Type.endswith("/" + end)), None)
        if kind is not None or not rel.Type.endswith("/worksheet"):
            other[title] = kind or "a sheet of another kind"
            continue
        if not wanted(title):
            continue
        if rel.target not in valid:
            other[title] = "a damaged sheet (its contents are missing from the file)"
            continue
        try:
            entries = _read_sheet(reader, rel.target, strings)
        except SheetTooBig as exc:
            problems.append(exc.problem(title))
            continue
        except Exception as exc:  # damaged XML, a bad string index: the sheet cannot be read
            reason = " ".join(str(exc).split())[:160] or type(exc).__name__
            problems.append(Problem(sheet=title, cell="", field="sheet",
                                    expected="a sheet that can be read",
                                    found=f"damaged contents ({type(exc).__name__}: {reason})"))
            continue
        total += len(entries)
        if total > MAX_FILLED_CELLS:
            problems.append(Problem(
                sheet=title, cell="", field="sheet",
                expected=f"at most {MAX_FILLED_CELLS:,} filled cells on prepkit's sheets in all",
                found="more than that with this sheet; delete what the sheets do not need, "
                      "or keep it in another workbook"))
            break
        raw[title] = entries
    if problems:
        raise WorkbookError(problems)
    try:
        strings.load()
    except Exception as exc:  # damaged shared strings
        raise _unopenable(exc) from None
    styles = _Styles(reader.wb)
    grids = {title: _grid(title, entries, strings, styles) for title, entries in raw.items()}
    return Book(grids=grids, other_sheets=other)


def _unopenable(exc: BaseException) -> WorkbookError:
    reason = " ".join(str(exc).split())[:160] or type(exc).__name__
    return file_problem(XLSX, f"a workbook that cannot be opened ({type(exc).__name__}: {reason})")


# ---- One sheet, streamed ---------------------------------------------------------------------

_Entry = tuple[int, int, Any, int, str, "str | None"]
"""(row, column, saved value, style id, openpyxl data type, formula text or None)."""


class _SharedRef:
    """A shared string not looked up yet: only the strings of cells read are kept."""

    __slots__ = ("index",)

    def __init__(self, index: int) -> None:
        self.index = index


class _SharedStrings:
    """Stands in for openpyxl's string table while sheets are parsed, then loads what they use."""

    def __init__(self, reader: ExcelReader) -> None:
        part = reader.package.find("application/vnd.openxmlformats-officedocument."
                                   "spreadsheetml.sharedStrings+xml")
        self.archive = reader.archive
        self.path = part.PartName[1:] if part is not None else None
        self.needed: set[int] = set()
        self.texts: dict[int, str] = {}

    def __getitem__(self, index: int) -> _SharedRef:
        if index < 0:
            raise IndexError(f"shared string {index}")
        self.needed.add(index)
        return _SharedRef(index)

    def load(self) -> None:
        if not self.needed or self.path is None:
            return
        last = max(self.needed)
        with self.archive.open(self.path) as source:
            index = -1
            root = None
            for event, node in iterparse(source, events=("start", "end")):
                if event == "start":
                    root = node if root is None else root
                    continue
                if node.tag != _STRING_TAG:
                    continue
                index += 1
                if index in self.needed:
                    text: Any = Text.from_tree(node)
                    self.texts[index] = str(text.content).replace("x005F_", "")
                node.clear()
                if root is not None:
                    root.remove(node)
                if index >= last:
                    break
        missing = self.needed - self.texts.keys()
        if missing:
            raise IndexError(f"shared string {min(missing)} is missing from the file")

    def text(self, ref: _SharedRef) -> str:
        return self.texts[ref.index]


class _CellParser(WorkSheetParser):
    """openpyxl's cell parsing, streamed cell by cell, with formulas beside saved values."""

    def parse_cell(self, element: Any) -> dict[str, Any]:
        cell: dict[str, Any] = super().parse_cell(element)  # data_only: the saved value
        formula = None
        if element.find(FORMULA_TAG) is not None:
            parsed = self.parse_formula(element)
            text = parsed if isinstance(parsed, str) else getattr(parsed, "text", None)
            formula = str(text or parsed)
            match = _BOOLEAN_FORMULA.match(formula)
            if match is not None:  # =TRUE() / =FALSE(): a boolean whatever was saved with it
                cell["value"] = match[1].upper() == "TRUE"
                cell["data_type"] = "b"
        cell["formula"] = formula
        return cell

    def cells(self) -> Iterator[dict[str, Any]]:
        """Every cell of the sheet in file order, within :data:`MAX_ENTRIES_PER_SHEET`."""
        stack: list[Any] = []
        entries = 0
        for event, element in iterparse(self.source, events=("start", "end")):
            if event == "start":
                stack.append(element)
                if element.tag == ROW_TAG and len(stack) == 3:
                    self._start_row(element)
                continue
            stack.pop()
            depth = len(stack)  # of the parent
            if depth < 2:
                continue
            entries += 1
            if entries > MAX_ENTRIES_PER_SHEET:
                raise SheetTooBig(
                    f"at most {MAX_ENTRIES_PER_SHEET:,} rows and cells (filled or formatted)",
                    f"more than {MAX_ENTRIES_PER_SHEET:,}; delete the rows and columns the "
                    "sheet does not need, or keep them in another workbook",
                )
            if element.tag == CELL_TAG and depth == 3:
                yield self.parse_cell(element)
                stack[-1].remove(element)
            elif depth == 2:  # a whole row, or a block outside the cells: done with it
                element.clear()
                stack[-1].remove(element)

    def _start_row(self, element: Any) -> None:
        number = element.get("r")
        if number is None:
            self.row_counter += 1
        else:
            value = float(number)
            if not value.is_integer():
                raise ValueError(f"{number} is not a valid row number")
            self.row_counter = int(value)
        self.col_counter = 0


def _read_sheet(reader: ExcelReader, part: str, strings: _SharedStrings) -> list[_Entry]:
    wb: Any = reader.wb
    table: Any = strings  # looked up by index, as openpyxl's string table is
    entries: list[_Entry] = []
    with reader.archive.open(part) as source:
        parser = _CellParser(source, table, data_only=True, epoch=wb.epoch,
                             date_formats=wb._date_formats,
                             timedelta_formats=wb._timedelta_formats)
        for cell in parser.cells():
            value, formula = cell["value"], cell["formula"]
            if value is None and formula is None:
                continue
            if len(entries) >= MAX_FILLED_CELLS_PER_SHEET:
                raise SheetTooBig(
                    f"at most {MAX_FILLED_CELLS_PER_SHEET:,} filled cells (a plan's sheets "
                    "hold a few thousand)",
                    f"more than {MAX_FILLED_CELLS_PER_SHEET:,}; delete what the sheet does not "
                    "need, or keep it in another workbook",
                )
            entries.append((cell["row"], cell["column"], value, int(cell["style_id"] or 0),
                            cell["data_type"], formula))
    return entries


class _Styles:
    """Number format of a cell's style id, as openpyxl's read-only cells give it."""

    def __init__(self, wb: Any) -> None:
        self.styles = wb._cell_styles
        self.custom = wb._number_formats
        self.cache: dict[int, str] = {}

    def number_format(self, style_id: int) -> str:
        found = self.cache.get(style_id)
        if found is None:
            try:
                number = self.styles[style_id].numFmtId
                if number < BUILTIN_FORMATS_MAX_SIZE:
                    found = BUILTIN_FORMATS.get(number, "General")
                else:
                    found = self.custom[number - BUILTIN_FORMATS_MAX_SIZE]
            except (IndexError, KeyError, AttributeError, TypeError):
                found = "General"
            self.cache[style_id] = found = str(found)
        return found


def _grid(title: str, entries: list[_Entry], strings: _SharedStrings, styles: _Styles) -> Grid:
    cells: dict[tuple[int, int], RawCell] = {}
    for row, col, value, style_id, kind, formula in entries:
        if isinstance(value, _SharedRef):
            value = strings.text(value)
        cells[(row, col)] = RawCell(value=value, number_format=styles.number_format(style_id),
                                    formula=formula, error=kind == "e")
    grid = Grid(title=title, cells=cells)
    grid.index()
    return grid
