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

Step rule
---------
Each day is integrated with ``n`` equal classical RK4 steps, ``n`` chosen
afresh every day by :func:`advance_day` (the one rule of single runs and of
every ensemble draw): at least the run's fewest steps, and enough that
``h * q`` (``h = 1 / n`` days) stays within a limit for every rate ``q``
met during the day: the Erlang stage rates within ``limit``; the dynamics
of infection within ``force_limit``: what susceptible and dosed people lose
per capita (the force of infection plus importations per resident and the
dosing or dose-to-protection rate) and the largest growth rate infections
can reach in the run (the positive eigenvalue of the infected subsystem,
bounded by :func:`prepkit.simulation.health.growth_bound`; for it also within
the run's growth step, :func:`prepkit.simulation.health.growth_step`, which
keeps an exponential rise within the accuracy target). On day 0 the
stage rates are held to half the smaller limit and at least
:data:`DAY0_FEWEST_STEPS` steps are taken: the day-0 infections enter the
first latent stage as a pulse, the one sharp transient of a run, and what
reaches a compartment several stages on starts as a high power of time,
which few steps follow poorly (a search over the documented ranges met
1-day runs whose ICU census, a few patients three stages from the pulse,
was 2e-3 off the reference with 1 or 2 steps and 1e-4 with 4). The force of infection is
taken from every RK4 evaluation of the day; a day that met a larger one
than its steps allow is taken again from its start with more steps, up to
the most allowed (:data:`prepkit.simulation.health.MAX_RATE_PER_DAY` over the
smaller limit; a day that needs more fails with a message naming the
inputs). With both limits at most 1 each step of a linear flow keeps every
compartment non-negative (the RK4 polynomial is absolutely monotonic on
[-1, 0], see :mod:`prepkit.simulation.health`) and RK4 keeps the number of
people exactly, up to rounding; every day boundary is checked for both.

Why this rule rather than the alternatives: a bound fixed before the run
(seasonal peak x beta x the largest contact row sum, with the whole
population infectious) is 7 to 140 times the largest force of infection
the sample plans reach, and 2.7 times for a doubling time of half a day
with 5-day periods, and it would hold on every day of the horizon: that
run would take 17 times the steps (20,880 against 1,243 over 240 days),
and the ensemble twice its steps on the samples. Limiting each outflow to
the content of its compartment would change the equations, and the
answer, exactly where the rates are large. Following the rates met costs
one maximum per evaluation, and a second attempt on the few days when the
force of infection rises faster than it did the day before.

All functions work on flat ``float64`` arrays laid out as described in
:mod:`prepkit.simulation.layout`, so an ensemble can call them once per draw:
:func:`run_draws` does that for many draws in parallel (it lives here, not in
its own module, because numba's cache only notices edits to the file of the
cached function itself: a copy elsewhere could keep running stale kernels).
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit, prange
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
    IT_SCHOOL_CLOSURE,
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
    S_GROWTH_BOUND,
    S_GROWTH_STEP,
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

_U = np.uint64
"""Index type of the hot loops: numba tests signed indices for wrap-around, unsigned ones not."""

FORCE_GROWTH_MAX = 8.0
"""Largest day-on-day growth of the force of infection assumed when a day's steps are first
chosen (a doubling time of a third of a day); a faster rise only costs a second attempt."""

DAY0_FEWEST_STEPS = 8
"""Fewest RK4 steps on day 0 (see the module's step rule): twice the engine's fewest a day, on
one day of the run."""

# what run_days and run_draws report of each run (report arrays, float64)
REPORT_DRIFT = 0  # largest |people - people at day 0| / people at day 0 [fraction]
REPORT_LOWEST = 1  # smallest number of people in any compartment / people at day 0 [fraction]
REPORT_NONFINITE = 2  # day boundaries with a number that is not finite [count]
REPORT_FAILED_DAY = 3  # day that needed more than the most steps allowed, -1 when none [days]
REPORT_RATE = 4  # largest per-capita outflow rate met on that day [1/day]
REPORT_STAGES = 5  # fastest stage rate on that day [1/day]
REPORT_EXTRA = 6  # importations + dosing (or protection) per capita on that day [1/day]
REPORT_FORCE = 7  # largest force of infection at a day start over the run [1/day]
REPORT_SIZE = 8


@njit(cache=True)
def season_factor(t: float, amplitude: float, peak_day: float) -> float:
    """Seasonal multiplier of transmission ``1 + a cos(2 pi (t - t_peak) / 365.25)``."""
    return 1.0 + amplitude * math.cos(TWO_PI * (t - peak_day) / YEAR_DAYS)


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


@njit(cache=True)
def _larger(top: float, value: float) -> float:
    """``max(top, value)`` that leaves out nan."""
    return value if value > top else top


@njit(cache=True)
def rk4_day(
    y: NDArray[np.float64],
    t0: float,
    pc: NDArray[np.float64],
    pd: NDArray[np.float64],
    lay: NDArray[np.int64],
    substeps: int,
    work: NDArray[np.float64],
    k1_ready: bool = False,
) -> float:
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
        Scratch space of shape (6, y.size) or more rows.
    k1_ready : bool
        True when ``work[0]`` already holds the derivative at ``(t0, y)``
        (and ``work[5]`` the force of infection it found): the first
        evaluation is then skipped.

    Returns
    -------
    float
        Largest per-capita force of infection over every evaluation of the
        day [1/day]; evaluations that were not finite are left out.

    References
    ----------
    Kutta W. (1901). Beitrag zur naeherungsweisen Integration totaler
    Differentialgleichungen. Z. Math. Phys. 46:435-453.
    """
    size = y.size
    force_at = 5 * lay[LAY_BANDS]
    h = 1.0 / substeps
    half = 0.5 * h
    sixth = h / 6.0
    k1 = work[0]
    k2 = work[1]
    k3 = work[2]
    k4 = work[3]
    tmp = work[4]
    scratch = work[5]
    top = 0.0
    for step in range(substeps):
        t = t0 + step * h
        if step > 0 or not k1_ready:
            rhs(t, y, pc, pd, lay, k1, scratch)
        top = _larger(top, scratch[force_at])
        for q in range(size):
            tmp[q] = y[q] + half * k1[q]
        rhs(t + half, tmp, pc, pd, lay, k2, scratch)
        top = _larger(top, scratch[force_at])
        for q in range(size):
            tmp[q] = y[q] + half * k2[q]
        rhs(t + half, tmp, pc, pd, lay, k3, scratch)
        top = _larger(top, scratch[force_at])
        for q in range(size):
            tmp[q] = y[q] + h * k3[q]
        rhs(t + h, tmp, pc, pd, lay, k4, scratch)
        top = _larger(top, scratch[force_at])
        for q in range(size):
            y[q] += sixth * (k1[q] + 2.0 * k2[q] + 2.0 * k3[q] + k4[q])
    return top


@njit(cache=True)
def day_rates(
    pc: NDArray[np.float64], pd: NDArray[np.float64], lay: NDArray[np.int64]
) -> tuple[float, float]:
    """The per-capita outflow rates of a day that do not depend on the state.

    Parameters
    ----------
    pc, pd, lay : ndarray
        Parameter, daily and layout arrays.

    Returns
    -------
    stages : float
        Fastest Erlang stage rate: latent, infectious, onset-to-admission,
        ward and ICU stages of every band, and dose-to-protection [1/day].
    extra : float
        What susceptibles or dosed people lose per capita on top of the
        force of infection: importations per resident plus the largest
        dosing rate, or the dose-to-protection rate if larger [1/day].
    """
    nb = lay[LAY_BANDS]
    sc = N_BAND_FIELDS * nb
    protect = pc[sc + S_PROTECT_RATE]
    stages = max(pc[sc + S_LATENT_RATE], pc[sc + S_INFECTIOUS_RATE], protect)
    for field in (P_WAIT_RATE, P_WARD_RATE, P_ICU_RATE):
        for i in range(nb):
            stages = max(stages, pc[field * nb + i])
    dosing = 0.0
    for i in range(nb):
        dosing = max(dosing, pd[nb * nb + nb + i])
    extra = max(pc[sc + S_IMPORTS] / pc[sc + S_TOTAL_POP] + dosing, protect)
    return stages, extra


@njit(cache=True)
def advance_day(
    y: NDArray[np.float64],
    t0: float,
    pc: NDArray[np.float64],
    pd: NDArray[np.float64],
    lay: NDArray[np.int64],
    floor: int,
    limit: float,
    force_limit: float,
    most: int,
    previous_force: float,
    work: NDArray[np.float64],
) -> tuple[int, float, float]:
    """Advance ``y`` by one day with as many RK4 steps as the step rule asks.

    The step rule (the same for single runs and every ensemble draw): take
    ``n`` equal steps (``h = 1 / n``), at least ``floor``, such that during
    the day ``h * q <= limit`` for the Erlang stage rates,
    ``h * q <= force_limit`` for what susceptible and dosed people lose per
    capita (the force of infection plus importations per resident and
    dosing or dose-to-protection), and for the largest growth rate of
    infections of the run the smaller of ``force_limit`` and the run's
    growth step (:func:`prepkit.simulation.health.growth_step`, which keeps an
    exponential rise accurate). On day 0, whose seeding sends a pulse
    through the stages, the stage rates are held to half the smaller limit
    and at least :data:`DAY0_FEWEST_STEPS` steps are taken.
    The force of infection is read from every RK4 evaluation of the day,
    so the rule holds for the rates actually met, not an estimate: ``n`` is
    first chosen from the force at the start of the day times its growth
    since the start of the previous day (between 1 and
    :data:`FORCE_GROWTH_MAX`), and the day is taken again from its start,
    with more steps, when a larger force was met or the state stopped being
    finite.

    Parameters
    ----------
    y : ndarray
        State at ``t0``; overwritten with the state at ``t0 + 1`` (left at
        ``t0`` when the day fails).
    t0 : float
        Start of the day [days].
    pc, pd, lay : ndarray
        Parameter, daily and layout arrays.
    floor : int
        Fewest RK4 steps a day.
    limit, force_limit : float
        Largest (rate x step) allowed for the stage rates, and for the
        growth of infections and the losses of susceptible and dosed people
        [dimensionless]; inf (both) takes exactly ``floor`` steps.
    most : int
        Most RK4 steps a day; a day that needs more fails.
    previous_force : float
        Largest per-capita force of infection at the start of the previous
        day [1/day] (0 on day 0).
    work : ndarray
        Scratch space of shape (8, y.size); rows 6 and 7 keep the
        derivative and the state at ``t0`` for a second attempt.

    Returns
    -------
    steps : int
        RK4 steps taken, or -1 when the day would need more than ``most``.
    start_force : float
        Largest per-capita force of infection at ``t0`` [1/day].
    rate : float
        Largest rate met during the last attempt [1/day].
    """
    size = y.size
    force_at = 5 * lay[LAY_BANDS]
    rhs(t0, y, pc, pd, lay, work[0], work[5])
    start_force = work[5, force_at]
    stages, extra = day_rates(pc, pd, lay)
    spread = pc[N_BAND_FIELDS * lay[LAY_BANDS] + S_GROWTH_BOUND]
    spread_limit = min(force_limit, pc[N_BAND_FIELDS * lay[LAY_BANDS] + S_GROWTH_STEP])
    fixed = limit == np.inf and force_limit == np.inf
    stage_limit = limit
    if t0 == 0.0 and not fixed:  # day 0 carries the transient of the seeding
        stage_limit = 0.5 * min(limit, force_limit)
        floor = max(floor, DAY0_FEWEST_STEPS)
    growth = 1.0
    if previous_force > 0.0 and start_force > previous_force:
        growth = min(start_force / previous_force, FORCE_GROWTH_MAX)
    steps = floor
    if not fixed:
        # the day-0 stage limit chooses the first attempt only, so it never fails a day
        need = max(stages / stage_limit, spread / spread_limit,
                   (start_force * growth + extra) / force_limit)
        if not need <= most:
            steps = max(floor, most)
        elif need > steps:
            steps = max(floor, int(math.ceil(need)))
        work[6, :] = work[0]
        work[7, :] = y
    rate = 0.0
    while True:
        top = rk4_day(y, t0, pc, pd, lay, steps, work, True)
        rate = max(stages, spread, top + extra)
        need = max(stages / limit, spread / spread_limit, (top + extra) / force_limit)
        finite = True
        total = 0.0
        for q in range(size):
            total += y[q]
        if not abs(total) < np.inf:
            finite = False
        if fixed or (finite and need <= steps * (1.0 + 1e-12)):
            return steps, start_force, rate
        y[:] = work[7]
        work[0, :] = work[6]
        work[5, force_at] = start_force
        if steps >= most:
            return -1, start_force, rate
        wanted = 2 * steps
        if need < np.inf and need > wanted:
            wanted = int(math.ceil(1.25 * need)) if need < most else most
        steps = min(most, wanted)


@njit(cache=True)
def tally_health(
    y: NDArray[np.float64], people: int, reference: float, health: NDArray[np.float64]
) -> None:
    """Update the running checks of a run with the state at one day boundary.

    Parameters
    ----------
    y : ndarray
        State.
    people : int
        Number of leading entries that hold people.
    reference : float
        People at day 0 [persons].
    health : ndarray, shape (3,)
        Updated in place: largest ``|sum of people - reference| /
        reference``, smallest entry of people divided by ``reference`` (both
        [fraction]) and the count of boundaries with a non-finite number.
    """
    total = 0.0
    low = np.inf
    for q in range(people):
        total += y[q]
        low = min(low, y[q])
    everything = total
    for q in range(people, y.size):
        everything += y[q]
    if not abs(everything) < np.inf:
        health[2] += 1.0
        return
    health[0] = max(health[0], abs(total - reference) / reference)
    health[1] = min(health[1], low / reference)


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
    nb = lay[LAY_BANDS]
    o_w = lay[LAY_OFFSET + BLK_W]
    o_c = lay[LAY_OFFSET + BLK_C]
    o_s = lay[LAY_OFFSET + BLK_S]
    o_adm = lay[LAY_OFFSET + BLK_CUM_ADM]
    o_dose = lay[LAY_OFFSET + BLK_CUM_DOSE]
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

    The matrix is stored column by column (``K_ij`` at ``j * B + i``): :func:`rhs` sums
    ``K_ij X_j`` over ``j`` for all bands ``i`` at once, reading each column contiguously.

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


@njit(cache=True)
def _new_report(report: NDArray[np.float64]) -> None:
    report[:] = 0.0
    report[REPORT_LOWEST] = np.inf
    report[REPORT_FAILED_DAY] = -1.0


@njit(cache=True)
def run_days(
    y0: NDArray[np.float64],
    pc: NDArray[np.float64],
    lay: NDArray[np.int64],
    itab: NDArray[np.float64],
    iprio: NDArray[np.int64],
    cap: NDArray[np.float64],
    horizon: int,
    floor: int,
    limit: float,
    force_limit: float,
    most: int,
) -> tuple[NDArray[np.float64], NDArray[np.int8], NDArray[np.int64], NDArray[np.float64]]:
    """Simulate ``horizon`` days: decide at each boundary, then step the day.

    Parameters
    ----------
    y0 : ndarray
        State at day 0.
    pc, lay, itab, iprio, cap : ndarray
        Parameter, layout, intervention, priority and capacity arrays.
    horizon : int
        Number of days [days].
    floor, limit, force_limit, most : int, float, float, int
        Fewest RK4 steps a day, largest (rate x step) for stage rates and
        for the dynamics of infection, and most steps a day (the step rule
        of :func:`advance_day`).

    Returns
    -------
    states : ndarray, shape (horizon + 1, size)
        State at each day boundary ``t = 0, 1, ..., horizon``; nan after a
        day that failed.
    active : ndarray of int8, shape (horizon, n_interventions)
        1 where an intervention was active during day ``d``.
    steps : ndarray of int64, shape (horizon,)
        RK4 steps taken on each day (-1 on a day that failed, 0 after it).
    report : ndarray, shape (REPORT_SIZE,)
        The checks of the run (``REPORT_*`` entries).
    """
    size = y0.size
    nb = lay[LAY_BANDS]
    n_int = itab.shape[0]
    people = lay[LAY_OFFSET + BLK_CUM_INF]
    states = np.full((horizon + 1, size), np.nan)
    active = np.zeros((horizon, n_int), dtype=np.int8)
    steps = np.zeros(horizon, dtype=np.int64)
    report = np.empty(REPORT_SIZE)
    _new_report(report)
    status = np.zeros(n_int, dtype=np.int64)
    started = np.zeros(n_int)
    pd = np.zeros(nb * nb + 2 * nb + 1)
    work = np.empty((8, size))
    y = y0.copy()
    y_prev = y0.copy()
    reference = 0.0
    for q in range(people):
        reference += y0[q]
    states[0, :] = y
    tally_health(y, people, reference, report)
    force = 0.0
    for day in range(horizon):
        decide_day(day, y, y_prev, pc, lay, itab, iprio, cap, status, started, pd)
        for r in range(n_int):
            if status[r] == STATUS_ACTIVE:
                active[day, r] = 1
        y_prev[:] = y
        taken, force, rate = advance_day(
            y, float(day), pc, pd, lay, floor, limit, force_limit, most, force, work
        )
        report[REPORT_FORCE] = max(report[REPORT_FORCE], force)
        steps[day] = taken
        if taken < 0:
            _record_failure(day, rate, pc, pd, lay, report)
            break
        states[day + 1, :] = y
        tally_health(y, people, reference, report)
    return states, active, steps, report


@njit(cache=True)
def _record_failure(
    day: int,
    rate: float,
    pc: NDArray[np.float64],
    pd: NDArray[np.float64],
    lay: NDArray[np.int64],
    report: NDArray[np.float64],
) -> None:
    stages, extra = day_rates(pc, pd, lay)
    report[REPORT_FAILED_DAY] = day
    report[REPORT_RATE] = rate
    report[REPORT_STAGES] = stages
    report[REPORT_EXTRA] = extra


@njit(parallel=True, cache=True)
def run_draws(
    y0: NDArray[np.float64],
    pcs: NDArray[np.float64],
    lay: NDArray[np.int64],
    itabs: NDArray[np.float64],
    iprio: NDArray[np.int64],
    cap: NDArray[np.float64],
    horizon: int,
    floors: NDArray[np.int64],
    limit: float,
    force_limit: float,
    most: int,
    employed: NDArray[np.float64],
    series: NDArray[np.float32] | NDArray[np.float64],
    finals: NDArray[np.float64],
    peaks: NDArray[np.float64],
    peak_days: NDArray[np.int64],
    steps: NDArray[np.int64],
    reports: NDArray[np.float64],
) -> None:
    """Simulate many parameter draws in parallel, keeping only what the ensemble reports.

    Each draw runs exactly the loop of :func:`run_days` (the same decisions
    and :func:`advance_day`, so the same step rule), on its own flat state; draws are spread over
    threads with ``prange``. The decisions are :func:`decide_day`'s two parts,
    :func:`decide_measures` every day and :func:`contact_matrix` only on days
    the contact multipliers change (the matrix is the same otherwise), so
    every number equals the single run's. Instead of every state, each draw
    keeps five daily series, its final counters and its peaks.

    Parameters
    ----------
    y0 : ndarray
        State at day 0 (the same for every draw).
    pcs : ndarray, shape (draws, parameters)
        Parameter vector of each draw.
    lay, iprio, cap : ndarray
        Layout, priority and capacity arrays (shared).
    itabs : ndarray, shape (draws, interventions, columns)
        Intervention table of each draw.
    horizon : int
        Number of days [days].
    floors : ndarray of int64, shape (draws,)
        Fewest RK4 steps a day of each draw.
    limit, force_limit, most : float, float, int
        Largest (rate x step) for stage rates and for the dynamics of
        infection, and most steps a day (see :func:`advance_day`).
    employed : ndarray, shape (bands,)
        Employed workers per resident of each band [fraction].
    series : ndarray, shape (5, draws, horizon)
        Output, for each day: ward census and ICU census at the end of the
        day [persons], admissions during the day [persons/day], symptom
        onsets during the day weighted by ``employed`` [persons/day] and the
        school closure intensity of the day [fraction].
    finals : ndarray, shape (draws, 8)
        Output, sums over bands of the final counters: infections, symptom
        onsets, admissions, ICU admissions, deaths [persons], doses
        [doses], ward and ICU bed-days [bed-days].
    peaks : ndarray, shape (draws, 3)
        Output, largest end-of-day ward and ICU census [persons] and largest
        daily admissions [persons/day].
    peak_days : ndarray of int64, shape (draws, 3)
        Output, first day each peak is reached [days since day 0].
    steps : ndarray of int64, shape (draws,)
        Output, the most RK4 steps taken on one day by each draw.
    reports : ndarray, shape (draws, REPORT_SIZE)
        Output, the checks of each draw (``REPORT_*`` entries); a draw whose
        day failed stops there.
    """
    n_draws = pcs.shape[0]
    size = y0.size
    nb = _U(lay[LAY_BANDS])
    n_int = itabs.shape[1]
    o_w = _U(lay[LAY_OFFSET + BLK_W])
    o_c = _U(lay[LAY_OFFSET + BLK_C])
    n_w = _U(lay[LAY_WARD]) * nb
    n_c = _U(lay[LAY_ICU]) * nb
    o_adm = _U(lay[LAY_OFFSET + BLK_CUM_ADM])
    o_onset = _U(lay[LAY_OFFSET + BLK_CUM_ONSET])
    people = lay[LAY_OFFSET + BLK_CUM_INF]
    reference = 0.0
    for q in range(people):
        reference += y0[q]
    counters = (
        BLK_CUM_INF, BLK_CUM_ONSET, BLK_CUM_ADM, BLK_CUM_ICU, BLK_D, BLK_CUM_DOSE,
        BLK_WARD_DAYS, BLK_ICU_DAYS,
    )
    for d in prange(n_draws):
        pc = pcs[d]
        itab = itabs[d]
        y = y0.copy()
        y_prev = y0.copy()
        work = np.empty((8, size))
        report = reports[d]
        _new_report(report)
        tally_health(y, people, reference, report)
        force = 0.0
        most_taken = 0
        pd = np.zeros(nb * nb + 2 * nb + 1)
        status = np.zeros(n_int, dtype=np.int64)
        started = np.zeros(n_int)
        multiplier = np.ones(N_SETTINGS)
        built = np.full(N_SETTINGS, np.nan)
        top_w = -1.0
        top_c = -1.0
        top_a = -1.0
        for day in range(horizon):
            # decide_day in two parts: the transmission matrix depends only on the contact
            # multipliers (and this draw's constants), so it is rebuilt only when they change
            decide_measures(day, y, y_prev, pc, lay, itab, iprio, cap, status, started, pd,
                            multiplier)
            changed = False
            for s in range(N_SETTINGS):
                if multiplier[s] != built[s]:
                    changed = True
            if changed:
                contact_matrix(pc, lay, multiplier, pd)
                built[:] = multiplier
            closure = 0.0
            for r in range(n_int):
                if status[r] == STATUS_ACTIVE and int(itab[r, IT_KIND]) == KIND_CONTACTS:
                    closure = max(closure, itab[r, IT_SCHOOL_CLOSURE])
            y_prev[:] = y
            taken, force, rate = advance_day(
                y, float(day), pc, pd, lay, floors[d], limit, force_limit, most, force,
                work,
            )
            report[REPORT_FORCE] = max(report[REPORT_FORCE], force)
            if taken < 0:
                _record_failure(day, rate, pc, pd, lay, report)
                break
            most_taken = max(most_taken, taken)
            tally_health(y, people, reference, report)
            ward = 0.0
            for q in range(n_w):
                ward += y[o_w + q]
            icu = 0.0
            for q in range(n_c):
                icu += y[o_c + q]
            admitted = 0.0
            onsets = 0.0
            for i in range(nb):
                admitted += y[o_adm + i] - y_prev[o_adm + i]
                onsets += employed[i] * (y[o_onset + i] - y_prev[o_onset + i])
            series[0, d, day] = ward
            series[1, d, day] = icu
            series[2, d, day] = admitted
            series[3, d, day] = onsets
            series[4, d, day] = closure
            if ward > top_w:
                top_w = ward
                peak_days[d, 0] = day
            if icu > top_c:
                top_c = icu
                peak_days[d, 1] = day
            if admitted > top_a:
                top_a = admitted
                peak_days[d, 2] = day
        steps[d] = most_taken
        peaks[d, 0] = top_w
        peaks[d, 1] = top_c
        peaks[d, 2] = top_a
        for k in range(len(counters)):
            start = _U(lay[LAY_OFFSET + counters[k]])
            total = 0.0
            for i in range(nb):
                total += y[start + i]
            finals[d, k] = total
