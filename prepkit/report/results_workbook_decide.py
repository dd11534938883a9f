"""The "Decide-by" sheet of ``results.xlsx``: one row per scenario, then the dates tried.

The figures come from :mod:`prepkit.uncertainty.decide_summary`, which also
writes them to ``summary.json`` (key ``decisions``) and ``decide-by.csv``;
the columns are declared here once, in the order of its keys.
"""

from __future__ import annotations

from openpyxl import Workbook

from prepkit.plan import Plan
from prepkit.report.results_workbook_columns import (
    DATE,
    DAYS,
    PERCENT,
    RATE,
    TEXT,
    GuideRow,
    SheetColumns,
    column,
)
from prepkit.report.results_workbook_layout import (
    PageInfo,
    finish_sheet,
    header_row,
    table_name,
    title_cell,
    write_records,
)
from prepkit.report.results_workbook_uncertainty import SheetWriter
from prepkit.uncertainty.decide_results import DecisionResults
from prepkit.uncertainty.decide_summary import (
    DECISION_KEYS,
    SEARCH_KEYS,
    decision_rows,
    search_rows,
)

__all__ = ["DECIDE_COLUMNS", "DECIDE_SEARCH_COLUMNS", "decide_sheets"]

HEADER_ROW = 3
"""Header row of the sheet (a sentence on what it shows is in row 1)."""

_SHARE = "share of the plausible futures in which ward and ICU demand stay within"
_VERDICTS = ("date (a date works), too_late (it has passed), not_enough (no date works), "
             "not_needed (enough futures stay within beds without them), no_measures (no dated "
             "measure still to come)")

DECIDE_COLUMNS = SheetColumns(
    sheet="Decide-by", file="summary.json", prefix="decisions.scenarios[n]",
    columns=(
        column("Scenario", "scenario", "text", TEXT, "Scenario name.", 24),
        column("Measures moved", "moved_measures", "text", TEXT,
               "Dated measures still to come; the search moves them together.", 24),
        column("Measures in force", "measures_in_force", "text", TEXT,
               "Measures that started by the first day of the search (not moved).", 18),
        column("Measures on a signal", "measures_on_signal", "text", TEXT,
               "Measures that start on occupancy or admissions (not moved).", 18),
        column("Planned decision", "planned_decision_date", "date", DATE,
               "The decision the planned start dates imply (first start less the delay).", 12),
        column("Verdict on the measures", "measures_verdict", "text", TEXT, _VERDICTS, 14),
        column("Bed level", "bed_level", "text", TEXT,
               "conventional (staffed beds) or contingency (with the surge beds open).", 13),
        column("Decide from", "earliest_decision_date", "date", DATE,
               "First decision date of the window that works (blank: open from the start).",
               12),
        column("Decide by", "latest_decision_date", "date", DATE,
               "Latest decision date that keeps the required share within beds.", 12),
        column("Within beds at the latest date", "within_beds_share_at_latest", "fraction",
               PERCENT, f"The {_SHARE} the bed level's beds, deciding on the latest date."),
        column("Signal: 7-day average of admissions", "signal_admissions_7day_average_per_day",
               "persons/day", RATE,
               "Act when the average of the last 7 days' new admissions reaches this."),
        column("Within staffed beds, as planned", "within_beds_share_as_planned_conventional",
               "fraction", PERCENT, f"The {_SHARE} the staffed beds, with the planned dates."),
        column("With surge, as planned", "within_beds_share_as_planned_contingency",
               "fraction", PERCENT, f"The {_SHARE} the beds with surge, planned dates."),
        column("Within staffed beds, decided now", "within_beds_share_decided_now_conventional",
               "fraction", PERCENT, f"The {_SHARE} the staffed beds, deciding now."),
        column("With surge, decided now", "within_beds_share_decided_now_contingency",
               "fraction", PERCENT, f"The {_SHARE} the beds with surge, deciding now."),
        column("Within staffed beds, without them",
               "within_beds_share_without_moved_measures_conventional", "fraction", PERCENT,
               f"The {_SHARE} the staffed beds without the moved measures."),
        column("With surge, without them",
               "within_beds_share_without_moved_measures_contingency", "fraction", PERCENT,
               f"The {_SHARE} the beds with surge, without the moved measures."),
        column("Verdict on surge beds", "surge_verdict", "text", TEXT,
               "date, too_late, not_enough, not_needed or no_surge_beds (with the measures "
               "as planned).", 14),
        column("Order surge beds by", "surge_latest_order_date", "date", DATE,
               "Latest order date so that the surge beds open in time in enough futures.", 12),
        column("Days to open surge beds", "surge_lead_days", "days", DAYS,
               "Whole days from the order until the surge beds take patients."),
        column("Surge beds enough", "surge_enough_share", "fraction", PERCENT,
               "Share of futures whose demand stays within the beds with surge."),
        column("Ensemble runs", "ensemble_runs_count", "count", DAYS,
               "Start dates tried for the scenario, each on the same futures."),
    ),
)
"""Columns of the "Decide-by" sheet, in the order of :data:`DECISION_KEYS`."""

DECIDE_SEARCH_COLUMNS = SheetColumns(
    sheet="Decide-by dates tried", file="decide-by.csv", prefix="",
    columns=(
        column("Scenario", "scenario", "text", TEXT, "Scenario name.", 24),
        column("Decision", "decision_date", "date", DATE, "Date of the decision.", 12),
        column("Start", "start_date", "date", DATE,
               "Start of the first moved measure (the decision plus the delay).", 12),
        column("Within staffed beds", "within_beds_share_conventional", "fraction", PERCENT,
               f"The {_SHARE} the staffed beds."),
        column("Within beds with surge", "within_beds_share_contingency", "fraction", PERCENT,
               f"The {_SHARE} the beds with the surge beds open."),
    ),
)
"""Columns of the dates tried (the chart's figures), in the order of :data:`SEARCH_KEYS`."""

assert tuple(c.name for c in DECIDE_COLUMNS.columns) == DECISION_KEYS
assert tuple(c.name for c in DECIDE_SEARCH_COLUMNS.columns) == SEARCH_KEYS


def decide_sheets(plan: Plan, decisions: DecisionResults | None) -> tuple[SheetWriter, ...]:
    """Writers of the "Decide-by" sheets; none without a search."""
    if decisions is None or not decisions.scenarios:
        return ()
    rows = decision_rows(plan, decisions)
    tried = search_rows(plan, decisions)
    now = plan.date_of(decisions.now_day).isoformat()

    def summary(wb: Workbook, page: PageInfo) -> list[GuideRow]:
        ws = wb.create_sheet(DECIDE_COLUMNS.sheet)
        title_cell(ws, f"Decide-by dates from {now}: at least {decisions.target_share:.0%} of "
                       f"the plausible futures within beds; decisions take effect "
                       f"{decisions.delay_days} days later", size="normal")
        header_row(ws, HEADER_ROW, DECIDE_COLUMNS)
        last = write_records(ws, HEADER_ROW, DECIDE_COLUMNS, rows)
        finish_sheet(ws, page, subject="Decide-by dates", title_rows=(HEADER_ROW, HEADER_ROW),
                     last_row=last, last_col=len(DECIDE_COLUMNS.columns),
                     freeze=f"B{HEADER_ROW + 1}", table=table_name(DECIDE_COLUMNS.sheet))
        return DECIDE_COLUMNS.guide_rows()

    def dates(wb: Workbook, page: PageInfo) -> list[GuideRow]:
        ws = wb.create_sheet(DECIDE_SEARCH_COLUMNS.sheet)
        title_cell(ws, f"Every start tried, on {decisions.draws:,} futures each",
                   size="normal")
        header_row(ws, HEADER_ROW, DECIDE_SEARCH_COLUMNS)
        last = write_records(ws, HEADER_ROW, DECIDE_SEARCH_COLUMNS, tried)
        finish_sheet(ws, page, subject="Decide-by dates tried",
                     title_rows=(HEADER_ROW, HEADER_ROW), last_row=last,
                     last_col=len(DECIDE_SEARCH_COLUMNS.columns), freeze=f"B{HEADER_ROW + 1}",
                     table=table_name(DECIDE_SEARCH_COLUMNS.sheet))
        return DECIDE_SEARCH_COLUMNS.guide_rows()

    return (summary, dates)
