"""The input and the planner's files are sacred: no output path may be one of them.

* ``--summary-json`` and the output folder are never the workbook, however
  the path is spelled (``..``, a link, a hard link, another letter case);
* a pack file the planner edited since the last run stops the run, naming
  it, unless ``--force``;
* a manifest licenses replacing only the files in its own folder whose bytes
  it recorded: a copied manifest, a link, or an entry outside the folder
  never costs the planner a file.
"""

from __future__ import annotations

import json
import os
from pathlib import Path
from typing import Any

import pytest
from conftest import quick_workbook

from prepkit import errors
from prepkit.cli.main import main
from prepkit.errors import EditedFilesError, PipelineError, UnexpectedFilesError
from prepkit.pipeline import run as pipeline
from prepkit.pipeline import watch
from prepkit.pipeline.manifest import MANIFEST_NAME, file_sha256, verify_pack
from prepkit.pipeline.outputs import AtomicOutputDir
from prepkit.pipeline.outputs_guard import check_summary_path, is_inside, same_file
from prepkit.pipeline.pack_folder import check_output_dir

pytestmark = pytest.mark.slow  # whole runs against guarded paths

OLD_PACK = {"briefing-pack.pdf": b"%PDF old", "results.xlsx": b"PK old",
            "charts/a.svg": b"<svg/>"}


def _no_work(monkeypatch: pytest.MonkeyPatch) -> None:
    def forbidden(*_args: Any, **_kwargs: Any) -> Any:
        raise AssertionError("work was done before the output paths were checked")

    monkeypatch.setattr(pipeline, "read_plan_with_warnings", forbidden)
    monkeypatch.setattr(pipeline, "run_plan", forbidden)


def _pack(outdir: Path, files: dict[str, bytes] = OLD_PACK) -> None:
    with AtomicOutputDir(outdir) as out:
        for name, data in files.items():
            out.write_bytes(name, data)


def _files(folder: Path) -> dict[str, bytes]:
    return {p.relative_to(folder).as_posix(): p.read_bytes()
            for p in sorted(folder.rglob("*")) if p.is_file() and not p.is_symlink()}


# ---- --summary-json ---------------------------------------------------------------------------


def _spellings(workbook: Path) -> list[Path]:
    folder = workbook.parent
    (folder / "sub").mkdir(exist_ok=True)
    link = folder / "link-to-plan.xlsx"
    link.symlink_to(workbook)
    hard = folder / "hard-link.xlsx"
    os.link(workbook, hard)
    found = [workbook, folder / "sub" / ".." / workbook.name, link, hard,
             Path(os.path.relpath(workbook))]
    upper = workbook.with_name(workbook.name.upper())
    if upper.exists():  # a file system that ignores case (macOS, Windows)
        found.append(upper)
    return found


def test_summary_json_is_never_the_workbook_however_spelled(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    workbook = quick_workbook(tmp_path)
    before = workbook.read_bytes()
    _no_work(monkeypatch)
    for spelling in _spellings(workbook):
        for extra in (["--summary-only"], ["-o", str(tmp_path / "pack")]):
            code = main(["run", str(workbook), "--summary-json", str(spelling), *extra])
            err = capsys.readouterr().err
            assert code == 2, (spelling, err)
            assert f"--summary-json: expected a new file or a summary prepkit wrote earlier " \
                   f"(it is replaced), never the planning workbook, found the planning " \
                   f"workbook itself ({spelling})" in err
            assert "changed while prepkit was running" not in err and "Traceback" not in err
    assert workbook.read_bytes() == before
    assert not (tmp_path / "pack").exists()


def test_summary_json_onto_the_workbook_leaves_it_unchanged_in_a_real_run(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    # Before the check, this run wrote the summary over the workbook and reported success.
    workbook = quick_workbook(tmp_path)
    before = workbook.read_bytes()
    code = main(["run", str(workbook), "--summary-json", str(workbook), "--summary-only", "-q"])
    assert code == 2
    assert workbook.read_bytes() == before
    assert "never the planning workbook" in capsys.readouterr().err


@pytest.mark.parametrize("force", [[], ["--force"]])
def test_summary_json_never_replaces_a_file_prepkit_did_not_write(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str],
    force: list[str],
) -> None:
    _no_work(monkeypatch)
    workbook = quick_workbook(tmp_path)
    notes = tmp_path / "notes.json"
    notes.write_text('{"my": "own settings"}')
    code = main(["run", str(workbook), "--summary-json", str(notes), "--summary-only", *force])
    err = capsys.readouterr().err
    assert code == 2
    assert (f"--summary-json: expected a new file or a summary prepkit wrote earlier (it is "
            f"replaced), found {notes}, a file prepkit did not write; nothing was written: "
            "choose another name, or move that file") in err
    assert notes.read_text() == '{"my": "own settings"}'


def test_a_summary_prepkit_wrote_may_be_replaced(tmp_path: Path) -> None:
    workbook = quick_workbook(tmp_path)
    earlier = tmp_path / "results.json"
    earlier.write_text(json.dumps({"summary_version": 1, "scenarios": [],
                                   "run": {"prepkit_version": "0.1.0", "input_sha256": "ab"}}))
    check_summary_path(earlier, workbook=workbook, outdir=tmp_path / "pack")
    check_summary_path(tmp_path / "new.json", workbook=workbook, outdir=None)


@pytest.mark.parametrize("where", ["in the pack", "a folder", "under a file", "the pack"])
def test_summary_json_paths_that_cannot_be_written_are_refused_before_work(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str],
    where: str,
) -> None:
    _no_work(monkeypatch)
    workbook = quick_workbook(tmp_path)
    outdir = tmp_path / "pack"
    _pack(outdir)
    (tmp_path / "folder").mkdir()
    path = {"in the pack": outdir / "extra.json", "a folder": tmp_path / "folder",
            "under a file": workbook / "summary.json", "the pack": outdir}[where]
    code = main(["run", str(workbook), "-o", str(outdir), "--summary-json", str(path)])
    err = capsys.readouterr().err
    assert code == 2 and err.startswith("prepkit: --summary-json: expected "), err
    expected = {"in the pack": "a path outside the output folder",
                "a folder": "which is a folder", "under a file": "which is a file",
                "the pack": "a path outside the output folder"}[where]
    assert expected in err
    assert _files(outdir) == {**OLD_PACK, MANIFEST_NAME: (outdir / MANIFEST_NAME).read_bytes()}


def test_same_file_and_is_inside_see_through_links(tmp_path: Path) -> None:
    (tmp_path / "real").mkdir()
    (tmp_path / "real" / "plan.xlsx").write_bytes(b"x")
    (tmp_path / "alias").symlink_to(tmp_path / "real", target_is_directory=True)
    assert same_file(tmp_path / "alias" / "plan.xlsx", tmp_path / "real" / "plan.xlsx")
    assert is_inside(tmp_path / "real" / "plan.xlsx", tmp_path / "alias")
    assert is_inside(tmp_path / "alias" / "new" / "x.json", tmp_path / "real")
    assert not is_inside(tmp_path / "realm" / "x.json", tmp_path / "real")
    assert not same_file(tmp_path / "real" / "a.json", tmp_path / "real" / "b.json")


# ---- The output folder -----------------------------------------------------------------------


def test_output_folder_under_an_existing_file_is_refused_before_work(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    _no_work(monkeypatch)
    workbook = quick_workbook(tmp_path)
    before = workbook.read_bytes()
    assert main(["run", str(workbook), "-o", str(workbook / "pack")]) == 2
    err = capsys.readouterr().err
    assert (f"prepkit: output folder: expected a folder path, found that {workbook} is a file, "
            "so no folder can be made under it") in err
    assert workbook.read_bytes() == before and "Traceback" not in err


def test_output_folder_holding_the_workbook_through_a_link_is_refused(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    _no_work(monkeypatch)
    workbook = quick_workbook(tmp_path)
    alias = tmp_path.parent / f"{tmp_path.name}-alias"
    alias.symlink_to(tmp_path, target_is_directory=True)
    try:
        for outdir in (alias, tmp_path / "sub" / ".."):
            assert main(["run", str(workbook), "-o", str(outdir)]) == 2
            assert "does not hold the planning workbook" in capsys.readouterr().err
    finally:
        alias.unlink()


def test_an_edited_pack_file_stops_the_run_and_is_named(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    _no_work(monkeypatch)
    workbook = quick_workbook(tmp_path)
    outdir = tmp_path / "pack"
    _pack(outdir)
    (outdir / "results.xlsx").write_bytes(b"PK with the planner's notes")
    before = _files(outdir)
    for command in (["run", str(workbook), "-o", str(outdir)],
                    ["run", str(workbook), "-o", str(outdir), "--summary-json",
                     str(tmp_path / "s.json")]):
        assert main(command) == 2
        err = capsys.readouterr().err
        assert (f"prepkit: output folder {outdir}: expected the earlier pack's files as prepkit "
                "wrote them (the whole folder is replaced), found files changed since: "
                "results.xlsx. Nothing was written; move them out of the folder to keep them, "
                "or run again with --force to replace them") in err
    assert _files(outdir) == before


def test_watch_stops_on_an_edited_pack_file_before_watching(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    monkeypatch.setattr(watch, "watch_workbook", lambda *_a, **_k: pytest.fail("watched"))
    workbook = quick_workbook(tmp_path)
    outdir = tmp_path / "pack"
    _pack(outdir)
    (outdir / "charts" / "a.svg").write_bytes(b"<svg>edited</svg>")
    assert main(["watch", str(workbook), "-o", str(outdir)]) == 2
    assert "found files changed since: charts/a.svg." in capsys.readouterr().err


@pytest.mark.slow
def test_force_replaces_edited_pack_files_and_nothing_else(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    workbook = quick_workbook(tmp_path)
    outdir = tmp_path / "pack"
    _pack(outdir)
    (outdir / "results.xlsx").write_bytes(b"PK with the planner's notes")
    assert main(["run", str(workbook), "-o", str(outdir), "--force", "-q"]) == 0
    assert capsys.readouterr().err == ""
    assert verify_pack(outdir) == []
    results = (outdir / "results.xlsx").read_bytes()
    assert results.startswith(b"PK") and b"planner's notes" not in results
    assert not (outdir / "charts" / "a.svg").exists()  # the old pack's file went with it


def test_force_never_replaces_files_prepkit_did_not_write(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    _no_work(monkeypatch)
    workbook = quick_workbook(tmp_path)
    outdir = tmp_path / "pack"
    _pack(outdir)
    (outdir / "minutes.docx").write_bytes(b"planner's own")
    assert main(["run", str(workbook), "-o", str(outdir), "--force"]) == 2
    assert "found files prepkit did not write: minutes.docx" in capsys.readouterr().err
    assert (outdir / "minutes.docx").read_bytes() == b"planner's own"


# ---- What a manifest licenses ----------------------------------------------------------------


def test_a_copied_manifest_never_licenses_deleting_the_planner_s_files(tmp_path: Path) -> None:
    real = tmp_path / "real-pack"
    _pack(real)
    folder = tmp_path / "planning"
    folder.mkdir()
    mine = {"results.xlsx": b"PK the planner's own results", "briefing-pack.pdf": b"%PDF mine"}
    for name, data in mine.items():
        (folder / name).write_bytes(data)
    (folder / MANIFEST_NAME).write_bytes((real / MANIFEST_NAME).read_bytes())  # copied over
    with pytest.raises(EditedFilesError) as caught, AtomicOutputDir(folder) as out:
        out.write_bytes("briefing-pack.pdf", b"%PDF new")
    assert caught.value.names == ("briefing-pack.pdf", "results.xlsx")
    assert {n: (folder / n).read_bytes() for n in mine} == mine


def test_a_link_in_a_pack_is_not_a_file_prepkit_wrote(tmp_path: Path) -> None:
    outdir = tmp_path / "pack"
    _pack(outdir)
    theirs = tmp_path / "master.xlsx"
    theirs.write_bytes(OLD_PACK["results.xlsx"])  # the same bytes the manifest recorded
    (outdir / "results.xlsx").unlink()
    (outdir / "results.xlsx").symlink_to(theirs)
    with pytest.raises(EditedFilesError) as caught:
        check_output_dir(outdir)
    assert caught.value.names == ("results.xlsx",)
    (outdir / "results.xlsx").unlink()
    (outdir / "charts").rename(tmp_path / "charts")
    (outdir / "charts").symlink_to(tmp_path / "charts", target_is_directory=True)
    with pytest.raises(UnexpectedFilesError) as foreign:
        check_output_dir(outdir)
    assert foreign.value.names == ("charts",)
    assert theirs.read_bytes() == OLD_PACK["results.xlsx"]


def test_manifest_entries_outside_the_folder_license_nothing(tmp_path: Path) -> None:
    outdir = tmp_path / "pack"
    _pack(outdir)
    outside = tmp_path / "outside.txt"
    outside.write_bytes(b"the planner's")
    notes = outdir / "notes.txt"
    notes.write_bytes(b"the planner's too")
    manifest = json.loads((outdir / MANIFEST_NAME).read_text())
    for name, path in (("../outside.txt", outside), (str(outside), outside),
                       ("charts/../../outside.txt", outside), ("./notes.txt", notes),
                       ("charts/../notes.txt", notes)):
        manifest["files"].append({"name": name, "sha256": file_sha256(path),
                                  "bytes": path.stat().st_size})
    (outdir / MANIFEST_NAME).write_text(json.dumps(manifest))
    with pytest.raises(UnexpectedFilesError) as caught, AtomicOutputDir(outdir) as out:
        out.write_bytes("briefing-pack.pdf", b"%PDF new")
    assert caught.value.names == ("notes.txt",)
    notes.unlink()
    _pack(outdir, {"briefing-pack.pdf": b"%PDF new"})
    assert outside.read_bytes() == b"the planner's"
    assert verify_pack(outdir) == []


def test_a_file_edited_while_the_pack_is_written_stops_the_swap(tmp_path: Path) -> None:
    outdir = tmp_path / "pack"
    _pack(outdir)
    with pytest.raises(EditedFilesError), AtomicOutputDir(outdir) as out:
        out.write_bytes("briefing-pack.pdf", b"%PDF new")
        (outdir / "results.xlsx").write_bytes(b"PK saved by the planner meanwhile")
    assert (outdir / "results.xlsx").read_bytes() == b"PK saved by the planner meanwhile"
    assert (outdir / "briefing-pack.pdf").read_bytes() == OLD_PACK["briefing-pack.pdf"]
    assert sorted(p.name for p in tmp_path.iterdir() if ".prepkit-" in p.name) == []


def test_replace_edited_is_the_only_way_an_edited_file_goes(tmp_path: Path) -> None:
    outdir = tmp_path / "pack"
    _pack(outdir)
    (outdir / "results.xlsx").write_bytes(b"PK edited")
    with pytest.raises(EditedFilesError):
        check_output_dir(outdir)
    check_output_dir(outdir, replace_edited=True)
    with AtomicOutputDir(outdir, replace_edited=True) as out:
        out.write_bytes("results.xlsx", b"PK new")
    assert _files(outdir)["results.xlsx"] == b"PK new"


def test_pipeline_error_is_the_one_the_pipeline_exports() -> None:
    assert errors.PipelineError is PipelineError
