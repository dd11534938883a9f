"""CPU time per draw-day of the ensemble kernel, before and now, side by side in one run.

Run with ``.venv/bin/python benchmarks/speed.py``. The plan and scenario are
those of ``benchmarks/ensemble.py`` (Vellmora, 16 bands, 365 days, every
measure, every range open). In one process it measures:

(a) the per-draw scipy ``solve_ivp`` RK45 loop of ``benchmarks/ensemble.py``,
    timed on a few draws and extrapolated per draw-day;
(b) the kernel of main before issue 11 (revision ``baseline_kernel.BASELINE``,
    extracted from git and compiled on its own by ``benchmarks/baseline_kernel.py``)
    and the current
    :func:`prepkit.simulation.kernels.run_draws`, on the same 10,000 draws'
    parameter arrays, alternately, best of :data:`REPEATS` passes each; CPU
    seconds (``time.process_time``, both threads) per draw-day, and the
    largest difference between the two kernels' peaks;
(c) peak ward and ICU census error against the DOP853 reference on 24 draws;
(d) peak RSS of a child process running 10,000 draws (``benchmarks/ensemble.py``'s child);
(e) the whole city pack's computation (workbook -> plan results -> ensemble of
    every scenario variant at 1,000 draws -> both summary dictionaries), warm;
(f) a lower bound on the fraction of one core's double-precision peak
    reached: only the force of infection's matrix-vector product is counted
    (2 x bands^2 flops per evaluation, 4 evaluations per RK4 step, 1 step a
    day), against 8 flops/cycle (256-bit vectors without FMA: a 4-wide add
    and a 4-wide multiply each cycle) x the clock read from /proc/cpuinfo.

Not measured yet (left for a later pass of issue 11): a numpy RK4 over a draw
axis, so ``vs_numpy`` prints ``nan``. The machine is shared: every figure is
printed with the one-minute load average beside it. The last line is
``speed: cpu_us_per_draw_day=... vs_before=... vs_numpy=... vs_scipy=... draws10k_s=...
peak_err=... rss_mb=... pack_s=... load=...``.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import time
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

import ensemble as bench  # noqa: E402
from baseline_kernel import BASELINE  # noqa: E402
from baseline_kernel import load as load_baseline_kernel  # noqa: E402

from prepkit.metrics.absence import employed_weights  # noqa: E402
from prepkit.scenarios.runs import compile_scenario  # noqa: E402
from prepkit.simulation.health import most_substeps  # noqa: E402
from prepkit.simulation.kernels import run_draws  # noqa: E402
from prepkit.simulation.layout import S_GROWTH_STEP, scalar_offset  # noqa: E402
from prepkit.simulation.run_checks import REPORT_SIZE  # noqa: E402
from prepkit.simulation.threads import use_all_cores  # noqa: E402
from prepkit.uncertainty.ensemble import calibrate_beta, simulate_draws  # noqa: E402
from prepkit.uncertainty.fields import sample_quantiles  # noqa: E402
from prepkit.uncertainty.parameters import build_parameters, step_rule  # noqa: E402
from prepkit.uncertainty.run import draw_values  # noqa: E402

DRAWS = 10_000
REPEATS = 3
SCIPY_DRAWS = 3


def load() -> float:
    return os.getloadavg()[0]


def kernel_inputs(plan, model, n):  # type: ignore[no-untyped-def]
    values = draw_values(plan, bench.SCENARIO, sample_quantiles(plan, n))
    beta = calibrate_beta(model, values)
    pcs, itabs, floors = build_parameters(model, plan, values, beta)
    floor, limit, force_limit = step_rule(1)
    growth = float(model.pc[scalar_offset(model.layout.bands) + S_GROWTH_STEP])
    most = most_substeps(floor, min(limit, force_limit, growth))
    return values, pcs, np.ascontiguousarray(itabs), floors, float(limit), float(force_limit), \
        int(most)


def run_kernel(kernel, now: bool, plan, model, inputs):  # type: ignore[no-untyped-def]
    _, pcs, itabs, floors, limit, force_limit, most = inputs
    n, days = pcs.shape[0], model.horizon_days
    series = np.zeros((5, n, days))
    peaks = np.zeros((n, 3))
    y0 = np.array(np.broadcast_to(model.y0, (n, model.y0.size))) if now else model.y0
    kernel(y0, pcs, model.lay, itabs, model.iprio, model.cap, days, floors, limit, force_limit,
           most, employed_weights(plan.bands, plan.workforce), series, np.zeros((n, 8)), peaks,
           np.zeros((n, 3), dtype=np.int64), np.zeros(n, dtype=np.int64),
           np.zeros((n, REPORT_SIZE)))
    return peaks


def clock_ghz() -> float:
    try:
        for line in Path("/proc/cpuinfo").read_text().splitlines():
            if line.startswith("cpu MHz"):
                return float(line.split(":")[1]) / 1000.0
    except OSError:
        pass
    return float("nan")


def main() -> None:
    threads = use_all_cores()
    plan = bench.benchmark_plan()
    model = compile_scenario(plan, bench.SCENARIO, True)
    bands = len(plan.bands)
    print(f"plan: {bands} bands, {model.layout.size} states, {bench.HORIZON} days; {threads} "
          f"numba threads on {os.cpu_count()} cores; load {load():.2f}")
    memory = json.loads(subprocess.run(
        [sys.executable, str(HERE / "ensemble.py"), "--child", str(DRAWS)], check=True,
        capture_output=True, text=True).stdout.strip().splitlines()[-1])
    print(f"(d) child, {DRAWS:,} draws: peak RSS {memory['after_mb']:.0f} MB "
          f"({memory['how']}), {memory['seconds']:.2f} s wall; load {load():.2f}")

    inputs = kernel_inputs(plan, model, DRAWS)
    small = kernel_inputs(plan, model, 16)
    run_draws_before = load_baseline_kernel(BASELINE)
    print(f"kernel before: revision {BASELINE}, extracted by benchmarks/baseline_kernel.py")
    for kernel, now in ((run_draws_before, False), (run_draws, True)):
        _, seconds, _ = bench.timed(lambda k=kernel, w=now: run_kernel(k, w, plan, model, small))
        print(f"    warm-up ({'now' if now else 'before'}, includes cache load or compile): "
              f"{seconds:.2f} s")
    best = {False: (np.inf, np.inf), True: (np.inf, np.inf)}
    peaks = {}
    for _ in range(REPEATS):
        for kernel, now in ((run_draws_before, False), (run_draws, True)):
            peaks[now], wall, cpu = bench.timed(
                lambda k=kernel, w=now: run_kernel(k, w, plan, model, inputs))
            best[now] = min(best[now], (cpu, wall))
    draw_days = DRAWS * model.horizon_days
    us = {now: best[now][0] / draw_days * 1e6 for now in best}
    change = float(np.max(np.abs(peaks[True] - peaks[False]) / np.abs(peaks[False])))
    print(f"(b) {DRAWS:,} draws x {model.horizon_days} days, best of {REPEATS}: before "
          f"{us[False]:.3f} us CPU/draw-day ({best[False][1]:.2f} s wall), now {us[True]:.3f} "
          f"us CPU/draw-day ({best[True][1]:.2f} s wall); ratio {us[False] / us[True]:.2f}; "
          f"largest relative change of the peaks {change:.1e}; load {load():.2f}")

    values = draw_values(plan, bench.SCENARIO, sample_quantiles(plan, SCIPY_DRAWS))
    scipy_cpu = 0.0
    for d in range(SCIPY_DRAWS):
        drawn = compile_scenario(plan, bench.SCENARIO, True, values.overrides(d))
        _, _, cpu = bench.timed(lambda drawn=drawn: bench.rk45_run(drawn))
        scipy_cpu += cpu
    scipy_us = scipy_cpu / (SCIPY_DRAWS * model.horizon_days) * 1e6
    print(f"(a) per-draw solve_ivp RK45 loop, {SCIPY_DRAWS} draws: {scipy_us:.0f} us CPU/draw-day "
          f"(extrapolated to {DRAWS:,} draws: {scipy_us * draw_days / 1e6:.0f} s CPU); "
          f"load {load():.2f}")

    check = draw_values(plan, bench.SCENARIO, sample_quantiles(plan, bench.ACCURACY_DRAWS))
    fast = simulate_draws(model, plan, check, dtype=np.float64)
    err = 0.0
    for d in range(bench.ACCURACY_DRAWS):
        drawn = compile_scenario(plan, bench.SCENARIO, True, check.overrides(d))
        ref = bench.simulate_reference(drawn)
        ward = drawn.layout.block_total(ref.states, bench.BLK_W).sum(axis=1).max()
        icu = drawn.layout.block_total(ref.states, bench.BLK_C).sum(axis=1).max()
        err = max(err, abs(fast.peaks[d, 0] / ward - 1.0), abs(fast.peaks[d, 1] / icu - 1.0))
    print(f"(c) peak ward/ICU census vs DOP853, {bench.ACCURACY_DRAWS} draws: largest relative "
          f"error {err:.1e}; load {load():.2f}")

    pack_s = pack_seconds()
    print(f"(e) city pack computation, 1,000 draws, warm: {pack_s:.2f} s wall; load {load():.2f}")

    ghz = clock_ghz()
    steps = 1.0
    flops = 2.0 * bands * bands * 4 * steps
    peak = 8.0 * ghz * 1e3  # flops per microsecond
    share = flops / us[True] / peak if us[True] > 0 else float("nan")
    print(f"(f) assumed peak 8 flops/cycle x {ghz:.2f} GHz = {peak / 1e3:.1f} Gflop/s per core; "
          f"matrix work {flops:.0f} flops/draw-day -> {share:.1%} of one core's peak (a lower "
          f"bound: stage chains and decisions are not counted)")
    print(f"speed: cpu_us_per_draw_day={us[True]:.3f} vs_before={us[False] / us[True]:.2f} "
          f"vs_numpy=nan vs_scipy={scipy_us / us[True]:.0f} draws10k_s={best[True][1]:.2f} "
          f"peak_err={err:.1e} rss_mb={memory['after_mb']:.0f} pack_s={pack_s:.2f} "
          f"load={load():.2f}")


def pack_seconds() -> float:
    from dataclasses import replace

    from prepkit.pipeline.summary import summary_dict
    from prepkit.scenarios.runs import run_plan
    from prepkit.uncertainty.plan_runs import run_uncertainty
    from prepkit.uncertainty.summary_json import uncertainty_summary_dict
    from prepkit.workbook.reader import read_plan

    workbook = HERE.parent / "sample_workbooks" / "vellmora_city.xlsx"

    def whole() -> None:
        city = read_plan(workbook)
        city = replace(city, details=replace(city.details, draws=1000))
        results = run_plan(city)
        json.dumps({"summary": summary_dict(city, results),
                    "uncertainty": uncertainty_summary_dict(run_uncertainty(city, results))},
                   allow_nan=False)

    whole()
    start = time.perf_counter()
    whole()
    return time.perf_counter() - start


if __name__ == "__main__":
    main()
