"""Compiled kernels: the right-hand side, the RK4 day stepper and the daily decisions.

Equations in words
------------------
For every age band ``i`` (population ``N_i`` fixed at its day-0 value):

* Force of infection ``lambda_i(t) = season(t) * sum_j K_ij X_j`` where the
  daily matrix ``K_ij = beta * sigma_i * sum_s mult_s M^s_ij / N_j`` is set
  at each day boundary (``M^s`` baseline contacts in setting ``s``,
  ``mult_s`` the product of the active contact measures' multipliers,
  ``sigma_i`` relative susceptibility) and ``X_j`` is the infectious
  pressure of band ``j``: symptomatic people at home (``Y``) and waiting
  for admission (``P``), each times its isolation multiplier, plus ``rho``
  times asymptomatic people (``A``). Infectiousness starts at symptom onset:
  there is no presymptomatic transmission. People in hospital do not
  transmit. ``season(t) = 1 + a cos(2 pi (t - t_peak) / 365.25)``.
* Susceptibles ``S`` and dosed-but-unprotected ``V0`` are infected at
  ``lambda``; protected people ``V`` at ``(1 - VE_inf) lambda``.
  Importations add ``imports * S_i / N`` infections per day (spread by
  population, drawn from susceptibles). Dosing moves ``kappa_i S_i`` per day
  from ``S`` to ``V0`` (``kappa_i`` set once a day), and ``V0`` becomes
  ``V`` at rate ``1 / days_to_protection``.
* Every delay is a chain of exponential stages (Erlang distribution): with
  ``q`` stages and mean ``T`` each stage is left at rate ``q / T``.
  Latent ``E`` (unprotected) and ``EV`` (protected) chains end in a split:
  asymptomatic ``A`` (share ``1 - p``), symptomatic at home ``Y``
  (``p - h``) and symptomatic waiting for admission ``P`` (``h``; for
  protected infections ``h_v = h (1 - VE_sev) / (1 - VE_inf)``).
  ``A`` and ``Y`` recover to ``R``. The end of ``P`` is admission: a share
  ``u`` goes to ICU ``C``, the rest to ward ``W``. The end of ``W`` (``C``)
  is death ``D`` with the ward (ICU) fatality share, otherwise discharge to
  ``R``.
* Counters integrate infections, symptom onsets (entries to ``Y`` and
  ``P``), admissions, ICU admissions, doses and occupied bed-days.

All functions work on flat ``float64`` arrays laid out as described in
:mod:`prepkit.model.layout`, so an ensemble can call them once per draw.
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit
from numpy.typing import NDArray

from prepkit.model.layout import (
    BLK_A,
    BLK_C,
    BLK_CUM_ADM,
    BLK_CUM_DOSE,
    BLK_CUM_ICU,
    BLK_CUM_INF,
    BLK_CUM_ONSET,
    BLK_D,
    BLK_E,
    BLK_EV,
    BLK_ICU_DAYS,
    BLK_P,
    BLK_R,
    BLK_S,
    BLK_V,
    BLK_V0,
    BLK_W,
    BLK_WARD_DAYS,
    BLK_Y,
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
    LAY_INFECTIOUS,
    LAY_LATENT,
    LAY_OFFSET,
    LAY_WAIT,
    LAY_WARD,
    N_BAND_FIELDS,
    N_SCALARS,
    N_SETTINGS,
    P_ADMIT,
    P_ADMIT_PROTECTED,
    P_ICU,
    P_ICU_FATALITY,
    P_ICU_RATE,
    P_POP,
    P_SUSCEPTIBILITY,
    P_SYMPTOMATIC,
    P_WAIT_RATE,
    P_WARD_FATALITY,
    P_WARD_RATE,
    S_BETA,
    S_DOSE_TO_WAITING,
    S_IMPORTS,
    S_INFECTIOUS_RATE,
    S_LATENT_RATE,
    S_PROTECT_RATE,
    S_RHO,
    S_SEASON_AMPLITUDE,
    S_SEASON_PEAK_DAY,
    S_TOTAL_POP,
    S_VE_INFECTION,
    START_ADMISSIONS,
    START_DATE,
    START_ICU,
    START_WARD,
    STATUS_ACTIVE,
    STATUS_FINISHED,
    STATUS_WAITING,
)

YEAR_DAYS = 365.25
"""Length of the seasonal cycle [days] (mean Julian year)."""

TWO_PI = 2.0 * math.pi


@njit(cache=True)
def season_factor(t: float, amplitude: float, peak_day: float) -> float:
    """Seasonal multiplier of transmission ``1 + a cos(2 pi (t - t_peak) / 365.25)``."""
    return 1.0 + amplitude * math.cos(TWO_PI * (t - peak_day) / YEAR_DAYS)


@njit(cache=True)
def rhs(
    t: float,
    y: NDArray[np.float64],
    pc: NDArray[np.float64],
    pd: NDArray[np.float64],
    lay: NDArray[np.int64],
    dy: NDArray[np.float64],
) -> None:
    """Write the time derivative of the state ``y`` at time ``t`` into ``dy``.

    Parameters
    ----------
    t : float
        Model time [days since day 0].
    y : ndarray
        State vector [persons; counters in persons, doses or bed-days].
    pc : ndarray
        Parameter vector (constant over a run).
    pd : ndarray
        Daily vector (constant within a day).
    lay : ndarray of int64
        Layout array.
    dy : ndarray
        Output [per day].
    """
    nb = lay[LAY_BANDS]
    m = lay[LAY_LATENT]
    n = lay[LAY_INFECTIOUS]
    k = lay[LAY_WAIT]
    nw = lay[LAY_WARD]
    nc = lay[LAY_ICU]
    o_s = lay[LAY_OFFSET + BLK_S]
    o_v0 = lay[LAY_OFFSET + BLK_V0]
    o_v = lay[LAY_OFFSET + BLK_V]
    o_e = lay[LAY_OFFSET + BLK_E]
    o_ev = lay[LAY_OFFSET + BLK_EV]
    o_a = lay[LAY_OFFSET + BLK_A]
    o_y = lay[LAY_OFFSET + BLK_Y]
    o_p = lay[LAY_OFFSET + BLK_P]
    o_w = lay[LAY_OFFSET + BLK_W]
    o_c = lay[LAY_OFFSET + BLK_C]
    o_r = lay[LAY_OFFSET + BLK_R]
    o_d = lay[LAY_OFFSET + BLK_D]

    sc = N_BAND_FIELDS * nb
    lat = pc[sc + S_LATENT_RATE]
    inf = pc[sc + S_INFECTIOUS_RATE]
    rho = pc[sc + S_RHO]
    ve = pc[sc + S_VE_INFECTION]
    protect = pc[sc + S_PROTECT_RATE]
    to_wait = pc[sc + S_DOSE_TO_WAITING]
    imports = pc[sc + S_IMPORTS]
    total = pc[sc + S_TOTAL_POP]
    season = season_factor(t, pc[sc + S_SEASON_AMPLITUDE], pc[sc + S_SEASON_PEAK_DAY])

    o_isop = nb * nb
    o_kappa = nb * nb + nb
    iso_y = pd[nb * nb + 2 * nb]

    for q in range(dy.size):
        dy[q] = 0.0

    pressure = np.empty(nb)
    for j in range(nb):
        a_sum = 0.0
        y_sum = 0.0
        for s in range(n):
            a_sum += y[o_a + s * nb + j]
            y_sum += y[o_y + s * nb + j]
        p_sum = 0.0
        for s in range(k):
            p_sum += y[o_p + s * nb + j]
        pressure[j] = iso_y * y_sum + pd[o_isop + j] * p_sum + rho * a_sum

    for i in range(nb):
        lam = 0.0
        for j in range(nb):
            lam += pd[i * nb + j] * pressure[j]
        lam *= season

        sus = y[o_s + i]
        waiting = y[o_v0 + i]
        protected = y[o_v + i]
        new_unprotected = lam * (sus + waiting)
        new_protected = (1.0 - ve) * lam * protected
        imported = imports * sus / total
        dosed = pd[o_kappa + i] * sus
        protecting = protect * waiting

        dy[o_s + i] = -lam * sus - imported - dosed
        dy[o_v0 + i] = to_wait * dosed - lam * waiting - protecting
        dy[o_v + i] = (1.0 - to_wait) * dosed + protecting - new_protected

        # latent chains
        dy[o_e + i] += new_unprotected + imported
        dy[o_ev + i] += new_protected
        out_e = 0.0
        out_ev = 0.0
        for s in range(m):
            fe = lat * y[o_e + s * nb + i]
            fv = lat * y[o_ev + s * nb + i]
            dy[o_e + s * nb + i] -= fe
            dy[o_ev + s * nb + i] -= fv
            if s + 1 < m:
                dy[o_e + (s + 1) * nb + i] += fe
                dy[o_ev + (s + 1) * nb + i] += fv
            else:
                out_e = fe
                out_ev = fv

        p_sym = pc[P_SYMPTOMATIC * nb + i]
        h = pc[P_ADMIT * nb + i]
        hv = pc[P_ADMIT_PROTECTED * nb + i]
        dy[o_a + i] += (1.0 - p_sym) * (out_e + out_ev)
        dy[o_y + i] += (p_sym - h) * out_e + (p_sym - hv) * out_ev
        dy[o_p + i] += h * out_e + hv * out_ev

        # infectious chains
        recovered = 0.0
        for s in range(n):
            fa = inf * y[o_a + s * nb + i]
            fy = inf * y[o_y + s * nb + i]
            dy[o_a + s * nb + i] -= fa
            dy[o_y + s * nb + i] -= fy
            if s + 1 < n:
                dy[o_a + (s + 1) * nb + i] += fa
                dy[o_y + (s + 1) * nb + i] += fy
            else:
                recovered += fa + fy

        # waiting for admission
        wait_rate = pc[P_WAIT_RATE * nb + i]
        admitted = 0.0
        for s in range(k):
            fp = wait_rate * y[o_p + s * nb + i]
            dy[o_p + s * nb + i] -= fp
            if s + 1 < k:
                dy[o_p + (s + 1) * nb + i] += fp
            else:
                admitted = fp
        u = pc[P_ICU * nb + i]
        dy[o_c + i] += u * admitted
        dy[o_w + i] += (1.0 - u) * admitted

        # hospital stays
        ward_rate = pc[P_WARD_RATE * nb + i]
        ward_out = 0.0
        ward_total = 0.0
        for s in range(nw):
            occ = y[o_w + s * nb + i]
            ward_total += occ
            fw = ward_rate * occ
            dy[o_w + s * nb + i] -= fw
            if s + 1 < nw:
                dy[o_w + (s + 1) * nb + i] += fw
            else:
                ward_out = fw
        icu_rate = pc[P_ICU_RATE * nb + i]
        icu_out = 0.0
        icu_total = 0.0
        for s in range(nc):
            occ = y[o_c + s * nb + i]
            icu_total += occ
            fc = icu_rate * occ
            dy[o_c + s * nb + i] -= fc
            if s + 1 < nc:
                dy[o_c + (s + 1) * nb + i] += fc
            else:
                icu_out = fc
        ward_death = pc[P_WARD_FATALITY * nb + i] * ward_out
        icu_death = pc[P_ICU_FATALITY * nb + i] * icu_out
        dy[o_r + i] += recovered + (ward_out - ward_death) + (icu_out - icu_death)
        dy[o_d + i] += ward_death + icu_death

        # counters
        dy[lay[LAY_OFFSET + BLK_CUM_INF] + i] = new_unprotected + new_protected + imported
        dy[lay[LAY_OFFSET + BLK_CUM_ONSET] + i] = p_sym * (out_e + out_ev)
        dy[lay[LAY_OFFSET + BLK_CUM_ADM] + i] = admitted
        dy[lay[LAY_OFFSET + BLK_CUM_ICU] + i] = u * admitted
        dy[lay[LAY_OFFSET + BLK_CUM_DOSE] + i] = dosed
        dy[lay[LAY_OFFSET + BLK_WARD_DAYS] + i] = ward_total
        dy[lay[LAY_OFFSET + BLK_ICU_DAYS] + i] = icu_total


@njit(cache=True)
def rk4_day(
    y: NDArray[np.float64],
    t0: float,
    pc: NDArray[np.float64],
    pd: NDArray[np.float64],
    lay: NDArray[np.int64],
    substeps: int,
    work: NDArray[np.float64],
) -> None:
    """Advance ``y`` in place from day ``t0`` to ``t0 + 1`` with classical RK4.

    Parameters
    ----------
    y : ndarray
        State at ``t0``; overwritten with the state at ``t0 + 1``.
    t0 : float
        Start of the day [days].
    pc, pd, lay : ndarray
        Parameter, daily and layout arrays.
    substeps : int
        Equal RK4 steps per day.
    work : ndarray
        Scratch space of shape (5, y.size).

    References
    ----------
    Kutta W. (1901). Beitrag zur naeherungsweisen Integration totaler
    Differentialgleichungen. Z. Math. Phys. 46:435-453.
    """
    size = y.size
    h = 1.0 / substeps
    k1 = work[0]
    k2 = work[1]
    k3 = work[2]
    k4 = work[3]
    tmp = work[4]
    for step in range(substeps):
        t = t0 + step * h
        rhs(t, y, pc, pd, lay, k1)
        for q in range(size):
            tmp[q] = y[q] + 0.5 * h * k1[q]
        rhs(t + 0.5 * h, tmp, pc, pd, lay, k2)
        for q in range(size):
            tmp[q] = y[q] + 0.5 * h * k2[q]
        rhs(t + 0.5 * h, tmp, pc, pd, lay, k3)
        for q in range(size):
            tmp[q] = y[q] + h * k3[q]
        rhs(t + h, tmp, pc, pd, lay, k4)
        for q in range(size):
            y[q] += h / 6.0 * (k1[q] + 2.0 * k2[q] + 2.0 * k3[q] + k4[q])


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
    nb = lay[LAY_BANDS]
    o_w = lay[LAY_OFFSET + BLK_W]
    o_c = lay[LAY_OFFSET + BLK_C]
    o_s = lay[LAY_OFFSET + BLK_S]
    o_adm = lay[LAY_OFFSET + BLK_CUM_ADM]
    o_dose = lay[LAY_OFFSET + BLK_CUM_DOSE]
    ward = 0.0
    for q in range(lay[LAY_WARD] * nb):
        ward += y[o_w + q]
    icu = 0.0
    for q in range(lay[LAY_ICU] * nb):
        icu += y[o_c + q]
    admissions = 0.0
    for i in range(nb):
        admissions += y[o_adm + i] - y_prev[o_adm + i]
    ward_share = _demand_share(cap[CAP_CATCHMENT] * ward, cap[CAP_WARD_AVAILABLE])
    icu_share = _demand_share(cap[CAP_CATCHMENT] * icu, cap[CAP_ICU_AVAILABLE])

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

    multiplier = np.ones(N_SETTINGS)
    o_isop = nb * nb
    o_kappa = nb * nb + nb
    iso_y = 1.0
    for i in range(nb):
        pd[o_isop + i] = 1.0
        pd[o_kappa + i] = 0.0
    allocated = np.zeros(nb)
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
                room = ceiling * pc[P_POP * nb + i] - y[o_dose + i] - allocated[i]
                stock = y[o_s + i] - allocated[i]
                give = min(remaining, room, stock)
                if give > 0.0:
                    allocated[i] += give
                    remaining -= give
    pd[nb * nb + 2 * nb] = iso_y
    for i in range(nb):
        if allocated[i] > 0.0 and y[o_s + i] > 0.0:
            pd[o_kappa + i] = allocated[i] / y[o_s + i]

    beta = pc[N_BAND_FIELDS * nb + S_BETA]
    o_m = N_BAND_FIELDS * nb + N_SCALARS
    for i in range(nb):
        scale = beta * pc[P_SUSCEPTIBILITY * nb + i]
        for j in range(nb):
            total = 0.0
            for s in range(N_SETTINGS):
                total += multiplier[s] * pc[o_m + s * nb * nb + i * nb + j]
            pd[i * nb + j] = scale * total / pc[P_POP * nb + j]


@njit(cache=True)
def run_days(
    y0: NDArray[np.float64],
    pc: NDArray[np.float64],
    lay: NDArray[np.int64],
    itab: NDArray[np.float64],
    iprio: NDArray[np.int64],
    cap: NDArray[np.float64],
    horizon: int,
    substeps: int,
) -> tuple[NDArray[np.float64], NDArray[np.int8]]:
    """Simulate ``horizon`` days: decide at each boundary, then step the day.

    Parameters
    ----------
    y0 : ndarray
        State at day 0.
    pc, lay, itab, iprio, cap : ndarray
        Parameter, layout, intervention, priority and capacity arrays.
    horizon : int
        Number of days [days].
    substeps : int
        RK4 steps per day.

    Returns
    -------
    states : ndarray, shape (horizon + 1, size)
        State at each day boundary ``t = 0, 1, ..., horizon``.
    active : ndarray of int8, shape (horizon, n_interventions)
        1 where an intervention was active during day ``d``.
    """
    size = y0.size
    nb = lay[LAY_BANDS]
    n_int = itab.shape[0]
    states = np.empty((horizon + 1, size))
    active = np.zeros((horizon, n_int), dtype=np.int8)
    status = np.zeros(n_int, dtype=np.int64)
    started = np.zeros(n_int)
    pd = np.zeros(nb * nb + 2 * nb + 1)
    work = np.empty((5, size))
    y = y0.copy()
    y_prev = y0.copy()
    states[0, :] = y
    for day in range(horizon):
        decide_day(day, y, y_prev, pc, lay, itab, iprio, cap, status, started, pd)
        for r in range(n_int):
            if status[r] == STATUS_ACTIVE:
                active[day, r] = 1
        y_prev[:] = y
        rk4_day(y, float(day), pc, pd, lay, substeps, work)
        states[day + 1, :] = y
    return states, active
