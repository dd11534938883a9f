"""One-at-a-time sensitivity (tornado): each uncertain field at the two ends of its range.

All other fields stay at their modes (the scenario's own run). The outputs
are the peak ICU demand [beds] and the ward plus ICU unmet bed-days without
surge [bed-days]; rows are sorted by swing, largest first.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import numpy as np
import pandas as pd

from prepkit.base.blas import one_blas_thread
from prepkit.plan import Plan
from prepkit.simulation.compile import CompiledModel
from prepkit.simulation.identity import Shared, draws_key
from prepkit.uncertainty.draw_metrics import draw_scalars, peak_days
from prepkit.uncertainty.draws import DrawSeries, FieldRange, mode_values, values_from
from prepkit.uncertainty.ensemble import simulate_draws
from prepkit.uncertainty.fields import outcome_values

ICU_COLUMNS = ["field", "label", "unit", "per_band", "input_low", "input_high",
               "peak_icu_demand_at_low_beds", "peak_icu_demand_at_high_beds",
               "peak_icu_demand_baseline_beds", "swing_beds"]
"""Columns of the tornado on peak ICU demand."""

UNMET_COLUMNS = ICU_COLUMNS[:6] + ["unmet_bed_days_at_low", "unmet_bed_days_at_high",
                                   "unmet_bed_days_baseline", "swing_bed_days"]
"""Columns of the tornado on unmet bed-days."""


def is_intervention_field(item: FieldRange) -> bool:
    """True for the fields of an intervention (compliance, vaccine efficacy)."""
    return item.key.startswith(("compliance[", "efficacy_"))


def _rows(
    relevant: Sequence[FieldRange], peak_icu: Any, unmet: Any
) -> tuple[list[dict[str, Any]], list[dict[str, Any]]]:
    rows_icu, rows_unmet = [], []
    for k, item in enumerate(relevant):
        lo, hi = 1 + 2 * k, 2 + 2 * k
        head = {
            "field": item.key,
            "label": item.label,
            "unit": item.unit,
            "per_band": item.per_band,
            "input_low": None if item.per_band else float(item.low[0]),
            "input_high": None if item.per_band else float(item.high[0]),
        }
        rows_icu.append({
            **head,
            "peak_icu_demand_at_low_beds": float(peak_icu[lo]),
            "peak_icu_demand_at_high_beds": float(peak_icu[hi]),
            "peak_icu_demand_baseline_beds": float(peak_icu[0]),
            "swing_beds": float(abs(peak_icu[hi] - peak_icu[lo])),
        })
        rows_unmet.append({
            **head,
            "unmet_bed_days_at_low": float(unmet[lo]),
            "unmet_bed_days_at_high": float(unmet[hi]),
            "unmet_bed_days_baseline": float(unmet[0]),
            "swing_bed_days": float(abs(unmet[hi] - unmet[lo])),
        })
    return rows_icu, rows_unmet


def _sorted(rows: list[dict[str, Any]], columns: list[str], by: str) -> pd.DataFrame:
    table = pd.DataFrame(rows, columns=columns)
    return table.sort_values(by, ascending=False, kind="stable").reset_index(drop=True)


@one_blas_thread
def tornado(
    plan: Plan,
    model: CompiledModel,
    fields: Sequence[FieldRange],
    min_substeps: int | None,
    *,
    shared: Shared | None = None,
) -> tuple[pd.DataFrame, pd.DataFrame, dict[str, float], dict[str, int]]:
    """One-at-a-time swings; also returns the baseline run's scalars and peak days.

    Parameters
    ----------
    plan : Plan
        The plan.
    model : CompiledModel
        Compiled central run of the scenario variant.
    fields : sequence of UncertainField
        The scenario's fields; point fields, and intervention fields of a
        run without interventions, are left out.
    min_substeps : int or None
        Fewest RK4 steps per day (None: the engine's rule).
    shared : Shared, optional
        Runs already made for identical inputs (the same
        :func:`prepkit.simulation.identity.draws_key`), handed out again.

    Returns
    -------
    tuple
        Tornado on peak ICU demand, tornado on unmet bed-days, the run at
        the modes' scalar outputs and its peak days [days since day 0].
    """
    relevant = [
        item for item in fields
        if not item.is_point and not item.outcome
        and (model.with_interventions or not is_intervention_field(item))
    ]
    count = 1 + 2 * len(relevant)
    got = mode_values(fields, count)
    for k, item in enumerate(relevant):
        for row, end in ((1 + 2 * k, item.low), (2 + 2 * k, item.high)):
            got[item.key][row] = end if item.per_band else end[0]
    values = values_from(got, count)

    def simulate() -> DrawSeries:
        return simulate_draws(
            model, plan, values, min_substeps=min_substeps, blocks=1,
            dtype=np.float64, what="one-input-at-a-time run",
        )

    draws = simulate() if shared is None else shared.once(
        "tornado", draws_key(model, plan, values, min_substeps, 1, "float64"), simulate)
    scalars, _ = draw_scalars(plan, draws, outcome_values(fields, None, count))
    rows_icu, rows_unmet = _rows(
        relevant, scalars["peak_icu_demand_beds"], scalars["total_unmet_bed_days"]
    )
    baseline = {key: float(value[0]) for key, value in scalars.items()}
    days = {key: int(value[0])
            for key, value in peak_days(draws, plan.capacity.catchment_share).items()}
    return (
        _sorted(rows_icu, ICU_COLUMNS, "swing_beds"),
        _sorted(rows_unmet, UNMET_COLUMNS, "swing_bed_days"),
        baseline,
        days,
    )
