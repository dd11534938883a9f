"""Telling what a file is when it is not an .xlsx workbook, to say so in plain words.

Planners save CSV files, web pages, OpenDocument and Excel 2003 files with an
.xlsx name, or pick the wrong file; :func:`what_file` names what the bytes
are and how to make a workbook of them.
"""

from __future__ import annotations

import csv

__all__ = ["OLE_MAGIC", "SNIFF_BYTES", "ZIP_MAGIC", "csv_delimiter", "text_head", "what_file"]

#: Start of an OLE compound file: an .xls workbook or a password-protected .xlsx.
OLE_MAGIC = b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"


def what_file(data: bytes) -> str:
    """What a file that is no zip archive holds, and how to make a workbook of it."""
    text = text_head(data)
    if text is None:
        return "a file in another format"
    save = "open it in a spreadsheet program and save it as an Excel workbook (.xlsx)"
    lower = text.lstrip().lower()
    if lower.startswith(("<!doctype html", "<html")):
        return f"a web page (HTML), not a workbook; {save}"
    if lower.startswith("<?xml") and "office:spreadsheet" in lower:
        return f"an Excel 2003 XML spreadsheet, not an .xlsx workbook; {save}"
    delimiter = csv_delimiter(text, complete=len(data) <= SNIFF_BYTES)
    if delimiter is not None:
        return (f"a CSV file (plain text, values separated by {delimiter}), not a workbook; "
                f"{save}")
    return f"a text file, not a workbook; {save}"


#: Bytes of a file looked at to tell what it is.
SNIFF_BYTES = 16384
ZIP_MAGIC = (b"PK\x03\x04", b"PK\x05\x06")
_TEXT_BOMS = ((b"\xef\xbb\xbf", "utf-8-sig"), (b"\xff\xfe", "utf-16"), (b"\xfe\xff", "utf-16"))
_DELIMITERS = {",": "commas", ";": "semicolons", "\t": "tabs"}


def text_head(data: bytes) -> str | None:
    """The start of a text file (UTF-8, UTF-16 with a byte order mark, or Latin-1), else None."""
    head = data[:SNIFF_BYTES]
    for bom, encoding in _TEXT_BOMS:
        if head.startswith(bom):
            return head.decode(encoding, errors="ignore")
    if b"\x00" in head:
        return None
    for cut in range(4):  # the sample may end inside a character
        try:
            return head[: len(head) - cut].decode("utf-8")
        except UnicodeDecodeError:
            continue
    text = head.decode("latin-1")
    printable = sum(ch.isprintable() or ch in "\t\r\n" for ch in text)
    return text if printable >= 0.95 * len(text) else None


def csv_delimiter(text: str, *, complete: bool) -> str | None:
    """Words for the delimiter when ``text`` reads as CSV (rows of two or more fields)."""
    lines = [line for line in text.splitlines() if line.strip()]
    if not complete and len(lines) > 1:
        lines = lines[:-1]  # the last line of the sample may be cut short
    lines = lines[:50]
    if not lines:
        return None
    for mark, words in _DELIMITERS.items():
        widths = [len(row) for row in csv.reader(lines, delimiter=mark)]
        modal = max(sorted(set(widths)), key=widths.count)
        if modal >= 2 and widths.count(modal) >= 0.8 * len(widths):
            return words
    return None
