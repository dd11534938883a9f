"""What changed since the last pack: the inputs cell by cell and the headline figures.

Every pack keeps its inputs in ``inputs.json`` (:func:`inputs_payload`: each
cell the plan used, with its sheet, cell, label and the value as shown) and
its figures in ``summary.json``. When the output folder holds an earlier
pack, :func:`compare_packs` compares the two pairs:

* **inputs** are matched by sheet, field and label (the label names the band,
  measure, scenario or date of a table row), so a row that moved keeps its
  identity; an uncertain input is compared at each of Low, Central and High,
  each with its own cell. A label that several cells share (the key column of
  a table, such as "Band") is matched with its value too, so renaming a
  measure shows as one row removed and one added;
* **headline figures** are those of the leader page: per scenario, with its
  measures, the central run's peaks, their dates, days short, admissions and
  deaths, and where the ensemble ran the chance of running short of ICU beds
  and the decide-by date. Counts are compared as the pack prints them (whole
  beds and people), so old + difference = new on the page.

The comparison needs nothing but the two packs' files, so it works with no
other state; it is empty (and the pack shows no such page) when no input and
no headline figure changed and the prepkit version is the same, so a rerun of
the same workbook gives the same files.
"""

from __future__ import annotations

import datetime as dt
import math
from collections import Counter
from collections.abc import Callable, Iterable, Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from prepkit.plan import Plan
from prepkit.report.words.formatting import format_date, format_number, format_percent

__all__ = [
    "CHANGE_KEYS",
    "FIGURE_KEYS",
    "INPUTS_FORMAT",
    "INPUTS_NAME",
    "FigureChange",
    "InputChange",
    "PackChanges",
    "compare_packs",
    "inputs_payload",
]

#: File of every pack that keeps its inputs for the next pack's comparison.
INPUTS_NAME = "inputs.json"
INPUTS_FORMAT = "prepkit-inputs/1"

#: Names of an input change's fields (summary.json, the CSV file and the sheet), in order.
CHANGE_KEYS: tuple[str, ...] = ("change", "sheet", "cell", "label", "unit", "old_value",
                                "new_value")
#: Names of a headline figure's fields, in order.
FIGURE_KEYS: tuple[str, ...] = ("scenario", "figure", "unit", "old_value", "new_value",
                                "difference")

_LEVEL_WORDS = {"low": "Low", "central": "Central", "high": "High"}
_MISSING = "none"


def inputs_payload(plan: Plan) -> dict[str, Any]:
    """The ``inputs.json`` of a pack: every cell the plan used, as shown in the pack.

    Parameters
    ----------
    plan : Plan
        The plan as read from its workbook.

    Returns
    -------
    dict
        ``{"format", "input_file", "input_sha256", "inputs": [...]}``; each
        input has ``sheet``, ``cell``, ``name`` (field), ``label``, ``value``
        and ``unit``, and an uncertain one its ``levels`` (level, cell and
        value of Low, Central and High).
    """
    source = plan.source
    return {
        "format": INPUTS_FORMAT,
        "input_file": source.path.replace("\\", "/").rsplit("/", 1)[-1],
        "input_sha256": source.sha256,
        "inputs": [
            {
                "sheet": r.sheet, "cell": r.cell, "name": r.name, "label": r.label,
                "value": r.value, "unit": r.unit,
                "levels": [{"level": level, "cell": cell, "value": value}
                           for level, cell, value in r.levels],
            }
            for r in source.inputs
        ],
    }


# ---- Inputs ----------------------------------------------------------------------------------

@dataclass(frozen=True, kw_only=True)
class InputChange:
    """One cell whose value differs between the two packs.

    Attributes
    ----------
    change : str
        ``changed``, ``added`` (not in the earlier pack) or ``removed`` (not in this one).
    sheet, cell : str
        Where it is in this pack's workbook (the earlier one's for a removed input).
    label : str
        Plain-words label, with the band, row and level.
    unit : str
        Unit as shown.
    old_value, new_value : str
        Values as shown in each pack; ``none`` when absent.
    """

    change: str
    sheet: str
    cell: str
    label: str
    unit: str
    old_value: str
    new_value: str

    def row(self) -> dict[str, str]:
        """The change as a record, keys :data:`CHANGE_KEYS`."""
        return {key: getattr(self, key) for key in CHANGE_KEYS}


@dataclass(frozen=True)
class _Cell:
    key: tuple[str, ...]
    sheet: str
    cell: str
    label: str
    unit: str
    value: str


def _cells(inputs: Iterable[Mapping[str, Any]]) -> list[_Cell]:
    """Every compared cell of an inputs list, Low/Central/High apart."""
    items = [i for i in inputs if isinstance(i, Mapping)]
    shared = Counter((str(i.get("sheet")), str(i.get("name")), str(i.get("label"))) for i in items)
    out = []
    for item in items:
        sheet, name, label = str(item.get("sheet")), str(item.get("name")), str(item.get("label"))
        base: tuple[str, ...] = (sheet, name, label)
        if shared[(sheet, name, label)] > 1:  # a key column: the value is the row's identity
            base = (*base, str(item.get("value")))
        unit = str(item.get("unit", ""))
        levels = [lv for lv in item.get("levels") or () if isinstance(lv, Mapping)]
        if levels:
            for lv in levels:
                level = str(lv.get("level"))
                out.append(_Cell((*base, level), sheet, str(lv.get("cell")),
                                 f"{label} ({_LEVEL_WORDS.get(level, level)})", unit,
                                 str(lv.get("value"))))
        else:
            out.append(_Cell(base, sheet, str(item.get("cell")), label, unit,
                             str(item.get("value"))))
    return out


def _input_changes(old: Iterable[Mapping[str, Any]], new: Iterable[Mapping[str, Any]]
                   ) -> tuple[InputChange, ...]:
    before = {c.key: c for c in _cells(old)}
    after = _cells(new)
    seen = set()
    changes = []
    for cell in after:
        seen.add(cell.key)
        was = before.get(cell.key)
        if was is None:
            changes.append(InputChange(change="added", sheet=cell.sheet, cell=cell.cell,
                                       label=cell.label, unit=cell.unit, old_value=_MISSING,
                                       new_value=cell.value))
        elif was.value != cell.value:
            changes.append(InputChange(change="changed", sheet=cell.sheet, cell=cell.cell,
                                       label=cell.label, unit=cell.unit, old_value=was.value,
                                       new_value=cell.value))
    changes += [InputChange(change="removed", sheet=c.sheet, cell=c.cell, label=c.label,
                            unit=c.unit, old_value=c.value, new_value=_MISSING)
                for key, c in before.items() if key not in seen]
    return tuple(changes)


# ---- Headline figures ------------------------------------------------------------------------

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
    return (*shown, "no change" if a == b else f"{b - a:+,}")


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


def _figure_changes(old: Mapping[str, Any], new: Mapping[str, Any]) -> tuple[FigureChange, ...]:
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


# ---- Both --------------------------------------------------------------------------------------

@dataclass(frozen=True, kw_only=True)
class PackChanges:
    """How this pack differs from the one that was in its folder before.

    Attributes
    ----------
    previous_generated : str
        Run time of the earlier pack (ISO 8601, UTC), empty when unknown.
    previous_version : str
        prepkit version that made it.
    previous_input_file : str
        Its planning workbook's file name.
    same_workbook : bool
        True when both packs came from the same workbook bytes (SHA-256).
    inputs_kept : bool
        False when the earlier pack kept no inputs (made before prepkit
        wrote :data:`INPUTS_NAME`): only the figures are compared.
    inputs : tuple of InputChange
        Every input that changed, was added or was removed.
    figures : tuple of FigureChange
        Every headline figure of every scenario, moved or not.
    version : str
        prepkit version that made this pack.
    """

    previous_generated: str
    previous_version: str
    previous_input_file: str
    same_workbook: bool
    inputs_kept: bool
    inputs: tuple[InputChange, ...]
    figures: tuple[FigureChange, ...]
    version: str

    @property
    def any(self) -> bool:
        """True when an input, a headline figure or the prepkit version changed."""
        return (bool(self.inputs) or any(f.moved for f in self.figures)
                or self.previous_version != self.version)

    def counts(self) -> dict[str, int]:
        """Inputs changed, added and removed, and headline figures that moved."""
        tally = Counter(c.change for c in self.inputs)
        return {"changed": tally["changed"], "added": tally["added"],
                "removed": tally["removed"],
                "figures_moved": sum(f.moved for f in self.figures)}

    def summary(self) -> dict[str, Any]:
        """The ``changes_since_last_pack`` part of summary.json."""
        return {
            "previous_generated": self.previous_generated,
            "previous_prepkit_version": self.previous_version,
            "previous_input_file": self.previous_input_file,
            "same_workbook": self.same_workbook,
            "previous_inputs_kept": self.inputs_kept,
            "counts": self.counts(),
            "inputs": [c.row() for c in self.inputs],
            "headline_figures": [f.row() for f in self.figures],
        }


def compare_packs(
    old_inputs: Mapping[str, Any] | None,
    old_summary: Mapping[str, Any],
    new_inputs: Mapping[str, Any],
    new_summary: Mapping[str, Any],
) -> PackChanges:
    """Compare this pack's inputs and figures with the earlier pack's.

    Parameters
    ----------
    old_inputs : mapping or None
        The earlier pack's ``inputs.json`` (None when it kept none).
    old_summary : mapping
        The earlier pack's ``summary.json``.
    new_inputs : mapping
        This pack's :func:`inputs_payload`.
    new_summary : mapping
        This pack's summary (without its own changes).

    Returns
    -------
    PackChanges
        Every input that changed and every headline figure.
    """
    run = old_summary.get("run") if isinstance(old_summary.get("run"), Mapping) else {}
    assert isinstance(run, Mapping)
    new_run = new_summary.get("run") if isinstance(new_summary.get("run"), Mapping) else {}
    assert isinstance(new_run, Mapping)
    kept = isinstance(old_inputs, Mapping) and isinstance(old_inputs.get("inputs"), list)
    old_list = old_inputs.get("inputs") if kept and old_inputs is not None else []
    return PackChanges(
        previous_generated=str(run.get("generated", "")),
        previous_version=str(run.get("prepkit_version", "")),
        previous_input_file=str(run.get("input_file", "")),
        same_workbook=bool(run.get("input_sha256"))
        and run.get("input_sha256") == new_inputs.get("input_sha256"),
        inputs_kept=kept,
        inputs=_input_changes(old_list or [], new_inputs.get("inputs") or []) if kept else (),
        figures=_figure_changes(old_summary, new_summary),
        version=str(new_run.get("prepkit_version", "")),
    )
