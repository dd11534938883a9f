"""Error types.

One base class, :class:`PrepkitError`; each specific error also subclasses a
builtin so callers can catch it either way. Errors carry their fields as
attributes so code and tests can inspect them instead of parsing messages.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass

from prepkit.base.plural import counted


class PrepkitError(Exception):
    """Base class of every error prepkit raises on purpose."""


@dataclass(frozen=True)
class Problem:
    """One mistake found in a workbook.

    Parameters
    ----------
    sheet : str
        Sheet name as the planner sees it (``""`` when the problem is the
        whole file).
    cell : str
        Cell reference such as ``"D7"`` (``""`` when the problem is a whole
        sheet or file).
    field : str
        Plain-words name of the input, e.g. ``"ICU share of admissions,
        band 65-74"``.
    expected : str
        What the cell should hold.
    found : str
        What it holds.
    severity : str
        ``"error"`` (the plan cannot be used) or ``"warning"`` (the plan is
        used, but the planner should look).
    """

    sheet: str
    cell: str
    field: str
    expected: str
    found: str
    severity: str = "error"

    @property
    def where(self) -> str:
        """Sheet and cell in spreadsheet notation, e.g. ``Severity!D7``."""
        if self.sheet and self.cell:
            return f"{_quote_sheet(self.sheet)}!{self.cell}"
        return _quote_sheet(self.sheet) if self.sheet else "workbook"

    def __str__(self) -> str:
        return f"{self.where} ({self.field}): expected {self.expected}, found {self.found}"


def _quote_sheet(name: str) -> str:
    if name.replace("_", "").isalnum():
        return name
    return "'" + name.replace("'", "''") + "'"


class WorkbookError(ValueError, PrepkitError):
    """A workbook cannot be turned into a plan.

    Carries every problem found (``problems``), not just the first, so the
    planner can fix them all in one pass. ``warnings`` holds the non-fatal
    notes found on the way.
    """

    def __init__(self, problems: Iterable[Problem], warnings: Iterable[Problem] = ()) -> None:
        self.problems: tuple[Problem, ...] = tuple(problems)
        self.warnings: tuple[Problem, ...] = tuple(warnings)
        first = str(self.problems[0]) if self.problems else "no detail"
        more = len(self.problems) - 1
        rest = f" (and {counted(more, 'more problem', 'more problems')})" if more > 0 else ""
        super().__init__(first + rest)

    @property
    def sheet(self) -> str:
        """Sheet of the first problem."""
        return self.problems[0].sheet if self.problems else ""

    @property
    def cell(self) -> str:
        """Cell of the first problem."""
        return self.problems[0].cell if self.problems else ""


class BadValue(ValueError, PrepkitError):
    """A cell holds something its field cannot take.

    Raised while one cell is read and turned into a :class:`Problem` by the
    reader (it never reaches the caller of :func:`prepkit.workbook.read_plan`).

    Attributes
    ----------
    found : str
        What the cell holds, in plain words.
    expected : str or None
        Replacement for the field's own description of a good value.
    """

    def __init__(self, found: str, expected: str | None = None) -> None:
        super().__init__(found)
        self.found = found
        self.expected = expected


class SheetTooBig(ValueError, PrepkitError):
    """A sheet holds more than the reader's bounds allow.

    Raised while one sheet is read and turned into a :class:`Problem` naming
    the sheet (:meth:`problem`).

    Attributes
    ----------
    expected, found : str
        The bound and what the sheet holds, in plain words.
    """

    def __init__(self, expected: str, found: str) -> None:
        super().__init__(found)
        self.expected = expected
        self.found = found

    def problem(self, title: str) -> Problem:
        """The problem to report for the sheet titled ``title``."""
        return Problem(sheet=title, cell="", field="sheet", expected=self.expected,
                       found=self.found)


class ModelError(ValueError, PrepkitError):
    """The plan is valid as a workbook but cannot be simulated as asked.

    Parameters
    ----------
    message : str
        The whole explanation, in planners' words.
    problems : iterable of Problem
        The inputs responsible, each with its sheet, cell (``""`` when the
        plan was not read from a workbook), field, expected and found; empty
        when no single input is to blame.
    draw : int or None
        The uncertainty draw (or one-input-at-a-time run of the tornado) that
        failed, counted from 0; None for a single run.
    """

    def __init__(
        self, message: str, *, problems: Iterable[Problem] = (), draw: int | None = None
    ) -> None:
        super().__init__(message)
        self.problems: tuple[Problem, ...] = tuple(problems)
        self.draw = draw

    def __reduce__(self) -> tuple[object, ...]:
        # keyword-only attributes survive pickling (errors raised on a cluster worker)
        return (_model_error, (str(self), self.problems, self.draw))

    @property
    def fields(self) -> tuple[str, ...]:
        """Fields of the inputs responsible, in order."""
        return tuple(problem.field for problem in self.problems)


def _model_error(message: str, problems: tuple[Problem, ...], draw: int | None) -> ModelError:
    return ModelError(message, problems=problems, draw=draw)


class PipelineError(ValueError, PrepkitError):
    """A run cannot go ahead as asked (an option or the output folder is wrong).

    Parameters
    ----------
    field : str
        The option or path at fault.
    expected, found : str
        What was expected and what was given.
    """

    def __init__(self, field: str, expected: str, found: str) -> None:
        self.field = field
        self.expected = expected
        self.found = found
        super().__init__(f"{field}: expected {expected}, found {found}")


class OutputError(OSError, PrepkitError):
    """An output could not be written."""

    def __str__(self) -> str:
        # Planners need the sentence and the path, not the operating system's error number;
        # the path once, where the sentence does not name it already.
        if self.strerror and self.filename and str(self.filename) not in self.strerror:
            return f"{self.strerror}: {self.filename}"
        return self.strerror or super().__str__()
