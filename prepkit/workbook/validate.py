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

import re
from collections.abc import Iterable, Mapping, Sequence

from prepkit.errors import Problem
from prepkit.plan import LEVELS
from prepkit.workbook.cells import Got, Key, TableRow, normalise_key
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
    "duplicate_keys",
    "number_of",
    "shown",
]

_CELL = re.compile(r"^([A-Z]+)(\d+)$")


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


def shown(got: Got, value: object) -> str:
    """A value as the planner wrote it (a percentage when it was typed as one)."""
    if got.percent or got.field.type == "share":
        if isinstance(value, float | int):
            return f"{100 * value:.6g}%"
    return format_value(got.field, value)


def number_of(got: Got) -> float | None:
    """Numeric value of an input, or None when blank, unreadable or not a number."""
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
        c = number_of(central)
        lo, hi = number_of(low), number_of(high)
        if c is None:
            continue
        if lo is not None and not low.blank and lo > c:
            problems.append(problem(low, f"at most the Central value ({shown(central, c)})"))
        if hi is not None and not high.blank and hi < c:
            problems.append(problem(high, f"at least the Central value ({shown(central, c)})"))
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
    problems += duplicate_keys(rows, "band.label", "a band label used once")
    lowers = [row.get("band.lower_age") for row in rows]
    if any(number_of(g) is None for g in lowers):
        return problems, list(rows)
    ordered = sorted(rows, key=lambda row: number_of(row.get("band.lower_age")) or 0.0)
    first = ordered[0].get("band.lower_age")
    if number_of(first) != 0:
        problems.append(problem(first, "0 for the youngest band (bands start at age 0)"))
    for i, row in enumerate(ordered):
        lower = number_of(row.get("band.lower_age"))
        upper_got = row.get("band.upper_age")
        upper = number_of(upper_got)
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
            next_lower = number_of(nxt)
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


def duplicate_keys(rows: Sequence[TableRow], key_name: str, expected: str) -> list[Problem]:
    """A problem for each row whose key repeats an earlier row's."""
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
            a, s = number_of(admitted), number_of(symptomatic)
            if a is not None and s is not None and a > s:
                where = Problem(symptomatic.sheet, symptomatic.cell, "", "", "").where
                problems.append(problem(
                    admitted,
                    f"at most the share with symptoms ({shown(symptomatic, s)}, {where})",
                    shown(admitted, a),
                ))
    return problems


def check_setting_shares(rows: Iterable[TableRow]) -> list[Problem]:
    """At home + at school + at work is at most 100% in each band."""
    problems: list[Problem] = []
    for row in rows:
        gots = [row.get(f"band_contacts.{s}_share") for s in ("home", "school", "work")]
        values = [number_of(g) for g in gots]
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
    lo, hi = number_of(low), number_of(high)
    if lo is not None and hi is not None and lo > hi:
        return [problem(high, f"at least the youngest working age ({lo:g})")]
    return []


def check_seasonal_peak(items: Mapping[Key, Got]) -> list[Problem]:
    """A seasonal swing above 0% needs the date of the seasonal peak."""
    swing = number_of(items[("disease.seasonal_amplitude", "central")])
    peak = items[("disease.seasonal_peak", "central")]
    if swing is not None and swing > 0 and peak.value is None and not peak.bad:
        return [problem(peak, "a date, because the seasonal swing is above 0%")]
    return []


# ---- Measures ---------------------------------------------------------------------------------
