"""The right-hand side of the model: every flow between compartments, compiled.

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


The function works on flat ``float64`` arrays laid out as described in
:mod:`prepkit.simulation.layout`, so an ensemble can call it once per draw.
"""

from __future__ import annotations

import numpy as np
from numba import njit
from numpy.typing import NDArray

from prepkit.simulation.layout import (
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
    LAY_BANDS,
    LAY_ICU,
    LAY_INFECTIOUS,
    LAY_LATENT,
    LAY_OFFSET,
    LAY_WAIT,
    LAY_WARD,
    N_BAND_FIELDS,
    P_ADMIT,
    P_ADMIT_PROTECTED,
    P_ICU,
    P_ICU_FATALITY,
    P_ICU_RATE,
    P_SYMPTOMATIC,
    P_WAIT_RATE,
    P_WARD_FATALITY,
    P_WARD_RATE,
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
)
from prepkit.simulation.layout import (
    UINT as _U,
)
from prepkit.simulation.seasonality import season_factor

KERNEL_SOURCES = "f47b452be61925d7"
"""Digest of the sources compiled together (see :data:`prepkit.simulation.kernels.COMPILED`);
tests/simulation/test_kernel_sources.py gives the value after an edit."""

# error_model='numpy': a division by zero would give inf or nan instead of raising, which lets
# the compiler vectorise the band loop holding ``imports * S_i / N`` (N, the total population,
# is positive); every number is the same.
@njit(cache=True, error_model='numpy')
def rhs(
    t: float,
    y: NDArray[np.float64],
    pc: NDArray[np.float64],
    pd: NDArray[np.float64],
    lay: NDArray[np.int64],
    dy: NDArray[np.float64],
    scratch: NDArray[np.float64],
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
        Output [per day]; every entry is written.
    scratch : ndarray
        Scratch space of at least ``5 B`` numbers (``B`` bands); overwritten.
        When it holds more, the largest per-capita force of infection
        [1/day] is written at index ``5 B``.
    """
    # Indices are unsigned: numba then skips the negative-index wrap-around test on every
    # array access, which takes about a quarter off the time of this function; every number
    # is computed exactly as before (the same operations in the same order).
    nb = _U(lay[LAY_BANDS])
    m = _U(lay[LAY_LATENT])
    n = _U(lay[LAY_INFECTIOUS])
    k = _U(lay[LAY_WAIT])
    nw = _U(lay[LAY_WARD])
    nc = _U(lay[LAY_ICU])
    o_s = _U(lay[LAY_OFFSET + BLK_S])
    o_v0 = _U(lay[LAY_OFFSET + BLK_V0])
    o_v = _U(lay[LAY_OFFSET + BLK_V])
    o_e = _U(lay[LAY_OFFSET + BLK_E])
    o_ev = _U(lay[LAY_OFFSET + BLK_EV])
    o_a = _U(lay[LAY_OFFSET + BLK_A])
    o_y = _U(lay[LAY_OFFSET + BLK_Y])
    o_p = _U(lay[LAY_OFFSET + BLK_P])
    o_w = _U(lay[LAY_OFFSET + BLK_W])
    o_c = _U(lay[LAY_OFFSET + BLK_C])
    o_r = _U(lay[LAY_OFFSET + BLK_R])
    o_d = _U(lay[LAY_OFFSET + BLK_D])
    o_inf = _U(lay[LAY_OFFSET + BLK_CUM_INF])
    o_onset = _U(lay[LAY_OFFSET + BLK_CUM_ONSET])
    o_adm = _U(lay[LAY_OFFSET + BLK_CUM_ADM])
    o_icu = _U(lay[LAY_OFFSET + BLK_CUM_ICU])
    o_dose = _U(lay[LAY_OFFSET + BLK_CUM_DOSE])
    o_ward_days = _U(lay[LAY_OFFSET + BLK_WARD_DAYS])
    o_icu_days = _U(lay[LAY_OFFSET + BLK_ICU_DAYS])
    one = _U(1)

    sc = _U(N_BAND_FIELDS) * nb
    lat = pc[sc + _U(S_LATENT_RATE)]
    inf = pc[sc + _U(S_INFECTIOUS_RATE)]
    rho = pc[sc + _U(S_RHO)]
    ve = pc[sc + _U(S_VE_INFECTION)]
    protect = pc[sc + _U(S_PROTECT_RATE)]
    to_wait = pc[sc + _U(S_DOSE_TO_WAITING)]
    imports = pc[sc + _U(S_IMPORTS)]
    total = pc[sc + _U(S_TOTAL_POP)]
    season = season_factor(
        t, pc[sc + _U(S_SEASON_AMPLITUDE)], pc[sc + _U(S_SEASON_PEAK_DAY)]
    )
    f_sym = _U(P_SYMPTOMATIC) * nb
    f_admit = _U(P_ADMIT) * nb
    f_admit_v = _U(P_ADMIT_PROTECTED) * nb
    f_wait = _U(P_WAIT_RATE) * nb
    f_icu = _U(P_ICU) * nb
    f_ward_rate = _U(P_WARD_RATE) * nb
    f_icu_rate = _U(P_ICU_RATE) * nb
    f_ward_fat = _U(P_WARD_FATALITY) * nb
    f_icu_fat = _U(P_ICU_FATALITY) * nb

    o_isop = nb * nb
    o_kappa = nb * nb + nb
    iso_y = pd[nb * nb + _U(2) * nb]

    # The work runs stage by stage with the band innermost: a stage's bands sit side by side
    # in y and dy and do not depend on one another, so these short loops run over contiguous
    # memory and the compiler vectorises them. Each number is computed with the same
    # operations in the same order as band by band. A chain's stage s gains what leaves
    # stage s - 1 (the chain's inflow for s = 0) and loses what leaves it, ``rate * y``; that
    # product is formed where it is needed rather than carried. Every entry of dy is
    # written, so dy needs no zeroing. Scratch rows (indexed directly: views would cost a
    # reference count update each): the pressure X, the force sum, and the stage sums of A,
    # Y and P. Every chain has at least one stage (checked by validate_plan).
    x_pressure = _U(0) * nb
    x_force = _U(1) * nb
    x_a = _U(2) * nb
    x_y = _U(3) * nb
    x_p = _U(4) * nb
    last_e = o_e + (m - one) * nb
    last_ev = o_ev + (m - one) * nb
    last_a = o_a + (n - one) * nb
    last_y = o_y + (n - one) * nb
    last_p = o_p + (k - one) * nb
    last_w = o_w + (nw - one) * nb
    last_c = o_c + (nc - one) * nb

    # infectious pressure X_j of each band (sums over stages, first the A and Y chains, then P)
    for j in range(nb):
        scratch[x_a + j] = 0.0
        scratch[x_y + j] = 0.0
        scratch[x_p + j] = 0.0
    for s in range(n):
        for j in range(nb):
            scratch[x_a + j] += y[o_a + s * nb + j]
        for j in range(nb):
            scratch[x_y + j] += y[o_y + s * nb + j]
    for s in range(k):
        for j in range(nb):
            scratch[x_p + j] += y[o_p + s * nb + j]
    for j in range(nb):
        scratch[x_pressure + j] = (
            iso_y * scratch[x_y + j] + pd[o_isop + j] * scratch[x_p + j] + rho * scratch[x_a + j]
        )
        scratch[x_force + j] = 0.0
    # lambda_i = season * sum_j K_ij X_j, summed over j in order for every band i; four
    # columns per pass over the bands (the running sums stay in registers between them)
    col = _U(0)
    while col + _U(4) <= nb:
        x0 = scratch[x_pressure + col]
        x1 = scratch[x_pressure + col + one]
        x2 = scratch[x_pressure + col + _U(2)]
        x3 = scratch[x_pressure + col + _U(3)]
        c0 = col * nb
        c1 = c0 + nb
        c2 = c1 + nb
        c3 = c2 + nb
        for i in range(nb):
            scratch[x_force + i] = (
                ((scratch[x_force + i] + pd[c0 + i] * x0) + pd[c1 + i] * x1) + pd[c2 + i] * x2
            ) + pd[c3 + i] * x3
        col += _U(4)
    while col < nb:
        x = scratch[x_pressure + col]
        for i in range(nb):
            scratch[x_force + i] += pd[col * nb + i] * x
        col += one
    # the largest per-capita force of infection of this evaluation [1/day], for the step
    # rule (advance_day), in the slot after the five scratch rows when the caller gave one;
    # ``f * 0.0`` is 0 unless f is inf or nan, which then reaches the slot
    if scratch.size > _U(5) * nb:
        top = 0.0
        guard = 0.0
        for i in range(nb):
            f = abs(scratch[x_force + i])
            top = max(top, f)
            guard += f * 0.0
        scratch[_U(5) * nb] = top * season + guard

    # infection, importation, dosing; first stage of the latent chains
    for i in range(nb):
        lam = scratch[x_force + i] * season
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
        dy[o_e + i] = (new_unprotected + imported) - lat * y[o_e + i]
        dy[o_ev + i] = new_protected - lat * y[o_ev + i]
        dy[o_inf + i] = new_unprotected + new_protected + imported
        dy[o_dose + i] = dosed
    for s in range(one, m):
        for i in range(nb):
            dy[o_e + s * nb + i] = lat * y[o_e + (s - one) * nb + i] - lat * y[o_e + s * nb + i]
        for i in range(nb):
            dy[o_ev + s * nb + i] = (
                lat * y[o_ev + (s - one) * nb + i] - lat * y[o_ev + s * nb + i]
            )

    # symptom onset (end of the latent chains); first stage of A, Y and P
    for i in range(nb):
        out_e = lat * y[last_e + i]
        out_ev = lat * y[last_ev + i]
        p_sym = pc[f_sym + i]
        h = pc[f_admit + i]
        hv = pc[f_admit_v + i]
        dy[o_a + i] = (1.0 - p_sym) * (out_e + out_ev) - inf * y[o_a + i]
        dy[o_y + i] = ((p_sym - h) * out_e + (p_sym - hv) * out_ev) - inf * y[o_y + i]
        dy[o_p + i] = (h * out_e + hv * out_ev) - pc[f_wait + i] * y[o_p + i]
        dy[o_onset + i] = p_sym * (out_e + out_ev)
    for s in range(one, n):
        for i in range(nb):
            dy[o_a + s * nb + i] = inf * y[o_a + (s - one) * nb + i] - inf * y[o_a + s * nb + i]
        for i in range(nb):
            dy[o_y + s * nb + i] = inf * y[o_y + (s - one) * nb + i] - inf * y[o_y + s * nb + i]
    for s in range(one, k):
        for i in range(nb):
            dy[o_p + s * nb + i] = (
                pc[f_wait + i] * y[o_p + (s - one) * nb + i] - pc[f_wait + i] * y[o_p + s * nb + i]
            )

    # admission (end of P); first stage of the ward and ICU chains
    for i in range(nb):
        admitted = pc[f_wait + i] * y[last_p + i]
        u = pc[f_icu + i]
        dy[o_c + i] = u * admitted - pc[f_icu_rate + i] * y[o_c + i]
        dy[o_w + i] = (1.0 - u) * admitted - pc[f_ward_rate + i] * y[o_w + i]
        dy[o_adm + i] = admitted
        dy[o_icu + i] = u * admitted
        dy[o_ward_days + i] = 0.0
        dy[o_icu_days + i] = 0.0
    # hospital stays (bed-days: occupancy summed over stages)
    for s in range(one, nw):
        for i in range(nb):
            dy[o_w + s * nb + i] = (
                pc[f_ward_rate + i] * y[o_w + (s - one) * nb + i]
                - pc[f_ward_rate + i] * y[o_w + s * nb + i]
            )
    for s in range(one, nc):
        for i in range(nb):
            dy[o_c + s * nb + i] = (
                pc[f_icu_rate + i] * y[o_c + (s - one) * nb + i]
                - pc[f_icu_rate + i] * y[o_c + s * nb + i]
            )
    for s in range(nw):
        for i in range(nb):
            dy[o_ward_days + i] += y[o_w + s * nb + i]
    for s in range(nc):
        for i in range(nb):
            dy[o_icu_days + i] += y[o_c + s * nb + i]

    # recovery, discharge and death (ends of A, Y, W and C)
    for i in range(nb):
        recovered = inf * y[last_a + i] + inf * y[last_y + i]
        ward_out = pc[f_ward_rate + i] * y[last_w + i]
        icu_out = pc[f_icu_rate + i] * y[last_c + i]
        ward_death = pc[f_ward_fat + i] * ward_out
        icu_death = pc[f_icu_fat + i] * icu_out
        dy[o_r + i] = recovered + (ward_out - ward_death) + (icu_out - icu_death)
        dy[o_d + i] = ward_death + icu_death


