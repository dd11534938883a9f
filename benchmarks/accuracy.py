"""Accuracy and speed of the production RK4 integrator against the DOP853 reference.

Run with ``.venv/bin/python benchmarks/accuracy.py``. For a few plans it
prints, for 1, 2, 4, 8 and 16 RK4 steps per day: the largest error of the
ward and ICU census over the run relative to their peaks, the relative
error of the peaks, whether the peak days agree, and the time per run; then
the reference's time, and the time of a whole 12-band, 730-day plan
(3 scenarios x 2 variants), first call (numba cache load or compile) and
warm.
"""

from __future__ import annotations

import sys
import time
from pathlib import Path
from typing import Any

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))

from factories import banded_plan, compiled, make_plan  # noqa: E402

from prepkit.simulation.layout import BLK_C, BLK_W  # noqa: E402
from prepkit.simulation.simulate import simulate, simulate_reference  # noqa: E402

SUBSTEPS = (1, 2, 4, 8, 16)


def census(model: Any, states: np.ndarray, block: int) -> np.ndarray:
    return np.asarray(model.layout.block_total(states, block).sum(axis=1))


def timed(func: Any, repeat: int = 3) -> tuple[Any, float]:
    best = np.inf
    out = None
    for _ in range(repeat):
        start = time.perf_counter()
        out = func()
        best = min(best, time.perf_counter() - start)
    return out, best


def report(label: str, model: Any) -> None:
    print(f"\n{label}: {model.layout.bands} bands, {model.layout.size} states, "
          f"{model.horizon_days} days, default substeps {model.substeps}")
    ref, ref_time = timed(lambda: simulate_reference(model, atol_per_person=1e-12), repeat=1)
    print(f"  reference DOP853 (rtol 1e-10, atol 1e-12 N): {ref_time * 1e3:8.1f} ms")
    ref_ward, ref_icu = census(model, ref.states, BLK_W), census(model, ref.states, BLK_C)
    print("  substeps   ward max err  ward peak err  icu max err  icu peak err  "
          "peak days equal  decisions equal  ms/run")
    for steps in SUBSTEPS:
        run, seconds = timed(lambda steps=steps: simulate(model, substeps=steps))
        ward, icu = census(model, run.states, BLK_W), census(model, run.states, BLK_C)
        errs = []
        for fast, slow in ((ward, ref_ward), (icu, ref_icu)):
            errs.append(np.max(np.abs(fast - slow)) / slow.max())
            errs.append(abs(fast.max() - slow.max()) / slow.max())
        days_equal = (np.argmax(ward) == np.argmax(ref_ward)) and (
            np.argmax(icu) == np.argmax(ref_icu)
        )
        same = bool(np.array_equal(run.active, ref.active))
        print(f"  {steps:8d}   {errs[0]:11.2e}  {errs[1]:13.2e}  {errs[2]:11.2e}  "
              f"{errs[3]:12.2e}  {days_equal!s:>15}  {same!s:>15}  {seconds * 1e3:6.2f}")


def whole_plan() -> None:
    from prepkit.scenarios.runs import run_plan

    plan = banded_plan(12, horizon=730)
    start = time.perf_counter()
    run_plan(plan)
    first = time.perf_counter() - start
    _, warm = timed(lambda: run_plan(plan))
    print(f"\nrun_plan, 12 bands, 730 days, {len(plan.scenarios)} scenarios x 2 variants: "
          f"first call {first:.2f} s (includes numba cache load or compile), warm {warm:.3f} s")


def main() -> None:
    start = time.perf_counter()
    first = compiled(make_plan(horizon=2))
    simulate(first)
    print(f"first simulate in this process (numba load or compile): "
          f"{time.perf_counter() - start:.2f} s")
    report("10 bands, triggered distancing + vaccination + isolation",
           compiled(banded_plan(10, horizon=365), "all measures"))
    report("12 bands, high transmissibility and severity, 730 days",
           compiled(banded_plan(12, horizon=730), "severe"))
    report("1 band, R0 4, fast stages (latent 1 d, infectious 2 d)",
           compiled(make_plan(r0=4.0, latent_days=1.0, infectious_days=2.0, latent_stages=2,
                              infectious_stages=2, symptomatic_share=0.5, admitted_share=0.05,
                              icu_share=0.2, horizon=200)))
    whole_plan()


if __name__ == "__main__":
    main()
