"""The README's "Everyday use" commands run as typed, after the README's own set-up."""

from __future__ import annotations

import os
import re
import shlex
import signal
import subprocess
import time
from pathlib import Path

import pytest

from prepkit.cli import main as cli
from prepkit.pipeline import demo

ROOT = Path(__file__).parents[2]
ACTIVATE = ". .venv/bin/activate"


def everyday_commands() -> list[str]:
    """Command lines of the shell block under "## Everyday use", comments dropped."""
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    section = text.split("\n## Everyday use\n", 1)[1].split("\n## ", 1)[0]
    block = re.search(r"```sh\n(.*?)```", section, re.DOTALL)
    assert block is not None, "no ```sh block under Everyday use"
    lines = [" ".join(shlex.split(line, comments=True)) for line in block[1].splitlines()]
    return [line for line in lines if line]


def test_the_block_starts_by_putting_prepkit_on_the_path() -> None:
    commands = everyday_commands()
    assert commands[0] == ACTIVATE
    venv = re.search(r"^VENV\s*\?=\s*(\S+)", (ROOT / "Makefile").read_text(), re.MULTILINE)
    assert venv is not None and venv[1] == ".venv"  # the folder `make demo` makes


def test_every_prepkit_line_is_accepted_by_the_command_line() -> None:
    parser = cli._parser()
    for line in everyday_commands()[1:]:
        words = shlex.split(line)
        if words[0] == "cp":
            assert words[1] == f"{demo.DEMO_OUTDIR}/{demo.DEMO_WORKBOOK}", line
            continue
        assert words[0] == "prepkit", line
        args = parser.parse_args(words[1:])  # exits (and fails the test) on a wrong option
        assert args.command in {"template", "check", "run", "watch", "demo"}


def test_makefile_demo_writes_where_the_block_looks() -> None:
    makefile = (ROOT / "Makefile").read_text()
    assert re.search(r"^DEMO_OUT\s*\?=\s*prepkit-demo$", makefile, re.MULTILINE)
    assert "$(BIN)/prepkit demo $(DEMO_OUT)" in makefile


def test_the_scheduler_line_is_shown_as_an_example_with_a_placeholder() -> None:
    [line] = [c for c in everyday_commands() if "--scheduler" in c]
    assert "tcp://SCHEDULER-HOST:8786" in line
    readme = " ".join((ROOT / "README.md").read_text(encoding="utf-8").split())
    assert "The last line is an example: `SCHEDULER-HOST` stands for the machine" in readme


# ---- The whole block in fresh shells ------------------------------------------------------------


def _shell(folder: Path, line: str, env: dict[str, str], **popen: object) -> subprocess.Popen[str]:
    """``line`` in a fresh login shell in ``folder``, after the README's first line."""
    return subprocess.Popen(["bash", "-lc", f"{ACTIVATE}\n{line}"], cwd=folder, env=env,
                            text=True, stdout=subprocess.PIPE, stderr=subprocess.STDOUT,
                            **popen)  # type: ignore[call-overload]


def _finish(process: subprocess.Popen[str], line: str, timeout: float = 600) -> str:
    out, _ = process.communicate(timeout=timeout)
    assert process.returncode == 0, f"{line}\n{out}"
    assert "Traceback" not in out, out
    return out


def _watch_once(folder: Path, line: str, env: dict[str, str]) -> str:
    """Start the watch line, wait for its first build, then press Ctrl-C."""
    process = _shell(folder, line, env, start_new_session=True)
    assert process.stdout is not None
    lines: list[str] = []
    deadline = time.monotonic() + 600
    while time.monotonic() < deadline:
        text = process.stdout.readline()
        if not text:
            break
        lines.append(text)
        if text.startswith("Watching "):
            os.killpg(process.pid, signal.SIGINT)
            break
    rest = _finish(process, line, timeout=120)
    return "".join(lines) + rest


@pytest.mark.slow
def test_everyday_use_runs_as_typed_after_make_demo(tmp_path: Path) -> None:
    venv = ROOT / ".venv"
    if not (venv / "bin" / "prepkit").is_file():
        pytest.skip("no .venv: run `make test`, which makes it")
    distributed = pytest.importorskip("dask.distributed")
    folder = tmp_path / "checkout"
    folder.mkdir()
    (folder / ".venv").symlink_to(venv, target_is_directory=True)
    env = {k: v for k, v in os.environ.items() if k not in ("VIRTUAL_ENV", "CI")}
    env["PATH"] = os.pathsep.join(p for p in env.get("PATH", "").split(os.pathsep)
                                  if not p.startswith(str(venv)))
    env["SOURCE_DATE_EPOCH"] = "1800000000"

    # What `make demo` runs (with fewer draws: the hint and the copy are the same either way).
    demo = subprocess.run([".venv/bin/prepkit", "demo", "prepkit-demo", "--draws", "0"],
                          cwd=folder, env=env, text=True, capture_output=True, timeout=600)
    assert demo.returncode == 0, demo.stderr
    hint = demo.stdout.splitlines()[-1].strip()
    assert hint == (".venv/bin/prepkit run prepkit-demo/vellmora_city.xlsx -o prepkit-demo-2")
    tried = subprocess.run(["bash", "-lc", hint], cwd=folder, env=env, text=True,
                           capture_output=True, timeout=600)
    assert tried.returncode == 0, tried.stderr
    assert (folder / "prepkit-demo-2" / "briefing-pack.pdf").is_file()

    with distributed.LocalCluster(n_workers=1, threads_per_worker=2, processes=False,
                                  protocol="tcp", dashboard_address=":0") as cluster:
        host = cluster.scheduler_address.removeprefix("tcp://")
        for line in everyday_commands()[1:]:
            if "--scheduler" in line:
                # The one placeholder, and fewer draws: 20,000 would only take longer.
                line = line.replace("SCHEDULER-HOST:8786", host)
                line = line.replace("--draws 20000", "--draws 200")
            if line.startswith("prepkit watch"):
                out = _watch_once(folder, line, env)
                assert "Stopped watching my-plan.xlsx." in out
                continue
            _finish(_shell(folder, line, env), line)

    assert (folder / "blank-plan.xlsx").is_file()
    assert (folder / "results.json").is_file()
    assert (folder / "my-pack" / "briefing-pack.pdf").is_file()
    assert (folder / "my-plan-pack" / "briefing-pack.pdf").is_file()  # the default folder
