"""The ensemble as a JSON-serialisable dictionary (for the run's JSON summary)."""

from __future__ import annotations

from typing import Any

import pandas as pd

from prepkit.base.json_values import jsonable
from prepkit.uncertainty.results import EnsembleResult, UncertaintyResults

UNCERTAINTY_SUMMARY_VERSION = 2  # 2: deaths keys say "hospital_deaths"
"""Bumped when keys of :func:`uncertainty_summary_dict` are renamed or removed."""


def _records(frame: pd.DataFrame, index_name: str | None = None) -> list[dict[str, Any]]:
    rows = []
    for key, row in frame.iterrows():
        item = {str(k): jsonable(v) for k, v in row.items()}
        if index_name is not None:
            item = {index_name: jsonable(key), **item}
        rows.append(item)
    return rows


def _ensemble_dict(result: EnsembleResult, include_daily: bool) -> dict[str, Any]:
    summary = {
        str(metric): {str(k): jsonable(v) for k, v in row.items()}
        for metric, row in result.summary.iterrows()
    }
    peak_dates = {
        str(name): {str(k): jsonable(v) for k, v in row.items()}
        for name, row in result.peak_dates.iterrows()
    }
    any_day = {
        f"{bed}_{column}": jsonable(value)
        for bed, row in result.exceedance_any_day.iterrows()
        for column, value in row.items()
    }
    out: dict[str, Any] = {
        "draws_count": result.draws,
        "summary": summary,
        "exceedance_any_day": any_day,
        "peak_dates": peak_dates,
        "tornado_peak_icu_demand": _records(result.tornado_peak_icu),
        "tornado_unmet_bed_days": _records(result.tornado_unmet),
    }
    if include_daily:
        out["daily"] = _records(result.daily, "date")
        out["exceedance_daily"] = _records(result.exceedance, "date")
    return out


def uncertainty_summary_dict(
    uncertainty: UncertaintyResults, *, include_daily: bool = False
) -> dict[str, Any]:
    """The ensemble as a JSON-serialisable dictionary (for the run's JSON summary).

    Parameters
    ----------
    uncertainty : UncertaintyResults
        From :func:`prepkit.uncertainty.plan_runs.run_uncertainty`.
    include_daily : bool
        Also include the daily quantile bands and exceedance probabilities
        (long; the CSV files are the better home for them).

    Returns
    -------
    dict
        Keys carry units; dates are ISO strings; NaN and infinities are
        None. ``method`` states the sampling rules in words. Run times are
        left out so that the same plan always gives the same dictionary.
    """
    return {
        "version": UNCERTAINTY_SUMMARY_VERSION,
        "draws_per_scenario_variant_count": uncertainty.draws,
        "seed": uncertainty.seed,
        "quantiles": [float(q) for q in uncertainty.quantiles],
        "dimensions": list(uncertainty.dimensions),
        "method": {
            "distribution": "beta-PERT, lambda 4, mode = Central; point mass when Low = High",
            "design": "Latin hypercube, one dimension per field; per-band fields comonotone",
            "levels": (
                "transmissibility and the admitted and ICU shares are drawn around the "
                "scenario's level: low [Low, Central] mode Low; central [Low, High] mode "
                "Central; high [Central, High] mode High (doubling time read inverted); "
                "every other field over [Low, High] with mode Central"
            ),
            "common_draws": "the same quantiles for every scenario and both variants",
            "tornado": (
                "each field at the two ends of the range it is drawn from, all others at "
                "their modes; outputs peak ICU demand and ward plus ICU unmet bed-days "
                "without surge"
            ),
        },
        "scenarios": [
            {
                "name": item.scenario,
                "with_interventions": _ensemble_dict(item.with_interventions, include_daily),
                "without_interventions": _ensemble_dict(item.without_interventions,
                                                        include_daily),
            }
            for item in uncertainty.scenarios
        ],
    }
