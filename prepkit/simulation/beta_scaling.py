"""The transmission scale beta from R0, a doubling time or a growth rate, for one run or many draws.

With everybody susceptible, no measures and season 1, the next-generation
matrix on new infections of each band is
``K_ij = beta sigma_i N_i C_ij / N_j w_j``, where ``C`` is the sum of the
setting contact matrices and ``w_j`` is the infectious pressure-time one
new infection of band ``j`` produces:
``w_j = rho (1 - p_j) D + (p_j - h_j) D + h_j D_P,j`` (``D`` the mean
infectious period, ``D_P,j`` the mean onset-to-admission delay). For a
target growth rate ``r`` every residence time is discounted by
``exp(-r t)``: a chain of ``q`` stages at rate ``g`` contributes
``sum_{s<q} (g / (g + r))^s / (g + r)`` and the latent chain multiplies by
``(lat / (lat + r))^m``; at ``r = 0`` this is the R0 case. Then
``beta = R0 / rho(K(1))`` or ``beta = 1 / rho(K_r(1))``, the numbers the
full infected subsystem's next-generation matrix gives (the tests check
both), for one run (:func:`prepkit.simulation.compile.compile_model`)
or thousands of draws at once (the ensemble) by the same function.

References
----------
Diekmann O., Heesterbeek J.A.P., Metz J.A.J. (1990). On the definition
and the computation of the basic reproduction ratio R0 in models for
infectious diseases in heterogeneous populations. J. Math. Biol.
28:365-382. doi:10.1007/BF00178324

Wallinga J., Lipsitch M. (2007). How generation intervals shape the
relationship between growth rates and reproductive numbers. Proc. R.
Soc. B 274:599-604. doi:10.1098/rspb.2006.3754
"""

from __future__ import annotations

import math

import numba
import numpy as np
from numpy.typing import ArrayLike, NDArray

from prepkit.base.blas import one_blas_thread
from prepkit.errors import ModelError
from prepkit.simulation.layout import (
    N_SETTINGS,
    P_POP,
    P_SUSCEPTIBILITY,
    P_WAIT_RATE,
    S_RHO,
    StateLayout,
    matrix_offset,
    scalar_offset,
)
from prepkit.simulation.threads import in_threads
from prepkit.simulation.transmissibility import NOBODY_INFECTS, transmission_is_finite

EIG_CHUNK = 2048
"""Most draws whose next-generation matrices :func:`beta_for_targets` stacks at once (over all
threads)."""


def discounted_residence(
    rate: NDArray[np.float64], stages: int, r: NDArray[np.float64]
) -> NDArray[np.float64]:
    """Expected ``exp(-r t)``-weighted time in a chain of ``stages`` stages at ``rate`` [days]."""
    shifted = rate + r
    ratio = rate / shifted
    out = np.zeros(shifted.shape)
    term = 1.0 / shifted
    for _ in range(stages):
        out = out + term
        term = term * ratio
    return out


def target_growth_rates(measure: str, target: NDArray[np.float64]) -> NDArray[np.float64]:
    """Growth rate each target asks for [1/day]: 0 for R0, ``ln 2 / T_d`` for a doubling time."""
    if measure == "doubling_time":
        if np.any(target <= 0.0):
            raise ModelError(f"doubling time must be positive, found {target.min():.4g} days")
        return np.asarray(math.log(2.0) / target, dtype=np.float64)
    if measure == "growth_rate":
        return target
    return np.zeros_like(target)


def _unit_radius(base: NDArray[np.float64], weights: NDArray[np.float64]) -> NDArray[np.float64]:
    """Spectral radius of ``base * weights[d]`` (columns scaled) for every row ``d``."""

    def spectral_radius(rows: slice) -> NDArray[np.float64]:
        ngm = base[None, :, :] * weights[rows, None, :]
        return np.asarray(np.max(np.abs(np.linalg.eigvals(ngm)), axis=1), dtype=np.float64)

    # chunks keep the stacked matrices small: at most EIG_CHUNK draws at once over all
    # threads (LAPACK releases the GIL); each chunk is computed exactly as on its own
    n_rows = weights.shape[0]
    threads = max(1, numba.get_num_threads())
    count = threads * math.ceil(n_rows / EIG_CHUNK)
    edges = np.linspace(0, n_rows, count + 1).astype(int)
    parts = [slice(a, b) for a, b in zip(edges[:-1], edges[1:], strict=True)]
    return np.concatenate(in_threads(spectral_radius, parts)) if parts else np.empty(0)


@one_blas_thread
def unit_radius(
    pc: NDArray[np.float64],
    layout: StateLayout,
    rates: ArrayLike,
    symptomatic: ArrayLike,
    admitted: ArrayLike,
    latent_rate: ArrayLike,
    infectious_rate: ArrayLike,
    susceptible_share: ArrayLike | None = None,
) -> NDArray[np.float64]:
    """Spectral radius of the ``exp(-r t)``-discounted next-generation matrix at beta = 1.

    ``rho(K_r(1))`` for each draw: with ``r = 0`` beta times it is the
    reproduction number; a growth rate ``r`` is reached when beta times it is
    1 (the module's equations).

    Parameters
    ----------
    pc : ndarray
        A parameter vector of the run (contacts, populations, susceptibility,
        asymptomatic infectiousness, onset-to-admission delays).
    layout : StateLayout
        Stage counts.
    rates : array, shape (draws,)
        Growth rate at which to discount [1/day].
    symptomatic, admitted : array, shape (draws, bands)
        Symptomatic and admitted shares [fraction] (admitted cut to symptomatic).
    latent_rate, infectious_rate : array, shape (draws,)
        Latent and infectious stage rates [1/day].
    susceptible_share : array, shape (bands,), optional
        Share of each band still susceptible [fraction]; default 1 (everybody).

    Returns
    -------
    ndarray, shape (draws,)
        ``rho(K_r(1))`` [per unit of beta].

    Raises
    ------
    ModelError
        When a growth rate is below what any transmission can give.
    """
    nb = layout.bands
    sc = scalar_offset(nb)
    r = np.asarray(rates, dtype=np.float64)
    pop = pc[P_POP * nb : (P_POP + 1) * nb]
    sigma = pc[P_SUSCEPTIBILITY * nb : (P_SUSCEPTIBILITY + 1) * nb]
    if susceptible_share is not None:
        sigma = sigma * np.asarray(susceptible_share, dtype=np.float64)
    wait_rate = pc[P_WAIT_RATE * nb : (P_WAIT_RATE + 1) * nb]
    mo = matrix_offset(nb)
    contacts = pc[mo : mo + N_SETTINGS * nb * nb].reshape(N_SETTINGS, nb, nb).sum(axis=0)
    base = (sigma * pop)[:, None] * contacts / pop[None, :]

    p_sym = np.asarray(symptomatic, dtype=np.float64)
    h = np.minimum(np.asarray(admitted, dtype=np.float64), p_sym)
    lat = np.asarray(latent_rate, dtype=np.float64)
    inf = np.asarray(infectious_rate, dtype=np.float64)
    slowest = np.minimum(np.minimum(lat, inf), float(np.min(wait_rate)))
    if np.any(r <= -slowest):
        worst = int(np.argmin(r + slowest))
        raise ModelError(
            f"growth rate {float(r[worst]):.4g}/day is below what any transmission can "
            f"give (-{float(slowest[worst]):.4g}/day)"
        )
    latent = (lat / (lat + r)) ** layout.latent_stages
    at_home = discounted_residence(inf, layout.infectious_stages, r)
    waiting = discounted_residence(wait_rate[None, :], layout.wait_stages, r[:, None])
    weights = latent[:, None] * (
        (pc[sc + S_RHO] * (1.0 - p_sym) + (p_sym - h)) * at_home[:, None] + h * waiting
    )
    return _unit_radius(base, weights)


@one_blas_thread
def beta_for_targets(
    pc: NDArray[np.float64],
    layout: StateLayout,
    measure: str,
    target: ArrayLike,
    symptomatic: ArrayLike,
    admitted: ArrayLike,
    latent_rate: ArrayLike,
    infectious_rate: ArrayLike,
) -> NDArray[np.float64]:
    """Transmission scale of each draw (or of the one run) from its transmissibility measure.

    Parameters
    ----------
    pc : ndarray
        A parameter vector of the run (fixes contacts, populations,
        susceptibility, asymptomatic infectiousness and onset-to-admission
        delays; its beta is ignored).
    layout : StateLayout
        State layout (stage counts).
    measure : {"r0", "doubling_time", "growth_rate"}
        Measure of ``target``.
    target : array, shape (draws,)
        R0 [dimensionless], doubling time [days] or growth rate [1/day].
    symptomatic, admitted : array, shape (draws, bands)
        Symptomatic and admitted shares [fraction] (admitted cut to symptomatic).
    latent_rate, infectious_rate : array, shape (draws,)
        Latent and infectious stage rates [1/day].

    Returns
    -------
    ndarray, shape (draws,)
        beta [per contact].

    Raises
    ------
    ModelError
        When a doubling time is not positive, a growth rate is out of reach,
        or nobody can infect anybody.
    """
    goal = np.asarray(target, dtype=np.float64)
    unit = unit_radius(pc, layout, target_growth_rates(measure, goal), symptomatic, admitted,
                       latent_rate, infectious_rate)
    with np.errstate(divide="ignore", over="ignore"):
        beta = (goal if measure == "r0" else np.ones_like(goal)) / unit
    if np.any(unit <= 0.0) or not np.all(transmission_is_finite(beta, pc, layout)):
        raise ModelError(NOBODY_INFECTS)
    return np.asarray(beta, dtype=np.float64)
