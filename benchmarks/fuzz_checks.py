"""One mutated workbook through the whole job, and the checks on what comes out.

The job is what ``prepkit check`` and ``prepkit run --summary-only`` do: read
the workbook, describe the plan, run every scenario with and without its
measures (:func:`prepkit.scenarios.runs.run_plan`), build the JSON summary, and on a
share of the cases run a small uncertainty ensemble. The stage functions are
looked up on their modules at call time, so a test can replace one.

Outcomes of a case (exactly one):

``refused``
    the reader raised :class:`prepkit.errors.WorkbookError`;
``model_refused``
    after reading, a :class:`prepkit.errors.PrepkitError` with a message;
``model_ok``
    every stage finished;
``traceback``
    any other exception (or a refusal without a message, or the input file
    changed on disk).

A finished case is then checked: every daily series, metric and ensemble
table holds finite numbers, none below ``-TOLERANCE_SHARE x population``,
and the people in all compartments, deaths included, add up to the
population on every day within the same tolerance (common practice, no
source: a compartment model moves people, it never makes or loses them).
"""

from __future__ import annotations

import dataclasses
import hashlib
import json
import math
import traceback
from collections.abc import Callable, Iterable
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd
from test_workbook_fuzz import check_plan_invariants

from prepkit.errors import PrepkitError, WorkbookError
from prepkit.pipeline import summary
from prepkit.scenarios import runs as engine
from prepkit.uncertainty.plan_runs import run_uncertainty
from prepkit.uncertainty.summary_json import uncertainty_summary_dict
from prepkit.workbook import describe, reader

TOLERANCE_SHARE = 1e-6
"""Largest error allowed in conservation and non-negativity [fraction of the population]."""

PEOPLE_COLUMNS: tuple[str, ...] = (
    "susceptible_persons", "dosed_unprotected_persons", "protected_persons", "latent_persons",
    "asymptomatic_infectious_persons", "symptomatic_at_home_persons",
    "waiting_for_admission_persons", "ward_census_persons", "icu_census_persons",
    "recovered_persons", "cumulative_hospital_deaths_persons",
)
"""Daily columns of the people compartments (``S`` to ``D`` of the state vector) [persons]."""

ENSEMBLE_TABLES = ("daily", "exceedance", "exceedance_any_day", "summary",
                   "peak_date_histogram")
"""Tables of an ensemble whose every number is a count, a share or a probability."""
TORNADO_INPUTS = ("input_low", "input_high")
"""Tornado columns that are empty for per-band fields (NaN there is allowed)."""


@dataclass
class JobResult:
    """What one case gave.

    Attributes
    ----------
    outcome : str
        ``refused``, ``model_refused``, ``model_ok`` or ``traceback``.
    stage : str
        Stage reached: ``read``, ``check``, ``model``, ``summary``,
        ``results``, ``ensemble``.
    message : str
        The refusal message or the exception with its traceback.
    nonfinite : list of str
        Values that are NaN or infinite (where found).
    negative : list of str
        Values below ``-TOLERANCE_SHARE x population``.
    nonconserved : list of str
        Runs whose people do not add up to the population.
    ensemble : bool
        The uncertainty ensemble was run.
    seconds : float
        Wall time [s].
    """

    outcome: str
    stage: str
    message: str = ""
    nonfinite: list[str] = field(default_factory=list)
    negative: list[str] = field(default_factory=list)
    nonconserved: list[str] = field(default_factory=list)
    ensemble: bool = False
    seconds: float = 0.0


def run_job(path: Path, *, ensemble_draws: int = 0,
            on_stage: Callable[[str], None] | None = None) -> JobResult:
    """Read, check, model and summarise one workbook; never raises.

    Parameters
    ----------
    path : Path
        The workbook.
    ensemble_draws : int
        Uncertainty draws per scenario variant [count]; 0 skips the ensemble.
    on_stage : callable, optional
        Called with the name of each stage as it starts after reading (so
        that a case killed at the time limit is known to have read).

    Returns
    -------
    JobResult
        The outcome and the findings of the checks.
    """
    before = _digest(path)
    result = JobResult(outcome="traceback", stage="read")
    try:
        _job(path, ensemble_draws, result, on_stage or (lambda stage: None))
    except WorkbookError as error:
        if result.stage == "read":
            result.outcome, result.message = "refused", str(error)
        else:
            result.outcome, result.message = "model_refused", str(error)
    except PrepkitError as error:
        if str(error).strip():
            result.outcome, result.message = "model_refused", str(error)
        else:
            result.message = f"{type(error).__name__} without a message"
    except Exception:  # counting every escape is the point of the fuzzer
        result.outcome, result.message = "traceback", traceback.format_exc()
    if _digest(path) != before:
        result.outcome, result.message = "traceback", "the input workbook was changed on disk"
    return result


def _job(path: Path, draws: int, result: JobResult, on_stage: Callable[[str], None]) -> None:
    def step(stage: str) -> None:
        result.stage = stage
        on_stage(stage)

    plan, warnings = reader.read_plan_with_warnings(path)
    step("check")
    check_plan_invariants(plan)
    describe.describe_plan(plan, warnings)
    step("model")
    results = engine.run_plan(plan)
    step("summary")
    json.dumps(summary.summary_dict(plan, results), allow_nan=False)
    step("results")
    check_results(plan.population, results, result)
    if draws > 0:
        result.ensemble = True
        step("ensemble")
        ensemble = run_uncertainty(plan, results, draws=draws)
        json.dumps(uncertainty_summary_dict(ensemble), allow_nan=False)
        check_ensemble(plan.population, ensemble, result)
    result.outcome = "model_ok"


def failed(result: JobResult) -> bool:
    """True for a traceback, a hang, or a result that fails the checks."""
    return result.outcome in ("traceback", "hang") or bool(
        result.nonfinite or result.negative or result.nonconserved)


def _digest(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def check_results(population: float, results: Any, into: JobResult) -> None:
    """Finite, non-negative and conserved results of :func:`prepkit.scenarios.runs.run_plan`.

    Parameters
    ----------
    population : float
        Plan population [persons].
    results : PlanResults
        The engine's results.
    into : JobResult
        Findings are appended to its lists.
    """
    tolerance = TOLERANCE_SHARE * population
    for item in results.scenarios:
        for run in (item.with_interventions, item.without_interventions):
            where = f"{item.scenario.name!r} {run.variant}"
            _frame(_defined(run.daily), f"{where} daily", tolerance, into)
            _frame(run.daily_by_band, f"{where} by band", tolerance, into)
            _numbers(dataclasses.asdict(run.metrics), f"{where} metrics", tolerance, into)
            _numbers(dataclasses.asdict(run.transmissibility), f"{where} transmissibility",
                     None, into)
            _numbers(dataclasses.asdict(run.inputs), f"{where} inputs", None, into)
            people = run.daily.loc[:, list(PEOPLE_COLUMNS)].to_numpy(dtype=float).sum(axis=1)
            gap = np.abs(people - population)
            missing = int(np.count_nonzero(~np.isfinite(gap)))
            if missing:
                into.nonconserved.append(f"{where}: the people add up to no finite number on "
                                         f"{missing} day(s)")
            elif gap.size and float(gap.max()) > tolerance:
                into.nonconserved.append(f"{where}: people differ from the population by up to "
                                         f"{float(gap.max()):.6g} persons")
        _numbers(dataclasses.asdict(item.effect), f"{item.scenario.name!r} effect", None, into)
    for level, table in results.transmissibility_by_level.items():
        _numbers(dataclasses.asdict(table), f"{level} transmissibility", None, into)


def check_ensemble(population: float, ensemble: Any, into: JobResult) -> None:
    """Finite and non-negative tables of :func:`prepkit.uncertainty.plan_runs.run_uncertainty`."""
    tolerance = TOLERANCE_SHARE * population
    for item in ensemble.scenarios:
        for result in (item.with_interventions, item.without_interventions):
            where = f"{item.scenario!r} {result.variant} ensemble"
            for name in ENSEMBLE_TABLES:
                _frame(getattr(result, name), f"{where} {name}", tolerance, into)
            for name in ("tornado_peak_icu", "tornado_unmet"):
                table = getattr(result, name).drop(columns=list(TORNADO_INPUTS), errors="ignore")
                _frame(table, f"{where} {name}", None, into)
            _frame(result.per_draw, f"{where} per_draw", None, into)


def _defined(daily: pd.DataFrame) -> pd.DataFrame:
    """The daily table less occupancy shares of a bed type with no beds available.

    Demand over zero available beds is an infinite occupancy share by definition
    (prepkit.metrics.capacity.add_capacity_columns): the model's triggers read it that way, and
    it is not a numerical failure.
    """
    drop = [f"{kind}_occupancy_share" for kind in ("ward", "icu")
            if f"{kind}_available_beds" in daily and float(daily[f"{kind}_available_beds"].max())
            <= 0.0]
    return daily.drop(columns=drop, errors="ignore")


def _frame(frame: pd.DataFrame, where: str, tolerance: float | None, into: JobResult) -> None:
    numeric = frame.select_dtypes(include="number").select_dtypes(exclude="bool")
    if numeric.empty:
        return
    values = numeric.to_numpy(dtype=float)
    bad = ~np.isfinite(values)
    if bad.any():
        columns = _columns(numeric, bad)
        into.nonfinite.append(f"{where}: {', '.join(columns[:4])} ({int(bad.sum())} values)")
    if tolerance is not None:
        low = np.where(bad, 0.0, values) < -tolerance
        if low.any():
            columns = _columns(numeric, low)
            into.negative.append(f"{where}: {', '.join(columns[:4])} down to "
                                 f"{float(values[low].min()):.6g}")


def _columns(frame: pd.DataFrame, mask: Any) -> list[str]:
    hits = np.count_nonzero(mask, axis=0)
    return [str(c) for c, n in zip(frame.columns, hits, strict=True) if n]


def _numbers(tree: Any, where: str, tolerance: float | None, into: JobResult) -> None:
    for name, value in _leaves(tree, ""):
        if not math.isfinite(value):
            into.nonfinite.append(f"{where}: {name} = {value}")
        elif tolerance is not None and value < -tolerance:
            into.negative.append(f"{where}: {name} = {value:.6g}")


def _leaves(tree: Any, prefix: str) -> Iterable[tuple[str, float]]:
    if isinstance(tree, bool | np.bool_) or tree is None:
        return
    if isinstance(tree, int | float | np.integer | np.floating):
        yield prefix, float(tree)
    elif isinstance(tree, dict):
        for key, value in tree.items():
            yield from _leaves(value, f"{prefix}.{key}" if prefix else str(key))
    elif isinstance(tree, list | tuple):
        for i, value in enumerate(tree):
            yield from _leaves(value, f"{prefix}[{i}]")
    elif isinstance(tree, np.ndarray):
        yield from _leaves(tree.tolist(), prefix)
