"""A workbook that cannot be read is a clear message with exit code 2, never a wait or a traceback.

Unreadable files, named pipes and devices, and chart sheets (where a sheet of cells belongs,
or of the planner's own, saved without the parts some programs leave out).
"""

from __future__ import annotations

import builtins
import errno
import io
import os
import zipfile
from pathlib import Path
from typing import Any

import pytest
from conftest import assert_no_traceback, quick_workbook, run_entry, small_plan

from prepkit.cli.main import main
from prepkit.workbook.sheets import HOSPITALS, POPULATION
from prepkit.workbook.template import build_workbook

pytestmark = pytest.mark.slow  # subprocess runs on unreadable inputs

@pytest.fixture
def unreadable(monkeypatch: pytest.MonkeyPatch) -> Any:
    """Make a file unreadable: by its mode, or (as root, whom modes do not stop) by refusing it."""

    def make(path: Path) -> None:
        if os.geteuid() != 0:
            path.chmod(0)
            return
        target = str(path.resolve())

        def refuse(name: Any) -> None:
            if isinstance(name, str | os.PathLike) and os.path.abspath(name) == target:
                raise PermissionError(errno.EACCES, "Permission denied", os.fspath(name))

        real_open, real_io_open, real_os_open = builtins.open, io.open, os.open

        def fake_open(file: Any, *args: Any, **kwargs: Any) -> Any:
            refuse(file)
            return real_open(file, *args, **kwargs)

        def fake_io_open(file: Any, *args: Any, **kwargs: Any) -> Any:
            refuse(file)
            return real_io_open(file, *args, **kwargs)

        def fake_os_open(file: Any, *args: Any, **kwargs: Any) -> int:
            refuse(file)
            return real_os_open(file, *args, **kwargs)

        monkeypatch.setattr(builtins, "open", fake_open)
        monkeypatch.setattr(io, "open", fake_io_open)
        monkeypatch.setattr(os, "open", fake_os_open)

    return make


def test_an_unreadable_workbook_is_a_message_for_run_as_for_check(
    tmp_path: Path, unreadable: Any, capsys: pytest.CaptureFixture[str]
) -> None:
    workbook = quick_workbook(tmp_path)
    unreadable(workbook)
    outdir = tmp_path / "pack"
    assert main(["check", str(workbook)]) == 2
    check_out = capsys.readouterr().out
    assert "(file): expected a file that can be read, found it cannot be read: Permission denied" \
        in check_out
    assert main(["run", str(workbook), "-o", str(outdir)]) == 2
    err = capsys.readouterr().err
    assert "(file): expected a file that can be read, found it cannot be read: Permission denied" \
        in err
    assert_no_traceback(err)
    assert not outdir.exists()


def test_a_named_pipe_given_as_the_workbook_never_blocks(tmp_path: Path) -> None:
    fifo = tmp_path / "plan.xlsx"
    os.mkfifo(fifo)
    for args in (["check", str(fifo)],
                 ["run", str(fifo), "--summary-only", "--summary-json", str(tmp_path / "s.json")],
                 ["watch", str(fifo), "-o", str(tmp_path / "pack")]):
        done = run_entry(*args, timeout=60)  # before the check, `check` waited here for ever
        assert done.returncode == 2, done
        assert f"found a named pipe, not a file ('{fifo}')" in done.stdout + done.stderr
        assert_no_traceback(done.stderr)


def test_a_device_given_as_the_workbook_is_not_read(tmp_path: Path) -> None:
    done = run_entry("check", "/dev/zero", timeout=60)
    assert done.returncode == 2
    assert "found a device, not a file ('/dev/zero')" in done.stdout


# ---- Chart sheets -----------------------------------------------------------------------------


def _with_chart_sheet(tmp_path: Path, title: str, *, replacing: str | None = None,
                      without_rels: bool = False) -> Path:
    from openpyxl.chart import BarChart, Reference

    wb = build_workbook(small_plan())
    if replacing is not None:
        del wb[replacing]
    sheet = wb.create_chartsheet(title)
    chart = BarChart()
    chart.add_data(Reference(wb[POPULATION], min_col=4, min_row=4, max_row=7))
    sheet.add_chart(chart)
    buffer = io.BytesIO()
    wb.save(buffer)
    path = tmp_path / "charts.xlsx"
    with zipfile.ZipFile(io.BytesIO(buffer.getvalue())) as src, zipfile.ZipFile(path, "w") as dst:
        for info in src.infolist():
            if without_rels and info.filename.startswith("xl/chartsheets/_rels/"):
                continue  # some programs save a chart sheet without its relationships
            dst.writestr(info, src.read(info.filename))
    return path


@pytest.mark.parametrize("without_rels", [False, True])
def test_a_chart_sheet_of_one_s_own_is_left_alone(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], without_rels: bool
) -> None:
    path = _with_chart_sheet(tmp_path, "Beds chart", without_rels=without_rels)
    assert main(["check", str(path)]) == 0, capsys.readouterr().out
    assert "Plan: Test plan" in capsys.readouterr().out


def test_a_chart_sheet_in_place_of_a_prepkit_sheet_is_named_as_such(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    path = _with_chart_sheet(tmp_path, HOSPITALS, replacing=HOSPITALS)
    assert main(["check", str(path)]) == 2
    out = capsys.readouterr().out
    assert ("Hospitals (sheet): expected a sheet of cells named 'Hospitals', found a chart sheet "
            "named 'Hospitals', which holds no cells") in out
