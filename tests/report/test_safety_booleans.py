"""LibreOffice's booleans: TRUE and FALSE are reported where they are, never read as 1 or 0.

LibreOffice Calc saves a TRUE typed into a cell with a number format as a
formula with a saved number, ``<c t="n"><f>TRUE()</f><v>1</v></c>``, and into
a General cell as ``<c t="b"><f>TRUE()</f><v>1</v></c>`` (seen in files saved
by LibreOffice 7 with ``soffice --convert-to xlsx``; the last test makes them
with LibreOffice itself when it is installed). Excel saves booleans as
``<c t="b"><v>1</v></c>``. Each must be reported at its own cell as TRUE or
FALSE: a number cell holding TRUE is not 1, and a band labelled FALSE is not
band "0" (which then made problems appear on three other sheets).
"""

from __future__ import annotations

import re
import shutil
import subprocess
import zipfile
from pathlib import Path

import pytest
from conftest import Editor

from prepkit.errors import Problem, WorkbookError
from prepkit.workbook.reader import read_plan
from prepkit.workbook.sheets import HOSPITALS, PLAN, POPULATION


def _sheet_part(archive: zipfile.ZipFile, title: str) -> str:
    book = archive.read("xl/workbook.xml").decode()
    rels = archive.read("xl/_rels/workbook.xml.rels").decode()
    rid = re.search(rf'<sheet [^>]*name="{re.escape(title)}"[^>]*r:id="([^"]+)"', book)
    assert rid is not None, title
    for rel in re.findall(r"<Relationship [^>]*/>", rels):
        if f'Id="{rid[1]}"' in rel:
            target = re.search(r'Target="([^"]+)"', rel)
            assert target is not None
            name = target[1].lstrip("/")
            return name if name.startswith("xl/") else f"xl/{name}"
    raise AssertionError(title)


def _as_saved(path: Path, out: Path, sheet: str, cell: str, xml: str) -> Path:
    """``path`` with the cell's XML replaced by ``xml`` (``{s}`` takes its style)."""
    with zipfile.ZipFile(path) as src:
        part = _sheet_part(src, sheet)
        with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as dst:
            for info in src.infolist():
                data = src.read(info.filename)
                if info.filename == part:
                    text = data.decode()
                    pattern = rf'<c r="{cell}"([^>]*?)(/>|>.*?</c>)'
                    found = re.search(pattern, text)
                    assert found is not None, (sheet, cell)
                    style = re.search(r's="(\d+)"', found[1])
                    new = xml.format(r=cell, s=style[1] if style else "0")
                    text = text[:found.start()] + new + text[found.end():]
                    data = text.encode()
                dst.writestr(info, data)
    return out


def _libreoffice(value: bool) -> str:
    word = "TRUE" if value else "FALSE"
    return f'<c r="{{r}}" s="{{s}}" t="n"><f aca="false">{word}()</f><v>{int(value)}</v></c>'


def _problems(path: Path) -> tuple[Problem, ...]:
    with pytest.raises(WorkbookError) as caught:
        read_plan(path)
    return caught.value.problems


def test_true_in_a_number_cell_saved_by_libreoffice_is_reported_at_that_cell(
    editor: Editor, tmp_path: Path
) -> None:
    cell = editor.item(HOSPITALS, "Staffed ward beds").coordinate
    saved = _as_saved(editor.save(), tmp_path / "lo.xlsx", HOSPITALS, cell,
                      _libreoffice(True))
    [problem] = _problems(saved)
    assert (problem.sheet, problem.cell) == (HOSPITALS, cell)
    assert problem.expected == "a whole number between 0 and 1,000,000"
    assert problem.found == "TRUE"


def test_false_in_a_band_label_is_reported_at_the_label_not_as_band_0(
    editor: Editor, tmp_path: Path
) -> None:
    cell = editor.table(POPULATION, "Band", "0-17").coordinate
    saved = _as_saved(editor.save(), tmp_path / "lo.xlsx", POPULATION, cell,
                      _libreoffice(False))
    problems = _problems(saved)
    assert [(p.sheet, p.cell, p.found) for p in problems] == [
        (POPULATION, cell, "FALSE")], "\n".join(map(str, problems))
    assert not any('"0"' in p.found or "band 0" in p.field for p in problems)


@pytest.mark.parametrize("xml", [
    '<c r="{r}" s="{s}" t="b"><f aca="false">TRUE()</f><v>1</v></c>',  # LibreOffice, General
    '<c r="{r}" s="{s}" t="b"><v>1</v></c>',                           # Excel
    '<c r="{r}" s="{s}" t="b"><f>1=1</f><v>1</v></c>',                 # a comparison
    '<c r="{r}" s="{s}" t="n"><f>true( )</f><v>1</v></c>',             # typed in lower case
    '<c r="{r}" s="{s}" t="n"><f>TRUE()</f></c>',                      # no saved result
])
def test_every_way_a_boolean_is_saved_reads_as_true(
    editor: Editor, tmp_path: Path, xml: str
) -> None:
    cell = editor.item(HOSPITALS, "Staffed ward beds").coordinate
    saved = _as_saved(editor.save(), tmp_path / "b.xlsx", HOSPITALS, cell, xml)
    [problem] = _problems(saved)
    assert (problem.cell, problem.found) == (cell, "TRUE")


def test_booleans_in_share_text_and_date_cells_are_reported_too(
    editor: Editor, tmp_path: Path
) -> None:
    cells = {
        (HOSPITALS, editor.item(HOSPITALS,
                                       "Ward beds used by other patients").coordinate): True,
        (PLAN, editor.item(PLAN, "Jurisdiction").coordinate): False,
        (PLAN, editor.item(PLAN, "Day 0 date").coordinate): True,
    }
    path = editor.save()
    for number, ((sheet, cell), value) in enumerate(cells.items()):
        path = _as_saved(path, tmp_path / f"b{number}.xlsx", sheet, cell, _libreoffice(value))
    found = {(p.sheet, p.cell): p.found for p in _problems(path)}
    assert found == {key: "TRUE" if value else "FALSE" for key, value in cells.items()}


def test_a_formula_with_a_number_result_is_still_its_number(
    editor: Editor, tmp_path: Path
) -> None:
    cell = editor.item(HOSPITALS, "Staffed ward beds").coordinate
    saved = _as_saved(editor.save(), tmp_path / "n.xlsx", HOSPITALS, cell,
                      '<c r="{r}" s="{s}" t="n"><f aca="false">TRUE()+399</f><v>400</v></c>')
    assert read_plan(saved).capacity.ward_beds == 400


@pytest.mark.slow
@pytest.mark.skipif(shutil.which("soffice") is None, reason="LibreOffice is not installed")
def test_a_workbook_saved_by_libreoffice_itself(editor: Editor, tmp_path: Path) -> None:
    beds = editor.item(HOSPITALS, "Staffed ward beds")
    band = editor.table(POPULATION, "Band", "0-17")
    beds.value = True
    band.value = False
    typed = editor.save()
    out = tmp_path / "saved"
    subprocess.run(["soffice", "--headless", f"-env:UserInstallation=file://{tmp_path}/lo",
                    "--convert-to", "xlsx", "--outdir", str(out), str(typed)],
                   check=True, capture_output=True, timeout=300)
    saved = out / typed.name
    with zipfile.ZipFile(saved) as archive:  # LibreOffice's own way: a formula and a number
        hospitals = archive.read(_sheet_part(archive, HOSPITALS)).decode()
    assert re.search(rf'<c r="{beds.coordinate}"[^>]*><f[^>]*>TRUE\(\)</f><v>1</v>', hospitals)
    found = sorted((p.sheet, p.cell, p.found) for p in _problems(saved))
    assert found == sorted([(HOSPITALS, beds.coordinate, "TRUE"),
                            (POPULATION, band.coordinate, "FALSE")])
