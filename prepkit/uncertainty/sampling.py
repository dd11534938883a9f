"""Sampling of uncertain inputs: the beta-PERT distribution and the Latin hypercube.

The rules in words are in :mod:`prepkit.uncertainty.run`.

Each function names its published source in its References section.
"""

from __future__ import annotations

import os

import numpy as np
from numpy.typing import NDArray
from scipy.special import betaincinv
from scipy.stats import qmc

from prepkit.errors import ModelError
from prepkit.uncertainty.ensemble import in_threads

__all__ = ["PERT_LAMBDA", "latin_hypercube", "pert_mean", "pert_parameters", "pert_ppf"]

PERT_LAMBDA = 4.0
"""Shape parameter of the beta-PERT distribution (Malcolm et al. 1959; Vose 2008)."""


def pert_parameters(
    low: NDArray[np.float64] | float,
    mode: NDArray[np.float64] | float,
    high: NDArray[np.float64] | float,
    lam: float = PERT_LAMBDA,
) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Beta shape parameters of a PERT distribution.

    Parameters
    ----------
    low, mode, high : float or ndarray
        Range and most likely value [unit of the quantity], ``low < high``.
    lam : float
        Shape parameter; 4 gives the classical PERT.

    Returns
    -------
    alpha, beta : ndarray
        ``alpha = 1 + lam (c - a) / (b - a)``, ``beta = 1 + lam (b - c) / (b - a)``
        [dimensionless].

    References
    ----------
    Malcolm D.G., Roseboom J.H., Clark C.E., Fazar W. (1959). Operations
    Research 7:646-669. Vose D. (2008). Risk Analysis, 3rd ed., Wiley
    (modified PERT; from memory).
    """
    a = np.asarray(low, dtype=np.float64)
    c = np.asarray(mode, dtype=np.float64)
    b = np.asarray(high, dtype=np.float64)
    width = b - a
    return 1.0 + lam * (c - a) / width, 1.0 + lam * (b - c) / width


def pert_mean(
    low: NDArray[np.float64] | float,
    mode: NDArray[np.float64] | float,
    high: NDArray[np.float64] | float,
) -> NDArray[np.float64]:
    """Mean of a PERT distribution ``(a + 4 c + b) / 6`` [unit of the quantity].

    References
    ----------
    Malcolm D.G., Roseboom J.H., Clark C.E., Fazar W. (1959). Operations
    Research 7:646-669 (the PERT mean estimate).
    """
    a = np.asarray(low, dtype=np.float64)
    return np.asarray((a + 4.0 * np.asarray(mode) + np.asarray(high)) / 6.0, dtype=np.float64)


def pert_ppf(
    u: NDArray[np.float64],
    low: NDArray[np.float64] | float,
    mode: NDArray[np.float64] | float,
    high: NDArray[np.float64] | float,
    lam: float = PERT_LAMBDA,
) -> NDArray[np.float64]:
    """Inverse distribution function of a PERT distribution (point mass when low = high).

    Parameters
    ----------
    u : ndarray, shape (draws,)
        Quantiles in (0, 1) [fraction].
    low, mode, high : float or ndarray, shape (k,)
        Range and mode [unit of the quantity]; arrays give one column per
        entry, all sharing the quantile ``u`` (comonotone).
    lam : float
        PERT shape parameter.

    Returns
    -------
    ndarray, shape (draws,) or (draws, k)
        Values [unit of the quantity].

    Raises
    ------
    ModelError
        When ``low <= mode <= high`` does not hold.

    References
    ----------
    Malcolm D.G., Roseboom J.H., Clark C.E., Fazar W. (1959). Operations
    Research 7:646-669. Vose D. (2008). Risk Analysis, 3rd ed., Wiley
    (from memory).
    """
    a = np.atleast_1d(np.asarray(low, dtype=np.float64))
    c = np.atleast_1d(np.asarray(mode, dtype=np.float64))
    b = np.atleast_1d(np.asarray(high, dtype=np.float64))
    if np.any(a > c) or np.any(c > b):
        raise ModelError(
            f"a range needs Low <= Central <= High; found {a.tolist()}, {c.tolist()}, {b.tolist()}"
        )
    q = np.asarray(u, dtype=np.float64)
    out = np.repeat(c[None, :], q.shape[0], axis=0)
    spread = b > a
    if np.any(spread):
        alpha, beta = pert_parameters(a[spread], c[spread], b[spread], lam)
        # Bands often share one shape (ranges scaled alike): invert each distinct
        # shape once, then rescale to each band's range.
        shapes, which = np.unique(np.stack([alpha, beta], axis=1), axis=0, return_inverse=True)
        # draws split between threads (the inversion releases the GIL); element by element,
        # so the numbers are those of one call
        count = max(1, min(q.shape[0] * shapes.shape[0] // 4096, os.cpu_count() or 1))
        edges = np.linspace(0, q.shape[0], count + 1).astype(int)
        parts = [slice(lo, hi) for lo, hi in zip(edges[:-1], edges[1:], strict=True)]
        got = in_threads(
            lambda rows: betaincinv(shapes[None, :, 0], shapes[None, :, 1], q[rows, None]), parts
        )
        x = np.concatenate(got, axis=0)[:, which.ravel()]
        out[:, spread] = a[spread] + x * (b[spread] - a[spread])
    if np.ndim(low) == 0 and np.ndim(mode) == 0 and np.ndim(high) == 0:
        return np.asarray(out[:, 0], dtype=np.float64)
    return np.asarray(out, dtype=np.float64)


def latin_hypercube(draws: int, dimensions: int, seed: int) -> NDArray[np.float64]:
    """Latin hypercube sample on the unit cube.

    Parameters
    ----------
    draws : int
        Number of points [count].
    dimensions : int
        Number of dimensions [count].
    seed : int
        Random seed.

    Returns
    -------
    ndarray, shape (draws, dimensions)
        Each column has exactly one point in each of the ``draws`` equal
        strata of (0, 1), placed at random within it [fraction].

    References
    ----------
    McKay M.D., Beckman R.J., Conover W.J. (1979). Technometrics
    21:239-245. doi:10.2307/1268522
    """
    if dimensions == 0:
        return np.zeros((draws, 0))
    sampler = qmc.LatinHypercube(d=dimensions, seed=seed)
    return np.asarray(sampler.random(draws), dtype=np.float64)


