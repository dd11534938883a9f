"""What a run depends on, as a key: identical variants are computed once and shared.

Two scenarios that share their transmissibility and severity levels have the
same run without their measures: their measures differ, but a run without
measures reads none of them. The keys here say when two runs are the same
from the numbers the solver reads, not from the scenarios' names or levels:

* :func:`model_key`: every array of a compiled run (state layout, parameter
  vector, intervention table and priorities, capacity, day-0 state), its
  horizon, day 0, step rule, the measures in force and the transmissibility
  measure, level and value it was calibrated to;
* :func:`draws_key`: that of the compiled central run, plus, draw by draw,
  the parameter vectors and intervention tables the one builder
  (:func:`prepkit.simulation.parameters.draw_parameters`) writes for the
  draws, and every drawn number the builder, the calibration of beta and the
  growth bound read; the draws of measures not in force, and vaccine
  efficacies when no vaccination is in force, are left out (the builder reads
  neither), so the ensembles of two scenarios without their measures share
  a key when their draws of everything else are the same.

Equal keys mean equal inputs, number for number (SHA-256 of the bytes).
A key compares runs of one plan (the metrics also read the plan's beds
and workforce): :class:`Shared` lives inside one call of
:func:`prepkit.scenarios.runs.run_plan` or
:func:`prepkit.uncertainty.plan_runs.run_uncertainty`.
"""

from __future__ import annotations

import hashlib
from collections.abc import Callable, Hashable
from typing import Any, TypeVar

import numpy as np

from prepkit.plan import Plan
from prepkit.simulation.compile import CompiledModel
from prepkit.simulation.draw_values import DrawValues, take_draws
from prepkit.simulation.parameters import draw_parameters

__all__ = ["KEY_BLOCK_DRAWS", "Shared", "draws_key", "model_key"]

Item = TypeVar("Item")

KEY_BLOCK_DRAWS = 1024
"""Draws whose parameter arrays are built at a time for :func:`draws_key` (bounds its memory)."""

_PLAN_WIDE = ("transmissibility_value", "latent_period_days", "infectious_period_days",
              "symptomatic_share", "admitted_share", "icu_share", "ward_stay_days",
              "icu_stay_days")
"""Drawn numbers of the plan as a whole (every run reads them)."""


def _add(digest: Any, value: Any) -> None:
    """Feed one value to ``digest``: arrays by dtype, shape and bytes, the rest by repr."""
    if isinstance(value, np.ndarray):
        digest.update(f"{value.dtype.str}{value.shape}".encode())
        digest.update(np.ascontiguousarray(value).tobytes())
    else:
        digest.update(repr(value).encode())
    digest.update(b"\x00")


def model_key(model: CompiledModel) -> str:
    """Identity of a compiled run: equal for two runs that read the same numbers.

    Parameters
    ----------
    model : CompiledModel
        The compiled run.

    Returns
    -------
    str
        Hex SHA-256 of its arrays and settings (not its scenario's name, nor
        the inputs of measures not in force, nor whether it is called the run
        with or without measures: a scenario without measures has one run).
    """
    digest = hashlib.sha256()
    inputs = model.inputs
    for value in (
        model.lay, model.pc, model.itab, model.iprio, model.cap, model.y0,
        model.horizon_days, model.substeps, model.max_step_rate, model.day0,
        model.intervention_names, model.intervention_kinds,
        inputs.transmissibility_measure, inputs.transmissibility_level,
        inputs.transmissibility_value,
    ):
        _add(digest, value)
    return digest.hexdigest()


def draws_key(model: CompiledModel, plan: Plan, values: DrawValues, *settings: Hashable) -> str:
    """Identity of an ensemble of draws: equal when every draw reads the same numbers.

    Parameters
    ----------
    model : CompiledModel
        Compiled central run of the scenario variant.
    plan : Plan
        The plan (its interventions' fixed inputs).
    values : DrawValues
        The draws.
    *settings : hashable
        Everything else the ensemble's result depends on (step rule, blocks,
        storage type).

    Returns
    -------
    str
        Hex SHA-256.
    """
    digest = hashlib.sha256()
    _add(digest, model_key(model))
    for value in settings:
        _add(digest, value)
    items = [plan.intervention(name) for name in model.intervention_names]
    for name in _PLAN_WIDE:
        _add(digest, np.asarray(getattr(values, name), dtype=np.float64))
    if any(item.vaccination is not None for item in items):
        _add(digest, np.asarray(values.efficacy_infection, dtype=np.float64))
        _add(digest, np.asarray(values.efficacy_severe, dtype=np.float64))
    _add(digest, ("initial infections", values.initial_infections is not None))
    if values.initial_infections is not None:
        _add(digest, np.asarray(values.initial_infections, dtype=np.float64))
    for name in model.intervention_names:
        _add(digest, (name, name in values.compliance))
        if name in values.compliance:
            _add(digest, np.asarray(values.compliance[name], dtype=np.float64))
    for start in range(0, values.size, KEY_BLOCK_DRAWS):
        rows = np.arange(start, min(values.size, start + KEY_BLOCK_DRAWS))
        pcs, itabs = draw_parameters(model.pc, model.itab, model.layout, plan, items,
                                     take_draws(values, rows))
        _add(digest, pcs)
        _add(digest, itabs)
    return digest.hexdigest()


class Shared:
    """Results computed once per key and handed out again for an equal key.

    Attributes
    ----------
    computed : dict
        How many times each kind of result was computed (for the tests).
    """

    def __init__(self) -> None:
        self.store: dict[tuple[str, str], Any] = {}
        self.computed: dict[str, int] = {}

    def once(self, kind: str, key: str, make: Callable[[], Item]) -> Item:
        """The result of ``make()`` for ``(kind, key)``, computed on first use only."""
        if (kind, key) not in self.store:
            self.store[kind, key] = make()
            self.computed[kind] = self.computed.get(kind, 0) + 1
        result: Item = self.store[kind, key]
        return result

    def __contains__(self, item: tuple[str, str]) -> bool:
        return item in self.store
