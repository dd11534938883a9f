"""Words of the page "What changed since the last pack" (:mod:`prepkit.report.changes`)."""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

from prepkit.report.changes import FigureChange, InputChange, PackChanges
from prepkit.report.words.formatting import format_date

__all__ = ["LISTED_INPUTS", "ChangeWords", "change_words"]

#: Input changes listed on the page; the rest are in results.xlsx and the CSV file.
LISTED_INPUTS = 60

_CHANGE_WORDS = {"changed": "Changed", "added": "New", "removed": "Gone"}


@dataclass(frozen=True, kw_only=True)
class ChangeWords:
    """What the page and the cover say about the changes.

    Attributes
    ----------
    since : str
        The earlier pack's date as printed.
    cover : str
        One line for the cover (how many inputs changed since when).
    intro : tuple of str
        Sentences opening the page.
    inputs : tuple of tuple of str
        Listed input rows: what happened, sheet, cell, label, old and new value (with unit).
    more_inputs : int
        Input changes not listed on the page.
    figures : tuple of (str, tuple of FigureChange)
        Per scenario, its headline figures.
    """

    since: str
    cover: str
    intro: tuple[str, ...]
    inputs: tuple[tuple[str, ...], ...]
    more_inputs: int
    figures: tuple[tuple[str, tuple[FigureChange, ...]], ...]


def _when(stamp: str) -> str:
    try:
        day = dt.datetime.fromisoformat(stamp.replace("Z", "+00:00")).date()
    except ValueError:
        return "an earlier run"
    return format_date(day)


def _with_unit(value: str, unit: str) -> str:
    if value == "none" or not unit or unit in ("date", "text") or value.endswith("%"):
        return value
    return f"{value} {unit}"


def _input_row(change: InputChange) -> tuple[str, ...]:
    return (_CHANGE_WORDS.get(change.change, change.change), change.sheet, change.cell,
            change.label, _with_unit(change.old_value, change.unit),
            _with_unit(change.new_value, change.unit))


def change_words(changes: PackChanges | None) -> ChangeWords | None:
    """The page's words; None when there is no earlier pack or nothing changed."""
    if changes is None or not changes.any:
        return None
    when = _when(changes.previous_generated)
    tally = changes.counts()
    made = f"The folder held a pack made on {when}"
    if changes.previous_input_file:
        made += f" from {changes.previous_input_file}"
    made += f" by prepkit {changes.previous_version or 'of an unknown version'}."
    intro = [made]
    if not changes.inputs_kept:
        intro.append("That pack did not keep its inputs, so only the headline figures are "
                     "compared.")
        cover = f"Headline figures compared with the pack of {when}"
    elif not changes.inputs:
        intro.append("No input changed" + (" (the same workbook file)."
                                           if changes.same_workbook else "."))
        cover = f"No input changed since the pack of {when}"
    else:
        parts = [f"{tally[key]:,} {'input' if tally[key] == 1 else 'inputs'} {key}"
                 for key in ("changed", "added", "removed") if tally[key]]
        intro.append(", ".join(parts).capitalize() + ". Each is listed with its sheet and cell "
                     "in the workbook, so it can be checked there.")
        cover = f"{', '.join(parts).capitalize()} since the pack of {when}"
    if changes.previous_version and changes.previous_version != changes.version:
        intro.append(f"This pack was made by prepkit {changes.version}; some figures may "
                     "differ for that reason as well.")
    intro.append("The headline figures are those of the central run of each scenario with its "
                 "measures, as the summary for leaders gives them; the difference is this "
                 "pack's figure less the earlier pack's.")
    listed = changes.inputs[:LISTED_INPUTS]
    groups: dict[str, list[FigureChange]] = {}
    for figure in changes.figures:
        groups.setdefault(figure.scenario, []).append(figure)
    return ChangeWords(
        since=when,
        cover=cover,
        intro=tuple(intro),
        inputs=tuple(_input_row(c) for c in listed),
        more_inputs=len(changes.inputs) - len(listed),
        figures=tuple((name, tuple(rows)) for name, rows in groups.items()),
    )
