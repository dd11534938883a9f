"""The planning workbook: its schema, the template writer and the reader.

``write_workbook`` writes the blank template (or one filled from a plan);
``read_plan`` reads a planner's workbook into a :class:`~prepkit.plan.Plan`,
raising :class:`~prepkit.errors.WorkbookError` with every problem found.
"""

from __future__ import annotations

from prepkit.workbook.describe import describe_plan, describe_problems
from prepkit.workbook.reader import read_plan, read_plan_with_warnings
from prepkit.workbook.template import write_workbook

__all__ = [
    "describe_plan",
    "describe_problems",
    "read_plan",
    "read_plan_with_warnings",
    "write_workbook",
]
