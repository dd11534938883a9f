"""The decide-by dates as plain rows: summary.json ``decisions``, results.xlsx and the CSV.

One set of rows serves every file (the columns are declared once, in
:mod:`prepkit.report.results_workbook_decide`).
"""

from __future__ import annotations

from typing import Any

from prepkit.plan import Plan
from prepkit.uncertainty.decide_results import BED_LEVELS, DecisionResults

__all__ = ["DECISION_KEYS", "SEARCH_KEYS", "decision_rows", "decisions_summary", "search_rows"]

DECISION_KEYS: tuple[str, ...] = (
    "scenario",
    "moved_measures",
    "measures_in_force",
    "measures_on_signal",
    "planned_decision_date",
    "measures_verdict",
    "bed_level",
    "earliest_decision_date",
    "latest_decision_date",
    "within_beds_share_at_latest",
    "signal_admissions_7day_average_per_day",
    "within_beds_share_as_planned_conventional",
    "within_beds_share_as_planned_contingency",
    "within_beds_share_decided_now_conventional",
    "within_beds_share_decided_now_contingency",
    "within_beds_share_without_moved_measures_conventional",
    "within_beds_share_without_moved_measures_contingency",
    "surge_verdict",
    "surge_latest_order_date",
    "surge_lead_days",
    "surge_enough_share",
    "ensemble_runs_count",
)
"""Keys of one scenario's row, in column order (units in the names; shares are fractions)."""

SEARCH_KEYS: tuple[str, ...] = (
    "scenario",
    "decision_date",
    "start_date",
    "within_beds_share_conventional",
    "within_beds_share_contingency",
)
"""Keys of one evaluated start of the search."""


def _date(plan: Plan, day: int | None) -> str | None:
    return None if day is None else plan.date_of(day).isoformat()


def decision_rows(plan: Plan, decisions: DecisionResults) -> list[dict[str, Any]]:
    """One row per scenario, keys :data:`DECISION_KEYS` (dates as ISO strings)."""
    rows = []
    for item in decisions.scenarios:
        m, s = item.measures, item.surge
        row: dict[str, Any] = {
            "scenario": item.scenario,
            "moved_measures": "; ".join(item.moved),
            "measures_in_force": "; ".join(item.in_force),
            "measures_on_signal": "; ".join(item.on_signal),
            "planned_decision_date": _date(plan, item.planned_decision_day),
            "measures_verdict": m.verdict,
            "bed_level": m.level,
            "earliest_decision_date": _date(plan, m.earliest_decision_day),
            "latest_decision_date": _date(plan, m.latest_decision_day),
            "within_beds_share_at_latest": m.share_at_latest,
            "signal_admissions_7day_average_per_day": m.signal_admissions_per_day,
        }
        for name, shares in (("as_planned", item.share_as_planned),
                             ("decided_now", item.share_now),
                             ("without_moved_measures", item.share_never)):
            for level in BED_LEVELS:
                row[f"within_beds_share_{name}_{level}"] = shares[level]
        row.update({
            "surge_verdict": s.verdict,
            "surge_latest_order_date": _date(plan, s.latest_order_day),
            "surge_lead_days": s.lead_days,
            "surge_enough_share": s.share_enough,
            "ensemble_runs_count": item.runs,
        })
        assert tuple(row) == DECISION_KEYS
        rows.append(row)
    return rows


def search_rows(plan: Plan, decisions: DecisionResults) -> list[dict[str, Any]]:
    """Every evaluated start of every scenario, keys :data:`SEARCH_KEYS`."""
    return [
        {
            "scenario": item.scenario,
            "decision_date": _date(plan, point.decision_day),
            "start_date": _date(plan, point.start_day),
            "within_beds_share_conventional": point.within_share["conventional"],
            "within_beds_share_contingency": point.within_share["contingency"],
        }
        for item in decisions.scenarios
        for point in item.points
    ]


def decisions_summary(plan: Plan, decisions: DecisionResults) -> dict[str, Any]:
    """The ``decisions`` part of summary.json."""
    return {
        "now_date": _date(plan, decisions.now_day),
        "within_beds_share_required": decisions.target_share,
        "decision_delay_days": decisions.delay_days,
        "draws_per_evaluated_date_count": decisions.draws,
        "ensemble_runs_count": decisions.runs,
        "bed_levels": {
            "conventional": "staffed beds not used by other patients",
            "contingency": "conventional plus the surge beds, taken as open in time",
        },
        "scenarios": decision_rows(plan, decisions),
        "search": search_rows(plan, decisions),
    }
