"""Bounded reading: huge sheets are never read, or stop at a cap naming the sheet.

The workbooks here are built by writing sheet XML straight into the zip (ten
million cells cost a second that way); ``prepkit check`` then runs in a
subprocess that reports its own time and peak memory.
"""

from __future__ import annotations

import io
import re
import subprocess
import sys
import zipfile
from pathlib import Path

import pytest
from conftest import small_plan

from prepkit.workbook import load
from prepkit.workbook.template import build_workbook

pytestmark = pytest.mark.slow  # builds sheets of millions of cells

SHEET_HEAD = (b'<?xml version="1.0" encoding="UTF-8" standalone="yes"?>'
              b'<worksheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main">'
              b"<sheetData>")
SHEET_TAIL = b"</sheetData></worksheet>"
SHEET_TYPE = "application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"
SHEET_REL = "http://schemas.openxmlformats.org/officeDocument/2006/relationships/worksheet"

#: Time and memory `check` may take on a workbook with a 10-million-cell sheet. Before the
#: reader read only the sheets it uses, this took 337 s and 6 GB; now it takes under 1 s and
#: under 100 MB on the development machine. The bounds are generous for a shared machine.
CHECK_SECONDS = 20.0
CHECK_RSS_MB = 400


def _base(*, without: tuple[str, ...] = ()) -> bytes:
    wb = build_workbook(small_plan())
    for title in without:
        del wb[title]
    buffer = io.BytesIO()
    wb.save(buffer)
    return buffer.getvalue()


def _with_sheet(base: bytes, out: Path, title: str, *, rows: int, cols: int,
                cell: bytes = b"<c><v>1</v></c>") -> Path:
    """``base`` with one more sheet of ``rows`` x ``cols`` cells, streamed into the zip."""
    row = b"<row>" + cell * cols + b"</row>"
    with zipfile.ZipFile(io.BytesIO(base)) as src, zipfile.ZipFile(
            out, "w", zipfile.ZIP_DEFLATED, compresslevel=1) as dst:
        for info in src.infolist():
            data = src.read(info.filename)
            if info.filename == "[Content_Types].xml":
                data = data.replace(b"</Types>", (
                    f'<Override PartName="/xl/worksheets/sheet_extra.xml" '
                    f'ContentType="{SHEET_TYPE}"/></Types>').encode())
            elif info.filename == "xl/workbook.xml":
                data = data.replace(b"</sheets>", (
                    f'<sheet xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/'
                    f'relationships" name="{title}" sheetId="99" r:id="rIdExtra"/></sheets>'
                ).encode())
            elif info.filename == "xl/_rels/workbook.xml.rels":
                data = data.replace(b"</Relationships>", (
                    f'<Relationship Id="rIdExtra" Type="{SHEET_REL}" '
                    f'Target="worksheets/sheet_extra.xml"/></Relationships>').encode())
            dst.writestr(info, data)
        with dst.open("xl/worksheets/sheet_extra.xml", "w") as part:
            part.write(SHEET_HEAD)
            for _ in range(rows):
                part.write(row)
            part.write(SHEET_TAIL)
    return out


def _grow_sheets(base: bytes, out: Path, titles: tuple[str, ...], *, cells: int) -> Path:
    """``base`` with ``cells`` more numbers below the existing rows of each sheet named."""
    with zipfile.ZipFile(io.BytesIO(base)) as src:
        book = src.read("xl/workbook.xml").decode()
        rels = src.read("xl/_rels/workbook.xml.rels").decode()
        parts = {}
        for title in titles:
            rid = re.search(rf'<sheet [^>]*name="{re.escape(title)}"[^>]*r:id="([^"]+)"', book)
            assert rid is not None, title
            target = re.search(rf'Id="{rid[1]}"[^>]*Target="([^"]+)"|Target="([^"]+)"[^>]*'
                               rf'Id="{rid[1]}"', rels)
            assert target is not None, title
            name = (target[1] or target[2]).lstrip("/")
            parts[name if name.startswith("xl/") else f"xl/{name}"] = title
        row = b"<row>" + b"<c><v>2</v></c>" * 100 + b"</row>"
        with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED, compresslevel=1) as dst:
            for info in src.infolist():
                data = src.read(info.filename)
                if info.filename in parts:
                    data = data.replace(b"</sheetData>", row * (cells // 100) + b"</sheetData>")
                dst.writestr(info, data)
    return out


#: Peak memory of the process running the check [MB]. Linux keeps getrusage's ru_maxrss
#: across exec, so a child started by a large test process would report the parent's
#: peak; the kernel's high-water mark of the child's own memory (VmHWM) is read instead,
#: with getrusage where there is no /proc.
_PEAK_MB = """
def peak_mb():
    try:
        with open('/proc/self/status') as status:
            for line in status:
                if line.startswith('VmHWM:'):
                    return int(line.split()[1]) / 1024
    except OSError:
        pass
    import resource
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
"""


def _check_measured(path: Path) -> tuple[int, str, float, float]:
    """Exit code, stdout, seconds and peak memory [MB] of `prepkit check` in a fresh process."""
    code = _PEAK_MB + (
        "import sys, time\n"
        "from prepkit.cli.main import main\n"
        "start = time.perf_counter()\n"
        "code = main(['check', sys.argv[1]])\n"
        "print(f'MEASURED {time.perf_counter() - start:.3f} {peak_mb():.1f}', file=sys.stderr)\n"
        "sys.exit(code)\n"
    )
    done = subprocess.run([sys.executable, "-c", code, str(path)], capture_output=True,
                          text=True, timeout=180, check=False)
    assert "Traceback" not in done.stderr, done.stderr
    match = re.search(r"MEASURED ([0-9.]+) ([0-9.]+)", done.stderr)
    assert match is not None, done.stderr
    return done.returncode, done.stdout, float(match[1]), float(match[2])


def test_ten_million_cells_on_a_sheet_of_ones_own_are_never_read(tmp_path: Path) -> None:
    book = _with_sheet(_base(), tmp_path / "big.xlsx", "Line list", rows=10_000, cols=1_000)
    with zipfile.ZipFile(book) as archive:
        assert archive.getinfo("xl/worksheets/sheet_extra.xml").file_size > 100_000_000
    code, out, seconds, rss_mb = _check_measured(book)
    assert code == 0, out
    assert "Plan: Test plan" in out
    assert seconds < CHECK_SECONDS, seconds
    assert rss_mb < CHECK_RSS_MB, rss_mb


def test_a_prepkit_sheet_of_ten_million_cells_stops_at_the_cap_naming_the_sheet(
    tmp_path: Path
) -> None:
    book = _with_sheet(_base(without=("Observed",)), tmp_path / "big.xlsx", "Observed",
                       rows=10_000, cols=1_000)
    code, out, seconds, rss_mb = _check_measured(book)
    assert code == 2
    cap = f"{load.MAX_FILLED_CELLS_PER_SHEET:,}"
    assert f"Observed (sheet): expected at most {cap} filled cells" in out
    assert f"found more than {cap}" in out
    assert seconds < CHECK_SECONDS and rss_mb < CHECK_RSS_MB, (seconds, rss_mb)


def test_millions_of_formatted_empty_cells_stop_at_the_entry_cap(tmp_path: Path) -> None:
    book = _with_sheet(_base(without=("Observed",)), tmp_path / "styled.xlsx", "Observed",
                       rows=3_000, cols=1_000, cell=b'<c s="1"/>')
    code, out, seconds, rss_mb = _check_measured(book)
    assert code == 2
    assert f"expected at most {load.MAX_ENTRIES_PER_SHEET:,} rows and cells" in out
    assert seconds < CHECK_SECONDS and rss_mb < CHECK_RSS_MB, (seconds, rss_mb)


def test_the_cap_on_all_sheets_together_names_the_sheet_that_crossed_it(tmp_path: Path) -> None:
    titles = ("Home contacts", "School contacts", "Work contacts")
    per_sheet = load.MAX_FILLED_CELLS_PER_SHEET - 10_000  # each under the per-sheet cap
    assert 2 * per_sheet < load.MAX_FILLED_CELLS < 3 * per_sheet
    book = _grow_sheets(_base(), tmp_path / "grown.xlsx", titles, cells=per_sheet)
    code, out, _seconds, _rss = _check_measured(book)
    assert code == 2
    assert (f"'Work contacts' (sheet): expected at most {load.MAX_FILLED_CELLS:,} filled cells "
            "on prepkit's sheets in all") in out
