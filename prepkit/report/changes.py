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

from collections import Counter
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from typing import Any

from prepkit.plan import Plan
from prepkit.report.changes_figures import FIGURE_KEYS, FigureChange, figure_changes

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
        figures=figure_changes(old_summary, new_summary),
        version=str(new_run.get("prepkit_version", "")),
    )
