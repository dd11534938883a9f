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

from collections.abc import Iterator, Mapping
from dataclasses import dataclass
from functools import partial
from typing import Any, Generic, Literal, TypeVar

import pandas as pd

from prepkit.base.blas import one_blas_thread
from prepkit.errors import ModelError
from prepkit.metrics.core import InterventionEffect, ScenarioMetrics, intervention_effect
from prepkit.plan import LEVELS, Level, Plan, Scenario
from prepkit.scenarios.daily import run_outputs
from prepkit.simulation.compile import CompiledModel, compile_model, transmissibility_of
from prepkit.simulation.identity import Shared, model_key
from prepkit.simulation.inputs import ResolvedInputs, resolve_inputs, validate_plan
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
Item = TypeVar("Item")


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


class ByScenario(Generic[Item]):
    """Items in plan order, one per scenario, looked up by scenario name."""

    scenarios: tuple[Item, ...]

    @staticmethod
    def name_of(item: Item) -> str:
        """Scenario name of an item."""
        raise NotImplementedError

    def __getitem__(self, name: str) -> Item:
        for item in self.scenarios:
            if self.name_of(item) == name:
                return item
        raise KeyError(name)

    def __iter__(self) -> Iterator[Item]:
        return iter(self.scenarios)

    def __len__(self) -> int:
        return len(self.scenarios)


@dataclass(frozen=True, kw_only=True, eq=False)
class PlanResults(ByScenario[ScenarioResults]):
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

    @staticmethod
    def name_of(item: ScenarioResults) -> str:
        """Scenario name of an item."""
        return item.scenario.name


def _scenario(plan: Plan, scenario: Scenario | str) -> Scenario:
    if isinstance(scenario, Scenario):
        return scenario
    try:
        return plan.scenario(scenario)
    except KeyError:
        raise ModelError(f"the plan has no scenario named {scenario!r}") from None


@one_blas_thread
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


@one_blas_thread
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


@one_blas_thread
def run_plan(plan: Plan, *, substeps: int | None = None) -> PlanResults:
    """Simulate every scenario of a plan with and without its interventions.

    Identical variants (the same :func:`prepkit.simulation.identity.model_key`,
    e.g. the runs without measures of two scenarios at the same levels) are
    simulated once and share their trajectory, daily tables, metrics and
    transmissibility figures; each keeps its own scenario name and inputs.

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
    shared = Shared()
    out = []
    for scenario in plan.scenarios:
        inputs = resolve_inputs(plan, scenario)
        runs = {}
        for flag in (True, False):
            model = compile_model(
                plan, scenario, inputs, with_interventions=flag, substeps=substeps
            )
            key = model_key(model)
            if not flag:
                table = shared.once("transmissibility", key, partial(transmissibility_of, model))
            runs[flag] = (model, shared.once("trajectory", key, partial(simulate, model)))
        with_run = build_run(plan, scenario, *runs[True], table, shared=shared)
        without_run = build_run(plan, scenario, *runs[False], table, shared=shared)
        out.append(
            ScenarioResults(
                scenario=scenario,
                with_interventions=with_run,
                without_interventions=without_run,
                effect=intervention_effect(with_run.metrics, without_run.metrics),
            )
        )
    return PlanResults(scenarios=tuple(out),
                       transmissibility_by_level=transmissibility_table(plan, _shared=shared))


@one_blas_thread
def transmissibility_table(
    plan: Plan, *, _shared: Shared | None = None
) -> dict[Level, Transmissibility]:
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
    shared = Shared() if _shared is None else _shared
    out: dict[Level, Transmissibility] = {}
    for level in LEVELS:
        probe = Scenario(
            name=f"{level} transmissibility",
            transmissibility_level=level,
            severity_level="central",
            interventions=(),
        )
        model = compile_model(plan, probe, resolve_inputs(plan, probe), with_interventions=False)
        out[level] = shared.once("transmissibility", model_key(model),
                                 partial(transmissibility_of, model))
    return out


def build_run(
    plan: Plan,
    scenario: Scenario,
    model: CompiledModel,
    trajectory: Trajectory,
    transmissibility: Transmissibility,
    *,
    shared: Shared | None = None,
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
    shared : Shared, optional
        Daily tables and metrics already made for an identical run (the same
        :func:`prepkit.simulation.identity.model_key`), handed out again.

    Returns
    -------
    ScenarioRun
        The assembled run.
    """
    make = partial(run_outputs, plan, model, trajectory)
    daily, by_band, metrics = make() if shared is None else shared.once(
        "outputs", model_key(model), make)
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
