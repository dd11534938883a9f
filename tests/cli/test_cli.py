"""The console entry point: exit codes and output survive the fast exit."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest
from conftest import ENTRY, run_entry

SAMPLE = Path(__file__).parents[2] / "sample_workbooks" / "tamsett_hollow.xlsx"
def test_check_of_a_good_workbook_prints_the_summary_and_exits_0() -> None:
    done = run_entry("check", str(SAMPLE))
    assert done.returncode == 0
    assert "Tamsett Hollow" in done.stdout
    assert "Traceback" not in done.stderr


def test_check_of_a_bad_file_exits_2_with_the_problem(tmp_path: Path) -> None:
    bad = tmp_path / "notes.xlsx"
    bad.write_text("day,admissions\n1,3\n")
    done = run_entry("check", str(bad))
    assert done.returncode == 2
    assert "expected an Excel workbook" in done.stdout
    assert "Traceback" not in done.stderr


def test_output_into_a_closed_pipe_is_not_a_traceback() -> None:
    entry = subprocess.Popen([sys.executable, "-c", ENTRY, "check", str(SAMPLE)],
                             stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    assert entry.stdout is not None and entry.stderr is not None
    entry.stdout.close()  # the reader went away, as with `prepkit check ... | head -0`
    err = entry.stderr.read().decode()
    entry.wait(timeout=120)
    assert "Traceback" not in err


def test_watch_refuses_a_folder_of_other_files_before_watching(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    from prepkit.cli.main import main
    from prepkit.pipeline import watch

    monkeypatch.setattr(watch, "watch_workbook", lambda *_a, **_k: pytest.fail("watched"))
    outdir = tmp_path / "pack"
    outdir.mkdir()
    (outdir / "notes.docx").write_bytes(b"mine")
    assert main(["watch", str(SAMPLE), "-o", str(outdir)]) == 2
    assert "found files prepkit did not write: notes.docx" in capsys.readouterr().err


def test_watch_stopped_with_ctrl_c_exits_0(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    from prepkit.cli.main import main
    from prepkit.pipeline import first_use, watch

    seen: dict[str, object] = {}

    def watch_workbook(workbook: Path, build: object, say: object, *, outdir: Path) -> int:
        seen["outdir"] = outdir
        raise KeyboardInterrupt

    monkeypatch.setattr(watch, "watch_workbook", watch_workbook)
    monkeypatch.setattr(first_use, "kernels_need_compiling", lambda: True)
    book = tmp_path / "plan.xlsx"
    book.write_bytes(SAMPLE.read_bytes())
    assert main(["watch", str(book)]) == 0
    out, err = capsys.readouterr()
    assert seen["outdir"] == tmp_path / "plan-pack"  # the default folder, named to the watcher
    assert out.strip() == "Stopped watching plan.xlsx."
    assert err.strip() == first_use.FIRST_USE_NOTE  # said once, before the first build
