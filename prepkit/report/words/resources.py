"""Words of the resources beyond beds: the gap table and what runs short first.

The figures are the central run's, with measures
(:func:`prepkit.metrics.resources.resource_gaps`); beds and people are whole.
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Sequence
from dataclasses import dataclass

from prepkit.metrics.resources import ResourceGap
from prepkit.plan import Plan
from prepkit.report.words.formatting import format_date, format_number, name_list, quoted
from prepkit.report.words.views import ScenarioView

__all__ = ["RESOURCE_WORDS", "GapTable", "first_short_sentence", "gap_table"]

#: Each resource in words: (group, row label).
RESOURCE_WORDS: dict[str, tuple[str, str]] = {
    "ward_beds_conventional": ("Ward beds", "Staffed beds (conventional)"),
    "ward_beds_contingency": ("Ward beds", "With surge beds (contingency)"),
    "ward_beds_crisis": ("Ward beds", "With crisis space (crisis)"),
    "ward_beds_after_absence": ("Ward beds", "Staffed beds after staff absence"),
    "icu_beds_conventional": ("ICU beds", "Staffed beds (conventional)"),
    "icu_beds_contingency": ("ICU beds", "With surge beds (contingency)"),
    "icu_beds_crisis": ("ICU beds", "With crisis space (crisis)"),
    "icu_beds_after_absence": ("ICU beds", "Staffed beds after staff absence"),
    "ventilators": ("Equipment and supplies", "Ventilators"),
    "oxygen": ("Equipment and supplies", "Oxygen"),
    "gowns": ("Equipment and supplies", "Gowns"),
    "gloves": ("Equipment and supplies", "Glove pairs"),
    "respirators": ("Equipment and supplies", "Respirators"),
    "mortuary": ("Equipment and supplies", "Mortuary spaces"),
}

#: Names in a sentence (what runs short first).
_SHORT_NAMES: dict[str, str] = {
    "ward_beds_conventional": "staffed ward beds",
    "ward_beds_contingency": "ward beds with surge beds open",
    "ward_beds_crisis": "ward beds with crisis space",
    "ward_beds_after_absence": "ward beds once staff are absent",
    "icu_beds_conventional": "staffed ICU beds",
    "icu_beds_contingency": "ICU beds with surge beds open",
    "icu_beds_crisis": "ICU beds with crisis space",
    "icu_beds_after_absence": "ICU beds once staff are absent",
    "ventilators": "ventilators",
    "oxygen": "oxygen",
    "gowns": "gowns",
    "gloves": "glove pairs",
    "respirators": "respirators",
    "mortuary": "mortuary spaces",
}

_UNIT_WORDS = {"beds": "beds", "devices": "", "L/min": "L/min", "items/day": "a day",
               "spaces": ""}


def _amount(value: float, unit: str) -> str:
    words = _UNIT_WORDS.get(unit, unit)
    shown = format_number(value)
    if words == "beds" and shown in ("1", "<1"):
        words = "bed"
    return f"{shown} {words}".strip()


def _supply(plan: Plan, gap: ResourceGap) -> str:
    capacity, supplies = plan.capacity, plan.supplies
    kind = gap.resource.split("_", 1)[0]
    if gap.resource.endswith("_conventional"):
        return f"{format_number(gap.supply)} available"
    if gap.resource.endswith("_contingency"):
        surge = capacity.surge_ward_beds if kind == "ward" else capacity.surge_icu_beds
        return f"plus {format_number(surge)} surge"
    if gap.resource.endswith("_crisis"):
        crisis = capacity.crisis_ward_beds if kind == "ward" else capacity.crisis_icu_beds
        return f"plus {format_number(crisis)} crisis-space"
    if gap.resource.endswith("_after_absence"):
        return f"{format_number(gap.supply)} with all staff at work; fewer with absence"
    if gap.supply is None:
        return "not given"
    if gap.unit == "items/day":
        item = supplies.stock_item(gap.resource)
        text = f"{format_number(gap.supply)} in stock"
        if item.resupply_per_day > 0:
            text += f", {format_number(item.resupply_per_day)} a day"
        return text
    if gap.unit == "L/min":
        return f"{format_number(gap.supply)} L/min"
    return format_number(gap.supply)


def _cell(gap: ResourceGap, year: int) -> str:
    need = _amount(gap.peak_need, gap.unit)
    if not gap.compared:
        return f"need up to {need}"
    if gap.days_short_days == 0:
        return f"enough (need up to {need})"
    when = format_date(gap.first_short_date, year=gap.first_short_date is not None
                       and gap.first_short_date.year != year)
    days = "1 day" if gap.days_short_days == 1 else f"{gap.days_short_days} days"
    return f"{days} short from {when}; worst {_amount(gap.largest_gap, gap.unit)} short"


@dataclass(frozen=True, kw_only=True)
class GapTable:
    """The gap table: one row per resource, one cell per scenario.

    Attributes
    ----------
    scenarios : tuple of str
        Scenario names (the columns).
    groups : tuple of (str, tuple of (str, str, tuple of str))
        Per group (ward beds, ICU beds, equipment and supplies), its rows:
        label, supply and one cell per scenario.
    not_given : str
        The supplies the workbook gives no figure for, in words (empty when
        all are given).
    year : int
        Year of the dates shown without one.
    """

    scenarios: tuple[str, ...]
    groups: tuple[tuple[str, tuple[tuple[str, str, tuple[str, ...]], ...]], ...]
    not_given: str
    year: int


def gap_table(plan: Plan, views: Sequence[ScenarioView]) -> GapTable | None:
    """The gap table of every scenario with its measures; None without resource figures."""
    if not views or not views[0].with_metrics.resources:
        return None
    year = plan.details.day0.year
    first = views[0].with_metrics.resources
    groups: dict[str, list[tuple[str, str, tuple[str, ...]]]] = {}
    for i, gap in enumerate(first):
        group, label = RESOURCE_WORDS[gap.resource]
        cells = tuple(_cell(view.with_metrics.resources[i], year) for view in views)
        groups.setdefault(group, []).append((label, _supply(plan, gap), cells))
    missing = [RESOURCE_WORDS[g.resource][1].lower() for g in first if not g.compared]
    return GapTable(
        scenarios=tuple(view.name for view in views),
        groups=tuple((name, tuple(rows)) for name, rows in groups.items()),
        not_given=name_list(missing),
        year=year,
    )


def first_short_sentence(views: Sequence[ScenarioView]) -> str:
    """What runs short first in the scenario that runs short earliest, in one sentence.

    Empty when nothing that is compared runs short.
    """
    best: tuple[dt.date, ScenarioView, list[tuple[dt.date, ResourceGap]]] | None = None
    for view in views:
        short = sorted(((g.first_short_date, g) for g in view.with_metrics.resources
                        if g.compared and g.first_short_date is not None),
                       key=lambda pair: (pair[0], pair[1].resource))
        if short and (best is None or short[0][0] < best[0]):
            best = (short[0][0], view, short)
    if best is None:
        return ""
    _, view, short = best
    named: list[str] = []
    seen: set[str] = set()
    for day, gap in short:
        # one clause per thing that runs out: beds of a type count once, at their first level
        thing = gap.resource.split("_beds", 1)[0] if "_beds" in gap.resource else gap.resource
        if thing in seen:
            continue
        seen.add(thing)
        named.append(f"{_SHORT_NAMES[gap.resource]} ({format_date(day, year=False)})")
        if len(named) == 3:
            break
    what = "The first to run short" if len(named) > 1 else "The first thing to run short"
    verb = "are" if len(named) > 1 else "is"
    return f"{what}, in {quoted(view.name)} with its measures, {verb} {name_list(named)}."
