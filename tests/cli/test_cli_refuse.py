"""Refusing early: a wrong output folder stops a run before any other work."""

from __future__ import annotations

from pathlib import Path
from typing import Any

import pytest

from prepkit.cli.main import main
from prepkit.pipeline import run as pipeline


def _no_work(monkeypatch: pytest.MonkeyPatch) -> None:
    """Make reading the workbook and running the model fail loudly if they happen."""

    def forbidden(*_args: Any, **_kwargs: Any) -> Any:
        raise AssertionError("work was done before the output folder was checked")

    monkeypatch.setattr(pipeline, "read_plan_with_warnings", forbidden)
    monkeypatch.setattr(pipeline, "run_plan", forbidden)


def _foreign(outdir: Path, count: int) -> dict[str, bytes]:
    outdir.mkdir()
    files = {f"notes-{i}.docx": f"planner's own work {i}".encode() for i in range(count)}
    for name, data in files.items():
        (outdir / name).write_bytes(data)
    return files


def test_run_refuses_a_folder_of_other_files_before_reading_the_workbook(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    _no_work(monkeypatch)
    workbook = tmp_path / "plan.xlsx"
    workbook.write_bytes(b"never read")
    outdir = tmp_path / "pack"
    files = _foreign(outdir, 6)
    assert main(["run", str(workbook), "-o", str(outdir)]) == 2
    err = capsys.readouterr().err
    assert err.startswith(f"prepkit: output folder {outdir}: expected an empty folder")
    assert "notes-0.docx, notes-1.docx, notes-2.docx, notes-3.docx and 2 more" in err
    assert "choose another output folder, or move those files out of it" in err
    assert "Reading" not in err
    assert {p.name: p.read_bytes() for p in outdir.iterdir()} == files


def test_run_refuses_the_folder_holding_the_workbook_before_reading_it(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    _no_work(monkeypatch)
    workbook = tmp_path / "plan.xlsx"
    workbook.write_bytes(b"never read")
    assert main(["run", str(workbook), "-o", str(tmp_path)]) == 2
    assert "does not hold the planning workbook" in capsys.readouterr().err


def test_demo_refuses_a_folder_of_other_files_before_running(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    _no_work(monkeypatch)
    outdir = tmp_path / "demo"
    _foreign(outdir, 1)
    assert main(["demo", str(outdir)]) == 2
    assert "found files prepkit did not write: notes-0.docx." in capsys.readouterr().err


def test_summary_only_does_not_look_at_the_output_folder(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    outdir = tmp_path / "pack"
    _foreign(outdir, 1)
    workbook = tmp_path / "plan.xlsx"
    workbook.write_bytes(b"not a workbook")
    code = main(["run", str(workbook), "-o", str(outdir), "--summary-only",
                 "--summary-json", str(tmp_path / "s.json")])
    assert code == 2
    err = capsys.readouterr().err
    assert "expected an Excel workbook" in err  # the workbook was read: no pack is written
    assert "output folder" not in err


def test_negative_draws_are_refused_before_reading_the_workbook(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    _no_work(monkeypatch)
    workbook = tmp_path / "plan.xlsx"
    workbook.write_bytes(b"never read")
    assert main(["run", str(workbook), "--draws", "-3"]) == 2
    assert "--draws: expected 0 to 100,000 uncertainty draws" in capsys.readouterr().err
