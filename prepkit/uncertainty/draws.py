"""The draws of an ensemble: their inputs, what is kept of each run, and ways to make them."""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any, Protocol

import numpy as np
from numpy.typing import NDArray

from prepkit.simulation.draw_values import DrawValues


class FieldRange(Protocol):
    """What :func:`mode_values` and the tornado need of an uncertain field.

    (:class:`prepkit.uncertainty.run.UncertainField` has all of it.)
    """

    @property
    def key(self) -> str: ...  # noqa: D102
    @property
    def label(self) -> str: ...  # noqa: D102
    @property
    def unit(self) -> str: ...  # noqa: D102
    @property
    def per_band(self) -> bool: ...  # noqa: D102
    @property
    def low(self) -> NDArray[np.float64]: ...  # noqa: D102
    @property
    def mode(self) -> NDArray[np.float64]: ...  # noqa: D102
    @property
    def high(self) -> NDArray[np.float64]: ...  # noqa: D102
    @property
    def is_point(self) -> bool: ...  # noqa: D102
    @property
    def outcome(self) -> bool: ...  # noqa: D102
    @property
    def column(self) -> int: ...  # noqa: D102
    def values(self, u: NDArray[np.float64]) -> NDArray[np.float64]: ...  # noqa: D102


SERIES_NAMES: tuple[str, ...] = (
    "ward_census_persons",
    "icu_census_persons",
    "admissions_per_day",
    "worker_onsets_per_day",
    "school_closure_intensity_share",
)
"""Daily series kept per draw, in the order of the kernel's ``series`` output."""

FINAL_NAMES: tuple[str, ...] = (
    "infections_persons",
    "symptomatic_cases_persons",
    "admissions_persons",
    "icu_admissions_persons",
    "hospital_deaths_persons",
    "doses_given_doses",
    "ward_bed_days",
    "icu_bed_days",
)
"""Totals kept per draw (names as in :class:`prepkit.metrics.core.BurdenTotals`)."""

PEAK_NAMES: tuple[str, ...] = ("ward_census_persons", "icu_census_persons", "admissions_per_day")
"""Peaks kept per draw."""


@dataclass(frozen=True, kw_only=True, eq=False)
class DrawSeries:
    """What the ensemble keeps of each draw.

    Attributes
    ----------
    series : ndarray, shape (5, draws, days)
        Daily series in the order of :data:`SERIES_NAMES`: ward and ICU
        census at the end of the day [persons], admissions during the day
        [persons/day], symptom onsets weighted by the employed share of each
        band [persons/day] and the school closure intensity [fraction].
    finals : ndarray, shape (draws, 8)
        Totals in the order of :data:`FINAL_NAMES` [persons, doses,
        bed-days].
    peaks : ndarray, shape (draws, 3)
        Peaks in the order of :data:`PEAK_NAMES` [persons, persons/day],
        computed in float64 whatever the series' type.
    peak_days : ndarray of int64, shape (draws, 3)
        First day of each peak [days since day 0].
    beta : ndarray, shape (draws,)
        Transmission scale of each draw [per contact].
    substeps : ndarray of int64, shape (draws,)
        The most RK4 steps each draw took on one day.
    """

    series: NDArray[Any]
    finals: NDArray[np.float64]
    peaks: NDArray[np.float64]
    peak_days: NDArray[np.int64]
    beta: NDArray[np.float64]
    substeps: NDArray[np.int64]

    def get(self, name: str) -> NDArray[Any]:
        """A daily series by name, shape (draws, days)."""
        return np.asarray(self.series[SERIES_NAMES.index(name)])


def mode_values(fields: Sequence[FieldRange], count: int) -> dict[str, NDArray[np.float64]]:
    """Every field at its mode, ``count`` times: field key to values."""
    out = {}
    for item in fields:
        block = np.repeat(item.mode[None, :], count, axis=0)
        out[item.key] = block if item.per_band else block[:, 0]
    return out


def values_from(got: Mapping[str, NDArray[np.float64]], count: int) -> DrawValues:
    """Draws from values by field key (:func:`prepkit.uncertainty.fields.plan_dimensions`).

    A drawn efficacy against admission below the drawn efficacy against
    infection is raised to it; without a vaccination both are 0.
    """
    compliance = {
        key[len("compliance["):-1]: np.array(value)
        for key, value in got.items()
        if key.startswith("compliance[")
    }
    ve_inf = next((v for k, v in got.items() if k.startswith("efficacy_infection[")), None)
    ve_sev = next((v for k, v in got.items() if k.startswith("efficacy_severe[")), None)
    ve_inf = np.zeros(count) if ve_inf is None else np.array(ve_inf)
    ve_sev = np.zeros(count) if ve_sev is None else np.maximum(ve_sev, ve_inf)
    return DrawValues(
        transmissibility_value=np.array(got["transmissibility"]),
        latent_period_days=np.array(got["latent_period_days"]),
        infectious_period_days=np.array(got["infectious_period_days"]),
        symptomatic_share=np.array(got["symptomatic_share"]),
        admitted_share=np.array(got["admitted_share"]),
        icu_share=np.array(got["icu_share"]),
        ward_stay_days=np.array(got["ward_stay_days"]),
        icu_stay_days=np.array(got["icu_stay_days"]),
        efficacy_infection=ve_inf,
        efficacy_severe=ve_sev,
        compliance=compliance,
    )


# --------------------------------------------------------------------------- outputs
