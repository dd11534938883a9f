"""Bounded runs: ``--draws`` capped like the workbook's field, and an ensemble too big refused.

The ensemble's memory is estimated before it starts
(:func:`prepkit.pipeline.guard.ensemble_bytes`), checked here against what
tracemalloc measures, and compared with the memory available, so a run that
cannot fit is refused with the number of draws that would.
"""

from __future__ import annotations

import sys
import tracemalloc
from pathlib import Path
from typing import Any

import pytest
from conftest import small_plan

from prepkit.cli.main import main
from prepkit.pipeline import guard as pipeline_guard
from prepkit.pipeline import run as pipeline
from prepkit.scenarios.runs import run_plan
from prepkit.uncertainty.plan_runs import run_uncertainty
from prepkit.workbook import schema
from prepkit.workbook.reader import read_plan

pytestmark = pytest.mark.slow  # runs ensembles to measure their memory

# ---- Draws -----------------------------------------------------------------------------------


def _no_work(monkeypatch: pytest.MonkeyPatch) -> None:
    def forbidden(*_args: Any, **_kwargs: Any) -> Any:
        raise AssertionError("work was done before the options were checked")

    monkeypatch.setattr(pipeline, "read_plan_with_warnings", forbidden)
    monkeypatch.setattr(pipeline, "run_plan", forbidden)


def test_draws_option_is_capped_like_the_workbook_field(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    _no_work(monkeypatch)
    workbook = tmp_path / "plan.xlsx"
    workbook.write_bytes(b"never read")
    field = schema.FIELDS_BY_NAME["details.draws"]
    assert pipeline_guard.MAX_DRAWS == field.maximum == 100_000
    too_many = str(pipeline_guard.MAX_DRAWS + 1)
    for command in (["run", str(workbook)], ["demo", str(tmp_path / "demo")]):
        assert main([*command, "--draws", too_many]) == 2
        err = capsys.readouterr().err
        assert ("--draws: expected 0 to 100,000 uncertainty draws (the range of 'Uncertainty "
                "draws' on the Plan sheet), found 100,001") in err
        assert "Traceback" not in err


def _plan_path(tmp_path: Path) -> Path:
    from prepkit.workbook.template import write_workbook

    path = tmp_path / "plan.xlsx"
    write_workbook(path, small_plan())
    return path


def test_an_ensemble_too_big_for_the_memory_is_refused_before_running(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    workbook = _plan_path(tmp_path)
    plan = read_plan(workbook)
    available = 256 * 1024**2
    monkeypatch.setattr(pipeline_guard, "available_memory_bytes", lambda: available)
    monkeypatch.setattr(pipeline, "run_plan", lambda *_a, **_k: pytest.fail("ran the model"))
    fit = pipeline_guard.draws_that_fit(
        int(available * pipeline_guard.MEMORY_SHARE), days=plan.details.horizon_days + 1,
        variants=2 * len(plan.scenarios), bands=len(plan.bands))
    assert 0 < fit < 100_000
    outdir = tmp_path / "pack"
    assert main(["run", str(workbook), "-o", str(outdir), "--draws", "100000", "-q"]) == 2
    err = capsys.readouterr().err
    assert f"--draws: expected at most {fit:,} draws, which fit in the memory" in err
    assert "found 100,000 draws for each of 4 scenario variants over 200 days" in err
    assert "(--scheduler)" in err and "Traceback" not in err
    assert not outdir.exists()


def test_the_workbook_s_own_draws_are_named_by_their_cell_when_refused(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    workbook = _plan_path(tmp_path)
    monkeypatch.setattr(pipeline_guard, "available_memory_bytes", lambda: 1024**2)
    monkeypatch.setattr(pipeline, "run_plan", lambda *_a, **_k: pytest.fail("ran the model"))
    assert main(["run", str(workbook), "--summary-only", "--summary-json",
                 str(tmp_path / "s.json"), "-q"]) == 2
    err = capsys.readouterr().err
    record = next(r for r in read_plan(workbook).source.inputs if r.name == "details.draws")
    assert err.startswith(f"prepkit: Uncertainty draws ({record.sheet}!{record.cell}): "
                          "expected at most 0 draws")


def test_draws_that_fit_is_the_largest_count_within_the_limit() -> None:
    shape = {"days": 366, "variants": 6, "bands": 16}
    for limit in (50 * 1024**2, 3 * 1024**3):
        fit = pipeline_guard.draws_that_fit(limit, **shape)
        assert pipeline_guard.ensemble_bytes(draws=fit, **shape) <= limit
        assert pipeline_guard.ensemble_bytes(draws=fit + 1, **shape) > limit


def test_available_memory_is_known_on_linux() -> None:
    if not sys.platform.startswith("linux"):
        pytest.skip("reads /proc/meminfo")
    found = pipeline_guard.available_memory_bytes()
    assert found is not None and found > 64 * 1024**2


@pytest.mark.parametrize("draws", [1_000, 4_000])
def test_the_estimate_covers_the_memory_the_ensemble_uses(draws: int) -> None:
    # Measured with tracemalloc (numpy reports its arrays to it): the estimate must cover
    # the peak, and stay within three times it so it does not refuse runs that would fit.
    plan = small_plan()
    results = run_plan(plan)
    run_uncertainty(plan, results, draws=20)  # compiled before measuring
    tracemalloc.start()
    try:
        run_uncertainty(plan, results, draws=draws)
        _current, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    estimate = pipeline_guard.ensemble_bytes(
        draws=draws, days=plan.details.horizon_days + 1, variants=2 * len(plan.scenarios),
        bands=len(plan.bands))
    assert peak <= estimate <= 3 * peak, (peak, estimate)
