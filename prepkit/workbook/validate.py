"""Cross-field checks of a planning workbook.

:mod:`prepkit.workbook.reader` reads every input into a located value
(:class:`~prepkit.workbook.cells.Got`: value, sheet, cell, label) and checks
each cell on its own. The rules here look at several inputs together: bands
that follow on, one transmissibility measure, Low <= Central <= High, shares
that add up, measures whose start and end rules are complete, scenarios that
name existing measures. Each rule returns :class:`~prepkit.errors.Problem`
objects naming the sheet and cell to fix; a rule skips inputs that were
already reported unreadable, so one mistake gives one message.
"""

from __future__ import annotations

import datetime as dt
import re
from collections.abc import Iterable, Mapping, Sequence

from prepkit.errors import Problem
from prepkit.plan import LEVELS, SETTINGS
from prepkit.workbook.cells import Got, Key, TableRow, normalise_key, percent_hint
from prepkit.workbook.schema import FIELDS_BY_NAME, MAX_BANDS, TRANSMISSIBILITY_FIELDS, format_value
from prepkit.workbook.sheets import INSTRUCTIONS_SHEET, SHEET_ORDER

__all__ = [
    "problem",
    "sort_problems",
    "sheet_index",
    "cell_position",
    "check_levels",
    "check_bands",
    "check_band_rows",
    "check_transmissibility",
    "check_admitted_vs_symptomatic",
    "check_setting_shares",
    "check_daily_contacts",
    "check_working_ages",
    "check_seasonal_peak",
    "check_measures",
    "check_scenarios",
    "check_observed",
]

_CELL = re.compile(r"^([A-Z]+)(\d+)$")
_OCCUPANCY_EXPECTED = "a share of the beds between 0 and 1 (e.g. 80% or 0.8)"


def problem(got: Got, expected: str, found: str | None = None, *, warning: bool = False) -> Problem:
    """Problem about one located input."""
    return Problem(
        sheet=got.sheet,
        cell=got.cell,
        field=got.label,
        expected=expected,
        found=got.found if found is None else found,
        severity="warning" if warning else "error",
    )


def sort_problems(problems: Iterable[Problem]) -> list[Problem]:
    """Problems in workbook order: file first, then by sheet order, row and column."""
    return sorted(problems, key=_problem_order)


def _problem_order(p: Problem) -> tuple[int, int, int]:
    return (sheet_index(p.sheet), *cell_position(p.cell))


def sheet_index(sheet: str) -> int:
    """Position of a sheet in workbook order (file-level first, own sheets last)."""
    if not sheet:
        return -2
    key = normalise_key(sheet)
    if key == normalise_key(INSTRUCTIONS_SHEET):
        return -1
    for i, name in enumerate(SHEET_ORDER):
        if normalise_key(name) == key:
            return i
    return len(SHEET_ORDER)


def cell_position(cell: str) -> tuple[int, int]:
    """(row, column) of a cell reference; (0, 0) when there is none."""
    match = _CELL.match(cell)
    if not match:
        return 0, 0
    col = 0
    for ch in match[1]:
        col = col * 26 + ord(ch) - 64
    return int(match[2]), col


def _show(got: Got, value: object) -> str:
    if got.percent or got.field.type == "share":
        if isinstance(value, float | int):
            return f"{100 * value:.6g}%"
    return format_value(got.field, value)


def _num(got: Got) -> float | None:
    """Numeric value of a readable input, else None."""
    value = got.value
    if got.bad or isinstance(value, bool) or not isinstance(value, int | float):
        return None
    return float(value)


# ---- Low / Central / High ---------------------------------------------------------------------

def check_levels(gots: Mapping[Key, Got]) -> list[Problem]:
    """Low <= Central <= High, and Low or High only with a Central value.

    ``gots`` holds the three levels of each uncertain field (of an item
    block or a table row); a blank Low or High already carries Central's
    value.
    """
    problems: list[Problem] = []
    names = sorted({name for (name, level) in gots if level == "low"})
    for name in names:
        low, central, high = (gots.get((name, lv)) for lv in LEVELS)
        if low is None or central is None or high is None or central.bad:
            continue
        if central.value is None:
            for side in (low, high):
                if not side.blank and not side.bad:
                    problems.append(problem(
                        side,
                        f"a Central value beside it (Low and High only widen a Central "
                        f"value; leave them blank when {central.field.label} is not given)",
                        f"{side.found} with Central blank",
                    ))
            continue
        c = _num(central)
        lo, hi = _num(low), _num(high)
        if c is None:
            continue
        if lo is not None and not low.blank and lo > c:
            problems.append(problem(low, f"at most the Central value ({_show(central, c)})"))
        if hi is not None and not high.blank and hi < c:
            problems.append(problem(high, f"at least the Central value ({_show(central, c)})"))
    return problems


# ---- Bands ------------------------------------------------------------------------------------

def check_bands(
    rows: Sequence[TableRow], empty_cell: str, sheet: str
) -> tuple[list[Problem], list[TableRow]]:
    """Population bands: 1 to 20, unique labels, from age 0, following on.

    Parameters
    ----------
    rows : sequence of TableRow
        Filled rows of the Population table, as found.
    empty_cell : str
        Key cell of the first row below the table, where a missing band
        would go.
    sheet : str
        Sheet title as found.

    Returns
    -------
    problems : list of Problem
    ordered : list of TableRow
        The rows by lowest age when every lowest age is readable (else as
        found): the band order of the plan.
    """
    problems: list[Problem] = []
    key_field = FIELDS_BY_NAME["band.label"]
    if not rows:
        return [Problem(sheet, empty_cell, key_field.label, "at least one age band",
                        "no bands")], []
    if len(rows) > MAX_BANDS:
        extra = rows[MAX_BANDS]
        problems.append(problem(extra.get("band.label"), f"at most {MAX_BANDS} bands",
                                f"{len(rows)} bands"))
    problems += _duplicate_keys(rows, "band.label", "a band label used once")
    lowers = [row.get("band.lower_age") for row in rows]
    if any(_num(g) is None for g in lowers):
        return problems, list(rows)
    ordered = sorted(rows, key=lambda row: _num(row.get("band.lower_age")) or 0.0)
    first = ordered[0].get("band.lower_age")
    if _num(first) != 0:
        problems.append(problem(first, "0 for the youngest band (bands start at age 0)"))
    for i, row in enumerate(ordered):
        lower = _num(row.get("band.lower_age"))
        upper_got = row.get("band.upper_age")
        upper = _num(upper_got)
        last = i == len(ordered) - 1
        if upper_got.blank and not last:
            problems.append(problem(
                upper_got, "a highest age (only the oldest band may leave it blank)"))
        if upper is not None and lower is not None and upper < lower:
            problems.append(problem(upper_got, f"at least the lowest age ({lower:g})"))
        if not last and upper is not None:
            # A gap or an overlap is shown at both ends: the planner may have changed either.
            following = ordered[i + 1]
            nxt = following.get("band.lower_age")
            next_lower = _num(nxt)
            want = upper + 1
            if next_lower != want:
                label = row.key or "above"
                problems.append(problem(
                    nxt,
                    f"{want:g}, one more than the highest age of band {label} (bands follow "
                    "on without gaps or overlaps)",
                ))
                if next_lower is not None and (lower is None or upper >= lower):
                    next_label = following.key or f"in row {following.row}"
                    problems.append(problem(
                        upper_got,
                        f"{next_lower - 1:g}, one less than the lowest age of band "
                        f"{next_label} (bands follow on without gaps or overlaps)",
                    ))
    return problems, ordered


def check_band_rows(
    rows: Sequence[TableRow], bands: Sequence[str], key_name: str, empty_cell: str, sheet: str
) -> tuple[list[Problem], dict[str, TableRow]]:
    """A per-band table has one row for each Population band, and no other.

    Returns the problems and the rows by band label (as on Population).
    """
    problems: list[Problem] = []
    by_key = {normalise_key(b): b for b in bands}
    found: dict[str, TableRow] = {}
    listing = ", ".join(bands)
    for row in rows:
        got = row.get(key_name)
        if got.bad or got.value is None:
            continue
        band = by_key.get(normalise_key(row.key))
        if band is None:
            problems.append(problem(got, f"a band label from the Population sheet ({listing})"))
        elif band in found:
            problems.append(problem(got, f"one row for band {band}",
                                    f"a second row (also row {found[band].row})"))
        else:
            found[band] = row
    key_label = FIELDS_BY_NAME[key_name].label
    for band in bands:
        if band not in found:
            problems.append(Problem(sheet, empty_cell, f"{key_label}, band {band}",
                                    f"a row for band {band}", "no row"))
    return problems, found


def _duplicate_keys(rows: Sequence[TableRow], key_name: str, expected: str) -> list[Problem]:
    problems: list[Problem] = []
    seen: dict[str, TableRow] = {}
    for row in rows:
        if not row.key:
            continue
        norm = normalise_key(row.key)
        if norm in seen:
            problems.append(problem(row.get(key_name), expected,
                                    f"{row.get(key_name).found} again (also row {seen[norm].row})"))
        else:
            seen[norm] = row
    return problems


# ---- Disease and severity ---------------------------------------------------------------------

def check_transmissibility(items: Mapping[Key, Got]) -> list[Problem]:
    """Exactly one of R0, doubling time and growth rate has a Central value."""
    given = [items[(name, "central")] for name in TRANSMISSIBILITY_FIELDS
             if not items[(name, "central")].blank]
    names = ", ".join(FIELDS_BY_NAME[n].label for n in TRANSMISSIBILITY_FIELDS)
    expected = f"exactly one of {names} (Central column)"
    if not given:
        return [problem(items[(TRANSMISSIBILITY_FIELDS[0], "central")], expected, "none given")]
    return [
        problem(got, expected, f"{got.found}, a second one ({given[0].field.label} is also given)")
        for got in given[1:]
    ]


def check_admitted_vs_symptomatic(
    severity: Mapping[str, TableRow], disease: Mapping[str, TableRow]
) -> list[Problem]:
    """Per band and level, the admitted share does not exceed the symptomatic share."""
    problems: list[Problem] = []
    for band, srow in severity.items():
        drow = disease.get(band)
        if drow is None:
            continue
        for level in LEVELS:
            admitted = srow.get("band_severity.admitted_share", level)
            symptomatic = drow.get("band_disease.symptomatic_share", level)
            a, s = _num(admitted), _num(symptomatic)
            if a is not None and s is not None and a > s:
                where = Problem(symptomatic.sheet, symptomatic.cell, "", "", "").where
                problems.append(problem(
                    admitted,
                    f"at most the share with symptoms ({_show(symptomatic, s)}, {where})",
                    _show(admitted, a),
                ))
    return problems


def check_setting_shares(rows: Iterable[TableRow]) -> list[Problem]:
    """At home + at school + at work is at most 100% in each band."""
    problems: list[Problem] = []
    for row in rows:
        gots = [row.get(f"band_contacts.{s}_share") for s in ("home", "school", "work")]
        values = [_num(g) for g in gots]
        if any(v is None for v in values):
            continue
        total = sum(v for v in values if v is not None)
        if total > 1 + 1e-9:
            problems.append(problem(
                gots[-1],
                "shares at home, at school and at work adding up to at most 100% (the rest "
                "are community contacts)",
                f"a total of {100 * total:.4g}%",
            ))
    return problems


def check_daily_contacts(rows: Iterable[TableRow]) -> list[Problem]:
    """Simple contacts need daily contacts for every band."""
    return [
        problem(got, f"{got.field.expected()} (needed when the contact-matrix sheets are blank)")
        for row in rows
        if (got := row.get("band_contacts.mean_daily")).value is None and not got.bad
    ]


def check_working_ages(items: Mapping[Key, Got]) -> list[Problem]:
    """The youngest working age is not above the oldest."""
    low = items[("workforce.working_age_min", "central")]
    high = items[("workforce.working_age_max", "central")]
    lo, hi = _num(low), _num(high)
    if lo is not None and hi is not None and lo > hi:
        return [problem(high, f"at least the youngest working age ({lo:g})")]
    return []


def check_seasonal_peak(items: Mapping[Key, Got]) -> list[Problem]:
    """A seasonal swing above 0% needs the date of the seasonal peak."""
    swing = _num(items[("disease.seasonal_amplitude", "central")])
    peak = items[("disease.seasonal_peak", "central")]
    if swing is not None and swing > 0 and peak.value is None and not peak.bad:
        return [problem(peak, "a date, because the seasonal swing is above 0%")]
    return []


# ---- Measures ---------------------------------------------------------------------------------

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
    problems = _duplicate_keys(rows, "measure.name", "a measure name used once")
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
            r, s_level = _num(release), _num(start_level)
            if r is not None and s_level is not None and r >= s_level:
                problems.append(problem(
                    release, f"a level below the start level ({_show(start_level, s_level)})",
                    _show(release, r)))
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
    value = _num(got)
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
    if all(_num(g) is not None and (_num(g) or 0.0) >= 1 for g in kept):
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
        i, s = _num(infection), _num(severe)
        if i is not None and s is not None and s < i:
            problems.append(problem(
                severe, f"at least the efficacy against infection ({_show(infection, i)})",
                _show(severe, s)))
            break
    return problems


# ---- Scenarios and observed days --------------------------------------------------------------

def check_scenarios(
    rows: Sequence[TableRow], measures: Sequence[str], empty_cell: str, sheet: str
) -> list[Problem]:
    """At least one scenario, unique names, and every measure named exists."""
    if not rows:
        return [Problem(sheet, empty_cell, FIELDS_BY_NAME["scenario.name"].label,
                        "at least one scenario", "no scenarios")]
    problems = _duplicate_keys(rows, "scenario.name", "a scenario name used once")
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


def check_observed(rows: Sequence[TableRow]) -> list[Problem]:
    """One row per observed date."""
    return _duplicate_keys(rows, "observed.date", "one row per date")

