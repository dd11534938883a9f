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
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import NDArray

from prepkit.errors import ModelError
from prepkit.plan import Level, Plan, Range3, Scenario
from prepkit.scenarios.runs import ScenarioRun, compile_scenario
from prepkit.simulation.inputs import DOUBLING_TIME_LEVEL, validate_plan
from prepkit.uncertainty.draws import DrawValues, values_from
from prepkit.uncertainty.ensemble import DEFAULT_BLOCKS, simulate_draws
from prepkit.uncertainty.parameters import ENSEMBLE_MIN_SUBSTEPS
from prepkit.uncertainty.results import DEFAULT_QUANTILES, EnsembleResult
from prepkit.uncertainty.sampling import latin_hypercube, pert_ppf
from prepkit.uncertainty.summaries import ensemble_result, reported_quantiles
from prepkit.uncertainty.tornado import tornado

__all__ = [
    "UncertainField",
    "draw_values",
    "plan_dimensions",
    "run_ensemble",
    "sample_quantiles",
    "scenario_fields",
]


def _range_at_level(values: Range3, level: Level) -> tuple[float, float, float]:
    """(low, mode, high) drawn from around a level (see the module notes)."""
    if level == "low":
        return values.low, values.low, values.central
    if level == "high":
        return values.central, values.high, values.high
    return values.low, values.central, values.high


def _full_range(values: Range3) -> tuple[float, float, float]:
    return values.low, values.central, values.high


@dataclass(frozen=True, kw_only=True, eq=False)
class UncertainField:
    """One sampled field of one scenario.

    Attributes
    ----------
    key : str
        Field key, e.g. ``"latent_period_days"`` or
        ``"compliance[Schools closed]"``; also the Latin hypercube dimension.
    label : str
        Plain-words name.
    unit : str
        Unit of the values.
    per_band : bool
        True for per-band fields (one comonotone quantile for all bands).
    low, mode, high : ndarray, shape (bands,) or (1,)
        PERT range and mode the field is drawn from in this scenario.
    column : int
        Column of the field in the Latin hypercube sample.
    """

    key: str
    label: str
    unit: str
    per_band: bool
    low: NDArray[np.float64]
    mode: NDArray[np.float64]
    high: NDArray[np.float64]
    column: int

    @property
    def is_point(self) -> bool:
        """True when every band is fixed (Low = High)."""
        return bool(np.all(self.low == self.high))

    def values(self, u: NDArray[np.float64]) -> NDArray[np.float64]:
        """Values at quantiles ``u`` [unit], shape (draws, bands) or (draws,)."""
        out = pert_ppf(u, self.low, self.mode, self.high)
        return out if self.per_band else out[:, 0]


TRANSMISSIBILITY_LABELS = {
    "r0": ("Basic reproduction number R0", "dimensionless"),
    "doubling_time": ("Doubling time", "days"),
    "growth_rate": ("Growth rate", "1/day"),
}


def plan_dimensions(plan: Plan) -> tuple[str, ...]:
    """Keys of every field of the plan that can be sampled, in Latin hypercube order.

    Parameters
    ----------
    plan : Plan
        The plan.

    Returns
    -------
    tuple of str
        Disease and severity fields first, then per intervention (plan
        order) ``compliance[name]`` and, for vaccinations,
        ``efficacy_infection[name]`` and ``efficacy_severe[name]``. Fixed
        fields keep their dimension so that adding uncertainty to one field
        does not change the draws of the others' order.
    """
    keys = [
        "transmissibility",
        "latent_period_days",
        "infectious_period_days",
        "symptomatic_share",
        "admitted_share",
        "icu_share",
        "ward_stay_days",
        "icu_stay_days",
    ]
    for item in plan.interventions:
        keys.append(f"compliance[{item.name}]")
        if item.vaccination is not None:
            keys.append(f"efficacy_infection[{item.name}]")
            keys.append(f"efficacy_severe[{item.name}]")
    return tuple(keys)


def _transmissibility_range(plan: Plan, level: Level) -> tuple[str, Range3, Level]:
    disease = plan.disease
    measure = disease.transmissibility_measure
    if measure == "r0" and disease.r0 is not None:
        return measure, disease.r0, level
    if measure == "doubling_time" and disease.doubling_time_days is not None:
        return measure, disease.doubling_time_days, DOUBLING_TIME_LEVEL[level]
    if disease.growth_rate_per_day is None:
        raise ModelError("disease: none of R0, doubling time and growth rate is given")
    return "growth_rate", disease.growth_rate_per_day, level


def scenario_fields(plan: Plan, scenario: Scenario | str) -> tuple[UncertainField, ...]:
    """The fields sampled for a scenario, with the range each is drawn from.

    Parameters
    ----------
    plan : Plan
        The plan.
    scenario : Scenario or str
        The scenario or its name.

    Returns
    -------
    tuple of UncertainField
        In Latin hypercube column order; point fields included (their
        ``is_point`` is True). Intervention fields are those of the
        scenario's interventions.
    """
    chosen = plan.scenario(scenario) if isinstance(scenario, str) else scenario
    columns = {key: i for i, key in enumerate(plan_dimensions(plan))}
    disease, severity = plan.disease, plan.severity
    out: list[UncertainField] = []

    def add(key: str, label: str, unit: str, ranges: Sequence[tuple[float, float, float]],
            per_band: bool) -> None:
        low, mode, high = (np.array(x, dtype=np.float64) for x in zip(*ranges, strict=True))
        out.append(UncertainField(key=key, label=label, unit=unit, per_band=per_band, low=low,
                                  mode=mode, high=high, column=columns[key]))

    measure, values, level = _transmissibility_range(plan, chosen.transmissibility_level)
    label, unit = TRANSMISSIBILITY_LABELS[measure]
    add("transmissibility", label, unit, [_range_at_level(values, level)], False)
    add("latent_period_days", "Latent period", "days",
        [_full_range(disease.latent_period_days)], False)
    add("infectious_period_days", "Infectious period", "days",
        [_full_range(disease.infectious_period_days)], False)
    add("symptomatic_share", "Symptomatic share", "fraction",
        [_full_range(x) for x in disease.symptomatic_share], True)
    sev = chosen.severity_level
    add("admitted_share", "Admitted share of infections", "fraction",
        [_range_at_level(x, sev) for x in severity.admitted_share], True)
    add("icu_share", "ICU share of admissions", "fraction",
        [_range_at_level(x, sev) for x in severity.icu_share], True)
    add("ward_stay_days", "Ward length of stay", "days",
        [_full_range(x) for x in severity.ward_stay_days], True)
    add("icu_stay_days", "ICU length of stay", "days",
        [_full_range(x) for x in severity.icu_stay_days], True)
    vaccine_seen = False
    for name in chosen.interventions:
        item = plan.intervention(name)
        add(f"compliance[{name}]", f"Compliance: {name}", "fraction",
            [_full_range(item.compliance)], False)
        if item.vaccination is not None and not vaccine_seen:
            vaccine_seen = True
            add(f"efficacy_infection[{name}]", f"Vaccine efficacy against infection: {name}",
                "fraction", [_full_range(item.vaccination.efficacy_infection)], False)
            add(f"efficacy_severe[{name}]", f"Vaccine efficacy against admission: {name}",
                "fraction", [_full_range(item.vaccination.efficacy_severe)], False)
    return tuple(out)


def sample_quantiles(plan: Plan, draws: int, seed: int | None = None) -> NDArray[np.float64]:
    """The Latin hypercube quantiles of a plan: one column per :func:`plan_dimensions` key.

    Parameters
    ----------
    plan : Plan
        The plan.
    draws : int
        Number of draws [count].
    seed : int, optional
        Random seed; default ``plan.details.seed``.

    Returns
    -------
    ndarray, shape (draws, dimensions)
        Quantiles in (0, 1) [fraction].
    """
    if draws < 1:
        raise ModelError(f"draws must be at least 1, found {draws}")
    chosen = plan.details.seed if seed is None else seed
    return latin_hypercube(int(draws), len(plan_dimensions(plan)), int(chosen))


class ValueCache:
    """PERT values of a field, computed once per (column, range) and shared by scenarios."""

    def __init__(self, quantiles: NDArray[np.float64]) -> None:
        self.quantiles = quantiles
        self.store: dict[tuple[Any, ...], NDArray[np.float64]] = {}

    def values(self, item: UncertainField) -> NDArray[np.float64]:
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
        One row per draw.
    """
    fields = scenario_fields(plan, scenario)
    store = cache or ValueCache(quantiles)
    return values_from({item.key: store.values(item) for item in fields}, quantiles.shape[0])


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
        Called with the number of draws finished after each block.

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
    runs = simulate_draws(model, plan, values, min_substeps=min_substeps, blocks=blocks,
                          dtype=dtype, on_block=on_block)
    return ensemble_result(
        plan, model, scenario=chosen.name, fields=fields, sample=sample, values=values,
        runs=runs, swings=tornado(plan, model, fields, min_substeps), quantiles=qs,
        seed=used_seed, scenario_run=scenario_run, started=started,
    )
