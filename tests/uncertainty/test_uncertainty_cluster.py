"""The uncertainty ensemble on an executor (a Dask cluster for large sweeps).

Every scenario variant uses the same Latin hypercube sample, so running the
variants elsewhere must give exactly the results of running them here.
"""

from __future__ import annotations

from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import pytest
from test_uncertainty import uncertain_plan, with_draws  # noqa: F401  (fixture)

from prepkit.cli.main import main
from prepkit.pipeline import ensemble
from prepkit.scenarios.runs import run_plan
from prepkit.uncertainty.plan_runs import run_uncertainty
from prepkit.uncertainty.results import UncertaintyResults

pytestmark = pytest.mark.slow  # starts Dask clusters


def _assert_same(a: UncertaintyResults, b: UncertaintyResults) -> None:
    assert [s.scenario for s in a.scenarios] == [s.scenario for s in b.scenarios]
    for left, right in zip(a.scenarios, b.scenarios, strict=True):
        for variant in ("with", "without"):
            x, y = left.variant(variant), right.variant(variant)
            assert x.per_draw.equals(y.per_draw)
            assert x.daily.equals(y.daily)
            assert x.exceedance.equals(y.exceedance)
            assert x.tornado_peak_icu.equals(y.tornado_peak_icu)


def test_executor_gives_the_same_results_as_running_here(uncertain_plan):  # noqa: F811
    plan = with_draws(uncertain_plan, draws=16, horizon=90)
    results = run_plan(plan)
    here = run_uncertainty(plan, results)
    seen: list[tuple[int, int]] = []
    with ThreadPoolExecutor(max_workers=2) as pool:
        there = run_uncertainty(plan, results, progress=lambda d, t: seen.append((d, t)),
                                executor=pool)
    _assert_same(here, there)
    assert seen[-1] == (16 * 2 * len(plan.scenarios), 16 * 2 * len(plan.scenarios))


def test_dask_cluster_gives_the_same_results(uncertain_plan):  # noqa: F811
    distributed = pytest.importorskip("dask.distributed")
    plan = with_draws(uncertain_plan, draws=8, horizon=60)
    here = run_uncertainty(plan)
    with distributed.LocalCluster(n_workers=1, threads_per_worker=1, processes=False,
                                  dashboard_address=None) as cluster, \
            distributed.Client(cluster) as client:
        there = run_uncertainty(plan, executor=client.get_executor())
    _assert_same(here, there)


def test_unreachable_scheduler_is_an_input_error(capsys: pytest.CaptureFixture[str],
                                                 tmp_path: Path,
                                                 monkeypatch: pytest.MonkeyPatch) -> None:
    pytest.importorskip("dask.distributed")
    monkeypatch.setattr(ensemble, "CLUSTER_TIMEOUT_SECONDS", 1)
    workbook = Path(__file__).parents[2] / "sample_workbooks" / "tamsett_hollow.xlsx"
    code = main(["run", str(workbook), "-o", str(tmp_path / "pack"), "-q", "--draws", "4",
                 "--scheduler", "tcp://127.0.0.1:9"])
    assert code == 2
    assert "--scheduler" in capsys.readouterr().err
    assert not (tmp_path / "pack").exists()
