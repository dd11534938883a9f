"""Start-up and thread figures: the Python API against the command line's old BLAS setting.

Run with ``.venv/bin/python benchmarks/startup.py`` (add ``--cold`` for the
compile time of a fresh numba cache, about two minutes more). The plan is
the invented city of Vellmora (16 five-year bands, 365 days, built by
``sample_workbooks/build_samples.py``), scenario "Fast spread, severe, all
measures" with its measures. Each setting runs in a fresh child process,
the settings one after another in rounds, so that they share the machine's
load alike:

* ``no_limit``: the Python API with prepkit's BLAS limit switched off
  (``prepkit.base.blas.set_enabled(False)``) and no environment variable:
  how the API ran before the library limited BLAS itself (OpenBLAS then
  uses one thread per core, and its idle threads spin after each call);
* ``env_1``: the same with ``OPENBLAS_NUM_THREADS=1`` and
  ``MKL_NUM_THREADS=1`` in the environment, what the command line used to
  set before numpy loaded;
* ``library``: the Python API as it is, prepkit limiting BLAS to one thread
  around its own calls (threadpoolctl), no environment variable.

Each child warms up (numba cache load) and then times ten single runs
(:func:`prepkit.scenarios.runs.run_scenario`) and three 200-draw ensembles
(:func:`prepkit.uncertainty.run.run_ensemble`); the figures are the best
and the median per setting over all rounds. ``--cold`` then times ``prepkit
demo`` with an empty ``NUMBA_CACHE_DIR`` and again with the cache it filled.
The last line is ``startup: single_no_limit_s=... single_library_s=...
ensemble_no_limit_s=... ensemble_library_s=... load=...``.
"""

from __future__ import annotations

import json
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[1]
SCENARIO = "Fast spread, severe, all measures"
SINGLE_RUNS = 10
ENSEMBLES = 3
ENSEMBLE_DRAWS = 200
ROUNDS = 3
SETTINGS = ("no_limit", "env_1", "library")


def child(setting: str) -> None:
    """In a fresh process: warm up, then time single runs and small ensembles; print JSON."""
    sys.path.insert(0, str(ROOT / "sample_workbooks"))
    sys.path.insert(0, str(ROOT))
    from build_samples import vellmora_plan

    try:
        from prepkit.base import blas
    except ImportError:  # the code before the library limited BLAS itself
        blas = None
    if blas is not None and setting != "library":
        blas.set_enabled(False)
    from prepkit.scenarios.runs import run_scenario
    from prepkit.uncertainty.run import run_ensemble

    plan = vellmora_plan()
    run_scenario(plan, SCENARIO)
    run_ensemble(plan, SCENARIO, draws=16)
    singles = []
    for _ in range(SINGLE_RUNS):
        start = time.perf_counter()
        run_scenario(plan, SCENARIO)
        singles.append(time.perf_counter() - start)
    ensembles = []
    for _ in range(ENSEMBLES):
        start = time.perf_counter()
        run_ensemble(plan, SCENARIO, draws=ENSEMBLE_DRAWS)
        ensembles.append(time.perf_counter() - start)
    print(json.dumps({"single": singles, "ensemble": ensembles}))


def run_child(setting: str) -> dict[str, list[float]]:
    env = {k: v for k, v in os.environ.items()
           if k not in ("OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS", "OMP_NUM_THREADS")}
    if setting == "env_1":
        env.update(OPENBLAS_NUM_THREADS="1", MKL_NUM_THREADS="1")
    done = subprocess.run([sys.executable, __file__, "--child", setting], check=True,
                          capture_output=True, text=True, env=env, cwd=ROOT)
    result: dict[str, list[float]] = json.loads(done.stdout.strip().splitlines()[-1])
    return result


def demo_seconds(cache: Path, out: Path) -> tuple[float, float]:
    """Wall and CPU seconds of ``prepkit demo`` with ``NUMBA_CACHE_DIR=cache``."""
    env = {**os.environ, "NUMBA_CACHE_DIR": str(cache)}
    before = os.times()
    start = time.perf_counter()
    subprocess.run([str(Path(sys.executable).parent / "prepkit"), "demo", str(out), "--quiet"],
                   check=True, env=env, cwd=ROOT, capture_output=True)
    wall = time.perf_counter() - start
    after = os.times()
    cpu = (after.children_user - before.children_user
           + after.children_system - before.children_system)
    return wall, cpu


def cold_start() -> None:
    with tempfile.TemporaryDirectory(prefix="prepkit-startup-") as folder:
        cache, out = Path(folder) / "numba-cache", Path(folder)
        cold = demo_seconds(cache, out / "cold")
        warm = demo_seconds(cache, out / "warm")
    print(f"prepkit demo, empty NUMBA_CACHE_DIR: {cold[0]:.1f} s wall, {cold[1]:.1f} s CPU; "
          f"again with that cache: {warm[0]:.1f} s wall, {warm[1]:.1f} s CPU; compiling: "
          f"{cold[0] - warm[0]:.1f} s wall, {cold[1] - warm[1]:.1f} s CPU "
          f"(load {os.getloadavg()[0]:.2f})")


def main() -> None:
    load_start = os.getloadavg()[0]
    print(f"{os.cpu_count()} cores; load average {load_start:.2f} at start; "
          f"{ROUNDS} rounds of {', '.join(SETTINGS)}")
    got: dict[str, dict[str, list[float]]] = {s: {"single": [], "ensemble": []}
                                              for s in SETTINGS}
    for _ in range(ROUNDS):
        for setting in SETTINGS:
            for key, values in run_child(setting).items():
                got[setting][key].extend(values)
    best: dict[str, Any] = {}
    print(f"{'setting':<10} {'single run best':>16} {'median':>8} {'worst':>8}   "
          f"{ENSEMBLE_DRAWS}-draw ensemble best {'median':>8}")
    for setting in SETTINGS:
        single, ens = got[setting]["single"], got[setting]["ensemble"]
        best[setting] = (min(single), min(ens))
        print(f"{setting:<10} {min(single):>15.3f}s {statistics.median(single):>7.3f}s "
              f"{max(single):>7.3f}s   {min(ens):>24.3f}s {statistics.median(ens):>7.3f}s")
    if "--cold" in sys.argv:
        cold_start()
    load = max(load_start, os.getloadavg()[0])
    print(f"startup: single_no_limit_s={best['no_limit'][0]:.3f} "
          f"single_env_1_s={best['env_1'][0]:.3f} single_library_s={best['library'][0]:.3f} "
          f"ensemble_no_limit_s={best['no_limit'][1]:.3f} "
          f"ensemble_library_s={best['library'][1]:.3f} load={load:.2f}")


if __name__ == "__main__":
    if len(sys.argv) > 2 and sys.argv[1] == "--child":
        child(sys.argv[2])
    else:
        main()
