"""The console entry point: exit codes and output survive the fast exit."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

SAMPLE = Path(__file__).parents[1] / "sample_workbooks" / "tamsett_hollow.xlsx"
ENTRY = "from prepkit.cli import entry; entry()"


def _run(*args: str) -> subprocess.CompletedProcess[str]:
    return subprocess.run([sys.executable, "-c", ENTRY, *args], capture_output=True, text=True,
                          timeout=120, check=False)


def test_check_of_a_good_workbook_prints_the_summary_and_exits_0() -> None:
    done = _run("check", str(SAMPLE))
    assert done.returncode == 0
    assert "Tamsett Hollow" in done.stdout
    assert "Traceback" not in done.stderr


def test_check_of_a_bad_file_exits_2_with_the_problem(tmp_path: Path) -> None:
    bad = tmp_path / "notes.xlsx"
    bad.write_text("day,admissions\n1,3\n")
    done = _run("check", str(bad))
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
