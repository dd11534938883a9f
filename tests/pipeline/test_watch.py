"""prepkit watch: rebuild on save, keep the previous pack on a bad save."""

from __future__ import annotations

import threading
import time
from pathlib import Path

import pytest

from prepkit.errors import Problem, WorkbookError
from prepkit.pipeline.watch import watch_workbook


def _recorder() -> tuple[list[str], object]:
    said: list[str] = []
    return said, said.append


def test_builds_once_then_after_each_real_change(tmp_path: Path) -> None:
    book = tmp_path / "plan.xlsx"
    book.write_bytes(b"version 1")
    builds: list[bytes] = []

    def build() -> str:
        builds.append(book.read_bytes())
        return f"built {len(builds)}"

    def changes():  # type: ignore[no-untyped-def]
        yield {(1, str(tmp_path / "other.txt"))}  # another file: ignored
        book.write_bytes(b"version 2")
        yield {(2, str(book))}
        yield {(2, str(book))}  # touched again, same bytes: no rebuild
        book.write_bytes(b"version 3")
        yield {(2, str(book))}

    said, say = _recorder()
    assert watch_workbook(book, build, say, changes=changes()) == 3  # type: ignore[arg-type]
    assert builds == [b"version 1", b"version 2", b"version 3"]
    assert said.count("plan.xlsx changed; rebuilding.") == 2


def test_bad_save_reports_problems_and_keeps_watching(tmp_path: Path) -> None:
    book = tmp_path / "plan.xlsx"
    book.write_bytes(b"good")
    calls = {"n": 0}

    def build() -> str:
        calls["n"] += 1
        if book.read_bytes() == b"bad":
            raise WorkbookError([Problem(sheet="Hospitals", cell="B5", field="Staffed ward beds",
                                         expected="a whole number", found="text 'many'")])
        return "ok"

    def changes():  # type: ignore[no-untyped-def]
        book.write_bytes(b"bad")
        yield {(2, str(book))}
        book.write_bytes(b"good again")
        yield {(2, str(book))}

    said, say = _recorder()
    assert watch_workbook(book, build, say, changes=changes()) == 2  # type: ignore[arg-type]
    assert calls["n"] == 3
    text = "\n".join(said)
    assert "Hospitals!B5 (Staffed ward beds)" in text
    assert "previous pack was kept" in text


def test_real_file_system_change_is_seen(tmp_path: Path) -> None:
    pytest.importorskip("watchfiles")
    book = tmp_path / "plan.xlsx"
    book.write_bytes(b"one")
    stop = threading.Event()
    seen: list[bytes] = []

    def build() -> str:
        seen.append(book.read_bytes())
        if len(seen) == 2:
            stop.set()
        return "ok"

    def save_later() -> None:
        time.sleep(1.0)
        book.write_bytes(b"two")

    writer = threading.Thread(target=save_later)
    writer.start()
    timer = threading.Timer(30.0, stop.set)  # never hang the suite
    timer.start()
    try:
        watch_workbook(book, build, lambda _m: None, stop=stop)
    finally:
        timer.cancel()
        writer.join()
    assert seen == [b"one", b"two"]


def _failing_first_build(book: Path) -> list[str]:
    def build() -> str:
        raise WorkbookError([Problem(sheet="Hospitals", cell="B5", field="Staffed ward beds",
                                     expected="a whole number", found='"many"')])

    said, say = _recorder()
    watch_workbook(book, build, say, outdir=book.parent / "pack",  # type: ignore[arg-type]
                   changes=iter(()))
    return said


def test_first_build_into_a_new_folder_does_not_claim_a_previous_pack(tmp_path: Path) -> None:
    book = tmp_path / "plan.xlsx"
    book.write_bytes(b"bad")
    said = _failing_first_build(book)
    text = "\n".join(said)
    assert "previous pack" not in text
    assert (f"No pack was written to {tmp_path / 'pack'}. Fix the workbook and save it "
            "again.") in said


def test_first_build_beside_an_earlier_pack_says_it_was_kept(tmp_path: Path) -> None:
    from prepkit.pipeline.outputs import AtomicOutputDir

    book = tmp_path / "plan.xlsx"
    book.write_bytes(b"bad")
    with AtomicOutputDir(tmp_path / "pack") as out:
        out.write_bytes("briefing-pack.pdf", b"%PDF earlier")
    said = _failing_first_build(book)
    assert (f"The previous pack in {tmp_path / 'pack'} was kept. Fix the workbook and save it "
            "again.") in said
    assert (tmp_path / "pack" / "briefing-pack.pdf").read_bytes() == b"%PDF earlier"


def test_without_a_folder_only_packs_built_while_watching_count(tmp_path: Path) -> None:
    book = tmp_path / "plan.xlsx"
    book.write_bytes(b"bad")

    def build() -> str:
        raise WorkbookError([Problem(sheet="Plan", cell="C5", field="Title", expected="text",
                                     found="a blank cell")])

    said, say = _recorder()
    watch_workbook(book, build, say, changes=iter(()))  # type: ignore[arg-type]
    assert "No pack was written. Fix the workbook and save it again." in said
