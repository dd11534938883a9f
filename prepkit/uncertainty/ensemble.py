"""Many parameter draws of one scenario variant: cheap per-draw arrays and the parallel run.

Equations in words
------------------
The model is the one of :mod:`prepkit.simulation.kernels`; every draw is run by
:func:`prepkit.simulation.kernels.run_draws`, which repeats the single-run loop
(:func:`~prepkit.simulation.decisions.decide_day` then
:func:`~prepkit.simulation.step_rule.advance_day`, day by day, with the same step
rule) for each draw on its own flat state, in parallel over draws, and
checks every draw as a single run is checked (:mod:`prepkit.simulation.health`):
a draw that fails stops the ensemble with an error naming its inputs.

Per-draw arrays are built from the compiled central run of the scenario
variant by overwriting only the numbers a draw changes, with the same
formulas as :func:`prepkit.simulation.compile.compile_model` (the tests check
that both give the same arrays):

* band fields: symptomatic share ``p``, admitted share ``h = min(h, p)``,
  admitted share of protected infections
  ``h_v = min(p, h (1 - VE_sev) / (1 - VE_inf))`` (0 when ``VE_inf = 1``),
  ICU share, and the ward and ICU stage rates ``q / T``;
* scalars: latent and infectious stage rates, vaccine efficacy against
  infection and the transmission scale ``beta``;
* intervention rows that depend on compliance (contact multipliers, school
  closure intensity, dose ceiling, isolation multipliers; the isolation
  multiplier of people at home also depends on the infectious period).

``beta`` is calibrated per draw. With everybody susceptible, no measures
and season 1, the next-generation matrix on new infections of each band is
``K_ij = beta sigma_i N_i C_ij / N_j w_j``, where ``C`` is the sum of the
setting contact matrices and ``w_j`` is the infectious pressure-time one
new infection of band ``j`` produces:
``w_j = rho (1 - p_j) D + (p_j - h_j) D + h_j D_P,j`` (``D`` the mean
infectious period, ``D_P,j`` the mean onset-to-admission delay). For a
target growth rate ``r`` every residence time is discounted by
``exp(-r t)``: a chain of ``q`` stages at rate ``g`` contributes
``sum_{s<q} (g / (g + r))^s / (g + r)`` and the latent chain multiplies by
``(lat / (lat + r))^m``; at ``r = 0`` this is the R0 case. Then
``beta = R0 / rho(K(1))`` or ``beta = 1 / rho(K_r(1))``, exactly as
:func:`prepkit.simulation.transmissibility.beta_for_r0` and
:func:`~prepkit.simulation.transmissibility.beta_for_growth_rate` give from the
full infected subsystem, but for thousands of draws at once.
"""

from __future__ import annotations

import math
import os
from collections.abc import Callable, Mapping, Sequence
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass, field
from typing import Any

import numba
import numpy as np
from numpy.typing import NDArray
from scipy.special import gammainc

from prepkit.errors import ModelError
from prepkit.metrics.core import working_age_weights
from prepkit.plan import SETTINGS, Plan
from prepkit.simulation.compile import DEFAULT_SUBSTEPS, MAX_STEP_RATE, CompiledModel
from prepkit.simulation.diagnose import draw_error
from prepkit.simulation.health import failed_rows, growth_bound, most_substeps
from prepkit.simulation.kernels import run_draws
from prepkit.simulation.layout import (
    IT_CEILING,
    IT_ISO_SYMPTOMATIC,
    IT_ISO_WAITING,
    IT_MULTIPLIER,
    IT_SCHOOL_CLOSURE,
    N_SETTINGS,
    P_ADMIT,
    P_ADMIT_PROTECTED,
    P_ICU,
    P_ICU_RATE,
    P_POP,
    P_SUSCEPTIBILITY,
    P_SYMPTOMATIC,
    P_WAIT_RATE,
    P_WARD_RATE,
    S_BETA,
    S_GROWTH_BOUND,
    S_GROWTH_STEP,
    S_INFECTIOUS_RATE,
    S_LATENT_RATE,
    S_RHO,
    S_VE_INFECTION,
    matrix_offset,
    scalar_offset,
)
from prepkit.simulation.natural_history import share_before_isolation
from prepkit.simulation.run_checks import REPORT_SIZE
from prepkit.simulation.transmissibility import NOBODY_INFECTS, transmission_is_finite

ENSEMBLE_MIN_SUBSTEPS = 1
"""Fewest RK4 steps per day in the ensemble. benchmarks/accuracy.py measures the relative
error of the peak census against the DOP853 reference at 1 step per day at 1e-6 to 3e-5,
and benchmarks/ensemble.py measures it on 24 draws of a 16-band plan at up to about 5e-5:
far below the 1e-3 target and far below the spread between draws (the engine's 4 steps
give about 2e-7). Pass ``min_substeps=None`` to use the engine's rule instead (then every
draw equals :func:`prepkit.scenarios.runs.run_scenario` with the same overrides)."""

ENSEMBLE_MAX_STEP_RATE = 1.0
"""Largest (rate x step) in the ensemble for the stage rates and the growth bound (the step
rule of :func:`prepkit.simulation.step_rule.advance_day`); faster days get more steps. 1 is the
largest value for which an RK4 step keeps every compartment of a linear flow non-negative
(see :mod:`prepkit.simulation.health`); classical RK4 would stay stable up to 2.785 on the
negative real axis (Hairer, Norsett & Wanner 1993, Solving Ordinary Differential Equations
I, sec. IV.2, from memory), but with negative compartments on the way. The engine's own
limit is :data:`prepkit.simulation.compile.MAX_STEP_RATE`."""

ENSEMBLE_MAX_FORCE_STEP = 0.5
"""Largest (rate x step) in the ensemble for the dynamics of infection: what susceptibles lose
per capita (force of infection, importations, dosing) and the growth bound. Tighter than for
the stages, whose errors only shift fast transits a little: these feed every later
compartment. The hypothesis search (tests/simulation/test_model_search.py) met a draw
(growth rate 2 a day, 60-day periods, 100 million initial infections) whose peak ICU
census was 5.4e-3 off
the reference with them at 1 per step and 5.4e-4 at 0.5. On the sample plans the force stays
below 0.2 a day and the growth bound below 0.3, so 1 step a day still serves."""

DEFAULT_BLOCKS = 8
"""Draws are run in this many blocks, so that progress can be reported between them."""

EIG_CHUNK = 2048
"""Most draws whose next-generation matrices :func:`calibrate_beta` stacks at once (over all
threads)."""

SERIES_NAMES: tuple[str, ...] = (
    "ward_census_persons",
    "icu_census_persons",
    "admissions_per_day",
    "worker_onsets_per_day",
    "school_closure_intensity_share",
)
"""Daily series kept per draw, in the order of the kernel's ``series`` output."""

FINAL_NAMES: tuple[str, ...] = (
    "infections_persons",
    "symptomatic_cases_persons",
    "admissions_persons",
    "icu_admissions_persons",
    "hospital_deaths_persons",
    "doses_given_doses",
    "ward_bed_days",
    "icu_bed_days",
)
"""Totals kept per draw (names as in :class:`prepkit.metrics.core.BurdenTotals`)."""

PEAK_NAMES: tuple[str, ...] = ("ward_census_persons", "icu_census_persons", "admissions_per_day")
"""Peaks kept per draw."""


@dataclass(frozen=True, kw_only=True, eq=False)
class DrawValues:
    """The uncertain inputs of many draws, one row per draw.

    Field names and meanings are those of
    :class:`prepkit.simulation.inputs.ResolvedInputs`.

    Attributes
    ----------
    transmissibility_value : ndarray, shape (draws,)
        Value of the plan's transmissibility measure [dimensionless, days or
        1/day].
    latent_period_days, infectious_period_days : ndarray, shape (draws,)
        Means [days].
    symptomatic_share, admitted_share, icu_share : ndarray, shape (draws, bands)
        Per band [fraction].
    ward_stay_days, icu_stay_days : ndarray, shape (draws, bands)
        Per band [days].
    efficacy_infection, efficacy_severe : ndarray, shape (draws,)
        Vaccine efficacies [fraction] (ignored by runs without vaccination).
    compliance : mapping of str to ndarray, shape (draws,)
        Per intervention name [fraction]; missing names use the central
        compliance.
    """

    transmissibility_value: NDArray[np.float64]
    latent_period_days: NDArray[np.float64]
    infectious_period_days: NDArray[np.float64]
    symptomatic_share: NDArray[np.float64]
    admitted_share: NDArray[np.float64]
    icu_share: NDArray[np.float64]
    ward_stay_days: NDArray[np.float64]
    icu_stay_days: NDArray[np.float64]
    efficacy_infection: NDArray[np.float64]
    efficacy_severe: NDArray[np.float64]
    compliance: Mapping[str, NDArray[np.float64]] = field(default_factory=dict)

    @property
    def size(self) -> int:
        """Number of draws."""
        return int(self.transmissibility_value.shape[0])

    def overrides(self, draw: int) -> dict[str, Any]:
        """One draw as overrides for :func:`prepkit.scenarios.runs.run_scenario`.

        Parameters
        ----------
        draw : int
            Draw index.

        Returns
        -------
        dict
            Field of :class:`~prepkit.simulation.inputs.ResolvedInputs` to value.
        """
        return {
            "transmissibility_value": float(self.transmissibility_value[draw]),
            "latent_period_days": float(self.latent_period_days[draw]),
            "infectious_period_days": float(self.infectious_period_days[draw]),
            "symptomatic_share": tuple(float(x) for x in self.symptomatic_share[draw]),
            "admitted_share": tuple(float(x) for x in self.admitted_share[draw]),
            "icu_share": tuple(float(x) for x in self.icu_share[draw]),
            "ward_stay_days": tuple(float(x) for x in self.ward_stay_days[draw]),
            "icu_stay_days": tuple(float(x) for x in self.icu_stay_days[draw]),
            "efficacy_infection": float(self.efficacy_infection[draw]),
            "efficacy_severe": float(self.efficacy_severe[draw]),
            "compliance": {k: float(v[draw]) for k, v in self.compliance.items()},
        }


@dataclass(frozen=True, kw_only=True, eq=False)
class DrawSeries:
    """What the ensemble keeps of each draw.

    Attributes
    ----------
    series : ndarray, shape (5, draws, days)
        Daily series in the order of :data:`SERIES_NAMES`: ward and ICU
        census at the end of the day [persons], admissions during the day
        [persons/day], symptom onsets weighted by the employed share of each
        band [persons/day] and the school closure intensity [fraction].
    finals : ndarray, shape (draws, 8)
        Totals in the order of :data:`FINAL_NAMES` [persons, doses,
        bed-days].
    peaks : ndarray, shape (draws, 3)
        Peaks in the order of :data:`PEAK_NAMES` [persons, persons/day],
        computed in float64 whatever the series' type.
    peak_days : ndarray of int64, shape (draws, 3)
        First day of each peak [days since day 0].
    beta : ndarray, shape (draws,)
        Transmission scale of each draw [per contact].
    substeps : ndarray of int64, shape (draws,)
        The most RK4 steps each draw took on one day.
    """

    series: NDArray[Any]
    finals: NDArray[np.float64]
    peaks: NDArray[np.float64]
    peak_days: NDArray[np.int64]
    beta: NDArray[np.float64]
    substeps: NDArray[np.int64]

    def get(self, name: str) -> NDArray[Any]:
        """A daily series by name, shape (draws, days)."""
        return np.asarray(self.series[SERIES_NAMES.index(name)])


def _discounted_residence(
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


def calibrate_beta(
    model: CompiledModel,
    values: DrawValues,
    measure: str | None = None,
) -> NDArray[np.float64]:
    """Transmission scale of each draw from its transmissibility measure.

    Parameters
    ----------
    model : CompiledModel
        Compiled central run of the scenario (fixes contacts, populations,
        susceptibility, stage counts, onset-to-admission delays).
    values : DrawValues
        The draws.
    measure : {"r0", "doubling_time", "growth_rate"}, optional
        Measure of ``values.transmissibility_value``; default the model's.

    Returns
    -------
    ndarray, shape (draws,)
        beta [per contact].

    Raises
    ------
    ModelError
        When a doubling time is not positive, a growth rate is out of reach,
        or nobody can infect anybody.

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
    layout, pc = model.layout, model.pc
    nb = layout.bands
    sc = scalar_offset(nb)
    kind = measure or model.inputs.transmissibility_measure
    target = np.asarray(values.transmissibility_value, dtype=np.float64)
    if kind == "doubling_time":
        if np.any(target <= 0.0):
            raise ModelError(f"doubling time must be positive, found {target.min():.4g} days")
        rates = math.log(2.0) / target
    elif kind == "growth_rate":
        rates = target
    else:
        rates = np.zeros_like(target)

    pop = pc[P_POP * nb : (P_POP + 1) * nb]
    sigma = pc[P_SUSCEPTIBILITY * nb : (P_SUSCEPTIBILITY + 1) * nb]
    wait_rate = pc[P_WAIT_RATE * nb : (P_WAIT_RATE + 1) * nb]
    rho = pc[sc + S_RHO]
    mo = matrix_offset(nb)
    contacts = pc[mo : mo + N_SETTINGS * nb * nb].reshape(N_SETTINGS, nb, nb).sum(axis=0)
    base = (sigma * pop)[:, None] * contacts / pop[None, :]

    p_sym = np.asarray(values.symptomatic_share, dtype=np.float64)
    h = np.minimum(np.asarray(values.admitted_share, dtype=np.float64), p_sym)
    lat = layout.latent_stages / np.asarray(values.latent_period_days, dtype=np.float64)
    inf = layout.infectious_stages / np.asarray(values.infectious_period_days, dtype=np.float64)

    slowest = np.minimum(np.minimum(lat, inf), float(np.min(wait_rate)))
    if np.any(rates <= -slowest):
        worst = float(np.min(rates + slowest))
        raise ModelError(
            "a drawn growth rate is below what any transmission can give "
            f"(short by {-worst:.4g}/day)"
        )
    latent = (lat / (lat + rates)) ** layout.latent_stages
    at_home = _discounted_residence(inf, layout.infectious_stages, rates)
    waiting = _discounted_residence(wait_rate[None, :], layout.wait_stages, rates[:, None])
    weights = latent[:, None] * (
        (rho * (1.0 - p_sym) + (p_sym - h)) * at_home[:, None] + h * waiting
    )

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
    unit = np.concatenate(in_threads(spectral_radius, parts)) if parts else np.empty(0)
    with np.errstate(divide="ignore", over="ignore"):
        beta = (target if kind == "r0" else np.ones_like(target)) / unit
    if np.any(unit <= 0.0) or not np.all(transmission_is_finite(beta, pc, layout)):
        raise ModelError(NOBODY_INFECTS)
    return np.asarray(beta, dtype=np.float64)


def build_parameters(
    model: CompiledModel,
    plan: Plan,
    values: DrawValues,
    beta: NDArray[np.float64],
    *,
    min_substeps: int | None = ENSEMBLE_MIN_SUBSTEPS,
) -> tuple[NDArray[np.float64], NDArray[np.float64], NDArray[np.int64]]:
    """Parameter vectors, intervention tables and substeps of many draws.

    Parameters
    ----------
    model : CompiledModel
        Compiled central run of the scenario variant; its arrays are copied
        and the numbers a draw changes are overwritten.
    plan : Plan
        The plan (for the interventions' fixed inputs).
    values : DrawValues
        The draws.
    beta : ndarray, shape (draws,)
        Transmission scale of each draw [per contact] (:func:`calibrate_beta`).
    min_substeps : int or None
        Fewest RK4 steps per day; None uses the engine's
        (:data:`~prepkit.simulation.compile.DEFAULT_SUBSTEPS`).

    Returns
    -------
    pcs : ndarray, shape (draws, parameters)
        Parameter vectors.
    itabs : ndarray, shape (draws, interventions, columns)
        Intervention tables.
    substeps : ndarray of int64, shape (draws,)
        Fewest RK4 steps per day of each draw (the step rule adds more on
        days that need them).
    """
    layout = model.layout
    nb = layout.bands
    sc = scalar_offset(nb)
    n = values.size
    pcs = np.repeat(model.pc[None, :], n, axis=0)
    has_vaccine = "vaccination" in model.intervention_kinds

    p_sym = np.asarray(values.symptomatic_share, dtype=np.float64)
    h = np.minimum(np.asarray(values.admitted_share, dtype=np.float64), p_sym)
    if has_vaccine:
        ve_inf = np.asarray(values.efficacy_infection, dtype=np.float64)
        ve_sev = np.asarray(values.efficacy_severe, dtype=np.float64)
    else:
        ve_inf = np.zeros(n)
        ve_sev = np.zeros(n)
    full = ve_inf >= 1.0
    keep = np.where(full, 0.5, 1.0 - ve_inf)  # any non-zero divisor where VE_inf = 1
    hv = np.minimum(p_sym, h * (1.0 - ve_sev)[:, None] / keep[:, None])
    hv[full] = 0.0

    def put(field_index: int, block: NDArray[np.float64]) -> None:
        pcs[:, field_index * nb : (field_index + 1) * nb] = block

    put(P_SYMPTOMATIC, p_sym)
    put(P_ADMIT, h)
    put(P_ADMIT_PROTECTED, hv)
    put(P_ICU, np.asarray(values.icu_share, dtype=np.float64))
    put(P_WARD_RATE, layout.ward_stages / np.asarray(values.ward_stay_days, dtype=np.float64))
    put(P_ICU_RATE, layout.icu_stages / np.asarray(values.icu_stay_days, dtype=np.float64))
    infectious_days = np.asarray(values.infectious_period_days, dtype=np.float64)
    pcs[:, sc + S_LATENT_RATE] = layout.latent_stages / np.asarray(
        values.latent_period_days, dtype=np.float64
    )
    pcs[:, sc + S_INFECTIOUS_RATE] = layout.infectious_stages / infectious_days
    pcs[:, sc + S_VE_INFECTION] = ve_inf
    pcs[:, sc + S_BETA] = beta
    pcs[:, sc + S_GROWTH_BOUND] = growth_bound(
        model.inputs.transmissibility_measure, values.transmissibility_value,
        latent=(pcs[:, sc + S_LATENT_RATE], layout.latent_stages),
        infectious=(pcs[:, sc + S_INFECTIOUS_RATE], layout.infectious_stages),
        waiting=(float(np.max(model.pc[P_WAIT_RATE * nb : (P_WAIT_RATE + 1) * nb])),
                 layout.wait_stages),
        amplitude=plan.disease.seasonal_amplitude,
    )

    itabs = np.repeat(model.itab[None, :, :], n, axis=0)
    wait_days = np.asarray(plan.severity.onset_to_admission_days, dtype=np.float64)
    for r, name in enumerate(model.intervention_names):
        item = plan.intervention(name)
        comp = values.compliance.get(name)
        comp = (
            np.full(n, float(item.compliance.central))
            if comp is None
            else np.asarray(comp, dtype=np.float64)
        )
        if item.kind == "contacts":
            for s, setting in enumerate(SETTINGS):
                kept = float(item.contacts_kept.get(setting, 1.0))
                itabs[:, r, IT_MULTIPLIER + s] = 1.0 - comp * (1.0 - kept)
            itabs[:, r, IT_SCHOOL_CLOSURE] = comp * (
                1.0 - float(item.contacts_kept.get("school", 1.0))
            )
        elif item.kind == "vaccination" and item.vaccination is not None:
            itabs[:, r, IT_CEILING] = item.vaccination.uptake_ceiling * comp
        elif item.kind == "isolation" and item.isolation is not None:
            eps = item.isolation.isolated_share * comp
            delay = item.isolation.days_from_onset
            theta = shares_before_isolation(delay, infectious_days, layout.infectious_stages)
            itabs[:, r, IT_ISO_SYMPTOMATIC] = 1.0 - eps * (1.0 - theta)
            theta_wait = np.array(
                [share_before_isolation(delay, float(t), layout.wait_stages) for t in wait_days]
            )
            itabs[:, r, IT_ISO_WAITING : IT_ISO_WAITING + nb] = 1.0 - eps[:, None] * (
                1.0 - theta_wait[None, :]
            )

    floor, _, _ = step_rule(min_substeps)
    return pcs, itabs, np.full(n, floor, dtype=np.int64)


def step_rule(min_substeps: int | None) -> tuple[int, float, float]:
    """Fewest RK4 steps a day and the largest (rate x step) values of the ensemble.

    Parameters
    ----------
    min_substeps : int or None
        Fewest steps a day with :data:`ENSEMBLE_MAX_STEP_RATE` and
        :data:`ENSEMBLE_MAX_FORCE_STEP`; None for the engine's
        :data:`~prepkit.simulation.compile.DEFAULT_SUBSTEPS` and
        :data:`~prepkit.simulation.compile.MAX_STEP_RATE` for every rate.

    Returns
    -------
    tuple of int, float and float
        Fewest steps, largest (rate x step) for stage and growth rates and
        for the losses of susceptibles.
    """
    if min_substeps is None:
        return DEFAULT_SUBSTEPS, MAX_STEP_RATE, MAX_STEP_RATE
    if int(min_substeps) < 1:
        raise ModelError("substeps must be at least 1")
    return int(min_substeps), ENSEMBLE_MAX_STEP_RATE, ENSEMBLE_MAX_FORCE_STEP


def shares_before_isolation(
    delay_days: float, mean_days: NDArray[np.float64], stages: int
) -> NDArray[np.float64]:
    """Vectorised :func:`prepkit.simulation.natural_history.share_before_isolation`.

    Parameters
    ----------
    delay_days : float
        Days from symptom onset to isolation [days].
    mean_days : ndarray
        Mean infectious period of each draw [days].
    stages : int
        Erlang stage count of the infectious period.

    Returns
    -------
    ndarray
        ``theta = E[min(T, d)] / E[T]`` [fraction], the same numbers as the
        scalar function (same operations in the same order).

    References
    ----------
    Fraser C., Riley S., Anderson R.M., Ferguson N.M. (2004). Factors that
    make an infectious disease outbreak controllable. PNAS 101:6146-6151.
    doi:10.1073/pnas.0307506101
    """
    means = np.asarray(mean_days, dtype=np.float64)
    if delay_days <= 0.0:
        return np.zeros_like(means)
    scale = means / stages
    x = delay_days / scale
    expected_min = means * gammainc(stages + 1, x) + delay_days * (1.0 - gammainc(stages, x))
    return np.asarray(np.minimum(1.0, expected_min / means), dtype=np.float64)


def use_all_cores() -> int:
    """Let numba use every core of the machine; returns the thread count."""
    # numba's config module is typed without its run-time settings
    ceiling = int(numba.config.NUMBA_NUM_THREADS)  # type: ignore[attr-defined]
    wanted = max(1, min(os.cpu_count() or 1, ceiling))
    numba.set_num_threads(wanted)
    return wanted


def in_threads(
    func: Callable[[Any], NDArray[Any]], parts: Sequence[Any]
) -> list[NDArray[Any]]:
    """``[func(part) for part in parts]`` on up to numba's thread count of threads.

    Meant for NumPy work that releases the GIL (batched eigenvalues, partitions); each part
    is computed exactly as it would be on its own, so the numbers do not change.

    Parameters
    ----------
    func : callable
        Function of one part.
    parts : sequence
        The parts.

    Returns
    -------
    list of ndarray
        ``func`` of each part, in order.
    """
    workers = min(len(parts), max(1, numba.get_num_threads()))
    if workers <= 1:
        return [func(part) for part in parts]
    with ThreadPoolExecutor(max_workers=workers) as pool:
        return list(pool.map(func, parts))


def employed_weights(plan: Plan) -> NDArray[np.float64]:
    """Employed workers per resident of each band [fraction] (see :mod:`prepkit.metrics.core`)."""
    workforce = plan.workforce
    weight = working_age_weights(plan.bands, workforce.working_age_min, workforce.working_age_max)
    return np.asarray(weight * workforce.employed_share, dtype=np.float64)


def simulate_draws(
    model: CompiledModel,
    plan: Plan,
    values: DrawValues,
    *,
    beta: NDArray[np.float64] | None = None,
    min_substeps: int | None = ENSEMBLE_MIN_SUBSTEPS,
    blocks: int = DEFAULT_BLOCKS,
    dtype: type[np.floating[Any]] = np.float32,
    on_block: Callable[[int], None] | None = None,
    what: str = "uncertainty draw",
) -> DrawSeries:
    """Run every draw of one scenario variant with the compiled parallel loop.

    Parameters
    ----------
    model : CompiledModel
        Compiled central run of the scenario variant.
    plan : Plan
        The plan.
    values : DrawValues
        The draws.
    beta : ndarray, optional
        Transmission scale of each draw [per contact]; default
        :func:`calibrate_beta`.
    min_substeps : int or None
        Fewest RK4 steps per day; None uses the engine's default, which
        makes every draw identical to :func:`prepkit.scenarios.runs.run_scenario`
        with the same overrides.
    blocks : int
        Number of blocks the draws are run in (progress is reported after
        each).
    dtype : numpy float type
        Storage type of the daily series (float32 halves the memory; peaks
        and totals are float64 either way).
    on_block : callable, optional
        Called with the number of draws finished after each block.
    what : str
        What a draw is called in an error (e.g. ``"uncertainty draw"``).

    Returns
    -------
    DrawSeries
        Daily series, totals and peaks of every draw.

    Raises
    ------
    ModelError
        When a draw fails a check of :mod:`prepkit.simulation.health` (the first
        such draw is named with its inputs); no draw's numbers are returned.

    Notes
    -----
    Memory grows as draws x days x 5 series, never with the number of
    states: the parameter arrays are built one block at a time.
    """
    n = values.size
    days = model.horizon_days
    betas = calibrate_beta(model, values) if beta is None else np.asarray(beta, dtype=np.float64)
    series = np.zeros((len(SERIES_NAMES), n, days), dtype=dtype)
    finals = np.zeros((n, len(FINAL_NAMES)))
    peaks = np.zeros((n, len(PEAK_NAMES)))
    peak_days = np.zeros((n, len(PEAK_NAMES)), dtype=np.int64)
    substeps = np.zeros(n, dtype=np.int64)
    reports = np.zeros((n, REPORT_SIZE))
    floor, limit, force_limit = step_rule(min_substeps)
    growth_limit = float(model.pc[scalar_offset(model.layout.bands) + S_GROWTH_STEP])
    most = most_substeps(floor, min(limit, force_limit, growth_limit))
    employed = employed_weights(plan)
    use_all_cores()
    edges = np.linspace(0, n, max(1, min(int(blocks), max(n, 1))) + 1).astype(int)
    for start, stop in zip(edges[:-1], edges[1:], strict=True):
        if stop <= start:
            continue
        part = take_draws(values, np.arange(start, stop))
        pcs, itabs, floors = build_parameters(
            model, plan, part, betas[start:stop], min_substeps=min_substeps
        )
        run_draws(
            model.y0,
            pcs,
            model.lay,
            np.ascontiguousarray(itabs),
            model.iprio,
            model.cap,
            days,
            floors,
            limit,
            force_limit,
            most,
            employed,
            series[:, start:stop, :],
            finals[start:stop],
            peaks[start:stop],
            peak_days[start:stop],
            substeps[start:stop],
            reports[start:stop],
        )
        bad = failed_rows(reports[start:stop])
        if bad.size:
            raise draw_error(model, plan, part, pcs, reports[start:stop], int(bad[0]),
                             first=start, what=what)
        if on_block is not None:
            on_block(stop - start)
    return DrawSeries(
        series=series,
        finals=finals,
        peaks=peaks,
        peak_days=peak_days,
        beta=betas,
        substeps=substeps,
    )


def take_draws(values: DrawValues, rows: NDArray[np.int64]) -> DrawValues:
    """A subset of draws.

    Parameters
    ----------
    values : DrawValues
        The draws.
    rows : ndarray of int
        Draw indices to keep.

    Returns
    -------
    DrawValues
        The chosen draws, in the order of ``rows``.
    """
    return DrawValues(
        transmissibility_value=values.transmissibility_value[rows],
        latent_period_days=values.latent_period_days[rows],
        infectious_period_days=values.infectious_period_days[rows],
        symptomatic_share=values.symptomatic_share[rows],
        admitted_share=values.admitted_share[rows],
        icu_share=values.icu_share[rows],
        ward_stay_days=values.ward_stay_days[rows],
        icu_stay_days=values.icu_stay_days[rows],
        efficacy_infection=values.efficacy_infection[rows],
        efficacy_severe=values.efficacy_severe[rows],
        compliance={k: v[rows] for k, v in values.compliance.items()},
    )
