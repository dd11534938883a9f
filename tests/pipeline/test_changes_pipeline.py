"""What changed since the last pack, end to end: one cell changed, two runs into one folder.

The expected list is the one cell the test changes (a hand-made edit); that a
comparison of two runs lists exactly the edited cell and nothing else is the
acceptance check of the feature (common practice, no source).
"""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import openpyxl
import pytest
from pypdf import PdfReader

from prepkit.pipeline import run as pipeline
from prepkit.pipeline.changes import previous_pack

pytestmark = pytest.mark.slow

SAMPLE = Path(__file__).resolve().parents[2] / "sample_workbooks" / "tamsett_hollow.xlsx"
EPOCH = "1796000000"
PAGE_TITLE = "What changed since the last pack"


def _run(workbook: Path, outdir: Path) -> None:
    pipeline.run_workbook(workbook, pipeline.RunOptions(outdir=outdir, draws=0, quiet=True),
                          lambda _message: None)


def _pages(outdir: Path) -> list[str]:
    return [page.extract_text() or "" for page in PdfReader(outdir / "briefing-pack.pdf").pages]


def _files(outdir: Path) -> dict[str, bytes]:
    return {p.relative_to(outdir).as_posix(): p.read_bytes()
            for p in sorted(outdir.rglob("*")) if p.is_file()}


def test_one_changed_cell_is_the_whole_list(tmp_path: Path, monkeypatch: pytest.MonkeyPatch
                                            ) -> None:
    monkeypatch.setenv("SOURCE_DATE_EPOCH", EPOCH)
    workbook = tmp_path / "tamsett_hollow.xlsx"
    shutil.copyfile(SAMPLE, workbook)
    outdir = tmp_path / "pack"
    _run(workbook, outdir)
    first = _files(outdir)
    assert "inputs.json" in first and "changes-since-last-pack.csv" not in first
    assert not any(PAGE_TITLE in page for page in _pages(outdir))

    kept = json.loads(first["inputs.json"])
    record = next(i for i in kept["inputs"] if i["name"] == "capacity.icu_beds")
    book = openpyxl.load_workbook(workbook)
    book[record["sheet"]][record["cell"]].value = int(record["value"]) + 2
    book.save(workbook)
    _run(workbook, outdir)

    # the page: that cell alone, with its sheet, its label and both values
    pages = _pages(outdir)
    page = next(p for p in pages if PAGE_TITLE in p and "Inputs that changed" in p)
    assert "1 input changed" in page
    listed = page.split("Inputs that changed", 1)[1].split("Headline figures", 1)[0]
    rows = [line for line in listed.splitlines() if line.startswith("Changed")]
    new = int(record["value"]) + 2
    assert rows == [f"Changed {record['sheet']} {record['cell']} {record['label']} "
                    f"{record['value']} beds {new} beds"]
    assert "Since the last pack" in pages[0]

    # the same in summary.json, the CSV file and results.xlsx
    summary = json.loads((outdir / "summary.json").read_text(encoding="utf-8"))
    changes = summary["changes_since_last_pack"]
    assert changes["counts"] == {"changed": 1, "added": 0, "removed": 0,
                                 "figures_moved": changes["counts"]["figures_moved"]}
    assert [(c["sheet"], c["cell"], c["old_value"], c["new_value"]) for c in changes["inputs"]
            ] == [(record["sheet"], record["cell"], record["value"], str(new))]
    lines = (outdir / "changes-since-last-pack.csv").read_text(encoding="utf-8-sig").splitlines()
    assert lines[1:] == [f"changed,{record['sheet']},{record['cell']},{record['label']},beds,"
                         f"{record['value']},{new}"]
    sheet = openpyxl.load_workbook(outdir / "results.xlsx", read_only=True)["Changes"]
    values = [row for row in sheet.iter_rows(min_row=4, values_only=True) if any(row)]
    assert values == [("changed", record["sheet"], record["cell"], record["label"], "beds",
                       record["value"], str(new))]
    # more ICU beds cannot add days short of ICU beds; every figure's difference is new - old
    for figure in changes["headline_figures"]:
        if figure["figure"] == "Days short of ICU beds" and figure["difference"] != "no change":
            assert int(figure["new_value"]) - int(figure["old_value"]) == int(
                figure["difference"]) < 0

    # a third run of the same workbook: nothing changed, so no page, and the very files a
    # fresh folder gets (the pack stays reproducible)
    _run(workbook, outdir)
    assert not any(PAGE_TITLE in page for page in _pages(outdir))
    fresh = tmp_path / "fresh"
    _run(workbook, fresh)
    assert _files(outdir) == _files(fresh)


def test_an_edited_summary_is_not_taken_as_the_earlier_pack(tmp_path: Path,
                                                             monkeypatch: pytest.MonkeyPatch
                                                             ) -> None:
    monkeypatch.setenv("SOURCE_DATE_EPOCH", EPOCH)
    outdir = tmp_path / "pack"
    workbook = tmp_path / "tamsett_hollow.xlsx"
    shutil.copyfile(SAMPLE, workbook)
    _run(workbook, outdir)
    assert previous_pack(outdir) is not None
    summary = outdir / "summary.json"
    summary.write_text(summary.read_text(encoding="utf-8").replace('"Town', '"Village'),
                       encoding="utf-8")
    assert previous_pack(outdir) is None  # its bytes are no longer those prepkit wrote
    (outdir / "inputs.json").unlink()
    assert previous_pack(tmp_path / "absent") is None
