"""Time of the decide-by search on both samples, and its share of a whole pack.

Run with ``.venv/bin/python benchmarks/decide.py [--rounds N]`` after ``make setup``.
In one process, after a warm-up that loads the compiled kernels from the numba
cache, each sample's plan (the city fitted to its observed figures, as ``prepkit
run`` projects it; the town as its workbook gives it) goes through
:func:`prepkit.uncertainty.decide.decide_plan` ``--rounds`` times (default 2),
and the best round is kept. It prints, per sample, the seconds, the ensemble
runs the search made and the seconds per run; then the city's whole ensemble
(:func:`prepkit.uncertainty.plan_runs.run_uncertainty`, 1,000 draws per scenario
and variant) timed the same way, and the ratio of the search to it, measured
side by side in this run. ``benchmarks/pack.py`` times the whole pack with the
search included.

The last line is ``decide: city_s=... city_runs=... town_s=... town_runs=...
ensemble_s=... ratio=... load=...``.
"""

from __future__ import annotations

import argparse
import os
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def _best(fn: object, rounds: int) -> tuple[float, object]:
    best, got = float("inf"), None
    for _ in range(rounds):
        start = time.perf_counter()
        got = fn()  # type: ignore[operator]
        best = min(best, time.perf_counter() - start)
    return best, got


def main() -> int:
    """Print the figures; return 0."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rounds", type=int, default=2)
    args = parser.parse_args()
    from prepkit.fitting.project import fit_stage
    from prepkit.scenarios.runs import run_plan
    from prepkit.uncertainty.decide import decide_plan
    from prepkit.uncertainty.plan_runs import run_uncertainty
    from prepkit.workbook.reader import read_plan

    city, _ = fit_stage(read_plan(ROOT / "sample_workbooks" / "vellmora_city.xlsx"))
    town = read_plan(ROOT / "sample_workbooks" / "tamsett_hollow.xlsx")
    decide_plan(town, draws=10)  # warm-up: the kernels from the cache
    figures: dict[str, float] = {}
    for name, plan in (("city", city), ("town", town)):
        seconds, got = _best(lambda plan=plan: decide_plan(plan), args.rounds)
        runs = got.runs  # type: ignore[attr-defined]
        figures[f"{name}_s"], figures[f"{name}_runs"] = seconds, runs
        print(f"{name}: {seconds:.2f} s for {runs} ensemble runs of "
              f"{got.draws} futures ({1000 * seconds / runs:.0f} ms a run)")  # type: ignore[attr-defined]
    results = run_plan(city)
    ensemble_s, _ = _best(lambda: run_uncertainty(city, results), args.rounds)
    print(f"city ensemble (1,000 draws x {2 * len(city.scenarios)} variants): {ensemble_s:.2f} s")
    load = os.getloadavg()[0]
    print(f"decide: city_s={figures['city_s']:.2f} city_runs={figures['city_runs']:.0f} "
          f"town_s={figures['town_s']:.2f} town_runs={figures['town_runs']:.0f} "
          f"ensemble_s={ensemble_s:.2f} ratio={figures['city_s'] / ensemble_s:.2f} "
          f"load={load:.2f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
