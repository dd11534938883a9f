"""Headline figures of two packs side by side, as the pack prints them.

Used by :mod:`prepkit.report.changes`.

Per scenario, with its measures: the central run's peaks and their dates,
days short without and with surge beds, admissions and deaths; with the
ensemble the chance of running short of ICU beds, and the decide-by date.
Counts are compared as printed (whole beds and people), so old + difference
= new on the page.
"""

from __future__ import annotations

import datetime as dt
import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from prepkit.report.words.formatting import format_date, format_number, format_percent

__all__ = ["FIGURE_KEYS", "FigureChange", "figure_changes"]

_MISSING = "none"

#: Names of a headline figure's fields, in order.
FIGURE_KEYS: tuple[str, ...] = ("scenario", "figure", "unit", "old_value", "new_value",
                                "difference")


@dataclass(frozen=True, kw_only=True)
class FigureChange:
    """One headline figure of one scenario in the earlier pack and in this one.

    Attributes
    ----------
    scenario : str
        Scenario name.
    figure : str
        What the figure is, in words.
    unit : str
        ``beds``, ``days``, ``people``, ``date`` or ``%``.
    old_value, new_value : str
        As the packs print them (whole beds and people); ``none`` when absent.
    difference : str
        New less old (``+3``, ``-2 days``, ``+4 points``); ``no change`` when
        equal, empty when it cannot be computed.
    """

    scenario: str
    figure: str
    unit: str
    old_value: str
    new_value: str
    difference: str

    @property
    def moved(self) -> bool:
        """True when the figure differs between the two packs."""
        return self.old_value != self.new_value

    def row(self) -> dict[str, str]:
        """The figure as a record, keys :data:`FIGURE_KEYS`."""
        return {key: getattr(self, key) for key in FIGURE_KEYS}


def _at(record: Any, *path: str) -> Any:
    for key in path:
        if not isinstance(record, Mapping):
            return None
        record = record.get(key)
    return record


def _count(value: Any) -> int | None:
    if isinstance(value, int | float) and math.isfinite(value):
        return round(value)
    return None


def _date(value: Any) -> dt.date | None:
    try:
        return dt.date.fromisoformat(str(value)) if value else None
    except ValueError:
        return None


def _share(value: Any) -> float | None:
    return float(value) if isinstance(value, int | float) and math.isfinite(value) else None


def _count_row(old: Any, new: Any) -> tuple[str, str, str]:
    a, b = _count(old), _count(new)
    shown = (format_number(old, missing=_MISSING), format_number(new, missing=_MISSING))
    if a is None or b is None:
        return (*shown, "")
    if shown[0] == shown[1]:
        return (*shown, "no change")
    # "<1" against "0" (or "<1" against "1") differ by less than one
    return (*shown, f"{b - a:+,}" if a != b else "less than 1")


def _date_row(old: Any, new: Any) -> tuple[str, str, str]:
    a, b = _date(old), _date(new)
    shown = (format_date(a, missing=_MISSING), format_date(b, missing=_MISSING))
    if a is None or b is None:
        return (*shown, "")
    days = (b - a).days
    return (*shown, "no change" if days == 0 else f"{days:+d} days")


def _share_row(old: Any, new: Any) -> tuple[str, str, str]:
    a, b = _share(old), _share(new)
    shown = (format_percent(a, missing=_MISSING), format_percent(b, missing=_MISSING))
    if a is None or b is None:
        return (*shown, "")
    if shown[0] == shown[1]:
        return (*shown, "no change")
    points = 100.0 * (b - a)
    size = f"{abs(points):.0f}" if abs(points) >= 9.95 else f"{abs(points):.1f}"
    return (*shown, f"{'+' if points > 0 else '-'}{size} points")


_Row = Callable[[Any, Any], tuple[str, str, str]]
_WITH = "with_interventions"

#: The headline figures: words, unit, where in a scenario's summary record, how to compare.
_CENTRAL: tuple[tuple[str, str, tuple[str, ...], _Row], ...] = (
    ("Peak ward demand", "beds", (_WITH, "ward", "peak_demand_beds"), _count_row),
    ("Ward peak on", "date", (_WITH, "ward", "peak_date"), _date_row),
    ("Peak ICU demand", "beds", (_WITH, "icu", "peak_demand_beds"), _count_row),
    ("ICU peak on", "date", (_WITH, "icu", "peak_date"), _date_row),
    ("Days short of ward beds", "days", (_WITH, "ward", "days_over_capacity_days"), _count_row),
    ("Days short of ICU beds", "days", (_WITH, "icu", "days_over_capacity_days"), _count_row),
    ("Days short of ward beds with surge beds open", "days",
     (_WITH, "ward", "days_over_capacity_with_surge_days"), _count_row),
    ("Days short of ICU beds with surge beds open", "days",
     (_WITH, "icu", "days_over_capacity_with_surge_days"), _count_row),
    ("Admissions", "people", (_WITH, "total", "admissions_persons"), _count_row),
    ("Deaths in hospital care", "people", (_WITH, "total", "hospital_deaths_persons"),
     _count_row),
    ("Additional deaths when beds run short", "people", (_WITH, "shortage_deaths_persons"),
     _count_row),
)
_CHANCE = ("Chance of running short of ICU beds", "%",
           (_WITH, "exceedance_any_day", "icu_any_day_probability"), _share_row)
#: How the decide-by verdicts without a date read.
_VERDICT_WORDS = {"not_enough": "no date is enough", "not_needed": "not needed",
                  "no_measures": "no dated measures"}


def _decision(row: Any) -> tuple[dt.date | None, str]:
    """The decide-by date of a decisions row and how it reads."""
    if not isinstance(row, Mapping):
        return None, _MISSING
    day = _date(row.get("latest_decision_date"))
    verdict = str(row.get("measures_verdict", ""))
    if day is None:
        return None, _VERDICT_WORDS.get(verdict, _MISSING)
    shown = format_date(day)
    return day, f"{shown} (passed)" if verdict == "too_late" else shown


def _decide_row(old: Any, new: Any) -> tuple[str, str, str]:
    (a, before), (b, after) = _decision(old), _decision(new)
    if before == after:
        return before, after, "no change"
    if a is None or b is None:
        return before, after, ""
    return before, after, f"{(b - a).days:+d} days"


_DECIDE = ("Decide on the measures by", "date", (), _decide_row)


def _named(records: Any) -> dict[str, Mapping[str, Any]]:
    if not isinstance(records, Sequence):
        return {}
    return {str(r.get("name", r.get("scenario"))): r for r in records if isinstance(r, Mapping)}


def figure_changes(old: Mapping[str, Any], new: Mapping[str, Any]) -> tuple[FigureChange, ...]:
    """Every headline figure of every scenario in the earlier summary ``old`` and in ``new``."""
    parts = (
        (_CENTRAL, _named(old.get("scenarios")), _named(new.get("scenarios"))),
        ((_CHANCE,), _named(_at(old, "uncertainty", "scenarios")),
         _named(_at(new, "uncertainty", "scenarios"))),
        ((_DECIDE,), _named(_at(old, "decisions", "scenarios")),
         _named(_at(new, "decisions", "scenarios"))),
    )
    names = list(_named(new.get("scenarios")))
    names += [n for n in _named(old.get("scenarios")) if n not in names]
    out = []
    for name in names:
        for figures, before, after in parts:
            if name not in before and name not in after:
                continue
            for words, unit, path, compare in figures:
                shown = compare(_at(before.get(name), *path), _at(after.get(name), *path))
                out.append(FigureChange(scenario=name, figure=words, unit=unit,
                                        old_value=shown[0], new_value=shown[1],
                                        difference=shown[2]))
    return tuple(out)
