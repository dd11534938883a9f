"""What each measure does and when it applies, in words."""

from __future__ import annotations

from collections.abc import Sequence

from prepkit.plan import End, Intervention, Plan, Start
from prepkit.report.words.formatting import format_date, format_days, format_number, format_percent
from prepkit.report.words.views import ScenarioView


def measure_when(start: Start, end: End) -> str:
    """When a measure applies, in words.

    Parameters
    ----------
    start, end : Start, End
        The measure's rules.

    Returns
    -------
    str
        E.g. "When ward demand reaches 60% of the available ward beds; for
        56 days".
    """
    if start.kind == "date":
        begin = f"From {format_date(start.date)}"
    elif start.kind == "ward_occupancy":
        begin = f"When ward demand reaches {format_percent(start.level)} of the available ward beds"
    elif start.kind == "icu_occupancy":
        begin = f"When ICU demand reaches {format_percent(start.level)} of the available ICU beds"
    else:
        begin = f"When admissions reach {format_number(start.level)} a day"
    if end.kind == "horizon":
        finish = "to the end of the period"
    elif end.kind == "date":
        finish = f"last day {format_date(end.date)}"
    elif end.kind == "duration":
        finish = f"for {format_days(round(end.duration_days or 0))}"
    else:
        level = end.level or 0.0
        shown = format_number(level) + " a day" if start.kind == "admissions" else format_percent(
            level
        )
        finish = f"until the level falls to {shown}"
    return f"{begin}; {finish}"


_SETTING_WORDS = {"home": "home", "school": "school", "work": "work", "community": "community"}


def measure_what(item: Intervention) -> str:
    """What a measure does, in words.

    Parameters
    ----------
    item : Intervention
        The measure.

    Returns
    -------
    str
        E.g. "Work contacts at 75% and community contacts at 60% of normal;
        compliance 85%".
    """
    compliance = item.compliance
    comp = f"compliance {format_percent(compliance.central)}"
    if not compliance.is_point:
        comp += f" ({format_percent(compliance.low)} to {format_percent(compliance.high)})"
    if item.kind == "contacts":
        changed = [
            f"{_SETTING_WORDS[s]} contacts at {format_percent(kept)}"
            for s, kept in item.contacts_kept.items()
            if kept < 1.0
        ]
        what = (" and ".join([", ".join(changed[:-1]), changed[-1]]) if len(changed) > 1
                else (changed[0] if changed else "no contacts changed"))
        return f"{what[0].upper()}{what[1:]} of normal; {comp}"
    if item.kind == "vaccination" and item.vaccination is not None:
        v = item.vaccination
        return (
            f"{format_number(v.doses_per_day)} doses a day, up to "
            f"{format_percent(v.uptake_ceiling)} of each band offered; protects against "
            f"infection {format_percent(v.efficacy_infection.central)} and against admission "
            f"{format_percent(v.efficacy_severe.central)}, {_day_count(v.days_to_protection)} "
            f"after the dose; {comp}"
        )
    if item.kind == "isolation" and item.isolation is not None:
        iso = item.isolation
        return (
            f"{format_percent(iso.isolated_share)} of people with symptoms isolate "
            f"{_day_count(iso.days_from_onset)} after symptoms start; {comp}"
        )
    return comp


def _day_count(days: float) -> str:
    text = format_number(days)
    return f"{text} day" if text == "1" else f"{text} days"


def measure_rows(plan: Plan, views: Sequence[ScenarioView]) -> list[dict[str, str]]:
    """The measures table: each measure's name, what it does, when, and in which scenarios.

    Parameters
    ----------
    plan : Plan
        The plan (its measures).
    views : sequence of ScenarioView
        Every scenario.

    Returns
    -------
    list of dict
        One row per measure, keys ``name``, ``what``, ``when``, ``scenarios``.
    """
    return [
        {
            "name": item.name,
            "what": measure_what(item),
            "when": measure_when(item.start, item.end),
            "scenarios": "; ".join(
                v.name for v in views if item.name in v.item.scenario.interventions
            ) or "none",
        }
        for item in plan.interventions
    ]
