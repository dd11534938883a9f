"""The uncertain inputs of a plan: which fields are sampled, over which range, in which column.

The rules in words are in :mod:`prepkit.uncertainty.run`.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from prepkit.errors import ModelError
from prepkit.plan import Level, Plan, Range3, Scenario
from prepkit.simulation.inputs import DOUBLING_TIME_LEVEL
from prepkit.uncertainty.draws import FieldRange
from prepkit.uncertainty.sampling import latin_hypercube, pert_ppf
from prepkit.workbook.field_types import Field, Sampled
from prepkit.workbook.schema import FIELDS
from prepkit.workbook.targets import Target, parse_target, resolve

__all__ = ["UncertainField", "outcome_values", "plan_dimensions", "sample_quantiles",
           "scenario_fields"]


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
    outcome : bool
        A weight of the model's outcomes, not one of its inputs
        (:attr:`prepkit.workbook.field_types.Sampled.outcome`).
    """

    key: str
    label: str
    unit: str
    per_band: bool
    low: NDArray[np.float64]
    mode: NDArray[np.float64]
    high: NDArray[np.float64]
    column: int
    outcome: bool = False

    @property
    def is_point(self) -> bool:
        """True when every band is fixed (Low = High)."""
        return bool(np.all(self.low == self.high))

    def values(self, u: NDArray[np.float64]) -> NDArray[np.float64]:
        """Values at quantiles ``u`` [unit], shape (draws, bands) or (draws,)."""
        out = pert_ppf(u, self.low, self.mode, self.high)
        return out if self.per_band else out[:, 0]


def _sampled(per_row: bool) -> tuple[tuple[Field, Sampled, Target], ...]:
    found = [(f, f.sampled, parse_target(f.target)) for f in FIELDS
             if f.sampled is not None and f.target is not None]
    chosen = [(f, s, t) for f, s, t in found if t.per_row == per_row]
    return tuple(sorted(chosen, key=lambda x: x[1].rank))


#: Uncertain fields of the plan as a whole, then of each measure, in Latin hypercube order.
_PLAN_SAMPLED = _sampled(per_row=False)
_MEASURE_SAMPLED = _sampled(per_row=True)


def plan_dimensions(plan: Plan) -> tuple[str, ...]:
    """Keys of every field of the plan that can be sampled, in Latin hypercube order.

    Parameters
    ----------
    plan : Plan
        The plan whose uncertain inputs are sampled.

    Returns
    -------
    tuple of str
        Disease and severity fields first, then per intervention (plan
        order) ``compliance[name]`` and, for vaccinations,
        ``efficacy_infection[name]`` and ``efficacy_severe[name]``. Fixed
        fields keep their dimension so that adding uncertainty to one field
        does not change the draws of the others' order. The fields and their
        order are declared in :mod:`prepkit.workbook.schema` (``Field.sampled``).
    """
    keys: list[str] = []
    for _, sampled, _ in _PLAN_SAMPLED:
        if sampled.key not in keys:
            keys.append(sampled.key)
    for item in plan.interventions:
        for _, sampled, target in _MEASURE_SAMPLED:
            if resolve(item, target.path) is not None:
                keys.append(sampled.key.format(name=item.name))
    return tuple(keys)


def _level(sampled: Sampled, scenario: Scenario) -> Level | None:
    """Level the field is drawn around in a scenario; None for the full range."""
    if sampled.around == "full":
        return None
    level = (scenario.transmissibility_level if sampled.around == "transmissibility"
             else scenario.severity_level)
    return DOUBLING_TIME_LEVEL[level] if sampled.inverted else level


def _ranges(value: object, level: Level | None) -> list[tuple[float, float, float]]:
    values = value if isinstance(value, tuple) else (value,)
    assert all(isinstance(v, Range3) for v in values), value
    if level is None:
        return [_full_range(v) for v in values]
    return [_range_at_level(v, level) for v in values]


def _plan_choices(plan: Plan) -> list[tuple[Sampled, object, bool]]:
    """(declaration, value, per band) of each plan-wide dimension; the first given of a key."""
    chosen: dict[str, tuple[Sampled, object, bool]] = {}
    for _, sampled, target in _PLAN_SAMPLED:
        value = resolve(getattr(plan, target.section), target.path)
        if value is not None and sampled.key not in chosen:
            chosen[sampled.key] = (sampled, value, target.per_band)
    if "transmissibility" not in chosen:
        raise ModelError("disease: none of R0, doubling time and growth rate is given")
    return list(chosen.values())


def scenario_fields(plan: Plan, scenario: Scenario | str) -> tuple[UncertainField, ...]:
    """The fields sampled for a scenario, with the range each is drawn from.

    Parameters
    ----------
    plan : Plan
        The plan whose uncertain inputs are sampled.
    scenario : Scenario or str
        The scenario (or its name) that sets the levels drawn around.

    Returns
    -------
    tuple of UncertainField
        In Latin hypercube column order; point fields included (their
        ``is_point`` is True). Intervention fields are those of the
        scenario's interventions. Labels and units are those declared in
        :mod:`prepkit.workbook.schema` (``Field.sampled``).
    """
    chosen = plan.scenario(scenario) if isinstance(scenario, str) else scenario
    columns = {key: i for i, key in enumerate(plan_dimensions(plan))}
    out: list[UncertainField] = []

    def add(key: str, label: str, unit: str, ranges: Sequence[tuple[float, float, float]],
            per_band: bool, outcome: bool = False) -> None:
        low, mode, high = (np.array(x, dtype=np.float64) for x in zip(*ranges, strict=True))
        out.append(UncertainField(key=key, label=label, unit=unit, per_band=per_band, low=low,
                                  mode=mode, high=high, column=columns[key], outcome=outcome))

    for sampled, value, per_band in _plan_choices(plan):
        add(sampled.key, sampled.label, sampled.unit, _ranges(value, _level(sampled, chosen)),
            per_band, sampled.outcome)
    first_seen: set[str] = set()
    for name in chosen.interventions:
        item = plan.intervention(name)
        for _, sampled, target in _MEASURE_SAMPLED:
            value = resolve(item, target.path)
            if value is None or (sampled.first_only and sampled.key in first_seen):
                continue
            first_seen.add(sampled.key)
            add(sampled.key.format(name=name), sampled.label.format(name=name), sampled.unit,
                _ranges(value, _level(sampled, chosen)), False)
    return tuple(out)


def outcome_values(
    fields: Sequence[FieldRange], sample: NDArray[np.float64] | None, count: int
) -> dict[str, NDArray[np.float64]]:
    """Per draw, the value of each outcome field [its unit], by key.

    From the Latin hypercube ``sample`` (:func:`sample_quantiles`), or, with
    ``sample`` None, every one of ``count`` rows at the field's mode (the
    one-at-a-time runs, which leave outcome fields at their mode).
    """
    return {item.key: (item.values(sample[:, item.column]) if sample is not None
                       else np.full(count, float(item.mode[0])))
            for item in fields if item.outcome}


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
