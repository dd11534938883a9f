"""Public scenario engine: plan in, daily series, metrics and transmissibility out.

Each scenario of a plan runs twice, with and without its interventions,
using the same picked numbers (levels, central values, beta), so the
difference is the interventions' effect. See :mod:`prepkit.simulation.kernels`
for the equations and :mod:`prepkit.metrics.core` for the definitions of the
metrics. The model has no presymptomatic transmission: infectiousness
starts at symptom onset (or at the end of the latent period for
asymptomatic infections).

Typical use::

    results = run_plan(plan)
    run = results["base"].with_interventions
    run.daily["ward_demand_beds"].max()
"""

from __future__ import annotations

import re
from collections.abc import Iterator, Mapping
from dataclasses import dataclass
from typing import Any, Literal

import numpy as np
import pandas as pd
from numpy.typing import NDArray

from prepkit.errors import ModelError
from prepkit.metrics.core import (
    BurdenTotals,
    InterventionEffect,
    ScenarioMetrics,
    add_absence_columns,
    add_capacity_columns,
    intervention_effect,
    scenario_metrics,
)
from prepkit.plan import LEVELS, SETTINGS, Level, Plan, Scenario
from prepkit.simulation.compile import CompiledModel, compile_model, transmissibility_of
from prepkit.simulation.inputs import ResolvedInputs, resolve_inputs, validate_plan
from prepkit.simulation.layout import (
    BLK_A,
    BLK_C,
    BLK_CUM_ADM,
    BLK_CUM_DOSE,
    BLK_CUM_ICU,
    BLK_CUM_INF,
    BLK_CUM_ONSET,
    BLK_D,
    BLK_E,
    BLK_EV,
    BLK_ICU_DAYS,
    BLK_P,
    BLK_R,
    BLK_S,
    BLK_V,
    BLK_V0,
    BLK_W,
    BLK_WARD_DAYS,
    BLK_Y,
    IT_ISO_SYMPTOMATIC,
    IT_MULTIPLIER,
    IT_SCHOOL_CLOSURE,
    KIND_CONTACTS,
    KIND_ISOLATION,
)
from prepkit.simulation.simulate import Trajectory, simulate
from prepkit.simulation.transmissibility import Transmissibility

__all__ = [
    "PlanResults",
    "ScenarioResults",
    "ScenarioRun",
    "compile_scenario",
    "run_plan",
    "run_scenario",
    "transmissibility_table",
    "validate_plan",
]

Variant = Literal["with", "without"]


@dataclass(frozen=True, kw_only=True, eq=False)
class ScenarioRun:
    """One simulated variant of a scenario.

    Attributes
    ----------
    scenario : str
        Scenario name.
    variant : {"with", "without"}
        With or without the scenario's interventions.
    inputs : ResolvedInputs
        The numbers picked for the run.
    daily : pandas.DataFrame
        One row per simulated day (index ``date``); column names carry
        units. Flows (``*_per_day``) are amounts during the day; stocks
        (``*_persons``, ``*_beds``) are end-of-day values.
    daily_by_band : pandas.DataFrame
        Long format: one row per day and band (columns ``date``, ``band``).
    metrics : ScenarioMetrics
        Totals, peaks, capacity gaps and absence.
    transmissibility : Transmissibility
        R0, growth rate, doubling time, generation time, effective R at day 0.
    substeps : int
        The most RK4 steps taken on one day (the step rule of
        :func:`prepkit.simulation.step_rule.advance_day` chooses them day by day).
    """

    scenario: str
    variant: Variant
    inputs: ResolvedInputs
    daily: pd.DataFrame
    daily_by_band: pd.DataFrame
    metrics: ScenarioMetrics
    transmissibility: Transmissibility
    substeps: int


@dataclass(frozen=True, kw_only=True, eq=False)
class ScenarioResults:
    """Both variants of one scenario and the interventions' effect."""

    scenario: Scenario
    with_interventions: ScenarioRun
    without_interventions: ScenarioRun
    effect: InterventionEffect

    @property
    def transmissibility(self) -> Transmissibility:
        """Transmissibility of the scenario (the same for both variants)."""
        return self.without_interventions.transmissibility

    def variant(self, name: Variant) -> ScenarioRun:
        """The run with (``"with"``) or without (``"without"``) interventions."""
        return self.with_interventions if name == "with" else self.without_interventions


@dataclass(frozen=True, kw_only=True, eq=False)
class PlanResults:
    """Every scenario of a plan, with and without interventions.

    Attributes
    ----------
    scenarios : tuple of ScenarioResults
        In the order of the plan.
    transmissibility_by_level : mapping of level to Transmissibility
        R0, growth rate, doubling time and generation time at each
        transmissibility level (central severity).
    """

    scenarios: tuple[ScenarioResults, ...]
    transmissibility_by_level: Mapping[Level, Transmissibility]

    def __getitem__(self, name: str) -> ScenarioResults:
        for item in self.scenarios:
            if item.scenario.name == name:
                return item
        raise KeyError(name)

    def __iter__(self) -> Iterator[ScenarioResults]:
        return iter(self.scenarios)

    def __len__(self) -> int:
        return len(self.scenarios)


def _scenario(plan: Plan, scenario: Scenario | str) -> Scenario:
    if isinstance(scenario, Scenario):
        return scenario
    try:
        return plan.scenario(scenario)
    except KeyError:
        raise ModelError(f"the plan has no scenario named {scenario!r}") from None


def compile_scenario(
    plan: Plan,
    scenario: Scenario | str,
    with_interventions: bool = True,
    overrides: Mapping[str, Any] | None = None,
    *,
    substeps: int | None = None,
) -> CompiledModel:
    """Compile one scenario variant into flat arrays (the ensemble's entry point).

    Parameters
    ----------
    plan : Plan
        The plan (checked with :func:`validate_plan` first).
    scenario : Scenario or str
        The scenario or its name.
    with_interventions : bool
        False runs the scenario without its interventions.
    overrides : mapping, optional
        Replacement values for fields of
        :class:`prepkit.simulation.inputs.ResolvedInputs` (e.g. an uncertainty
        draw).
    substeps : int, optional
        Fewest RK4 steps per day; default
        :data:`prepkit.simulation.compile.DEFAULT_SUBSTEPS` (the step rule takes
        more on days with faster rates).

    Returns
    -------
    CompiledModel
        Arrays for :func:`prepkit.simulation.simulate.simulate`.
    """
    validate_plan(plan)
    chosen = _scenario(plan, scenario)
    inputs = resolve_inputs(plan, chosen, overrides)
    return compile_model(
        plan, chosen, inputs, with_interventions=with_interventions, substeps=substeps
    )


def run_scenario(
    plan: Plan,
    scenario: Scenario | str,
    with_interventions: bool = True,
    overrides: Mapping[str, Any] | None = None,
    *,
    substeps: int | None = None,
) -> ScenarioRun:
    """Simulate one scenario variant.

    Parameters
    ----------
    plan : Plan
        The plan.
    scenario : Scenario or str
        The scenario or its name.
    with_interventions : bool
        False runs the scenario without its interventions.
    overrides : mapping, optional
        Replacement values for fields of
        :class:`prepkit.simulation.inputs.ResolvedInputs`.
    substeps : int, optional
        Fewest RK4 steps per day.

    Returns
    -------
    ScenarioRun
        Daily series, metrics and transmissibility.

    Raises
    ------
    ModelError
        When the plan cannot be simulated as asked, or the run fails a check
        of :mod:`prepkit.simulation.health` (the message names the inputs
        responsible).
    """
    chosen = _scenario(plan, scenario)
    model = compile_scenario(plan, chosen, with_interventions, overrides, substeps=substeps)
    trajectory = simulate(model)
    return build_run(plan, chosen, model, trajectory, transmissibility_of(model))


def run_plan(plan: Plan, *, substeps: int | None = None) -> PlanResults:
    """Simulate every scenario of a plan with and without its interventions.

    Parameters
    ----------
    plan : Plan
        The plan.
    substeps : int, optional
        Fewest RK4 steps per day.

    Returns
    -------
    PlanResults
        Results by scenario and the transmissibility table by level.
    """
    validate_plan(plan)
    out = []
    for scenario in plan.scenarios:
        inputs = resolve_inputs(plan, scenario)
        runs = {}
        for flag in (True, False):
            model = compile_model(
                plan, scenario, inputs, with_interventions=flag, substeps=substeps
            )
            if not flag:
                table = transmissibility_of(model)
            runs[flag] = (model, simulate(model))
        with_run = build_run(plan, scenario, *runs[True], table)
        without_run = build_run(plan, scenario, *runs[False], table)
        out.append(
            ScenarioResults(
                scenario=scenario,
                with_interventions=with_run,
                without_interventions=without_run,
                effect=intervention_effect(with_run.metrics, without_run.metrics),
            )
        )
    return PlanResults(scenarios=tuple(out), transmissibility_by_level=transmissibility_table(plan))


def transmissibility_table(plan: Plan) -> dict[Level, Transmissibility]:
    """Transmissibility figures at each level (central severity, no interventions).

    Parameters
    ----------
    plan : Plan
        The plan.

    Returns
    -------
    dict
        Level to :class:`Transmissibility`. "high" is the fastest spread:
        the high R0 or growth rate, or the *low* doubling time.
    """
    validate_plan(plan)
    out: dict[Level, Transmissibility] = {}
    for level in LEVELS:
        probe = Scenario(
            name=f"{level} transmissibility",
            transmissibility_level=level,
            severity_level="central",
            interventions=(),
        )
        model = compile_model(plan, probe, resolve_inputs(plan, probe), with_interventions=False)
        out[level] = transmissibility_of(model)
    return out


def column_slug(name: str) -> str:
    """Snake-case form of an intervention name for column names."""
    slug = re.sub(r"[^0-9a-z]+", "_", name.lower()).strip("_")
    return slug or "unnamed"


def _activity_columns(model: CompiledModel, active: NDArray[np.bool_]) -> dict[str, Any]:
    days = active.shape[0]
    itab = model.itab
    columns: dict[str, Any] = {}
    multipliers = np.ones((days, len(SETTINGS)))
    school = np.zeros(days)
    isolation = np.ones(days)
    for r, _ in enumerate(model.intervention_names):
        on = active[:, r]
        kind = int(itab[r, 0])
        if kind == KIND_CONTACTS:
            rows = itab[r, IT_MULTIPLIER : IT_MULTIPLIER + len(SETTINGS)]
            multipliers = np.where(on[:, None], multipliers * rows[None, :], multipliers)
            school = np.where(on, np.maximum(school, itab[r, IT_SCHOOL_CLOSURE]), school)
        elif kind == KIND_ISOLATION:
            isolation = np.where(on, isolation * itab[r, IT_ISO_SYMPTOMATIC], isolation)
    for s, setting in enumerate(SETTINGS):
        columns[f"contacts_multiplier_{setting}"] = multipliers[:, s]
    columns["school_closure_intensity_share"] = school
    columns["isolation_multiplier_symptomatic"] = isolation
    used: set[str] = set()
    for r, name in enumerate(model.intervention_names):
        key = f"active_{column_slug(name)}"
        while key in used:
            key += "_"
        used.add(key)
        columns[key] = active[:, r].copy()
    return columns


def build_run(
    plan: Plan,
    scenario: Scenario,
    model: CompiledModel,
    trajectory: Trajectory,
    transmissibility: Transmissibility,
) -> ScenarioRun:
    """Turn a trajectory into daily series and metrics.

    Parameters
    ----------
    plan : Plan
        The plan.
    scenario : Scenario
        The scenario.
    model : CompiledModel
        The compiled run.
    trajectory : Trajectory
        Its simulated states.
    transmissibility : Transmissibility
        Its transmissibility figures.

    Returns
    -------
    ScenarioRun
        The assembled run.
    """
    layout = model.layout
    states = trajectory.states
    days = states.shape[0] - 1
    dates = pd.date_range(pd.Timestamp(plan.details.day0), periods=days, freq="D", name="date")

    def band(block: int) -> NDArray[np.float64]:
        return layout.block_total(states, block)

    def flow(block: int) -> NDArray[np.float64]:
        return np.diff(band(block), axis=0)

    flows = {
        "infections_per_day": flow(BLK_CUM_INF),
        "symptomatic_onsets_per_day": flow(BLK_CUM_ONSET),
        "admissions_per_day": flow(BLK_CUM_ADM),
        "icu_admissions_per_day": flow(BLK_CUM_ICU),
        "hospital_deaths_per_day": flow(BLK_D),
        "doses_per_day": flow(BLK_CUM_DOSE),
    }
    stocks = {
        "susceptible_persons": band(BLK_S)[1:],
        "dosed_unprotected_persons": band(BLK_V0)[1:],
        "protected_persons": band(BLK_V)[1:],
        "latent_persons": (band(BLK_E) + band(BLK_EV))[1:],
        "asymptomatic_infectious_persons": band(BLK_A)[1:],
        "symptomatic_at_home_persons": band(BLK_Y)[1:],
        "waiting_for_admission_persons": band(BLK_P)[1:],
        "ward_census_persons": band(BLK_W)[1:],
        "icu_census_persons": band(BLK_C)[1:],
        "recovered_persons": band(BLK_R)[1:],
        "cumulative_infections_persons": band(BLK_CUM_INF)[1:],
        "cumulative_symptomatic_persons": band(BLK_CUM_ONSET)[1:],
        "cumulative_admissions_persons": band(BLK_CUM_ADM)[1:],
        "cumulative_icu_admissions_persons": band(BLK_CUM_ICU)[1:],
        "cumulative_hospital_deaths_persons": band(BLK_D)[1:],
        "cumulative_doses": band(BLK_CUM_DOSE)[1:],
    }
    columns: dict[str, Any] = {key: value.sum(axis=1) for key, value in flows.items()}
    columns.update({key: value.sum(axis=1) for key, value in stocks.items()})
    columns["season_multiplier"] = np.array([model.season(float(d)) for d in range(days)])
    columns.update(_activity_columns(model, trajectory.active))
    daily = pd.DataFrame(columns, index=dates)
    daily = add_capacity_columns(daily, plan.capacity)
    daily = add_absence_columns(
        daily,
        flows["symptomatic_onsets_per_day"],
        model.population,
        plan.bands,
        plan.workforce,
    )

    labels = [b.label for b in plan.bands]
    nb = len(labels)
    long: dict[str, Any] = {
        "date": np.repeat(dates.to_numpy(), nb),
        "band": np.tile(np.array(labels, dtype=object), days),
    }
    for key, value in {**flows, **stocks}.items():
        long[key] = value.reshape(-1)
    by_band = pd.DataFrame(long)

    final = states[-1]
    finals = {
        "infections_persons": final[layout.stage(BLK_CUM_INF)],
        "symptomatic_cases_persons": final[layout.stage(BLK_CUM_ONSET)],
        "admissions_persons": final[layout.stage(BLK_CUM_ADM)],
        "icu_admissions_persons": final[layout.stage(BLK_CUM_ICU)],
        "hospital_deaths_persons": final[layout.stage(BLK_D)],
        "doses_given_doses": final[layout.stage(BLK_CUM_DOSE)],
        "ward_bed_days": final[layout.stage(BLK_WARD_DAYS)],
        "icu_bed_days": final[layout.stage(BLK_ICU_DAYS)],
    }
    totals = BurdenTotals(**{k: float(v.sum()) for k, v in finals.items()})
    by_label = {
        label: BurdenTotals(**{k: float(v[i]) for k, v in finals.items()})
        for i, label in enumerate(labels)
    }
    metrics = scenario_metrics(daily, totals, by_label, plan.population, plan.capacity)
    return ScenarioRun(
        scenario=scenario.name,
        variant="with" if model.with_interventions else "without",
        inputs=model.inputs,
        daily=daily,
        daily_by_band=by_band,
        metrics=metrics,
        transmissibility=transmissibility,
        substeps=int(trajectory.substeps.max(initial=0)),
    )
