"""Workforce absence, shared by the single run and the ensemble.

Workers are employed people of working age (a band partly inside the
working ages counts in proportion to the overlap, ages assumed uniform in a
band; an open top band is taken as ``open_band_width_years`` wide). Workers ill at home are
those with symptom onset in the last ``days_absent_per_illness`` days (a
fractional last day counts in part); carers are
``carer_share x workers x school closure intensity``. The absence share is
their sum over the workers, capped at 1.

Daily values are one series or a draws x days array: the functions work on
the last axis (days).
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np
import pandas as pd
from numpy.typing import ArrayLike, NDArray

from prepkit.plan import AgeBand
from prepkit.plan.resources import Workforce


def working_age_weights(
    bands: Sequence[AgeBand], age_min: int, age_max: int, open_band_years: int
) -> NDArray[np.float64]:
    """Share of each band inside the working ages (ages uniform within a band).

    Parameters
    ----------
    bands : sequence of AgeBand
        Age bands of the plan.
    age_min, age_max : int
        Working ages, inclusive [years].
    open_band_years : int
        Ages an open top band is taken to span [years]
        (:attr:`prepkit.plan.resources.Workforce.open_band_width_years`).

    Returns
    -------
    ndarray
        Per band overlap share [fraction].
    """
    out = np.zeros(len(bands))
    for i, band in enumerate(bands):
        upper = (
            band.lower_age + open_band_years - 1 if band.upper_age is None else band.upper_age
        )
        width = upper - band.lower_age + 1
        overlap = min(upper, age_max) - max(band.lower_age, age_min) + 1
        out[i] = max(0, overlap) / width if width > 0 else 0.0
    return out


def employed_weights(bands: Sequence[AgeBand], workforce: Workforce) -> NDArray[np.float64]:
    """Employed workers per resident of each band [fraction]."""
    weight = working_age_weights(bands, workforce.working_age_min, workforce.working_age_max,
                                 workforce.open_band_width_years)
    return np.asarray(weight * workforce.employed_share, dtype=np.float64)


def worker_count(
    bands: Sequence[AgeBand], populations: ArrayLike, workforce: Workforce
) -> float:
    """Employed people of working age [persons]."""
    employed = employed_weights(bands, workforce)
    return float(np.dot(employed, np.asarray(populations, dtype=np.float64)))


def recent_sum(values: ArrayLike, days: float) -> NDArray[np.float64]:
    """Sum of the last ``days`` daily values, the oldest day counted in part.

    Parameters
    ----------
    values : array, shape (..., T)
        Daily values along the last axis.
    days : float
        Window length [days].

    Returns
    -------
    ndarray
        Same shape; entry ``d`` sums entries ``d - ceil(days) + 1 .. d`` with
        the oldest weighted by the fractional part.
    """
    series = np.asarray(values, dtype=np.float64)
    if days <= 0.0:
        return np.zeros_like(series)
    whole = int(math.floor(days))
    frac = days - whole
    kernel = [1.0] * whole + ([frac] if frac > 0.0 else [])
    out = np.zeros_like(series)
    for lag, weight in enumerate(kernel):
        if lag == 0:
            out += weight * series
        elif lag < series.shape[-1]:
            out[..., lag:] += weight * series[..., :-lag]
    return out


def absence(
    worker_onsets: ArrayLike, school_closure: ArrayLike, workers: float, workforce: Workforce
) -> tuple[NDArray[np.float64], NDArray[np.float64], NDArray[np.float64]]:
    """Workers ill, workers caring for children and the absence share.

    Parameters
    ----------
    worker_onsets : array, shape (..., days)
        Symptom onsets among workers (onsets weighted by the employed share
        of each band) [persons/day].
    school_closure : array, shape (..., days)
        School closure intensity [fraction].
    workers : float
        Employed people of working age [persons] (:func:`worker_count`).
    workforce : Workforce
        Workforce inputs.

    Returns
    -------
    ill, carers : ndarray
        Workers ill at home and caring [persons].
    share : ndarray
        Absent share of the workers, capped at 1 [fraction]; 0 without
        workers.
    """
    ill = recent_sum(worker_onsets, workforce.days_absent_per_illness)
    school = np.asarray(school_closure, dtype=np.float64)
    carers = workforce.carer_share_school_closure * workers * school
    if workers > 0.0:
        share = np.minimum(1.0, (ill + carers) / workers)
    else:
        share = np.zeros(ill.shape)
    return ill, carers, np.asarray(share, dtype=np.float64)


def add_absence_columns(
    daily: pd.DataFrame,
    onsets_by_band: NDArray[np.float64],
    populations: Sequence[float] | NDArray[np.float64],
    bands: Sequence[AgeBand],
    workforce: Workforce,
) -> pd.DataFrame:
    """Add workforce absence columns (the rule of :func:`absence`).

    Parameters
    ----------
    daily : pandas.DataFrame
        Needs ``school_closure_intensity_share``.
    onsets_by_band : ndarray, shape (days, bands)
        Daily symptom onsets [persons/day].
    populations : sequence of float
        Band populations [persons].
    bands : sequence of AgeBand
        Age bands.
    workforce : Workforce
        Workforce inputs.

    Returns
    -------
    pandas.DataFrame
        A copy with ``workers_persons``, ``workers_ill_persons``,
        ``workers_caring_persons``, ``absent_workers_persons`` and
        ``absence_share``.
    """
    out = daily.copy()
    workers = worker_count(bands, populations, workforce)
    worker_onsets = np.asarray(onsets_by_band, dtype=np.float64) @ employed_weights(
        bands, workforce
    )
    school = out["school_closure_intensity_share"].to_numpy(dtype=np.float64)
    ill, carers, share = absence(worker_onsets, school, workers, workforce)
    out["workers_persons"] = workers
    out["workers_ill_persons"] = ill
    out["workers_caring_persons"] = carers
    out["absent_workers_persons"] = ill + carers
    out["absence_share"] = share
    return out
