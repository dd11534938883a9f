"""Uncertainty ensemble: sampled inputs, percentile bands, exceedance, peak timing, tornado.

Sampling rules in words
-----------------------
* Every input the plan gives as Low / Central / High is drawn from a
  beta-PERT distribution on its range with the Central value as the mode
  (lambda = 4: ``alpha = 1 + 4 (c - a) / (b - a)``,
  ``beta = 1 + 4 (b - c) / (b - a)``, mean ``(a + 4 c + b) / 6``). When
  Low = High the input is fixed at Central (a point mass).
* The uncertain fields are: the transmissibility measure the plan gives (R0,
  doubling time or growth rate), the latent and infectious period means,
  and per band the symptomatic share, the admitted share, the ICU share of
  admissions, the ward stay and the ICU stay; for each intervention its
  compliance, and for each vaccination its efficacy against infection and
  against admission.
* Range around the scenario's levels: transmissibility and the two severity
  shares (admitted, ICU) are drawn around the scenario's level, not over the
  whole range. A "low" level draws from [Low, Central] with mode Low,
  "central" from [Low, High] with mode Central, "high" from [Central, High]
  with mode High. "High transmissibility" means the *short* doubling time,
  so for a doubling time the levels are read inverted ("high"
  transmissibility draws doubling times from [Low, Central] with mode Low).
  Every other field is drawn over its full Low-High range with mode Central.
* One Latin hypercube (McKay, Beckman & Conover 1979) with one dimension per
  field, seeded with the plan's seed, gives every draw one quantile per
  field; the quantile goes through the PERT inverse distribution function.
  A per-band field uses one quantile for all its bands (comonotone: a draw
  with long ward stays has long stays in every band).
* The same quantiles serve every scenario and both variants (with and
  without interventions), so differences between them are not sampling
  noise. Intervention fields have no effect on the runs without
  interventions.
* Identical variants: the runs without measures of two scenarios at the
  same levels read the same draws (the same quantile columns through the
  same ranges; the draws of their measures are read by neither run), so
  when their keys (:func:`prepkit.simulation.identity.draws_key`) are equal
  their draws and tornado are computed once and shared, and each keeps its
  own tables (its scenario's name, fields and run).
* Consistency: a drawn admitted share above the drawn symptomatic share is
  cut to it (as in every run); a drawn efficacy against admission below the
  drawn efficacy against infection is raised to it.

The outputs are described in :mod:`prepkit.uncertainty.summaries`, the
sampling functions are in :mod:`prepkit.uncertainty.sampling`.

References
----------
Malcolm D.G., Roseboom J.H., Clark C.E., Fazar W. (1959). Application of a
technique for research and development program evaluation. Operations
Research 7:646-669. doi:10.1287/opre.7.5.646

McKay M.D., Beckman R.J., Conover W.J. (1979). A comparison of three methods
for selecting values of input variables in the analysis of output from a
computer code. Technometrics 21:239-245. doi:10.2307/1268522
"""

from __future__ import annotations

import time
from collections.abc import Callable, Sequence
from typing import Any

import numpy as np
from numpy.typing import NDArray

from prepkit.base.blas import one_blas_thread
from prepkit.plan import Plan, Scenario
from prepkit.scenarios.runs import ScenarioRun, compile_scenario
from prepkit.simulation.compile import CompiledModel
from prepkit.simulation.draw_values import DrawValues, with_fitted
from prepkit.simulation.identity import Shared, draws_key
from prepkit.simulation.inputs import validate_plan
from prepkit.uncertainty.draws import values_from
from prepkit.uncertainty.ensemble import DEFAULT_BLOCKS, simulate_draws
from prepkit.uncertainty.fields import (
    UncertainField,
    sample_quantiles,
    scenario_fields,
)
from prepkit.uncertainty.parameters import ENSEMBLE_MIN_SUBSTEPS
from prepkit.uncertainty.results import DEFAULT_QUANTILES, EnsembleResult
from prepkit.uncertainty.summaries import ensemble_result, reported_quantiles
from prepkit.uncertainty.tornado import tornado

__all__ = ["ValueCache", "draw_values", "ensemble_key", "run_ensemble"]


class ValueCache:
    """PERT values of a field, computed once per (column, range) and shared by scenarios."""

    def __init__(self, quantiles: NDArray[np.float64]) -> None:
        self.quantiles = quantiles
        self.store: dict[tuple[Any, ...], NDArray[np.float64]] = {}

    def values(self, item: UncertainField) -> NDArray[np.float64]:
        """The field's values at the draws' quantiles [its unit], computed on first use."""
        key = (item.column, item.per_band, item.low.tobytes(), item.mode.tobytes(),
               item.high.tobytes())
        if key not in self.store:
            self.store[key] = item.values(self.quantiles[:, item.column])
        return self.store[key]


def draw_values(
    plan: Plan,
    scenario: Scenario | str,
    quantiles: NDArray[np.float64],
    *,
    cache: ValueCache | None = None,
) -> DrawValues:
    """Map Latin hypercube quantiles to the scenario's input values.

    Parameters
    ----------
    plan, scenario : Plan, and Scenario or str
        The plan, and the scenario whose fields are drawn.
    quantiles : ndarray, shape (draws, dimensions)
        From :func:`sample_quantiles`.
    cache : optional
        Shares PERT values between scenarios of one run.

    Returns
    -------
    DrawValues
        One row per draw; the fitted inputs of a fitted plan take its
        posterior draws (:func:`prepkit.simulation.draw_values.with_fitted`).
    """
    fields = scenario_fields(plan, scenario)
    store = cache or ValueCache(quantiles)
    values = values_from({item.key: store.values(item) for item in fields}, quantiles.shape[0])
    return values if plan.fitted is None else with_fitted(values, plan.fitted)


def _draws_key(model: CompiledModel, plan: Plan, values: DrawValues,
               min_substeps: int | None, blocks: int, dtype: Any) -> str:
    """Key of one variant's draws (everything :func:`simulate_draws` reads or is told)."""
    return draws_key(model, plan, values, min_substeps, int(blocks), np.dtype(dtype).str)


def ensemble_key(
    plan: Plan,
    scenario: Scenario,
    with_interventions: bool,
    sample: NDArray[np.float64],
    *,
    min_substeps: int | None = ENSEMBLE_MIN_SUBSTEPS,
    blocks: int = DEFAULT_BLOCKS,
    dtype: type[np.floating[Any]] = np.float32,
    cache: ValueCache | None = None,
) -> str:
    """The key :func:`run_ensemble` shares this variant's draws under (equal: same draws).

    Parameters
    ----------
    plan, scenario, with_interventions
        The variant.
    sample : ndarray, shape (draws, dimensions)
        The Latin hypercube quantiles.
    min_substeps, blocks, dtype
        As for :func:`run_ensemble`.
    cache : ValueCache, optional
        PERT values shared between scenarios.

    Returns
    -------
    str
        :func:`prepkit.simulation.identity.draws_key` of the variant's draws.
    """
    model = compile_scenario(plan, scenario, with_interventions)
    values = draw_values(plan, scenario, sample, cache=cache)
    return _draws_key(model, plan, values, min_substeps, blocks, dtype)


@one_blas_thread
def run_ensemble(
    plan: Plan,
    scenario: Scenario | str,
    with_interventions: bool = True,
    *,
    draws: int | None = None,
    quantiles: Sequence[float] = DEFAULT_QUANTILES,
    seed: int | None = None,
    sample: NDArray[np.float64] | None = None,
    scenario_run: ScenarioRun | None = None,
    min_substeps: int | None = ENSEMBLE_MIN_SUBSTEPS,
    blocks: int = DEFAULT_BLOCKS,
    dtype: type[np.floating[Any]] = np.float32,
    on_block: Callable[[int], None] | None = None,
    _cache: ValueCache | None = None,
    _shared: Shared | None = None,
) -> EnsembleResult:
    """Run the uncertainty ensemble of one scenario variant.

    Parameters
    ----------
    plan, scenario : Plan, and Scenario or str
        The plan, and the scenario or its name.
    with_interventions : bool
        True for the variant with the scenario's interventions, False without.
    draws : int, optional
        Number of draws [count]; default ``plan.details.draws`` (ignored
        when ``sample`` is given).
    quantiles : sequence of float
        Quantiles to report [fraction]; the median is always added.
    seed : int, optional
        Random seed; default ``plan.details.seed``.
    sample : ndarray, optional
        Latin hypercube quantiles from :func:`sample_quantiles` (shared
        between scenarios by :func:`prepkit.uncertainty.plan_runs.run_uncertainty`).
    scenario_run : ScenarioRun, optional
        The engine's run of this variant, for the ``scenario_run`` column;
        default the ensemble's own run at the modes.
    min_substeps : int or None
        Fewest RK4 steps per day (see
        :data:`prepkit.uncertainty.parameters.ENSEMBLE_MIN_SUBSTEPS`); None uses the
        engine's rule.
    blocks : int
        Blocks the draws are run in (progress is reported per block).
    dtype : numpy float type
        Storage type of the daily series per draw.
    on_block : callable, optional
        Called with the number of draws finished after each block (once with
        all of them when the draws are shared).

    Returns
    -------
    EnsembleResult
        Bands, exceedance, peak dates, summary, tornado and per-draw table.

    Raises
    ------
    ModelError
        When the plan cannot be simulated, a range is not ordered, or a draw
        (or a one-input-at-a-time run of the tornado) fails a check of
        :mod:`prepkit.simulation.health`: the error names the draw and its inputs,
        and no result is returned.
    """
    started = time.perf_counter()
    validate_plan(plan)
    chosen = plan.scenario(scenario) if isinstance(scenario, str) else scenario
    used_seed = plan.details.seed if seed is None else int(seed)
    if sample is None:
        sample = sample_quantiles(plan, plan.details.draws if draws is None else draws, used_seed)
    qs = reported_quantiles(quantiles)
    model = compile_scenario(plan, chosen, with_interventions)
    fields = scenario_fields(plan, chosen)
    values = draw_values(plan, chosen, sample, cache=_cache)

    def simulate() -> Any:
        return simulate_draws(model, plan, values, min_substeps=min_substeps, blocks=blocks,
                              dtype=dtype, on_block=on_block)

    if _shared is None:
        runs = simulate()
    else:
        key = _draws_key(model, plan, values, min_substeps, blocks, dtype)
        known = ("draws", key) in _shared
        runs = _shared.once("draws", key, simulate)
        if known and on_block is not None:
            on_block(values.size)
    return ensemble_result(
        plan, model, scenario=chosen.name, fields=fields, sample=sample, values=values,
        runs=runs, swings=tornado(plan, model, fields, min_substeps, shared=_shared), quantiles=qs,
        seed=used_seed, scenario_run=scenario_run, started=started,
    )
