"""Located inputs and problems: what the reader collects while it reads the sheets."""

from __future__ import annotations

from collections.abc import Mapping

from prepkit.errors import BadValue, Problem
from prepkit.plan import LEVELS, Level
from prepkit.workbook.cells import Got, RawCell, normalise_key, show
from prepkit.workbook.field_types import Field
from prepkit.workbook.load import Grid
from prepkit.workbook.parse import parse

__all__ = ["Collector", "default_of", "levels"]


class Collector:
    """The sheets of a book, the problems found in them and how one input is read."""

    def __init__(self, book: dict[str, Grid], other_sheets: Mapping[str, str]) -> None:
        self.book = book
        self.other_sheets = other_sheets
        self.problems: list[Problem] = []
        self.titles: dict[str, str] = {}

    # -- messages

    def report(self, sheet: str, cell: str, label: str, expected: str, found: str,
               warning: bool = False) -> None:
        """Note one problem (an error, or a warning when ``warning``)."""
        self.problems.append(Problem(sheet=sheet, cell=cell, field=label, expected=expected,
                                     found=found, severity="warning" if warning else "error"))

    @property
    def errors(self) -> list[Problem]:
        """The problems found so far that stop the plan being used."""
        return [p for p in self.problems if p.severity == "error"]

    # -- located values

    def got(
        self,
        f: Field,
        level: Level,
        sheet: str,
        cell: str,
        raw: RawCell | None,
        label: str,
        *,
        fallback: Got | None = None,
        missing: str | None = None,
        quiet: bool = False,
    ) -> Got:
        """Read one input, reporting single-field problems.

        ``fallback`` is the Central value a blank Low or High takes;
        ``missing`` explains a row or column that is not there; ``quiet``
        leaves a required blank unreported (already reported elsewhere).
        """
        found = missing if missing is not None else show(raw)
        try:
            value, percent = parse(f, raw)
        except BadValue as exc:
            self.report(sheet, cell, label, exc.expected or f.expected(), exc.found)
            return Got(field=f, level=level, sheet=sheet, cell=cell, label=label, value=None,
                       found=exc.found, blank=False, bad=True)
        if value is not None:
            return Got(field=f, level=level, sheet=sheet, cell=cell, label=label, value=value,
                       found=found, blank=False, percent=percent)
        if fallback is not None:
            return Got(field=f, level=level, sheet=sheet, cell=cell, label=label,
                       value=fallback.value, found=found, blank=True, bad=fallback.bad,
                       percent=fallback.percent)
        if f.default is not None:
            return Got(field=f, level=level, sheet=sheet, cell=cell, label=label,
                       value=default_of(f), found=found, blank=True, defaulted=True)
        if f.required and not quiet:
            self.report(sheet, cell, label, f.expected(), found)
        return Got(field=f, level=level, sheet=sheet, cell=cell, label=label, value=None,
                   found=found, blank=True)

    def absent(self, f: Field, level: Level, sheet: str, label: str, why: str) -> Got:
        """An input whose sheet or block is missing (already reported)."""
        # a blank Low or High takes the Central value, so an absent uncertain input is its
        # default at every level
        value = default_of(f) if f.default is not None else None
        return Got(field=f, level=level, sheet=sheet, cell="", label=label, value=value,
                   found=why, blank=True, defaulted=value is not None)

    # -- sheets

    def grid(self, name: str) -> Grid | None:
        """The sheet of cells named ``name`` (case, spaces and dashes aside), or None."""
        grid = self.book.get(name)
        if grid is None:
            want = normalise_key(name)
            grid = next((g for t, g in self.book.items() if normalise_key(t) == want), None)
        if grid is not None:
            self.titles[name] = grid.title
        return grid

    def title(self, name: str) -> str:
        """Title of the sheet ``name`` as the planner wrote it (``name`` until it is found)."""
        return self.titles.get(name, name)

    def no_grid(self, name: str) -> tuple[str, str] | None:
        """Title and kind of a sheet named ``name`` that holds no cells (a chart sheet), or None."""
        want = normalise_key(name)
        return next(((t, kind) for t, kind in self.other_sheets.items()
                     if normalise_key(t) == want), None)

    def missing(self, name: str) -> str:
        """What stands where the sheet ``name`` should be, for messages."""
        other = self.no_grid(name)
        if other is None:
            return "no such sheet"
        return f"{other[1]} named '{other[0]}', which holds no cells"


def levels(f: Field) -> tuple[Level, ...]:
    """Levels a field is read at: all three for an uncertain field, else Central."""
    return LEVELS if f.uncertain else ("central",)


def default_of(f: Field) -> object:
    """Default of a field in its canonical form (a choice's value, a list as a tuple)."""
    default = f.default
    if f.type == "choice" and isinstance(default, str):
        return (f.choices or {}).get(default, default)
    if f.type == "list" and isinstance(default, list | tuple):
        return tuple(default)
    return default
