"""Many parameter draws of one scenario variant: cheap per-draw arrays and the parallel run.

Equations in words
------------------
The model is the one of :mod:`prepkit.simulation.kernels`; every draw is run by
:func:`prepkit.simulation.kernels.run_draws`, which repeats the single-run loop
(:func:`~prepkit.simulation.kernels.decide_day` then
:func:`~prepkit.simulation.kernels.advance_day`, day by day, with the same step
rule) for each draw on its own flat state, in parallel over draws, and
checks every draw as a single run is checked (:mod:`prepkit.simulation.health`):
a draw that fails stops the ensemble with an error naming its inputs.

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
from collections.abc import Callable
from typing import Any

import numba
import numpy as np
from numpy.typing import NDArray

from prepkit.errors import ModelError
from prepkit.metrics.absence import employed_weights
from prepkit.plan import Plan
from prepkit.simulation.compile import CompiledModel
from prepkit.simulation.diagnose import draw_error
from prepkit.simulation.health import failed_rows, most_substeps
from prepkit.simulation.kernels import REPORT_SIZE, run_draws
from prepkit.simulation.layout import (
    N_SETTINGS,
    P_POP,
    P_SUSCEPTIBILITY,
    P_WAIT_RATE,
    S_GROWTH_STEP,
    S_RHO,
    matrix_offset,
    scalar_offset,
)
from prepkit.simulation.transmissibility import NOBODY_INFECTS, transmission_is_finite
from prepkit.uncertainty.draws import (
    FINAL_NAMES,
    PEAK_NAMES,
    SERIES_NAMES,
    DrawSeries,
    DrawValues,
    take_draws,
)
from prepkit.uncertainty.parameters import ENSEMBLE_MIN_SUBSTEPS, build_parameters, step_rule
from prepkit.uncertainty.threads import in_threads, use_all_cores

DEFAULT_BLOCKS = 8
"""Draws are run in this many blocks, so that progress can be reported between them."""

EIG_CHUNK = 2048
"""Most draws whose next-generation matrices :func:`calibrate_beta` stacks at once (over all
threads)."""

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
    employed = employed_weights(plan.bands, plan.workforce)
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
