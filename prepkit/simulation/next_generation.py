"""The linearised infected subsystem and its next-generation matrix, from the model itself.

Equations in words
------------------
Near the disease-free state the infected compartments (latent ``E``,
``EV``; infectious ``A``, ``Y``, ``P``) follow a linear system
``x' = (F - V) x``: ``F`` holds the new infections (only into the first
latent stage, unprotected ``E_1`` and protected ``EV_1``), ``V`` every
other transition (stage progressions, the split at the end of latency and
leaving the infected subsystem by recovery or admission). Both are built
here from the same parameter vector the kernels use, so the numbers below
belong to the model that is simulated.

* Next-generation matrix ``K = F V^-1`` (restricted to the entry states);
  its spectral radius is the reproduction number.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray
from scipy.linalg import solve_triangular

from prepkit.simulation.layout import (
    BLK_A,
    BLK_E,
    BLK_EV,
    BLK_P,
    BLK_Y,
    INFECTED_BLOCKS,
    N_SETTINGS,
    P_ADMIT,
    P_ADMIT_PROTECTED,
    P_POP,
    P_SUSCEPTIBILITY,
    P_SYMPTOMATIC,
    P_WAIT_RATE,
    S_BETA,
    S_INFECTIOUS_RATE,
    S_LATENT_RATE,
    S_RHO,
    S_VE_INFECTION,
    StateLayout,
    matrix_offset,
    scalar_offset,
)


@dataclass(frozen=True)
class _Positions:
    """Where each stage of each band sits in the infected subsystem."""

    offsets: dict[int, int]
    bands: int

    @property
    def size(self) -> int:
        return self.offsets[-1]

    def at(self, block: int, stage: int, band: int) -> int:
        return self.offsets[block] + stage * self.bands + band


def _subsystem_offsets(layout: StateLayout) -> dict[int, int]:
    """Offset of each infected block in the subsystem; ``-1`` holds its size."""
    out: dict[int, int] = {}
    pos = 0
    for block in INFECTED_BLOCKS:
        out[block] = pos
        pos += layout.stages(block) * layout.bands
    out[-1] = pos
    return out


def infected_subsystem(
    pc: NDArray[np.float64],
    layout: StateLayout,
    *,
    beta: float | None = None,
    unprotected_share: NDArray[np.float64] | None = None,
    protected_share: NDArray[np.float64] | None = None,
    contact_multipliers: NDArray[np.float64] | None = None,
    symptomatic_multiplier: float = 1.0,
    waiting_multiplier: NDArray[np.float64] | None = None,
    season: float = 1.0,
) -> tuple[NDArray[np.float64], NDArray[np.float64], NDArray[np.int64]]:
    """Transmission and transition matrices of the linearised infected subsystem.

    Parameters
    ----------
    pc : ndarray
        Parameter vector of the compiled model.
    layout : StateLayout
        State layout.
    beta : float, optional
        Transmission scale [per contact]; default the one in ``pc``.
    unprotected_share : ndarray, optional
        Per band, share of the population susceptible and unprotected
        (``(S + V0) / N``) [fraction]; default 1.
    protected_share : ndarray, optional
        Per band, share protected by vaccine (``V / N``) [fraction]; default 0.
    contact_multipliers : ndarray, optional
        Multiplier of each setting's contacts [fraction]; default 1.
    symptomatic_multiplier : float
        Isolation multiplier of symptomatic people at home [fraction].
    waiting_multiplier : ndarray, optional
        Per band isolation multiplier of people waiting for admission.
    season : float
        Seasonal multiplier [dimensionless].

    Returns
    -------
    F : ndarray
        New-infection matrix [1/day].
    V : ndarray
        Transition matrix [1/day].
    entries : ndarray of int
        Rows of ``F`` that can be non-zero (first latent stages).

    References
    ----------
    van den Driessche P., Watmough J. (2002). Reproduction numbers and
    sub-threshold endemic equilibria for compartmental models of disease
    transmission. Mathematical Biosciences 180:29-48.
    doi:10.1016/S0025-5564(02)00108-6
    """
    nb = layout.bands
    sc = scalar_offset(nb)
    b = pc[sc + S_BETA] if beta is None else beta
    s_share = np.ones(nb) if unprotected_share is None else np.asarray(unprotected_share)
    v_share = np.zeros(nb) if protected_share is None else np.asarray(protected_share)
    mult = np.ones(N_SETTINGS) if contact_multipliers is None else contact_multipliers
    iso_p = np.ones(nb) if waiting_multiplier is None else waiting_multiplier
    pos = _Positions(_subsystem_offsets(layout), nb)
    f_mat = _new_infections(
        pc, layout, pos, b, s_share, v_share, mult, symptomatic_multiplier, iso_p, season
    )
    v_mat = _transitions(pc, layout, pos)
    entries = np.array(
        [pos.at(BLK_E, 0, i) for i in range(nb)] + [pos.at(BLK_EV, 0, i) for i in range(nb)],
        dtype=np.int64,
    )
    return f_mat, v_mat, entries


def _new_infections(
    pc: NDArray[np.float64],
    layout: StateLayout,
    pos: _Positions,
    b: float,
    s_share: NDArray[np.float64],
    v_share: NDArray[np.float64],
    mult: NDArray[np.float64],
    symptomatic_multiplier: float,
    iso_p: NDArray[np.float64],
    season: float,
) -> NDArray[np.float64]:
    """The new-infection matrix ``F`` of :func:`infected_subsystem` [1/day]."""
    nb = layout.bands
    sc = scalar_offset(nb)
    pop = pc[P_POP * nb : (P_POP + 1) * nb]
    sigma = pc[P_SUSCEPTIBILITY * nb : (P_SUSCEPTIBILITY + 1) * nb]
    rho = pc[sc + S_RHO]
    ve = pc[sc + S_VE_INFECTION]
    mo = matrix_offset(nb)
    base = pc[mo : mo + N_SETTINGS * nb * nb].reshape(N_SETTINGS, nb, nb)
    contacts = np.tensordot(mult, base, axes=1)
    n, k = layout.infectious_stages, layout.wait_stages
    at = pos.at

    f_mat = np.zeros((pos.size, pos.size))
    per_contact = b * season * (sigma * pop)[:, None] * contacts / pop[None, :]
    for i in range(nb):
        for row_share, block in ((s_share[i], BLK_E), ((1.0 - ve) * v_share[i], BLK_EV)):
            if row_share == 0.0:
                continue
            row = at(block, 0, i)
            for j in range(nb):
                coef = row_share * per_contact[i, j]
                for s in range(n):
                    f_mat[row, at(BLK_A, s, j)] += coef * rho
                    f_mat[row, at(BLK_Y, s, j)] += coef * symptomatic_multiplier
                for s in range(k):
                    f_mat[row, at(BLK_P, s, j)] += coef * iso_p[j]
    return f_mat


def _transitions(
    pc: NDArray[np.float64], layout: StateLayout, pos: _Positions
) -> NDArray[np.float64]:
    """The transition matrix ``V`` of :func:`infected_subsystem` [1/day]."""
    nb = layout.bands
    sc = scalar_offset(nb)
    p_sym = pc[P_SYMPTOMATIC * nb : (P_SYMPTOMATIC + 1) * nb]
    h = pc[P_ADMIT * nb : (P_ADMIT + 1) * nb]
    hv = pc[P_ADMIT_PROTECTED * nb : (P_ADMIT_PROTECTED + 1) * nb]
    wait_rate = pc[P_WAIT_RATE * nb : (P_WAIT_RATE + 1) * nb]
    lat = pc[sc + S_LATENT_RATE]
    inf = pc[sc + S_INFECTIOUS_RATE]
    m, n, k = layout.latent_stages, layout.infectious_stages, layout.wait_stages
    at = pos.at
    v_mat = np.zeros((pos.size, pos.size))

    def chain(block: int, stages: int, rate: float, band: int) -> int:
        for s in range(stages):
            here = at(block, s, band)
            v_mat[here, here] += rate
            if s + 1 < stages:
                v_mat[at(block, s + 1, band), here] -= rate
        return at(block, stages - 1, band)

    for i in range(nb):
        for block, adm in ((BLK_E, h[i]), (BLK_EV, hv[i])):
            last = chain(block, m, lat, i)
            v_mat[at(BLK_A, 0, i), last] -= (1.0 - p_sym[i]) * lat
            v_mat[at(BLK_Y, 0, i), last] -= (p_sym[i] - adm) * lat
            v_mat[at(BLK_P, 0, i), last] -= adm * lat
        chain(BLK_A, n, inf, i)
        chain(BLK_Y, n, inf, i)
        chain(BLK_P, k, float(wait_rate[i]), i)
    return v_mat


def solve_transitions(v_mat: NDArray[np.float64], rhs: NDArray[np.float64]) -> NDArray[np.float64]:
    """Solve ``V x = rhs``; ``V`` is lower triangular in the subsystem's stage order."""
    if not np.any(np.triu(v_mat, 1)):
        return np.asarray(solve_triangular(v_mat, rhs, lower=True), dtype=np.float64)
    return np.asarray(np.linalg.solve(v_mat, rhs), dtype=np.float64)


def next_generation_matrix(
    f_mat: NDArray[np.float64], v_mat: NDArray[np.float64], entries: NDArray[np.int64]
) -> NDArray[np.float64]:
    """Next-generation matrix on the entry states, ``(F V^-1)[entries, entries]``.

    Parameters
    ----------
    f_mat, v_mat : ndarray
        Matrices from :func:`infected_subsystem` [1/day].
    entries : ndarray of int
        Entry states.

    Returns
    -------
    ndarray
        ``K[a, b]`` expected new infections entering state ``a`` caused by
        one infected person entering state ``b`` [dimensionless].

    References
    ----------
    Diekmann O., Heesterbeek J.A.P., Metz J.A.J. (1990). On the definition
    and the computation of the basic reproduction ratio R0 in models for
    infectious diseases in heterogeneous populations. J. Math. Biol.
    28:365-382. doi:10.1007/BF00178324
    """
    unit = np.zeros((v_mat.shape[0], entries.size))
    unit[entries, np.arange(entries.size)] = 1.0
    return np.asarray(f_mat[entries, :] @ solve_transitions(v_mat, unit), dtype=np.float64)


def spectral_radius(matrix: NDArray[np.float64]) -> float:
    """Largest absolute eigenvalue."""
    if matrix.size == 0:
        return 0.0
    return float(np.max(np.abs(np.linalg.eigvals(matrix))))


def spectral_abscissa(matrix: NDArray[np.float64]) -> float:
    """Largest real part of the eigenvalues."""
    return float(np.max(np.linalg.eigvals(matrix).real))
