"""Worker processes end with their run, however it ends, and print nothing.

The run draws charts and documents in forked workers (PREPKIT_WORKERS). Killed with
SIGKILL, the run takes its workers with it; stopped with Ctrl-C, it says so in one line and
no worker prints its own interruption.
"""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import time
from collections.abc import Iterator
from pathlib import Path
from typing import Any

import pytest
from conftest import ENTRY, quick_workbook

from prepkit.pipeline import jobs

pytestmark = pytest.mark.slow  # starts and kills worker processes

# ---- Worker processes ----------------------------------------------------------------------------


def _children(pid: int) -> list[int]:
    found = []
    for entry in Path("/proc").iterdir():
        if not entry.name.isdigit():
            continue
        try:
            fields = (entry / "stat").read_text().rsplit(")", 1)[1].split()
        except OSError:
            continue
        if int(fields[1]) == pid and fields[0] != "Z":
            found.append(int(entry.name))
    return found


def _alive(pid: int) -> bool:
    try:
        fields = Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()
    except OSError:
        return False
    return fields[0] != "Z"


@pytest.fixture
def rendering_run(tmp_path: Path) -> Iterator[tuple[subprocess.Popen[str], list[int]]]:
    """A run started in its own session, caught while its worker processes draw charts."""
    workbook = quick_workbook(tmp_path)
    env = {**os.environ, jobs.WORKERS_ENV: "2"}
    env.pop("CI", None)
    process = subprocess.Popen([sys.executable, "-c", ENTRY, "run", str(workbook), "-o",
                                str(tmp_path / "pack"), "-q"], env=env, text=True,
                               stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                               start_new_session=True)
    workers: list[int] = []
    deadline = time.monotonic() + 300
    while time.monotonic() < deadline and process.poll() is None:
        workers = _children(process.pid)
        if len(workers) >= 2:
            break
        time.sleep(0.02)
    try:
        assert len(workers) >= 2, "the run never started its worker processes"
        yield process, workers
    finally:
        if process.poll() is None:
            os.killpg(process.pid, signal.SIGKILL)
        process.communicate(timeout=60)
        for pid in workers:
            if _alive(pid):
                os.kill(pid, signal.SIGKILL)


def _gone(pids: list[int], seconds: float = 15) -> bool:
    deadline = time.monotonic() + seconds
    while time.monotonic() < deadline:
        if not any(_alive(pid) for pid in pids):
            return True
        time.sleep(0.05)
    return False


@pytest.mark.slow
@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="worker processes are Linux-only")
def test_workers_end_with_a_killed_run_and_print_nothing(
    rendering_run: tuple[subprocess.Popen[str], list[int]]
) -> None:
    process, workers = rendering_run
    os.kill(process.pid, signal.SIGKILL)
    assert _gone(workers), [pid for pid in workers if _alive(pid)]
    _out, err = process.communicate(timeout=60)
    assert process.returncode == -signal.SIGKILL
    assert err == ""  # quiet run: nothing from the run, and nothing from its workers


@pytest.mark.slow
@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="worker processes are Linux-only")
def test_ctrl_c_while_workers_draw_is_one_line_and_no_worker_traceback(
    rendering_run: tuple[subprocess.Popen[str], list[int]]
) -> None:
    process, workers = rendering_run
    os.killpg(process.pid, signal.SIGINT)  # Ctrl-C reaches the whole foreground group
    _out, err = process.communicate(timeout=120)
    assert process.returncode == 130, err
    assert err == "prepkit: interrupted; earlier outputs were left as they were.\n"
    assert _gone(workers)


LONG_JOBS = """
import sys, time
from prepkit.pipeline import jobs

def job():
    time.sleep(60)
    print("a worker outlived its run", file=sys.stderr, flush=True)
    return 1

jobs.run_jobs([job, job], workers=2)
"""


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="worker processes are Linux-only")
def test_workers_in_the_middle_of_a_long_job_end_when_the_run_is_killed() -> None:
    # Before, each worker finished its job (here a minute; a large pack's PDF takes that
    # long) after the run was gone, then printed or wrote whatever the job did.
    process = subprocess.Popen([sys.executable, "-c", LONG_JOBS], text=True,
                               stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    workers: list[int] = []
    deadline = time.monotonic() + 120
    while len(workers) < 2 and time.monotonic() < deadline and process.poll() is None:
        workers = _children(process.pid)
        time.sleep(0.02)
    try:
        assert len(workers) == 2, process.communicate(timeout=5)
        time.sleep(0.5)  # the workers are in their jobs
        process.kill()
        assert _gone(workers, seconds=10), [pid for pid in workers if _alive(pid)]
        _out, err = process.communicate(timeout=30)
        assert err == ""
    finally:
        for pid in workers:
            if _alive(pid):
                os.kill(pid, signal.SIGKILL)


def test_workers_are_told_to_end_with_their_parent(monkeypatch: pytest.MonkeyPatch) -> None:
    asked: list[dict[str, Any]] = []

    class NoPool:
        def Pool(self, **options: Any) -> Any:  # noqa: N802 - the name multiprocessing uses
            asked.append(options)
            raise OSError("no processes here")  # run_jobs then runs the jobs itself

    monkeypatch.setattr(jobs.multiprocessing, "get_context", lambda _method: NoPool())
    assert jobs.run_jobs([lambda: 1, lambda: 2], workers=2) == [1, 2]
    # Each worker starts with worker_setup(parent), then keeps the jobs it was forked with.
    assert asked[0]["initializer"] is jobs._start_worker
    assert asked[0]["initargs"][0] == os.getpid()
    started: list[int] = []
    monkeypatch.setattr(jobs, "worker_setup", started.append)
    monkeypatch.setattr(jobs, "_WORKER_JOBS", [])
    jobs._start_worker(12345, [lambda: 3])
    assert started == [12345] and jobs._run_job(0) == 3
