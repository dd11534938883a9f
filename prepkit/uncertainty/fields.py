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
from prepkit.uncertainty.sampling import latin_hypercube, pert_ppf

__all__ = ["UncertainField", "plan_dimensions", "sample_quantiles", "scenario_fields"]


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
