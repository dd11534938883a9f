"""Growth rate, doubling time and reproduction number of fitted parameter sets.

For beta ``b``, a multiplier ``m`` of transmission (1 before the change
date, the fitted change after it) and the share of each band still
susceptible, the early growth rate ``r`` solves the Euler-Lotka condition
``m b rho(K_r(1)) = 1``, where ``K_r(1)`` is the next-generation matrix with
every residence time discounted by ``exp(-r t)``
(:func:`prepkit.simulation.beta_scaling.unit_radius`); ``rho(K_r)`` falls
as ``r`` grows, so the root is found by bisection, for every set at once.
The reproduction number is ``m b rho(K_0(1))``; the doubling time
``ln 2 / r`` when ``r > 0`` (a halving time ``ln 2 / |r|`` when ``r < 0``).

References
----------
Wallinga J., Lipsitch M. (2007). How generation intervals shape the
relationship between growth rates and reproductive numbers. Proc. R. Soc.
B 274:599-604. doi:10.1098/rspb.2006.3754

Diekmann O., Heesterbeek J.A.P., Metz J.A.J. (1990). On the definition and
the computation of the basic reproduction ratio R0 in models for infectious
diseases in heterogeneous populations. J. Math. Biol. 28:365-382.
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike, NDArray

from prepkit.simulation.beta_scaling import unit_radius
from prepkit.simulation.draw_values import DrawValues
from prepkit.simulation.layout import P_WAIT_RATE, StateLayout

__all__ = ["BISECTION_STEPS", "doubling_times", "growth_rates", "reproduction_numbers"]

BISECTION_STEPS = 60
"""Halvings of the bracket of each growth rate: 60 take a bracket of a few per day below
1e-15 per day."""


def _unit(pc: NDArray[np.float64], layout: StateLayout, values: DrawValues,
          rates: NDArray[np.float64], susceptible: ArrayLike | None) -> NDArray[np.float64]:
    return unit_radius(
        pc, layout, rates, values.symptomatic_share, values.admitted_share,
        layout.latent_stages / np.asarray(values.latent_period_days, dtype=np.float64),
        layout.infectious_stages / np.asarray(values.infectious_period_days, dtype=np.float64),
        susceptible)


def reproduction_numbers(
    pc: NDArray[np.float64], layout: StateLayout, values: DrawValues,
    beta: ArrayLike, multiplier: ArrayLike, susceptible_share: ArrayLike | None = None,
) -> NDArray[np.float64]:
    """Reproduction number of each set ``m b rho(K_0(1))`` [dimensionless].

    Parameters
    ----------
    pc : ndarray
        A parameter vector of the run (contacts, populations, delays).
    layout : StateLayout
        Stage counts.
    values : DrawValues
        The sets' inputs.
    beta : array, shape (sets,)
        Transmission scale [per contact].
    multiplier : array, shape (sets,)
        Multiplier of transmission [ratio].
    susceptible_share : array, shape (bands,), optional
        Share of each band still susceptible [fraction]; default 1.

    Returns
    -------
    ndarray, shape (sets,)
        The reproduction number [dimensionless].
    """
    n = values.size
    unit = _unit(pc, layout, values, np.zeros(n), susceptible_share)
    return np.asarray(np.asarray(multiplier) * np.asarray(beta) * unit, dtype=np.float64)


def growth_rates(
    pc: NDArray[np.float64], layout: StateLayout, values: DrawValues,
    beta: ArrayLike, multiplier: ArrayLike, susceptible_share: ArrayLike | None = None,
) -> NDArray[np.float64]:
    """Early growth rate of each set [1/day] (parameters as :func:`reproduction_numbers`)."""
    n = values.size
    scale = np.asarray(multiplier, dtype=np.float64) * np.asarray(beta, dtype=np.float64)
    nb = layout.bands
    lat = layout.latent_stages / np.asarray(values.latent_period_days, dtype=np.float64)
    inf = layout.infectious_stages / np.asarray(values.infectious_period_days, dtype=np.float64)
    wait = float(np.min(pc[P_WAIT_RATE * nb : (P_WAIT_RATE + 1) * nb]))
    slowest = np.minimum(np.minimum(lat, inf), wait)

    def excess(r: NDArray[np.float64]) -> NDArray[np.float64]:
        return np.asarray(scale * _unit(pc, layout, values, r, susceptible_share) - 1.0)

    low = -slowest * (1.0 - 1e-9)
    high = np.ones(n)
    for _ in range(64):  # widen until every root is bracketed
        above = excess(high) > 0.0
        if not np.any(above):
            break
        high = np.where(above, 2.0 * high, high)
    for _ in range(BISECTION_STEPS):
        middle = 0.5 * (low + high)
        grows = excess(middle) > 0.0
        low = np.where(grows, middle, low)
        high = np.where(grows, high, middle)
    return np.asarray(0.5 * (low + high), dtype=np.float64)


def doubling_times(rates: ArrayLike) -> NDArray[np.float64]:
    """``ln 2 / |r|`` [days]: a doubling time where ``r > 0``, a halving time where ``r < 0``."""
    r = np.asarray(rates, dtype=np.float64)
    with np.errstate(divide="ignore"):
        return np.asarray(math.log(2.0) / np.abs(r), dtype=np.float64)
