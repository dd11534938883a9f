"""Text in spreadsheet cells and CSV fields that stays text.

Spreadsheet programs run a cell whose text starts with ``=`` (and, on entry,
``+``, ``-``, ``@``) as a formula. The functions here store planners' text so
it is always shown as the text it is: in the results workbook, the CSV files
and the planning workbook that ``prepkit template`` writes. A low-level module
that :mod:`prepkit.workbook` and :mod:`prepkit.report` both use.
"""

from __future__ import annotations

import re
from collections.abc import Iterable
from typing import TYPE_CHECKING

from openpyxl.cell.cell import MergedCell

if TYPE_CHECKING:
    from openpyxl.cell.cell import Cell
    from openpyxl.worksheet.worksheet import Worksheet

__all__ = [
    "FORMULA_TRIGGERS",
    "looks_like_formula",
    "mark_text_cell",
    "safe_cell_text",
    "safe_csv_text",
    "write_text_cell",
    "write_text_row",
]

#: First characters that make a spreadsheet program read a cell as a formula
#: (``=``, ``+``, ``-``, ``@``) or that hide such a character from a check
#: that looks only at the first character (tab, carriage return).
FORMULA_TRIGGERS = ("=", "+", "-", "@", "\t", "\r")

# Characters XML 1.0 cannot hold; openpyxl raises on them.
_XML_ILLEGAL = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f]")


# --------------------------------------------------------------------------


def looks_like_formula(text: str) -> bool:
    """True when a spreadsheet program could read ``text`` as a formula.

    Parameters
    ----------
    text : str
        Cell text.

    Returns
    -------
    bool
        Whether ``text`` starts with one of :data:`FORMULA_TRIGGERS`.
    """
    return text.startswith(FORMULA_TRIGGERS)


def safe_cell_text(value: str) -> str:
    r"""Text made storable in an ``.xlsx`` cell, unchanged to the reader.

    XML 1.0 cannot hold most control characters, and openpyxl refuses them;
    they are dropped (tab and line feed stay). Carriage returns become line
    feeds, since an XML reader turns a raw carriage return into a line feed
    anyway and the cell would otherwise read back differently. The text is
    otherwise unchanged, in particular a leading ``=`` is kept: it is
    :func:`write_text_cell` that makes the cell a text cell.

    Parameters
    ----------
    value : str
        Text from the plan or the model.

    Returns
    -------
    str
        The text without XML-illegal characters, with ``\n`` line breaks.
    """
    text = str(value).replace("\r\n", "\n").replace("\r", "\n")
    return _XML_ILLEGAL.sub("", text)


def safe_csv_text(value: str) -> str:
    """Text for a CSV field that a spreadsheet program will not run.

    A CSV file has no cell types, so the only defence is to change the text:
    a field that :func:`looks_like_formula` gets a leading apostrophe, which
    spreadsheet programs show as text (the apostrophe is visible in plain
    text editors).

    Parameters
    ----------
    value : str
        Field text.

    Returns
    -------
    str
        ``value`` with XML-illegal characters dropped, prefixed with ``'``
        when it could be read as a formula.
    """
    text = safe_cell_text(value)
    return "'" + text if looks_like_formula(text) else text


def write_text_cell(ws: Worksheet, row: int, col: int, text: str) -> Cell:
    """Write ``text`` to a worksheet cell as text, never as a formula.

    openpyxl treats any string starting with ``=`` as a formula. Here the
    value is assigned and the cell type then forced to string (``"s"``), so
    the saved sheet holds a string and no ``<f>`` element. A cell whose text
    :func:`looks_like_formula` also gets Excel's *quote prefix* style, so it
    stays text even after someone edits it in Excel.

    Parameters
    ----------
    ws : openpyxl.worksheet.worksheet.Worksheet
        Sheet to write to.
    row : int
        Row number, from 1.
    col : int
        Column number, from 1.
    text : str
        Text to store; cleaned by :func:`safe_cell_text`.

    Returns
    -------
    openpyxl.cell.cell.Cell
        The cell written.

    Raises
    ------
    ValueError
        When the cell is covered by a merged range (only its top-left cell
        can hold a value).
    """
    clean = safe_cell_text(text)
    cell = ws.cell(row=row, column=col)
    if isinstance(cell, MergedCell):
        raise ValueError(
            f"{ws.title}!{cell.coordinate}: expected a writable cell, found part of a merged range"
        )
    mark_text_cell(cell, clean)
    return cell


def mark_text_cell(cell: Cell, text: str) -> None:
    """Store ``text`` in ``cell`` as a text cell, with Excel's quote prefix when needed.

    Parameters
    ----------
    cell : openpyxl.cell.cell.Cell
        A writable cell.
    text : str
        Text already made storable (:func:`safe_cell_text`).
    """
    cell.value = text
    cell.data_type = "s"
    if looks_like_formula(text):
        cell.quotePrefix = True


def write_text_row(ws: Worksheet, row: int, texts: Iterable[str], start_col: int = 1) -> None:
    """Write several text cells along one row with :func:`write_text_cell`.

    Parameters
    ----------
    ws : openpyxl.worksheet.worksheet.Worksheet
        Sheet to write to.
    row : int
        Row number, from 1.
    texts : iterable of str
        Texts, left to right.
    start_col : int, optional
        Column of the first text, from 1.
    """
    for offset, text in enumerate(texts):
        write_text_cell(ws, row, start_col + offset, text)
