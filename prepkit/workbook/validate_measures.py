"""Checks of the Measures and Scenarios tables (see :mod:`prepkit.workbook.validate`)."""

from __future__ import annotations

import datetime as dt
import re
from collections.abc import Sequence

from prepkit.errors import Problem
from prepkit.plan import LEVELS, SETTINGS
from prepkit.workbook.cells import Got, TableRow, normalise_key
from prepkit.workbook.parse import percent_hint
from prepkit.workbook.schema import FIELDS_BY_NAME
from prepkit.workbook.validate import duplicate_keys, number_of, problem, shown

__all__ = ["check_measures", "check_scenarios"]

_OCCUPANCY_EXPECTED = "a share of the beds between 0 and 1 (e.g. 80% or 0.8)"


def check_measures(
    rows: Sequence[TableRow],
    bands: Sequence[str] | None,
    day0: dt.date | None,
    horizon: int | None,
) -> list[Problem]:
    """Measure rows: unique names and complete, consistent kind, start and end columns.

    ``bands`` is None when the Population bands could not be read (band
    orders are then not checked). Returns errors and warnings
    (``severity="warning"``).
    """
    problems = duplicate_keys(rows, "measure.name", "a measure name used once")
    for row in rows:
        name = row.get("measure.name")
        if isinstance(name.value, str) and re.search(r"[;,]", name.value):
            problems.append(problem(
                name, "a name without ';' or ',' (the Scenarios sheet lists names with them)"))
        problems += _check_start_end(row, day0, horizon)
        kind = row.get("measure.kind").value
        if kind == "contacts":
            problems += _check_contacts_kept(row)
        elif kind == "vaccination":
            problems += _check_vaccination(row, bands)
        elif kind == "isolation":
            problems += _need(row, "measure.isolated_share", "isolation of cases")
    return problems


def _need(row: TableRow, name: str, what: str) -> list[Problem]:
    got = row.get(name)
    if got.value is None and not got.bad:
        return [problem(got, f"{got.field.expected()} (needed for {what})")]
    return []


def _check_start_end(row: TableRow, day0: dt.date | None, horizon: int | None) -> list[Problem]:
    problems: list[Problem] = []
    start_rule = row.get("measure.start_rule")
    end_rule = row.get("measure.end_rule")
    start_date = row.get("measure.start_date")
    start_level = row.get("measure.start_level")
    end_date = row.get("measure.end_date")
    duration = row.get("measure.duration_days")
    release = row.get("measure.release_level")
    start = start_rule.value
    end = end_rule.value
    shown_start = start_rule.found if not start_rule.defaulted else "On a date (the default)"
    if start == "date":
        problems += _need(row, "measure.start_date", "a measure that starts on a date")
        problems += _unused(start_level, "the measure starts on a date")
        day = start_date.value
        if (isinstance(day, dt.date) and day0 is not None and horizon is not None
                and not start_date.bad and day > day0 + dt.timedelta(days=horizon)):
            last = day0 + dt.timedelta(days=horizon)
            problems.append(problem(
                start_date, f"a start date within the horizon (up to {last.isoformat()}); the "
                "measure never starts", warning=True))
    elif isinstance(start, str):
        problems += _need(row, "measure.start_level", f"a measure that starts when {shown_start}")
        problems += _unused(start_date, "the measure starts on a level")
        problems += _check_level(start_level, str(start))
    if end == "date":
        problems += _need(row, "measure.end_date", "a measure that ends on a date")
        s, e = start_date.value, end_date.value
        if (start == "date" and isinstance(s, dt.date) and isinstance(e, dt.date)
                and not end_date.bad and e <= s):
            problems.append(problem(end_date, f"a date after the start date ({s.isoformat()})"))
    elif end == "duration":
        problems += _need(row, "measure.duration_days", "a measure that lasts a number of days")
    elif end == "release":
        if start == "date":
            problems.append(problem(
                end_rule,
                "an end rule other than 'When the level falls to' (it needs a measure that "
                "starts when a level is reached)",
            ))
        elif isinstance(start, str):
            problems += _need(row, "measure.release_level", "a measure that ends on a level")
            problems += _check_level(release, start)
            r, s_level = number_of(release), number_of(start_level)
            if r is not None and s_level is not None and r >= s_level:
                problems.append(problem(
                    release, f"a level below the start level ({shown(start_level, s_level)})",
                    shown(release, r)))
    if end != "date":
        problems += _unused(end_date, "the measure does not end on a date")
    if end != "duration":
        problems += _unused(duration, "the measure does not end after a number of days")
    if end != "release":
        problems += _unused(release, "the measure does not end on a level")
    return problems


def _unused(got: Got, why: str) -> list[Problem]:
    if got.blank or got.bad:
        return []
    return [problem(got, f"a blank cell ({why}); the value is not used", warning=True)]


def _check_level(got: Got, start: str) -> list[Problem]:
    value = number_of(got)
    if value is None:
        return []
    if start.endswith("_occupancy"):
        if value > 1:
            hint = percent_hint(value)
            return [problem(got, _OCCUPANCY_EXPECTED,
                            f"{got.found} ({hint})" if hint else None)]
    elif got.percent:
        return [problem(got, "a number of admissions per day (not a percentage)")]
    return []


def _check_contacts_kept(row: TableRow) -> list[Problem]:
    kept = [row.get(f"measure.{s}_kept") for s in SETTINGS]
    if all(number_of(g) is not None and (number_of(g) or 0.0) >= 1 for g in kept):
        return [problem(
            kept[0],
            "a share of contacts kept below 100% in at least one setting; as it stands the "
            "measure changes nothing",
            "100% kept in every setting",
            warning=True,
        )]
    return []


def _check_vaccination(row: TableRow, bands: Sequence[str] | None) -> list[Problem]:
    problems: list[Problem] = []
    for name in ("measure.doses_per_day", "measure.priority", "measure.uptake_ceiling",
                 "measure.efficacy_infection", "measure.efficacy_severe"):
        problems += _need(row, name, "vaccination")
    priority = row.get("measure.priority")
    if isinstance(priority.value, tuple) and not priority.bad and bands is not None:
        if not priority.value:
            problems += [problem(priority, f"{priority.field.expected()} (needed for "
                                           "vaccination)")]
        by_key = {normalise_key(b): b for b in bands}
        seen: set[str] = set()
        for entry in priority.value:
            band = by_key.get(normalise_key(str(entry)))
            if band is None:
                problems.append(problem(
                    priority, f"band labels from the Population sheet ({', '.join(bands)})",
                    f'"{entry}", which is not a band'))
            elif band in seen:
                problems.append(problem(priority, "each band once", f'"{entry}" twice'))
            seen.add(band or "")
    for level in LEVELS:
        infection = row.get("measure.efficacy_infection", level)
        severe = row.get("measure.efficacy_severe", level)
        i, s = number_of(infection), number_of(severe)
        if i is not None and s is not None and s < i:
            problems.append(problem(
                severe, f"at least the efficacy against infection ({shown(infection, i)})",
                shown(severe, s)))
            break
    return problems


# ---- Scenarios --------------------------------------------------------------

def check_scenarios(
    rows: Sequence[TableRow], measures: Sequence[str], empty_cell: str, sheet: str
) -> list[Problem]:
    """At least one scenario, unique names, and every measure named exists."""
    if not rows:
        return [Problem(sheet, empty_cell, FIELDS_BY_NAME["scenario.name"].label,
                        "at least one scenario", "no scenarios")]
    problems = duplicate_keys(rows, "scenario.name", "a scenario name used once")
    known = {normalise_key(m) for m in measures}
    listing = ", ".join(measures) if measures else "none are given"
    for row in rows:
        got = row.get("scenario.interventions")
        if not isinstance(got.value, tuple) or got.bad:
            continue
        for entry in got.value:
            if normalise_key(str(entry)) not in known:
                problems.append(problem(
                    got, f"names from the Measures sheet ({listing})",
                    f'"{entry}", which is not a measure'))
    return problems
