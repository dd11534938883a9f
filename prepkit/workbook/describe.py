"""Plain-text summaries of a plan and of workbook problems, for ``prepkit check``.

Both functions return text; printing is left to the command line.
"""

from __future__ import annotations

from collections.abc import Sequence

from prepkit.base.plural import all_of, counted
from prepkit.errors import Problem, WorkbookError
from prepkit.plan import End, Intervention, Plan, Range3, Start
from prepkit.workbook.schema import FIELDS_BY_NAME, format_value

__all__ = ["all_of", "counted", "describe_plan", "describe_problems"]

_KIND_WORDS = {
    "contacts": "fewer contacts",
    "vaccination": "vaccination",
    "isolation": "isolation of cases",
}
_TRIGGER_WORDS = {
    "ward_occupancy": "ward occupancy reaches",
    "icu_occupancy": "ICU occupancy reaches",
    "admissions": "daily admissions reach",
}
_TRANSMISSIBILITY = {
    "r0": ("disease.r0", "r0"),
    "doubling_time": ("disease.doubling_time_days", "doubling_time_days"),
    "growth_rate": ("disease.growth_rate_per_day", "growth_rate_per_day"),
}


def describe_plan(plan: Plan, warnings: Sequence[Problem] = ()) -> str:
    """A readable summary of a plan and the warnings found reading it.

    Parameters
    ----------
    plan : Plan
        The plan as read.
    warnings : sequence of Problem
        Non-fatal notes from :func:`prepkit.workbook.read_plan_with_warnings`.

    Returns
    -------
    str
        Several lines of text, ending with a newline.
    """
    d = plan.details
    lines = [
        f"Plan: {d.title}",
        f"Jurisdiction: {d.jurisdiction} (prepared by {d.prepared_by})",
        f"Day 0: {d.day0.isoformat()}; looking {d.horizon_days} days ahead, to "
        f"{plan.date_of(d.horizon_days).isoformat()}",
        f"Uncertainty draws: {d.draws:,} per scenario (seed {d.seed}); paper {d.page_size}",
        "",
        f"Age bands ({len(plan.bands)}), {_count(plan.population)} people in all:",
    ]
    width = max(len(b.label) for b in plan.bands) if plan.bands else 0
    for band in plan.bands:
        lines.append(f"  {band.label:<{width}}  {_count(band.people):>12} people")
    contacts = plan.contacts
    if contacts.uses_matrices:
        lines.append("Contacts: contact matrices by setting (home, school, work, community)")
    else:
        mean = contacts.mean_daily or ()
        shown = ", ".join(f"{m:g}" for m in mean)
        lines.append(
            f"Contacts: simple form, daily contacts by band {shown}; "
            f"{_pct(contacts.assortativity)} kept within one's own band"
        )
    name, attribute = _TRANSMISSIBILITY[plan.disease.transmissibility_measure]
    f = FIELDS_BY_NAME[name]
    value = getattr(plan.disease, attribute)
    unit = f" {f.unit}" if f.unit else ""
    lines.append(f"Transmissibility: {f.label} {_range(name, value)}{unit}")
    c = plan.capacity
    surge = ""
    if c.surge_ward_beds or c.surge_icu_beds:
        surge = (f"; surge {c.surge_ward_beds:,} ward and {c.surge_icu_beds:,} ICU beds after "
                 f"{c.surge_days_to_open:g} days")
    lines.append(
        f"Capacity: {c.ward_beds:,} ward beds ({_pct(c.ward_baseline_occupancy)} used by "
        f"other patients), {c.icu_beds:,} ICU beds ({_pct(c.icu_baseline_occupancy)}){surge}"
    )
    lines.append("")
    lines.append(f"Measures ({len(plan.interventions)}):")
    if not plan.interventions:
        lines.append("  none")
    for measure in plan.interventions:
        lines.append(f"  {measure.name}: {_KIND_WORDS[measure.kind]}, {_when(measure)}")
    lines.append(f"Scenarios ({len(plan.scenarios)}):")
    for scenario in plan.scenarios:
        measures = ", ".join(scenario.interventions) or "no measures"
        lines.append(
            f"  {scenario.name}: transmissibility {scenario.transmissibility_level}, "
            f"severity {scenario.severity_level}; {measures}"
        )
    period = "weekly totals" if plan.details.observed_period == "weekly" else "daily figures"
    lines.append(f"Observed rows: {len(plan.observed)} ({period})")
    if plan.source.path:
        lines.append(f"Read from {plan.source.path} ({len(plan.source.inputs)} inputs, "
                     f"SHA-256 {plan.source.sha256[:12]}...)")
    lines.append("")
    if warnings:
        lines.append(f"{counted(len(warnings), 'warning')}:")
        lines.extend(f"  {w}" for w in warnings)
    else:
        lines.append("No warnings.")
    return "\n".join(lines) + "\n"


def describe_problems(error: WorkbookError) -> str:
    """Every problem of a workbook, one per line, under a count.

    Parameters
    ----------
    error : WorkbookError
        The error raised by the reader.

    Returns
    -------
    str
        A count line, one line per problem, then any warnings.
    """
    lines = [f"{counted(len(error.problems), 'problem')} found; the workbook cannot be used yet:"]
    lines.extend(f"  {p}" for p in error.problems)
    if error.warnings:
        lines.append(f"{counted(len(error.warnings), 'warning')}:")
        lines.extend(f"  {w}" for w in error.warnings)
    return "\n".join(lines) + "\n"


def _when(measure: Intervention) -> str:
    return f"{_start(measure.start)}; {_end(measure.end, measure.start)}"


def _start(start: Start) -> str:
    if start.kind == "date":
        return f"starts on {start.date.isoformat() if start.date else '?'}"
    return f"starts when {_TRIGGER_WORDS[start.kind]} {_level(start.kind, start.level)}"


def _end(end: End, start: Start) -> str:
    if end.kind == "horizon":
        return "runs to the horizon"
    if end.kind == "date":
        return f"ends on {end.date.isoformat() if end.date else '?'}"
    if end.kind == "duration":
        return f"lasts {end.duration_days:g} days" if end.duration_days is not None else "lasts ?"
    return f"ends when the level falls to {_level(start.kind, end.level)}"


def _level(kind: str, level: float | None) -> str:
    if level is None:
        return "?"
    return f"{level:g} per day" if kind == "admissions" else _pct(level)


def _range(name: str, value: Range3 | None) -> str:
    if value is None:
        return "?"
    f = FIELDS_BY_NAME[name]
    if value.is_point:
        return format_value(f, value.central)
    return (f"{format_value(f, value.central)} (low {format_value(f, value.low)}, high "
            f"{format_value(f, value.high)})")


def _pct(share: float) -> str:
    return f"{100 * share:.4g}%"


def _count(x: float) -> str:
    return f"{x:,.0f}"
