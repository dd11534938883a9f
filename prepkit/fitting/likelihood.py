"""The negative binomial likelihood of observed admission counts.

Surveillance counts vary more than a Poisson count would (reporting,
clustering, day-of-week effects), so each row's observed admissions ``y``
are taken as negative binomial with mean ``mu`` (the model's admissions of
that row) and dispersion ``k`` (variance ``mu + mu^2 / k``; ``k -> inf`` is
Poisson)::

    log p(y | mu, k) = lnG(y + k) - lnG(k) - lnG(y + 1)
                       + k log(k / (k + mu)) + y log(mu / (k + mu))

References
----------
Lloyd-Smith J.O. (2007). Maximum likelihood estimation of the negative
binomial dispersion parameter for highly overdispersed data, with
applications to infectious diseases. PLoS ONE 2:e180 (the mean-dispersion
parameterisation).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy.special import gammaln, xlogy

__all__ = ["MEAN_FLOOR", "nb_log_likelihood", "nb_logpmf"]

MEAN_FLOOR = 1e-6
"""Smallest model mean of a row [persons]: a model with no admissions where some were seen
gets a very low, finite likelihood rather than minus infinity, so the sampler can leave it."""


def nb_logpmf(y: ArrayLike, mu: ArrayLike, k: ArrayLike) -> NDArray[np.float64]:
    """Log probability of counts ``y`` under a negative binomial of mean ``mu``, dispersion ``k``.

    Parameters
    ----------
    y : array
        Observed counts [persons].
    mu : array
        Means [persons], at least :data:`MEAN_FLOOR` after flooring.
    k : array
        Dispersion [dimensionless], positive; broadcast against ``mu``.

    Returns
    -------
    ndarray
        ``log p(y | mu, k)`` [log probability].
    """
    counts = np.asarray(y, dtype=np.float64)
    mean = np.maximum(np.asarray(mu, dtype=np.float64), MEAN_FLOOR)
    size = np.asarray(k, dtype=np.float64)
    total = size + mean
    return np.asarray(
        gammaln(counts + size) - gammaln(size) - gammaln(counts + 1.0)
        + size * (np.log(size) - np.log(total)) + xlogy(counts, mean) - counts * np.log(total),
        dtype=np.float64,
    )


def nb_log_likelihood(
    observed: NDArray[np.float64], expected: NDArray[np.float64], k: NDArray[np.float64]
) -> NDArray[np.float64]:
    """Log likelihood of every parameter set: the sum over rows.

    Parameters
    ----------
    observed : ndarray, shape (rows,)
        Observed admissions [persons].
    expected : ndarray, shape (sets, rows)
        Model admissions of each row [persons].
    k : ndarray, shape (sets,)
        Dispersion of each set [dimensionless].

    Returns
    -------
    ndarray, shape (sets,)
        Log likelihood [log probability].
    """
    return np.asarray(
        nb_logpmf(observed[None, :], expected, np.asarray(k)[:, None]).sum(axis=1),
        dtype=np.float64,
    )
