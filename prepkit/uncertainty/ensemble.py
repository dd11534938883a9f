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

``beta`` is calibrated per draw by
:func:`prepkit.simulation.beta_scaling.beta_for_targets`, the function the
single run's :func:`prepkit.simulation.compile.compile_model` calls too.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

import numpy as np
from numpy.typing import NDArray

from prepkit.metrics.absence import employed_weights
from prepkit.plan import Plan
from prepkit.simulation.compile import CompiledModel
from prepkit.simulation.diagnose import draw_error
from prepkit.simulation.draw_values import DrawValues, take_draws
from prepkit.simulation.health import failed_rows, most_substeps
from prepkit.simulation.kernels import run_draws
from prepkit.simulation.layout import (
    S_GROWTH_STEP,
    scalar_offset,
)
from prepkit.simulation.parameters import draw_betas, initial_states
from prepkit.simulation.run_checks import REPORT_SIZE
from prepkit.simulation.threads import use_all_cores
from prepkit.uncertainty.draws import (
    FINAL_NAMES,
    PEAK_NAMES,
    SERIES_NAMES,
    DrawSeries,
)
from prepkit.uncertainty.parameters import ENSEMBLE_MIN_SUBSTEPS, build_parameters, step_rule

DEFAULT_BLOCKS = 8
"""Draws are run in this many blocks, so that progress can be reported between them."""

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
        beta of each draw [per contact], or the ModelError of
        :func:`~prepkit.simulation.beta_scaling.beta_for_targets`.

    References
    ----------
    Diekmann O., Heesterbeek J.A.P., Metz J.A.J. (1990). J. Math. Biol.
    28:365-382. Wallinga J., Lipsitch M. (2007). Proc. R. Soc. B
    274:599-604 (see :mod:`prepkit.simulation.next_generation`).
    """
    return draw_betas(
        model.pc, model.layout, measure or model.inputs.transmissibility_measure, values
    )


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
    initial: NDArray[np.float64] | None = None,
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
    initial : ndarray, shape (draws, size), optional
        State at day 0 of each draw [persons]; default: from the draws'
        infections at day 0 when they carry them
        (:attr:`~prepkit.simulation.draw_values.DrawValues.initial_infections`),
        else ``model.y0`` for all.

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
    states: the parameter arrays and a float64 copy of the block's series
    are built one block at a time.
    """
    n = values.size
    days = model.horizon_days
    betas = calibrate_beta(model, values) if beta is None else np.asarray(beta, dtype=np.float64)
    out = DrawSeries(
        series=np.zeros((len(SERIES_NAMES), n, days), dtype=dtype),
        finals=np.zeros((n, len(FINAL_NAMES))),
        peaks=np.zeros((n, len(PEAK_NAMES))),
        peak_days=np.zeros((n, len(PEAK_NAMES)), dtype=np.int64),
        beta=betas,
        substeps=np.zeros(n, dtype=np.int64),
    )
    floor, limit, force_limit = step_rule(min_substeps)
    growth_limit = float(model.pc[scalar_offset(model.layout.bands) + S_GROWTH_STEP])
    limits = (limit, force_limit, most_substeps(floor, min(limit, force_limit, growth_limit)))
    if initial is None and values.initial_infections is not None:
        pop = np.array([band.people for band in plan.bands], dtype=np.float64)
        initial = initial_states(model.layout, plan.disease, pop, values.initial_infections)
    use_all_cores()
    edges = np.linspace(0, n, max(1, min(int(blocks), max(n, 1))) + 1).astype(int)
    for start, stop in zip(edges[:-1], edges[1:], strict=True):
        if stop <= start:
            continue
        y0s = (np.broadcast_to(model.y0, (stop - start, model.y0.size)) if initial is None
               else initial[start:stop])
        _run_block(model, plan, values, out, slice(start, stop), min_substeps, limits, what,
                   y0s)
        if on_block is not None:
            on_block(stop - start)
    return out


def _run_block(
    model: CompiledModel, plan: Plan, values: DrawValues, out: DrawSeries, rows: slice,
    min_substeps: int | None, limits: tuple[float, float, int], what: str,
    y0s: NDArray[np.float64],
) -> None:
    """Run the draws ``rows`` into ``out``; raise the first failing draw's error."""
    part = take_draws(values, np.arange(rows.start, rows.stop))
    pcs, itabs, floors = build_parameters(
        model, plan, part, out.beta[rows], min_substeps=min_substeps
    )
    limit, force_limit, most = limits
    reports = np.zeros((rows.stop - rows.start, REPORT_SIZE))
    # one argument type for every caller (float32 or float64 output, one block or many,
    # one draw or many): the kernel writes a float64 C-contiguous block, copied out here
    # (a float64 to float32 copy rounds as the kernel's own store would), so run_draws
    # compiles one signature (tests/uncertainty/test_signatures.py)
    series = np.zeros((out.series.shape[0], rows.stop - rows.start, out.series.shape[2]))
    run_draws(
        np.array(y0s, dtype=np.float64, order="C"),  # a writable copy: same type every call
        np.ascontiguousarray(pcs, dtype=np.float64),
        model.lay,
        np.ascontiguousarray(itabs, dtype=np.float64),
        model.iprio,
        model.cap,
        int(model.horizon_days),
        np.ascontiguousarray(floors, dtype=np.int64),
        float(limit),
        float(force_limit),
        int(most),
        np.ascontiguousarray(employed_weights(plan.bands, plan.workforce), dtype=np.float64),
        series,
        out.finals[rows],
        out.peaks[rows],
        out.peak_days[rows],
        out.substeps[rows],
        reports,
    )
    out.series[:, rows, :] = series
    bad = failed_rows(reports)
    if bad.size:
        raise draw_error(model, plan, part, pcs, reports, int(bad[0]), first=rows.start,
                         what=what)
