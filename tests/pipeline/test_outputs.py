"""Atomic pack writing, file hashes and SOURCE_DATE_EPOCH."""

from __future__ import annotations

import hashlib
import os
import signal
import subprocess
import sys
import textwrap
import time
from collections.abc import Callable
from datetime import UTC, datetime
from pathlib import Path

import pytest

from prepkit.base.files import atomic_write_bytes, atomic_write_with, source_date
from prepkit.errors import OutputError, PrepkitError, SourceDateError, UnexpectedFilesError
from prepkit.pipeline import outputs
from prepkit.pipeline.manifest import MANIFEST_NAME, file_sha256, read_manifest, verify_pack
from prepkit.pipeline.outputs import AtomicOutputDir
from prepkit.pipeline.pack_folder import check_output_dir, exchange_paths, recover_output_dir

FIRST_PACK = {
    "pack.pdf": b"%PDF first",
    "results.xlsx": b"PK first",
    "csv/peaks.csv": b"a,b\n1,2\n",
}
SECOND_PACK = {"pack.pdf": b"%PDF second", "results.xlsx": b"PK second"}


def _write_pack(outdir: Path, files: dict[str, bytes]) -> None:
    with AtomicOutputDir(outdir) as out:
        for name, data in files.items():
            out.write_bytes(name, data)


def _contents(outdir: Path) -> dict[str, bytes]:
    return {
        path.relative_to(outdir).as_posix(): path.read_bytes()
        for path in sorted(outdir.rglob("*"))
        if path.is_file() and path.name != MANIFEST_NAME
    }


def _leftovers(parent: Path) -> list[str]:
    return sorted(p.name for p in parent.iterdir() if ".prepkit-" in p.name)


@pytest.fixture(params=["exchange", "two-renames"])
def swap_mode(request: pytest.FixtureRequest, monkeypatch: pytest.MonkeyPatch) -> str:
    """Run a test with the Linux atomic exchange and with the portable fallback."""
    if request.param == "two-renames":
        monkeypatch.setattr(outputs, "exchange_paths", lambda first, second: False)
    return str(request.param)


# --------------------------------------------------------------------------
# source_date and file_sha256
# --------------------------------------------------------------------------


def test_source_date_honours_the_environment(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1700000000")
    # 1700000000 s after 1970-01-01T00:00:00Z.
    assert source_date() == datetime(2023, 11, 14, 22, 13, 20, tzinfo=UTC)
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "  0 ")
    assert source_date() == datetime(1970, 1, 1, tzinfo=UTC)


def test_source_date_without_the_environment(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.delenv("SOURCE_DATE_EPOCH", raising=False)
    fixed = datetime(2027, 1, 4, tzinfo=UTC)
    assert source_date(fixed) is fixed
    now = source_date()
    assert now.tzinfo is UTC and now.microsecond == 0
    assert abs((datetime.now(tz=UTC) - now).total_seconds()) < 5


@pytest.mark.parametrize("value", ["yesterday", "1.5", "-1", "1e9"])
def test_source_date_rejects_bad_values(monkeypatch: pytest.MonkeyPatch, value: str) -> None:
    monkeypatch.setenv("SOURCE_DATE_EPOCH", value)
    with pytest.raises(SourceDateError) as info:
        source_date()
    assert info.value.value == value
    assert isinstance(info.value, ValueError) and isinstance(info.value, PrepkitError)


def test_file_sha256(tmp_path: Path) -> None:
    path = tmp_path / "abc.txt"
    path.write_bytes(b"abc")
    # FIPS 180-2, appendix B.1: SHA-256("abc").
    assert file_sha256(path) == "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
    big = tmp_path / "big.bin"
    data = os.urandom(3 * (1 << 20) + 17)
    big.write_bytes(data)
    assert file_sha256(big) == hashlib.sha256(data).hexdigest()


# --------------------------------------------------------------------------
# Normal runs
# --------------------------------------------------------------------------


def test_first_pack_is_written_with_a_manifest(tmp_path: Path, swap_mode: str) -> None:
    outdir = tmp_path / "out" / "pack"  # parent does not exist yet
    with AtomicOutputDir(outdir, created=datetime(2027, 1, 4, tzinfo=UTC)) as out:
        for name, data in FIRST_PACK.items():
            out.write_bytes(name, data)
        # Nothing reaches OUTDIR before the end.
        assert not outdir.exists()
        assert out.staging.parent == outdir.parent and out.staging.name.startswith(".pack.")
    assert _contents(outdir) == FIRST_PACK
    assert verify_pack(outdir) == []
    manifest = read_manifest(outdir)
    assert manifest is not None and manifest == out.manifest
    assert manifest.created == "2027-01-04T00:00:00+00:00"
    assert [e.name for e in manifest.files] == sorted(FIRST_PACK)
    entry = {e.name: e for e in manifest.files}["pack.pdf"]
    assert entry.sha256 == hashlib.sha256(FIRST_PACK["pack.pdf"]).hexdigest()
    assert entry.size == len(FIRST_PACK["pack.pdf"])
    assert _leftovers(outdir.parent) == []


def test_new_pack_replaces_the_previous_one_whole(tmp_path: Path, swap_mode: str) -> None:
    outdir = tmp_path / "pack"
    _write_pack(outdir, FIRST_PACK)
    _write_pack(outdir, SECOND_PACK)
    # csv/peaks.csv belonged to the first pack only, so it is gone.
    assert _contents(outdir) == SECOND_PACK
    assert verify_pack(outdir) == []
    assert _leftovers(tmp_path) == []


def test_manifest_is_reproducible(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1700000000")
    _write_pack(tmp_path / "a", FIRST_PACK)
    _write_pack(tmp_path / "b", FIRST_PACK)
    manifest_a = (tmp_path / "a" / MANIFEST_NAME).read_bytes()
    assert manifest_a == (tmp_path / "b" / MANIFEST_NAME).read_bytes()
    assert b"2023-11-14T22:13:20+00:00" in manifest_a


def test_files_written_by_other_libraries(tmp_path: Path) -> None:
    outdir = tmp_path / "pack"
    with AtomicOutputDir(outdir) as out:
        out.path("results.xlsx").write_bytes(b"PK workbook")
        out.write_text("notes/readme.txt", "line 1\nline 2\n")
    assert _contents(outdir) == {
        "results.xlsx": b"PK workbook",
        "notes/readme.txt": b"line 1\nline 2\n",
    }


def test_a_named_file_never_written_fails_the_run(tmp_path: Path) -> None:
    outdir = tmp_path / "pack"
    _write_pack(outdir, FIRST_PACK)
    with pytest.raises(OutputError, match="missing"), AtomicOutputDir(outdir) as out:
        out.write_bytes("pack.pdf", b"new")
        out.path("results.xlsx")  # promised, never written
    assert _contents(outdir) == FIRST_PACK
    assert _leftovers(tmp_path) == []


@pytest.mark.parametrize(
    "name",
    ["", "/abs.pdf", "../up.pdf", "a/../../b", "a\\b.pdf", ".hidden", "x/.y", MANIFEST_NAME],
)
def test_bad_output_names_are_refused(tmp_path: Path, name: str) -> None:
    with AtomicOutputDir(tmp_path / "pack") as out, pytest.raises(ValueError):
        out.write_bytes(name, b"x")


def test_the_same_name_twice_is_refused(tmp_path: Path) -> None:
    with AtomicOutputDir(tmp_path / "pack") as out:
        out.write_bytes("a.pdf", b"1")
        with pytest.raises(ValueError, match="again"):
            out.write_bytes("a.pdf", b"2")


def test_symlinked_outdir_is_followed(tmp_path: Path) -> None:
    real = tmp_path / "real"
    _write_pack(real, FIRST_PACK)
    link = tmp_path / "link"
    link.symlink_to(real, target_is_directory=True)
    _write_pack(link, SECOND_PACK)
    assert link.is_symlink()
    assert _contents(real) == SECOND_PACK


# --------------------------------------------------------------------------
# Output folders that are not prepkit's
# --------------------------------------------------------------------------


def test_folder_with_other_files_is_refused_and_left_alone(tmp_path: Path) -> None:
    outdir = tmp_path / "pack"
    _write_pack(outdir, FIRST_PACK)
    (outdir / "my notes.docx").write_bytes(b"planner's own work")
    (outdir / "drafts").mkdir()
    with pytest.raises(UnexpectedFilesError) as info, AtomicOutputDir(outdir) as out:
        out.write_bytes("pack.pdf", b"never")
    assert info.value.names == ("drafts", "my notes.docx")
    assert isinstance(info.value, OutputError) and isinstance(info.value, OSError)
    assert (outdir / "my notes.docx").read_bytes() == b"planner's own work"
    assert _leftovers(tmp_path) == []


def test_check_before_any_work_names_a_few_files_and_counts_the_rest(tmp_path: Path) -> None:
    outdir = tmp_path / "pack"
    _write_pack(outdir, FIRST_PACK)
    for name in ("a.txt", "b.txt", "c.txt", "d.txt", "e.txt", "f.txt"):
        (outdir / name).write_text("mine")
    before = sorted(p.name for p in tmp_path.iterdir())
    with pytest.raises(UnexpectedFilesError) as info:
        check_output_dir(outdir)
    message = str(info.value)
    assert message.startswith(f"output folder {outdir}: expected an empty folder")
    assert "a.txt, b.txt, c.txt, d.txt and 2 more" in message
    assert "choose another output folder, or move those files out of it" in message
    assert str(outdir) not in message[len(f"output folder {outdir}"):]  # named once
    assert sorted(p.name for p in tmp_path.iterdir()) == before  # the check changes nothing


def test_check_accepts_an_absent_folder_and_an_earlier_pack(tmp_path: Path) -> None:
    check_output_dir(tmp_path / "new")
    assert not (tmp_path / "new").exists()
    _write_pack(tmp_path / "pack", FIRST_PACK)
    check_output_dir(tmp_path / "pack")
    (tmp_path / "file").write_text("x")
    with pytest.raises(OutputError, match="expected a folder, found a file"):
        check_output_dir(tmp_path / "file")


def test_non_empty_folder_without_manifest_is_refused(tmp_path: Path) -> None:
    outdir = tmp_path / "pack"
    outdir.mkdir()
    (outdir / "pack.pdf").write_bytes(b"someone else's")
    with pytest.raises(UnexpectedFilesError), AtomicOutputDir(outdir):
        pass


def test_empty_folder_and_desktop_litter_are_accepted(tmp_path: Path) -> None:
    outdir = tmp_path / "pack"
    outdir.mkdir()
    _write_pack(outdir, FIRST_PACK)
    (outdir / ".DS_Store").write_bytes(b"finder")
    _write_pack(outdir, SECOND_PACK)
    assert _contents(outdir) == SECOND_PACK


def test_a_file_in_place_of_the_folder_is_refused(tmp_path: Path) -> None:
    outdir = tmp_path / "pack"
    outdir.write_text("not a folder")
    with pytest.raises(OutputError, match="expected a folder"), AtomicOutputDir(outdir):
        pass


# --------------------------------------------------------------------------
# Interrupted runs
# --------------------------------------------------------------------------


@pytest.mark.parametrize("error", [RuntimeError("model failed"), KeyboardInterrupt()])
def test_interrupted_run_leaves_the_previous_pack(
    tmp_path: Path, swap_mode: str, error: BaseException
) -> None:
    outdir = tmp_path / "pack"
    _write_pack(outdir, FIRST_PACK)
    with pytest.raises(type(error)), AtomicOutputDir(outdir) as out:
        out.write_bytes("pack.pdf", b"%PDF half of the new pack")
        raise error
    assert _contents(outdir) == FIRST_PACK
    assert verify_pack(outdir) == []
    assert _leftovers(tmp_path) == []


def test_failed_second_rename_puts_the_previous_pack_back(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    outdir = tmp_path / "pack"
    _write_pack(outdir, FIRST_PACK)
    monkeypatch.setattr(outputs, "exchange_paths", lambda first, second: False)
    real_rename = os.rename

    def rename(src: str | os.PathLike[str], dst: str | os.PathLike[str]) -> None:
        if ".prepkit-staging-" in os.fspath(src):
            raise PermissionError(13, "simulated failure", os.fspath(dst))
        real_rename(src, dst)

    monkeypatch.setattr(outputs.os, "rename", rename)
    with pytest.raises(OutputError, match="could not put the new pack"):
        _write_pack(outdir, SECOND_PACK)
    assert _contents(outdir) == FIRST_PACK
    assert _leftovers(tmp_path) == []


def test_interrupt_between_the_two_renames_puts_the_pack_back(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    outdir = tmp_path / "pack"
    _write_pack(outdir, FIRST_PACK)
    monkeypatch.setattr(outputs, "exchange_paths", lambda first, second: False)
    real_fsync_dir = outputs.fsync_dir

    def fsync_dir(path: Path) -> None:
        if not outdir.exists():  # the previous pack has just been moved aside
            raise KeyboardInterrupt
        real_fsync_dir(path)

    monkeypatch.setattr(outputs, "fsync_dir", fsync_dir)
    with pytest.raises(KeyboardInterrupt):
        _write_pack(outdir, SECOND_PACK)
    assert _contents(outdir) == FIRST_PACK
    assert _leftovers(tmp_path) == []


_WRITER = textwrap.dedent(
    """
    import sys
    from prepkit.pipeline import outputs
    from prepkit.pipeline.outputs import AtomicOutputDir
    if sys.argv[2] == "two-renames":
        outputs.exchange_paths = lambda first, second: False
    with AtomicOutputDir(sys.argv[1], pause=float(sys.argv[3])) as out:
        for index in range(6):
            out.write_bytes(f"part{index}.bin", bytes([index]) * 300_000)
    """
)


def _start_writer(outdir: Path, mode: str, pause: float) -> subprocess.Popen[bytes]:
    return subprocess.Popen(
        [sys.executable, "-c", _WRITER, str(outdir), mode, str(pause)],
        stdout=subprocess.DEVNULL,
        stderr=subprocess.PIPE,
    )


def _wait_until(condition: Callable[[], bool], proc: subprocess.Popen[bytes]) -> None:
    deadline = time.monotonic() + 60
    while not condition():
        if proc.poll() is not None:
            raise AssertionError(f"writer ended early: {proc.stderr.read() if proc.stderr else ''}")
        if time.monotonic() > deadline:
            proc.kill()
            raise AssertionError("writer never reached the point to kill it at")
        time.sleep(0.02)


def _kill(proc: subprocess.Popen[bytes]) -> None:
    os.kill(proc.pid, signal.SIGKILL)
    proc.wait(timeout=30)  # reaps it, so its pid is no longer alive
    assert proc.returncode == -signal.SIGKILL


@pytest.mark.skipif(os.name != "posix", reason="SIGKILL is POSIX")
@pytest.mark.parametrize("mode", ["exchange", "two-renames"])
def test_sigkill_while_writing_leaves_no_partial_file(tmp_path: Path, mode: str) -> None:
    outdir = tmp_path / "pack"
    _write_pack(outdir, FIRST_PACK)
    proc = _start_writer(outdir, mode, pause=0.2)

    def staged_some() -> bool:
        return any(len(list(p.glob("part*.bin"))) >= 2 for p in tmp_path.glob(".pack.prepkit-*"))

    _wait_until(staged_some, proc)
    _kill(proc)

    assert _contents(outdir) == FIRST_PACK  # byte for byte
    assert verify_pack(outdir) == []
    leftovers = _leftovers(tmp_path)
    assert len(leftovers) == 1 and leftovers[0].startswith(".pack.prepkit-staging-")

    # The next run removes the dead run's staging folder and succeeds.
    _write_pack(outdir, SECOND_PACK)
    assert _contents(outdir) == SECOND_PACK
    assert _leftovers(tmp_path) == []


@pytest.mark.skipif(os.name != "posix", reason="SIGKILL is POSIX")
def test_sigkill_between_the_two_renames_is_recovered(tmp_path: Path) -> None:
    outdir = tmp_path / "pack"
    _write_pack(outdir, FIRST_PACK)
    proc = _start_writer(outdir, "two-renames", pause=0.3)

    def previous_moved_aside() -> bool:
        return any(tmp_path.glob(".pack.prepkit-previous-*")) and not outdir.exists()

    _wait_until(previous_moved_aside, proc)
    _kill(proc)

    # OUTDIR is absent, never partial; the previous pack is whole beside it.
    assert not outdir.exists()
    (previous,) = tmp_path.glob(".pack.prepkit-previous-*")
    assert _contents(previous) == FIRST_PACK and verify_pack(previous) == []

    handled = recover_output_dir(outdir)
    assert previous in handled
    assert _contents(outdir) == FIRST_PACK
    assert verify_pack(outdir) == []
    assert _leftovers(tmp_path) == []


def _dead_pid() -> int:
    proc = subprocess.Popen([sys.executable, "-c", "pass"])
    proc.wait(timeout=30)
    return proc.pid


def test_stale_staging_is_cleaned_and_live_staging_kept(tmp_path: Path) -> None:
    outdir = tmp_path / "pack"
    _write_pack(outdir, FIRST_PACK)
    stale = tmp_path / f".pack.prepkit-staging-{_dead_pid()}-0badc0de"
    stale.mkdir()
    (stale / "pack.pdf").write_bytes(b"%PDF half")
    live = tmp_path / f".pack.prepkit-staging-{os.getppid()}-0000beef"
    live.mkdir()
    unrelated = tmp_path / ".other.prepkit-staging-1-00"
    unrelated.mkdir()

    _write_pack(outdir, SECOND_PACK)

    assert not stale.exists()
    assert live.exists() and unrelated.exists()
    assert _contents(outdir) == SECOND_PACK


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="renameat2 is Linux-only")
def test_linux_exchange_swaps_two_folders(tmp_path: Path) -> None:
    first, second = tmp_path / "first", tmp_path / "second"
    first.mkdir()
    second.mkdir()
    (first / "one").write_text("1")
    (second / "two").write_text("2")
    if not exchange_paths(first, second):
        pytest.skip("this file system does not support RENAME_EXCHANGE")
    assert [p.name for p in first.iterdir()] == ["two"]
    assert [p.name for p in second.iterdir()] == ["one"]


# --------------------------------------------------------------------------
# Single files
# --------------------------------------------------------------------------


def test_atomic_write_with_replaces_the_file(tmp_path: Path) -> None:
    import openpyxl

    target = tmp_path / "sub" / "plan.xlsx"
    seen: list[Path] = []

    def save(path: Path) -> None:
        seen.append(path)
        wb = openpyxl.Workbook()
        wb.save(path)

    assert atomic_write_with(target, save) == target
    assert seen[0].parent == target.parent and seen[0].suffix == ".xlsx"
    assert seen[0].name.startswith(".plan.xlsx.prepkit-tmp-")
    assert openpyxl.load_workbook(target).sheetnames == ["Sheet"]
    atomic_write_bytes(target, b"second")
    assert target.read_bytes() == b"second"
    assert sorted(p.name for p in target.parent.iterdir()) == ["plan.xlsx"]


@pytest.mark.parametrize("error", [RuntimeError("failed"), KeyboardInterrupt()])
def test_atomic_write_with_failure_keeps_the_old_file(tmp_path: Path, error: BaseException) -> None:
    target = tmp_path / "plan.xlsx"
    target.write_bytes(b"old")

    def half_then_fail(path: Path) -> None:
        path.write_bytes(b"ne")
        raise error

    with pytest.raises(type(error)):
        atomic_write_with(target, half_then_fail)
    assert target.read_bytes() == b"old"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["plan.xlsx"]


def test_atomic_write_with_writer_that_writes_nothing(tmp_path: Path) -> None:
    with pytest.raises(OutputError, match="found nothing written"):
        atomic_write_with(tmp_path / "plan.xlsx", lambda path: None)
    assert list(tmp_path.iterdir()) == []


def test_atomic_write_with_onto_a_folder_fails_cleanly(tmp_path: Path) -> None:
    (tmp_path / "plan.xlsx").mkdir()
    with pytest.raises(OutputError, match="could not put the file in place"):
        atomic_write_bytes(tmp_path / "plan.xlsx", b"x")
    assert [p.name for p in tmp_path.iterdir()] == ["plan.xlsx"]


def test_atomic_write_follows_symlinks(tmp_path: Path) -> None:
    real = tmp_path / "real.csv"
    real.write_bytes(b"old")
    link = tmp_path / "link.csv"
    link.symlink_to(real)
    atomic_write_bytes(link, b"new")
    assert link.is_symlink() and real.read_bytes() == b"new"


@pytest.mark.skipif(os.name != "posix", reason="SIGKILL is POSIX")
def test_sigkill_during_a_single_file_write(tmp_path: Path) -> None:
    target = tmp_path / "plan.xlsx"
    target.write_bytes(b"old complete file")
    script = textwrap.dedent(
        """
        import sys, time
        from prepkit.base.files import atomic_write_with
        def slow(path):
            with open(path, "wb") as handle:
                handle.write(b"half of the new")
                handle.flush()
                time.sleep(60)
        atomic_write_with(sys.argv[1], slow)
        """
    )
    proc = subprocess.Popen(
        [sys.executable, "-c", script, str(target)],
        stdout=subprocess.DEVNULL,
        stderr=subprocess.PIPE,
    )
    _wait_until(lambda: any(p.stat().st_size for p in tmp_path.glob(".plan.xlsx.*")), proc)
    _kill(proc)
    assert target.read_bytes() == b"old complete file"
    assert len(list(tmp_path.glob(".plan.xlsx.prepkit-tmp-*"))) == 1
    atomic_write_bytes(target, b"new")  # the next write removes the leftover
    assert sorted(p.name for p in tmp_path.iterdir()) == ["plan.xlsx"]


def test_output_error_message_has_no_error_number(tmp_path: Path) -> None:
    # The planner sees the sentence and the path, not "[Errno 20]".
    target = tmp_path / "a-file"
    target.write_text("not a folder")
    with pytest.raises(OutputError) as caught:
        with AtomicOutputDir(target) as out:
            out.write_text("x.txt", "x")
    message = str(caught.value)
    assert "Errno" not in message
    assert message.endswith(str(target))
