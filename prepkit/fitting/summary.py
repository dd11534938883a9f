"""The fit as plain tables: one source for summary.json, results.xlsx and fit-daily.csv."""

from __future__ import annotations

import datetime as dt
from typing import Any

import numpy as np

from prepkit.fitting.findings import BAND_QUANTILES, RULED_OUT_TAILS
from prepkit.fitting.project import FitOutcome
from prepkit.plan import Plan

__all__ = ["FIT_DAILY_COLUMNS", "fit_daily_rows", "fit_summary"]

_SERIES = (("admissions", "admissions_per_day"), ("ward", "ward_census_persons"),
           ("icu", "icu_census_persons"))

FIT_DAILY_COLUMNS: tuple[tuple[str, str], ...] = (
    ("date", "Date"),
    ("observed_admissions_persons", "Observed new admissions"),
    ("observed_ward_census_persons", "Observed ward patients"),
    ("observed_icu_census_persons", "Observed ICU patients"),
    *((f"fitted_{long}_q{round(q * 100):02d}",
       f"Fitted {word} {round(q * 100)}%")
      for short, long in _SERIES
      for word in ({"admissions": "admissions", "ward": "ward patients",
                    "icu": "ICU patients"}[short],)
      for q in BAND_QUANTILES),
)
"""Columns of the fitted daily table: key and heading. Observed admissions are per row as
the workbook gives them (weekly totals on the week's last day); the fitted series are per day
[persons/day; persons]."""


def _triple(values: tuple[float, float, float]) -> dict[str, float | None]:
    mid, low, high = values
    return {"median": _finite(mid), "low_5": _finite(low), "high_95": _finite(high)}



def fit_daily_rows(outcome: FitOutcome | None, plan: Plan) -> list[dict[str, Any]]:
    """One row per fitted day: the observed figures beside the fitted quantiles.

    Parameters
    ----------
    outcome : FitOutcome or None
        What came of the fit (rows only when there is a report).
    plan : Plan
        The plan (day 0 and the observed figures as the workbook gives them).

    Returns
    -------
    list of dict
        Keys of :data:`FIT_DAILY_COLUMNS`; blank figures are None.
    """
    if outcome is None:
        return []
    observed = {o.date: (o.admissions, o.ward_census, o.icu_census) for o in plan.observed}
    day0 = plan.details.day0
    report = outcome.report
    if report is None:
        return []
    rows = []
    for day in report.days:
        date = day0 + dt.timedelta(days=int(day))
        seen = observed.get(date, (None, None, None))
        row: dict[str, Any] = {
            "date": date.isoformat(),
            "observed_admissions_persons": seen[0],
            "observed_ward_census_persons": seen[1],
            "observed_icu_census_persons": seen[2],
        }
        for short, long in _SERIES:
            for j, q in enumerate(BAND_QUANTILES):
                row[f"fitted_{long}_q{round(q * 100):02d}"] = float(report.bands[short][j, day])
        rows.append(row)
    return rows


def fit_summary(outcome: FitOutcome | None) -> dict[str, Any] | None:
    """The fit for summary.json: estimates, growth, scenario checks, narrowing, diagnostics."""
    if outcome is None:
        return None
    report = outcome.report
    out: dict[str, Any] = {"projections_fitted": outcome.used, "reason": outcome.reason}
    if report is None:
        return out
    checks = report.fitted.checks
    labels = [e.label for e in report.estimates]
    out.update({
        "as_of": report.as_of.isoformat(),
        "estimates": [
            {"input": e.key, "label": e.label, "unit": e.unit, "median": e.median,
             "low_5": e.low, "high_95": e.high, "prior_low": e.prior_low,
             "prior_high": e.prior_high}
            for e in report.estimates
        ],
        "growth": [
            {"period": g.period, "trend": g.trend,
             "growth_rate_per_day": _triple(g.growth_rate),
             "doubling_or_halving_days": (None if g.doubling_days is None
                                          else _triple(g.doubling_days)),
             "reproduction_number": _triple(g.reproduction_number)}
            for g in report.growth
        ],
        "scenarios_against_figures": {
            "rule": (f"ruled out when the observed total of new admissions lies below "
                     f"{RULED_OUT_TAILS[0]:.1%} or above {RULED_OUT_TAILS[1]:.1%} of the "
                     "scenario's draws' totals"),
            "scenarios": [
                {"scenario": c.scenario, "observed_total_persons": c.observed_total,
                 "draws_low_2_5_persons": c.low, "draws_high_97_5_persons": c.high,
                 "share_of_draws_below": c.share_below, "consistent": c.consistent}
                for c in report.consistency
            ],
        },
        "peak_admissions_90_range_per_day": {
            "before_fit": list(report.narrowing[0]), "after_fit": list(report.narrowing[1])},
        "diagnostics": {
            "split_rhat": dict(zip(labels, map(float, checks.rhat), strict=True)),
            "effective_draws": dict(zip(labels, map(float, checks.effective), strict=True)),
            "acceptance": checks.acceptance,
            "predictive_coverage_90": checks.predictive.coverage,
            "predictive_p_value": checks.predictive.p_value,
            "converged": checks.converged,
            "problems": list(checks.problems),
        },
    })
    return out


def _finite(x: float) -> float | None:
    """A number for JSON, None for an infinite one (a doubling time at zero growth)."""
    return float(x) if np.isfinite(x) else None
