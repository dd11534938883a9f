"""Trouble with the machine is a clear message with exit code 2, never a traceback.

A malformed SOURCE_DATE_EPOCH (read by libraries at import), a full disk while the pack,
a single file or the PDF's fonts are written, any other operating-system error, and a
compiled-model cache that cannot be written (the run goes on, with a note).
"""

from __future__ import annotations

import errno
import os
import subprocess
import sys
from pathlib import Path
from typing import Any

import pytest
from conftest import assert_no_traceback, quick_workbook, run_entry

from prepkit.base.files import atomic_write_bytes
from prepkit.cli import env as cli_env
from prepkit.cli.main import main
from prepkit.errors import OutputError
from prepkit.pipeline import outputs
from prepkit.pipeline import run as pipeline
from prepkit.pipeline.manifest import verify_pack
from prepkit.pipeline.outputs import AtomicOutputDir

pytestmark = pytest.mark.slow  # subprocess runs of the command line

# ---- SOURCE_DATE_EPOCH -------------------------------------------------------------------------


@pytest.mark.parametrize("value", ["abc", "1.5e9", "99999999999999999999"])
def test_a_malformed_source_date_epoch_is_a_message_not_an_import_failure(
    tmp_path: Path, value: str
) -> None:
    workbook = quick_workbook(tmp_path)
    env = {**os.environ, "SOURCE_DATE_EPOCH": value}
    for args in (["run", str(workbook), "-o", str(tmp_path / "pack")],
                 ["demo", str(tmp_path / "demo")], ["template", str(tmp_path / "t.xlsx")]):
        done = run_entry(*args, env=env)
        assert done.returncode == 2, done.stderr
        assert done.stderr.startswith(
            "prepkit: SOURCE_DATE_EPOCH: expected a whole number of seconds since 1970-01-01 "
            f"UTC (the run time stamped on the pack), found {value!r}; set it to a number such "
            "as 1700000000, or unset it to stamp the current time"), done.stderr
        assert_no_traceback(done.stderr)
    assert not (tmp_path / "pack").exists() and not (tmp_path / "t.xlsx").exists()


def test_a_blank_source_date_epoch_means_unset(tmp_path: Path) -> None:
    # numpy reads the variable at import and fails on a blank value: it must never see one.
    workbook = quick_workbook(tmp_path)
    done = run_entry("run", str(workbook), "--summary-only", "--summary-json",
                  str(tmp_path / "s.json"), "-q", env={**os.environ, "SOURCE_DATE_EPOCH": " "})
    assert done.returncode == 0, done.stderr
    assert (tmp_path / "s.json").is_file()


# ---- The disk is full ----------------------------------------------------------------------------


def _disk_full(monkeypatch: pytest.MonkeyPatch) -> None:
    def full(_fd: int) -> None:
        raise OSError(errno.ENOSPC, "No space left on device")

    monkeypatch.setattr(os, "fsync", full)


@pytest.mark.slow
def test_a_full_disk_while_the_pack_is_written_is_a_message_and_keeps_the_old_pack(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    workbook = quick_workbook(tmp_path)
    outdir = tmp_path / "pack"
    with AtomicOutputDir(outdir) as out:
        out.write_bytes("briefing-pack.pdf", b"%PDF the previous pack")
    _disk_full(monkeypatch)
    assert main(["run", str(workbook), "-o", str(outdir), "-q"]) == 2
    err = capsys.readouterr().err
    assert err.startswith(f"prepkit: output folder {outdir}: could not write ")
    assert "of the new pack (No space left on device); nothing was changed in the folder" in err
    assert_no_traceback(err)
    monkeypatch.undo()
    assert verify_pack(outdir) == []
    assert (outdir / "briefing-pack.pdf").read_bytes() == b"%PDF the previous pack"
    assert [p.name for p in tmp_path.iterdir() if ".prepkit-" in p.name] == []


def test_a_full_disk_while_a_single_file_is_written_keeps_the_old_file(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    target = tmp_path / "summary.json"
    target.write_bytes(b"old")
    _disk_full(monkeypatch)
    with pytest.raises(OutputError, match=r"could not write the file \(No space left on device\)"):
        atomic_write_bytes(target, b"new")
    monkeypatch.undo()
    assert target.read_bytes() == b"old"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["summary.json"]


def test_an_operating_system_error_anywhere_is_a_message_naming_the_file(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    def full(*_args: Any, **_kwargs: Any) -> Any:
        raise OSError(errno.ENOSPC, "No space left on device", "/var/tmp/scratch")

    monkeypatch.setattr(pipeline, "run_plan", full)
    workbook = quick_workbook(tmp_path)
    assert main(["run", str(workbook), "-o", str(tmp_path / "pack"), "-q"]) == 2
    err = capsys.readouterr().err
    assert err == ("prepkit: could not use /var/tmp/scratch: No space left on device (the disk "
                   "is full; free some space and run again). Earlier outputs were left as they "
                   "were.\n")


def test_no_room_for_the_pdf_s_temporary_fonts_is_an_output_error(
    monkeypatch: pytest.MonkeyPatch
) -> None:
    from prepkit.report import render

    def full() -> None:
        raise OSError(errno.ENOSPC, "No space left on device")

    monkeypatch.setattr(render, "FontConfiguration", full)
    with pytest.raises(OutputError) as caught:
        render.html_to_pdf("<p>x</p>", page_size="A4", title="t")
    assert "briefing-pack.pdf: could not lay out the PDF (No space left on device)" in str(
        caught.value)
    assert "set TMPDIR to use another" in str(caught.value)


# ---- The compiled model's cache ------------------------------------------------------------------


def _numba_takes_locator_classes() -> bool:
    from numba.core import config

    return hasattr(config, "CACHE_LOCATOR_CLASSES")


@pytest.mark.slow
@pytest.mark.skipif(not _numba_takes_locator_classes(),
                    reason="this numba cannot be told where to look for its cache")
def test_a_compiled_model_cache_that_cannot_be_written_falls_back_with_a_note(
    tmp_path: Path
) -> None:
    # As root no folder is unwritable by its mode, so the cache folder is put under a file
    # and numba is told to look nowhere else (NUMBA_CACHE_LOCATOR_CLASSES): before the
    # fallback, numba refused to load the model at import.
    blocker = tmp_path / "a-file"
    blocker.write_text("not a folder")
    scratch = tmp_path / "tmp"
    scratch.mkdir()
    env = {**os.environ, "NUMBA_CACHE_DIR": str(blocker / "cache"),
           "NUMBA_CACHE_LOCATOR_CLASSES": "UserProvidedCacheLocator", "TMPDIR": str(scratch)}
    workbook = quick_workbook(tmp_path)
    done = run_entry("run", str(workbook), "--summary-only", "--summary-json",
                  str(tmp_path / "s.json"), env=env, timeout=900)
    assert done.returncode == 0, done.stderr
    assert cli_env.CACHE_NOTE in done.stderr
    assert_no_traceback(done.stderr)
    assert (tmp_path / "s.json").is_file()
    assert [p.name for p in scratch.iterdir() if p.name.startswith("prepkit-compiled")] == []


def test_outputs_module_does_not_read_the_environment_at_import() -> None:
    code = "import prepkit.pipeline.outputs, prepkit.cli.main"
    done = subprocess.run([sys.executable, "-c", code],
                          env={**os.environ, "SOURCE_DATE_EPOCH": "abc"}, capture_output=True,
                          text=True, timeout=60, check=False)
    assert done.returncode == 0, done.stderr
    assert outputs.PAUSE_ENV == "PREPKIT_TEST_OUTPUT_PAUSE"
