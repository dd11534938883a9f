"""The once-a-day decisions: triggers, start and end of measures, doses, the daily matrix.

Equations in words
------------------
At each day boundary the trigger quantities are read from the state (ward
and ICU outbreak demand as a share of available beds, the previous day's
admissions), each intervention starts or ends, and the daily vector is built
from the active ones: the transmission matrix
``K_ij = beta * sigma_i * sum_s mult_s M^s_ij / N_j``, the isolation
multipliers and the dosing rate of each band (see :func:`decide_day`).
Compiled with numba, on the flat arrays of :mod:`prepkit.simulation.layout`.
"""

from __future__ import annotations

import numpy as np
from numba import njit
from numpy.typing import NDArray

from prepkit.simulation.layout import (
    BLK_C,
    BLK_CUM_ADM,
    BLK_CUM_DOSE,
    BLK_S,
    BLK_W,
    CAP_CATCHMENT,
    CAP_ICU_AVAILABLE,
    CAP_WARD_AVAILABLE,
    END_DATE,
    END_DURATION,
    END_RELEASE,
    IT_CEILING,
    IT_DOSES,
    IT_DURATION,
    IT_END_DAY,
    IT_END_KIND,
    IT_ISO_SYMPTOMATIC,
    IT_ISO_WAITING,
    IT_KIND,
    IT_MULTIPLIER,
    IT_RELEASE_LEVEL,
    IT_START_DAY,
    IT_START_KIND,
    IT_START_LEVEL,
    KIND_CONTACTS,
    KIND_ISOLATION,
    KIND_VACCINATION,
    LAY_BANDS,
    LAY_ICU,
    LAY_OFFSET,
    LAY_WARD,
    N_BAND_FIELDS,
    N_SCALARS,
    N_SETTINGS,
    P_POP,
    P_SUSCEPTIBILITY,
    S_BETA,
    START_ADMISSIONS,
    START_DATE,
    START_ICU,
    START_WARD,
    STATUS_ACTIVE,
    STATUS_FINISHED,
    STATUS_WAITING,
)
from prepkit.simulation.layout import (
    UINT as _U,
)

KERNEL_SOURCES = "f47b452be61925d7"
"""Digest of the sources compiled together (see :data:`prepkit.simulation.kernels.COMPILED`);
tests/simulation/test_kernel_sources.py gives the value after an edit."""

@njit(cache=True)
def _demand_share(demand: float, available: float) -> float:
    if available > 0.0:
        return demand / available
    if demand > 0.0:
        return np.inf
    return 0.0


@njit(cache=True)
def decide_day(
    day: int,
    y: NDArray[np.float64],
    y_prev: NDArray[np.float64],
    pc: NDArray[np.float64],
    lay: NDArray[np.int64],
    itab: NDArray[np.float64],
    iprio: NDArray[np.int64],
    cap: NDArray[np.float64],
    status: NDArray[np.int64],
    started: NDArray[np.float64],
    pd: NDArray[np.float64],
) -> None:
    """Take the once-a-day decisions at the start of ``day`` and fill ``pd``.

    Trigger quantities are read at the boundary, i.e. from the previous
    day: ward and ICU outbreak demand as a share of available beds
    (catchment share x census / (beds x (1 - baseline occupancy))) at the
    end of the previous day, and residents' admissions during the previous
    day (difference of the admissions counter between ``y_prev`` and
    ``y``). Each intervention is then

    * started: on its start date, or when its trigger quantity reaches the
      start level;
    * ended: on its end date, after its duration (counted from the start,
      in whole days, rounded up), or, for ``"release"``, when the trigger
      quantity falls below the release level. Released interventions wait
      for the start level again; date- and duration-ended ones never
      restart.

    Finally the daily vector is built from the active interventions:
    contact multipliers per setting (product over measures), isolation
    multipliers (product over measures) and the dosing rate of each band.
    Doses of each active campaign go band by band in priority order, each
    band up to ``ceiling x N_i`` minus doses already given, and never more
    than its current susceptibles.

    Parameters
    ----------
    day : int
        The day about to be simulated [days since day 0].
    y, y_prev : ndarray
        State at the start of ``day`` and one day earlier (equal on day 0).
    pc, lay : ndarray
        Parameter and layout arrays.
    itab : ndarray
        Intervention table, one row per intervention.
    iprio : ndarray of int64
        Priority order of bands for each intervention, padded with -1.
    cap : ndarray
        Catchment share and available ward and ICU beds.
    status : ndarray of int64
        Intervention status (waiting, active, finished); updated in place.
    started : ndarray
        Day each intervention last started [days]; updated in place.
    pd : ndarray
        Daily vector; overwritten.
    """
    multiplier = np.ones(N_SETTINGS)
    decide_measures(day, y, y_prev, pc, lay, itab, iprio, cap, status, started, pd, multiplier)
    contact_matrix(pc, lay, multiplier, pd)


@njit(cache=True)
def decide_measures(
    day: int,
    y: NDArray[np.float64],
    y_prev: NDArray[np.float64],
    pc: NDArray[np.float64],
    lay: NDArray[np.int64],
    itab: NDArray[np.float64],
    iprio: NDArray[np.int64],
    cap: NDArray[np.float64],
    status: NDArray[np.int64],
    started: NDArray[np.float64],
    pd: NDArray[np.float64],
    multiplier: NDArray[np.float64],
) -> None:
    """The decisions of :func:`decide_day` except the transmission matrix.

    Updates ``status`` and ``started``, fills the isolation multipliers and
    dosing rates of ``pd`` and writes the product of the active contact
    measures' multipliers per setting into ``multiplier``; the transmission
    matrix part of ``pd`` is left as it is (see :func:`contact_matrix`).
    """
    ward_share, icu_share, admissions = _trigger_quantities(y, y_prev, lay, cap)
    _update_status(day, itab, status, started, ward_share, icu_share, admissions)
    _apply_measures(y, pc, lay, itab, iprio, status, pd, multiplier)


@njit(cache=True)
def _trigger_quantities(
    y: NDArray[np.float64],
    y_prev: NDArray[np.float64],
    lay: NDArray[np.int64],
    cap: NDArray[np.float64],
) -> tuple[float, float, float]:
    """Ward and ICU outbreak demand as shares of available beds, and the last day's admissions."""
    nb = lay[LAY_BANDS]
    o_w = lay[LAY_OFFSET + BLK_W]
    o_c = lay[LAY_OFFSET + BLK_C]
    o_adm = lay[LAY_OFFSET + BLK_CUM_ADM]
    ward = 0.0
    for q in range(_U(lay[LAY_WARD] * nb)):
        ward += y[_U(o_w) + q]
    icu = 0.0
    for q in range(_U(lay[LAY_ICU] * nb)):
        icu += y[_U(o_c) + q]
    admissions = 0.0
    for i in range(_U(nb)):
        admissions += y[_U(o_adm) + i] - y_prev[_U(o_adm) + i]
    ward_share = _demand_share(cap[CAP_CATCHMENT] * ward, cap[CAP_WARD_AVAILABLE])
    icu_share = _demand_share(cap[CAP_CATCHMENT] * icu, cap[CAP_ICU_AVAILABLE])
    return ward_share, icu_share, admissions


@njit(cache=True)
def _update_status(
    day: int,
    itab: NDArray[np.float64],
    status: NDArray[np.int64],
    started: NDArray[np.float64],
    ward_share: float,
    icu_share: float,
    admissions: float,
) -> None:
    """Start and end each intervention from its trigger quantity (see :func:`decide_day`)."""
    n_int = itab.shape[0]
    for r in range(n_int):
        start_kind = int(itab[r, IT_START_KIND])
        quantity = 0.0
        if start_kind == START_WARD:
            quantity = ward_share
        elif start_kind == START_ICU:
            quantity = icu_share
        elif start_kind == START_ADMISSIONS:
            quantity = admissions
        state = status[r]
        if state == STATUS_WAITING:
            if start_kind == START_DATE:
                if day >= itab[r, IT_START_DAY]:
                    state = STATUS_ACTIVE
                    started[r] = itab[r, IT_START_DAY]
            elif quantity >= itab[r, IT_START_LEVEL]:
                state = STATUS_ACTIVE
                started[r] = day
        if state == STATUS_ACTIVE:
            end_kind = int(itab[r, IT_END_KIND])
            if end_kind == END_DATE:
                if day >= itab[r, IT_END_DAY]:
                    state = STATUS_FINISHED
            elif end_kind == END_DURATION:
                if day >= started[r] + itab[r, IT_DURATION]:
                    state = STATUS_FINISHED
            elif end_kind == END_RELEASE:
                if quantity < itab[r, IT_RELEASE_LEVEL]:
                    state = STATUS_WAITING
        status[r] = state


@njit(cache=True)
def _apply_measures(
    y: NDArray[np.float64],
    pc: NDArray[np.float64],
    lay: NDArray[np.int64],
    itab: NDArray[np.float64],
    iprio: NDArray[np.int64],
    status: NDArray[np.int64],
    pd: NDArray[np.float64],
    multiplier: NDArray[np.float64],
) -> None:
    """Contact multipliers, isolation multipliers and dosing rates of the active measures."""
    nb = lay[LAY_BANDS]
    o_s = lay[LAY_OFFSET + BLK_S]
    o_dose = lay[LAY_OFFSET + BLK_CUM_DOSE]
    n_int = itab.shape[0]
    for s in range(N_SETTINGS):
        multiplier[s] = 1.0
    o_isop = nb * nb
    o_kappa = nb * nb + nb
    iso_y = 1.0
    for i in range(nb):
        pd[o_isop + i] = 1.0
        pd[o_kappa + i] = 0.0
    # doses allocated to each band are summed in the dosing-rate slots of pd (zeroed above; no
    # allocation per day), then turned into rates at the end
    for r in range(n_int):
        if status[r] != STATUS_ACTIVE:
            continue
        kind = int(itab[r, IT_KIND])
        if kind == KIND_CONTACTS:
            for s in range(N_SETTINGS):
                multiplier[s] *= itab[r, IT_MULTIPLIER + s]
        elif kind == KIND_ISOLATION:
            iso_y *= itab[r, IT_ISO_SYMPTOMATIC]
            for i in range(nb):
                pd[o_isop + i] *= itab[r, IT_ISO_WAITING + i]
        elif kind == KIND_VACCINATION:
            remaining = itab[r, IT_DOSES]
            ceiling = itab[r, IT_CEILING]
            for q in range(nb):
                i = iprio[r, q]
                if i < 0 or remaining <= 0.0:
                    break
                room = ceiling * pc[P_POP * nb + i] - y[o_dose + i] - pd[o_kappa + i]
                stock = y[o_s + i] - pd[o_kappa + i]
                give = min(remaining, room, stock)
                if give > 0.0:
                    pd[o_kappa + i] += give
                    remaining -= give
    pd[nb * nb + 2 * nb] = iso_y
    for i in range(nb):
        allocated = pd[o_kappa + i]
        if allocated > 0.0 and y[o_s + i] > 0.0:
            pd[o_kappa + i] = allocated / y[o_s + i]
        else:
            pd[o_kappa + i] = 0.0


@njit(cache=True)
def contact_matrix(
    pc: NDArray[np.float64],
    lay: NDArray[np.int64],
    multiplier: NDArray[np.float64],
    pd: NDArray[np.float64],
) -> None:
    """Write ``K_ij = beta sigma_i sum_s mult_s M^s_ij / N_j`` into the first ``B * B`` of ``pd``.

    The matrix is stored column by column (``K_ij`` at ``j * B + i``):
    :func:`prepkit.simulation.flows.rhs` sums ``K_ij X_j`` over ``j`` for all bands ``i`` at
    once, reading each column contiguously.

    Parameters
    ----------
    pc, lay : ndarray
        Parameter and layout arrays.
    multiplier : ndarray, shape (4,)
        Contact multiplier per setting [fraction].
    pd : ndarray
        Daily vector; only its transmission matrix is written.
    """
    nb = lay[LAY_BANDS]
    # unsigned indices: no negative-index wrap-around test on each access (see rhs)
    ub = _U(nb)
    cells = ub * ub
    beta = pc[_U(N_BAND_FIELDS) * ub + _U(S_BETA)]
    o_m = _U(N_BAND_FIELDS) * ub + _U(N_SCALARS)
    o_sigma = _U(P_SUSCEPTIBILITY) * ub
    o_pop = _U(P_POP) * ub
    for i in range(ub):
        scale = beta * pc[o_sigma + i]
        for j in range(ub):
            total = 0.0
            for s in range(_U(N_SETTINGS)):
                total += multiplier[s] * pc[o_m + s * cells + i * ub + j]
            pd[j * ub + i] = scale * total / pc[o_pop + j]


