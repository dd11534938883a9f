"""The fit's sheets of ``results.xlsx``: "Fit" (what was estimated and checked) and "Fit by day".

The figures come from :mod:`prepkit.fitting.summary`, which also writes them to
``summary.json`` (key ``fit``) and ``fit-daily.csv``; the columns are declared
here once.
"""

from __future__ import annotations

import datetime as dt
from typing import Any

from openpyxl import Workbook

from prepkit.fitting.diagnostics import (
    ACCEPTANCE_RANGE,
    MIN_COVERAGE,
    MIN_EFFECTIVE_DRAWS,
    P_VALUE_RANGE,
    RHAT_LIMIT,
)
from prepkit.fitting.project import FitOutcome
from prepkit.fitting.summary import FIT_DAILY_COLUMNS as DAILY_COLUMNS
from prepkit.fitting.summary import fit_daily_rows, fit_summary
from prepkit.plan import Plan
from prepkit.report.results_workbook_columns import (
    DATE,
    ONE_DECIMAL,
    TEXT,
    GuideRow,
    SheetColumns,
    column,
)
from prepkit.report.results_workbook_layout import (
    PageInfo,
    finish_sheet,
    header_row,
    put,
    table_name,
    title_cell,
)
from prepkit.report.results_workbook_uncertainty import SheetWriter
from prepkit.report.safety import write_text_row

__all__ = ["FIT_COLUMNS", "FIT_DAILY_COLUMNS", "fit_sheets"]

HEADER_ROW = 3
"""Header row of the fit sheets (a sentence on what they show is in row 1)."""

_NUMBER = "#,##0.000"
"""Fitted figures of many sizes (R, rates per day, persons): three decimals."""

FIT_COLUMNS = SheetColumns(
    sheet="Fit", file="summary.json", prefix="fit",
    columns=(
        column("Part", "part", "text", TEXT, "Estimate, growth, scenario check or diagnostic.",
               20),
        column("Figure", "figure", "text", TEXT, "What the row is about.", 44),
        column("Value", "value", "unit of the row", _NUMBER,
               "Median of the posterior; for a scenario, the observed total of new "
               "admissions; for a diagnostic, its value."),
        column("Low", "low", "unit of the row", _NUMBER,
               "5% of the posterior (2.5% of the scenario's draws for a scenario check)."),
        column("High", "high", "unit of the row", _NUMBER,
               "95% of the posterior (97.5% of the scenario's draws for a scenario check)."),
        column("Unit", "unit", "text", TEXT, "Unit of the row's figures.", 14),
        column("Note", "note", "text", TEXT, "The prior range, the verdict or the limit.", 48),
    ),
)
"""Columns of the "Fit" sheet (the figures under ``fit`` in summary.json)."""

FIT_DAILY_COLUMNS = SheetColumns(
    sheet="Fit by day", file="fit-daily.csv", prefix="",
    columns=tuple(
        column(heading, key, "date" if key == "date" else "persons",
               DATE if key == "date" else ONE_DECIMAL,
               "Day." if key == "date" else f"{heading} (per day for admissions).",
               12 if key == "date" else 11)
        for key, heading in DAILY_COLUMNS
    ),
)
"""Columns of the "Fit by day" sheet (the columns of fit-daily.csv)."""


def _fit_rows(summary: dict[str, Any]) -> list[tuple[Any, ...]]:
    rows: list[tuple[Any, ...]] = []
    for e in summary.get("estimates", []):
        rows.append(("Estimate", e["label"], e["median"], e["low_5"], e["high_95"], e["unit"],
                     f"prior range {e['prior_low']:.4g} to {e['prior_high']:.4g}"))
    growth = summary.get("growth", [])
    for g in growth:
        when = ("over the observed days" if len(growth) == 1
                else "before the change date" if g["period"] == "before"
                else "after the change date")
        for key, words, unit in (
            ("growth_rate_per_day", "Growth rate", "per day"),
            ("doubling_or_halving_days", "Doubling (or halving) time", "days"),
            ("reproduction_number", "Reproduction number", ""),
        ):
            v = g[key]
            if v is None:
                rows.append((f"Growth {when}", words, None, None, None, unit,
                             "growth rate's 90% range holds 0"))
                continue
            rows.append((f"Growth {when}", words, v["median"], v["low_5"], v["high_95"], unit,
                         ""))
    checks = summary.get("scenarios_against_figures", {})
    for c in checks.get("scenarios", []):
        verdict = "consistent with the figures" if c["consistent"] else "ruled out by the figures"
        rows.append(("Scenario against the figures", c["scenario"], c["observed_total_persons"],
                     c["draws_low_2_5_persons"], c["draws_high_97_5_persons"], "persons",
                     f"{verdict} ({checks['rule']})"))
    diagnostics = summary.get("diagnostics", {})
    for label, value in diagnostics.get("split_rhat", {}).items():
        rows.append(("Diagnostic", f"Split R-hat: {label}", value, None, None, "",
                     f"at most {RHAT_LIMIT:.2f}"))
    for label, value in diagnostics.get("effective_draws", {}).items():
        rows.append(("Diagnostic", f"Effective draws: {label}", value, None, None, "draws",
                     f"at least {MIN_EFFECTIVE_DRAWS}"))
    if diagnostics:
        rows.append(("Diagnostic", "Acceptance of the sampler's moves",
                     diagnostics["acceptance"], None, None, "fraction",
                     f"{ACCEPTANCE_RANGE[0]:.0%} to {ACCEPTANCE_RANGE[1]:.0%}"))
        rows.append(("Diagnostic", "Observed rows inside the fitted 90% range",
                     diagnostics["predictive_coverage_90"], None, None, "fraction",
                     f"at least {MIN_COVERAGE:.0%}"))
        rows.append(("Diagnostic", "Posterior-predictive p-value",
                     diagnostics["predictive_p_value"], None, None, "",
                     f"{P_VALUE_RANGE[0]:.3g} to {P_VALUE_RANGE[1]:.3g}"))
    return rows


def fit_sheets(plan: Plan, fit: FitOutcome | None) -> tuple[SheetWriter, ...]:
    """Writers of the "Fit" and "Fit by day" sheets; none without a fit report.

    Parameters
    ----------
    plan : Plan
        The plan the projections ran.
    fit : FitOutcome or None
        What came of the fit.

    Returns
    -------
    tuple of callable
        Sheet writers for :func:`prepkit.report.results_workbook.results_workbook`.
    """
    summary = fit_summary(fit)
    if fit is None or fit.report is None or summary is None:
        return ()
    daily = fit_daily_rows(fit, plan)
    words = ("The projections start from this fit." if fit.used
             else "The projections do not use this fit: " + fit.reason)

    def estimates(wb: Workbook, page: PageInfo) -> list[GuideRow]:
        ws = wb.create_sheet("Fit")
        title_cell(ws, f"The fit to the observed figures up to {summary['as_of']}. {words}",
                   size="normal")
        header_row(ws, HEADER_ROW, FIT_COLUMNS)
        row = HEADER_ROW
        for values in _fit_rows(summary):
            row += 1
            write_text_row(ws, row, [str(values[0]), str(values[1])], start_col=1)
            for col in (3, 4, 5):
                put(ws, row, col, values[col - 1], _NUMBER)
            write_text_row(ws, row, [str(values[5]), str(values[6])], start_col=6)
        finish_sheet(ws, page, subject="Fit to the observed figures",
                     title_rows=(HEADER_ROW, HEADER_ROW), last_row=row,
                     last_col=len(FIT_COLUMNS.columns), freeze=f"C{HEADER_ROW + 1}",
                     table=table_name("Fit"))
        return FIT_COLUMNS.guide_rows()

    def by_day(wb: Workbook, page: PageInfo) -> list[GuideRow]:
        ws = wb.create_sheet("Fit by day")
        title_cell(ws, "The observed figures beside the fitted model: median, 50% and 90% "
                       "ranges", size="normal")
        header_row(ws, HEADER_ROW, FIT_DAILY_COLUMNS)
        row = HEADER_ROW
        for record in daily:
            row += 1
            for col, c in enumerate(FIT_DAILY_COLUMNS.columns, start=1):
                value = record[c.name]
                if c.name == "date":
                    value = dt.date.fromisoformat(value)
                put(ws, row, col, value, c.number_format)
        finish_sheet(ws, page, subject="Fit by day", title_rows=(HEADER_ROW, HEADER_ROW),
                     last_row=row, last_col=len(FIT_DAILY_COLUMNS.columns),
                     freeze=f"B{HEADER_ROW + 1}", table=table_name("Fit by day"))
        return FIT_DAILY_COLUMNS.guide_rows()

    return (estimates, by_day)
