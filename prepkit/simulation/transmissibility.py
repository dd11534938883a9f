"""Reproduction numbers, growth rate and generation time from the model itself.

Equations in words
------------------
Near the disease-free state the infected compartments follow
``x' = (F - V) x``, ``F`` the new infections and ``V`` every other
transition, both built by :mod:`prepkit.simulation.next_generation` from
the parameter vector the kernels use, so the numbers below belong to the
model that is simulated.

* Next-generation matrix ``K = F V^-1`` (restricted to the entry states);
  its spectral radius is the reproduction number. With everybody
  susceptible, no interventions and ``season = 1`` it is R0. With the
  day-0 susceptible shares and the day-0 season it is the effective R at
  day 0.
* Early growth rate ``r`` = dominant eigenvalue of ``F - V``.
* Transmission scale ``beta`` enters ``F`` linearly, so a target R0 gives
  ``beta = R0_target / R0(beta = 1)``. A target growth rate ``r`` gives
  ``beta = 1 / rho(F_1 (V + r I)^-1)`` (the matrix form of the
  Euler-Lotka relation ``R = 1 / M(-r)``); the dominant eigenvalue of
  ``F - V`` at that beta is then exactly ``r``.
* Mean generation time from the first moment of the next-generation
  kernel: ``Tg = u' F V^-2 w / (R u' w)`` with ``u, w`` the left and right
  Perron vectors of ``K``. For one band with ``m`` latent and ``n``
  infectious Erlang stages this equals
  ``latent mean + (n + 1) / (2 n) x infectious mean``.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from prepkit.base.blas import one_blas_thread
from prepkit.simulation.layout import (
    N_SETTINGS,
    P_SUSCEPTIBILITY,
    StateLayout,
    matrix_offset,
)
from prepkit.simulation.next_generation import (
    infected_subsystem,
    next_generation_matrix,
    solve_transitions,
    spectral_abscissa,
    spectral_radius,
)

NOBODY_INFECTS = (
    "nobody can infect anybody: contacts, susceptibility or infectiousness are all zero, or "
    "too small for any transmission per contact to give the transmissibility asked for"
)
"""Message of a plan whose transmission scale would be zero or infinite."""


def transmission_is_finite(
    beta: NDArray[np.float64] | float, pc: NDArray[np.float64], layout: StateLayout
) -> NDArray[np.bool_]:
    """True where the daily transmission matrix of a transmission scale stays finite.

    The kernels form ``(beta sigma_i) (sum_s mult_s M^s_ij) / N_j`` in that order
    (:func:`prepkit.simulation.kernels.contact_matrix`) with every multiplier at most 1, so
    the products ``beta sigma_i`` and ``beta sigma_i max_j sum_s M^s_ij`` decide.

    Parameters
    ----------
    beta : float or ndarray
        Transmission scales [per contact].
    pc : ndarray
        Parameter vector (populations, susceptibility, contact matrices).
    layout : StateLayout
        State layout.

    Returns
    -------
    ndarray of bool
        One per ``beta``.
    """
    nb = layout.bands
    mo = matrix_offset(nb)
    contacts = pc[mo : mo + N_SETTINGS * nb * nb].reshape(N_SETTINGS, nb, nb).sum(axis=0)
    sigma = pc[P_SUSCEPTIBILITY * nb : (P_SUSCEPTIBILITY + 1) * nb]
    scale = np.asarray(beta, dtype=np.float64)[..., None] * sigma
    with np.errstate(over="ignore", invalid="ignore"):
        top = scale * contacts.max(axis=1)
    return np.asarray(np.isfinite(scale).all(axis=-1) & np.isfinite(top).all(axis=-1))


@dataclass(frozen=True, kw_only=True)
class Transmissibility:
    """Transmissibility figures of one run.

    Attributes
    ----------
    measure : str
        Measure the plan gives ("r0", "doubling_time" or "growth_rate").
    level : str
        Transmissibility level ("low", "central", "high").
    given_value : float
        Value of the measure at that level [dimensionless, days or 1/day].
    beta_per_contact : float
        Transmission scale found from the measure [per contact].
    r0 : float
        Basic reproduction number, fully susceptible, no interventions,
        season = 1 [dimensionless].
    growth_rate_per_day : float
        Early exponential growth rate under the same conditions [1/day].
    doubling_time_days : float or None
        ``ln 2 / r`` [days]; None when the epidemic does not grow.
    mean_generation_time_days : float
        Mean generation time, first moment of the next-generation kernel
        [days].
    r_effective_day0 : float
        Reproduction number at day 0 with prior immunity and day-0 seeding
        taken out of the susceptibles, with the day-0 season, without
        interventions [dimensionless].
    """

    measure: str
    level: str
    given_value: float
    beta_per_contact: float
    r0: float
    growth_rate_per_day: float
    doubling_time_days: float | None
    mean_generation_time_days: float
    r_effective_day0: float


@one_blas_thread
def reproduction_number(
    pc: NDArray[np.float64], layout: StateLayout, **conditions: object
) -> float:
    """Spectral radius of the next-generation matrix.

    Parameters
    ----------
    pc : ndarray
        Parameter vector.
    layout : StateLayout
        State layout.
    **conditions
        Passed to :func:`infected_subsystem` (susceptible shares,
        multipliers, season, beta).

    Returns
    -------
    float
        Reproduction number [dimensionless].

    References
    ----------
    Diekmann O., Heesterbeek J.A.P., Metz J.A.J. (1990). J. Math. Biol.
    28:365-382. van den Driessche P., Watmough J. (2002). Math. Biosci.
    180:29-48.
    """
    f_mat, v_mat, entries = infected_subsystem(pc, layout, **conditions)  # type: ignore[arg-type]
    return spectral_radius(next_generation_matrix(f_mat, v_mat, entries))


@one_blas_thread
def growth_rate(pc: NDArray[np.float64], layout: StateLayout, **conditions: object) -> float:
    """Early exponential growth rate, the dominant eigenvalue of ``F - V`` [1/day].

    References
    ----------
    Wallinga J., Lipsitch M. (2007). How generation intervals shape the
    relationship between growth rates and reproductive numbers. Proc. R.
    Soc. B 274:599-604. doi:10.1098/rspb.2006.3754
    """
    f_mat, v_mat, _ = infected_subsystem(pc, layout, **conditions)  # type: ignore[arg-type]
    return spectral_abscissa(f_mat - v_mat)


@one_blas_thread
def mean_generation_time(
    pc: NDArray[np.float64], layout: StateLayout, **conditions: object
) -> float:
    """Mean generation time from the first moment of the next-generation kernel [days].

    References
    ----------
    Wallinga J., Lipsitch M. (2007). Proc. R. Soc. B 274:599-604 (generation
    interval of a compartmental model); Diekmann O., Heesterbeek J.A.P.,
    Roberts M.G. (2010). The construction of next-generation matrices for
    compartmental epidemic models. J. R. Soc. Interface 7:873-885.
    """
    f_mat, v_mat, entries = infected_subsystem(pc, layout, **conditions)  # type: ignore[arg-type]
    unit = np.zeros((v_mat.shape[0], entries.size))
    unit[entries, np.arange(entries.size)] = 1.0
    first = solve_transitions(v_mat, unit)
    k0 = f_mat[entries, :] @ first
    k1 = f_mat[entries, :] @ solve_transitions(v_mat, first)
    values, right = np.linalg.eig(k0)
    top = int(np.argmax(values.real))
    radius = float(values[top].real)
    if radius <= 0.0:
        return float("nan")
    w = np.abs(right[:, top].real)
    values_t, left = np.linalg.eig(k0.T)
    u = np.abs(left[:, int(np.argmax(values_t.real))].real)
    return float(u @ k1 @ w / (radius * (u @ w)))


def doubling_time(rate: float) -> float | None:
    """Doubling time ``ln 2 / r`` [days], None when ``r <= 0``."""
    if rate <= 0.0:
        return None
    return float(np.log(2.0) / rate)
