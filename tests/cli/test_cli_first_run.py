"""The first run just works: it says once that it compiles, and its hints can be typed."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path
from typing import Any

import pytest

from prepkit import errors
from prepkit.cli import main as cli
from prepkit.cli.main import main
from prepkit.pipeline import demo, first_use
from prepkit.pipeline import run as pipeline


class _Stop(Exception):
    """Ends a run once the messages before the model have been said."""


def _messages_before_the_model(plan_path: Path, monkeypatch: pytest.MonkeyPatch,
                               compiling: bool) -> list[str]:
    monkeypatch.delenv("CI", raising=False)
    monkeypatch.setattr(first_use, "kernels_need_compiling", lambda: compiling)

    def run_plan(_plan: Any) -> Any:
        raise _Stop

    monkeypatch.setattr(pipeline, "run_plan", run_plan)
    said: list[str] = []
    with pytest.raises(_Stop):
        pipeline.run_workbook(plan_path, pipeline.RunOptions(outdir=plan_path.parent / "pack"),
                              said.append)
    return said


def test_first_run_says_once_before_compiling_how_long_it_takes(
    plan_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    said = _messages_before_the_model(plan_path, monkeypatch, compiling=True)
    assert said == [
        "Reading plan.xlsx",
        "Preparing the compiled model for first use (about 40 s, longer on a busy machine; "
        "later runs skip this).",
        "Note: Only 3 days of observed admissions are given; at least 5 are needed to fit "
        "the scenarios to local data, so the projections are not fitted.",
        "Running both scenarios, each with and without its measures",
    ]


def test_later_runs_say_nothing_about_compiling(plan_path: Path,
                                                monkeypatch: pytest.MonkeyPatch) -> None:
    said = _messages_before_the_model(plan_path, monkeypatch, compiling=False)
    assert not any("compiled model" in m for m in said)


def test_an_empty_numba_cache_means_compiling(tmp_path: Path) -> None:
    # A fresh process with its own empty cache folder: nothing is compiled, only looked up.
    env = {**os.environ, "NUMBA_CACHE_DIR": str(tmp_path / "numba-cache")}
    code = "from prepkit.pipeline.first_use import first_use_note as n; print(n())"
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          env=env, timeout=120, check=True)
    assert done.stdout.strip() == first_use.FIRST_USE_NOTE
    assert not (tmp_path / "numba-cache").exists() or not any(
        (tmp_path / "numba-cache").rglob("*.nbi"))


def test_compiled_kernels_mean_no_note(plan_path: Path) -> None:
    from prepkit.scenarios.runs import run_plan
    from prepkit.uncertainty.plan_runs import run_uncertainty
    from prepkit.workbook import read_plan

    plan = read_plan(plan_path)
    run_uncertainty(plan, run_plan(plan))  # every kernel has run in this process
    assert first_use.kernels_need_compiling() is False
    assert first_use.first_use_note() is None


# ---- The demo's hint ----------------------------------------------------------------------------


@pytest.fixture
def quick_demo(monkeypatch: pytest.MonkeyPatch) -> None:
    """run_demo without the run itself: only its closing hint is under test."""
    monkeypatch.setattr(demo, "run_to_pack", lambda *_a, **_k: "report")


@pytest.mark.usefixtures("quick_demo")
def test_demo_hint_names_a_real_new_folder_and_the_typed_command(tmp_path: Path) -> None:
    outdir = tmp_path / "demo"
    text = demo.run_demo(pipeline.RunOptions(outdir=outdir), lambda _m: None,
                             command=".venv/bin/prepkit")
    assert text.splitlines()[1:] == [
        f"Try it: change a figure in {outdir / 'vellmora_city.xlsx'}, save it, then run",
        f"  .venv/bin/prepkit run {outdir / 'vellmora_city.xlsx'} -o {tmp_path / 'demo-2'}",
    ]
    (tmp_path / "demo-2").mkdir()
    (tmp_path / "demo-3").write_text("taken")
    text = demo.run_demo(pipeline.RunOptions(outdir=outdir), lambda _m: None)
    assert text.endswith(f" -o {tmp_path / 'demo-4'}")
    assert "<" not in text


@pytest.mark.usefixtures("quick_demo")
def test_demo_hint_quotes_paths_for_the_shell(tmp_path: Path) -> None:
    outdir = tmp_path / "my demo"
    text = demo.run_demo(pipeline.RunOptions(outdir=outdir), lambda _m: None)
    assert f"run '{outdir / 'vellmora_city.xlsx'}' -o '{tmp_path / 'my demo-2'}'" in text


def test_an_edited_demo_copy_is_kept_with_a_command_that_runs_it(tmp_path: Path) -> None:
    from prepkit.pipeline.outputs import AtomicOutputDir

    outdir = tmp_path / "demo"
    with AtomicOutputDir(outdir) as out:
        out.write_bytes(demo.DEMO_WORKBOOK, b"as the demo wrote it")
    copy = outdir / demo.DEMO_WORKBOOK
    copy.write_bytes(b"the planner's edit")
    with pytest.raises(errors.PipelineError) as info:
        demo.run_demo(pipeline.RunOptions(outdir=outdir), lambda _m: None, command="prepkit")
    assert f"run it with 'prepkit run {copy} -o {tmp_path / 'demo-2'}'" in str(info.value)
    assert copy.read_bytes() == b"the planner's edit"


def test_typed_command_is_prepkit_only_when_that_is_on_the_path(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    script = tmp_path / "bin" / "prepkit"
    script.parent.mkdir()
    script.write_text("#!/bin/sh\n")
    script.chmod(0o755)
    monkeypatch.setattr(sys, "argv", [str(script), "demo"])
    monkeypatch.setenv("PATH", str(script.parent))
    assert cli.typed_command() == "prepkit"
    monkeypatch.setenv("PATH", str(tmp_path / "elsewhere"))
    assert cli.typed_command() == str(script)
    monkeypatch.chdir(tmp_path)
    monkeypatch.setattr(sys, "argv", ["bin/prepkit", "demo"])  # as `make demo` starts it
    assert cli.typed_command() == "bin/prepkit"
    monkeypatch.setattr(sys, "argv", ["/opt/x/cli.py"])
    assert cli.typed_command().endswith(" -m prepkit.cli.main")


# ---- Options that cannot work are refused at once -----------------------------------------------


def test_summary_only_without_a_json_path_is_refused(
    plan_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    assert main(["run", str(plan_path), "--summary-only"]) == 2
    assert "--summary-only: expected --summary-json PATH" in capsys.readouterr().err
