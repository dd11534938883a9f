"""The review date: when the figures must be checked again, and the caution once it has passed.

Used by the pack (cover, every footer) and by ``prepkit run``, which warns
when a workbook is run after its review date; light imports only, so the
command line can use it without the report's heavier modules.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

from prepkit.plan import Plan
from prepkit.report.words.formatting import format_date

__all__ = ["ReviewWords", "review_words"]


@dataclass(frozen=True, kw_only=True)
class ReviewWords:
    """The review date as the cover gives it.

    Attributes
    ----------
    date : str
        The review date, formatted.
    passed : bool
        True when the pack was made after the review date.
    caution : str
        What to do when it has passed ("" otherwise).
    """

    date: str
    passed: bool
    caution: str


def review_words(plan: Plan, generated: dt.datetime) -> ReviewWords:
    """The review date and, when the run is later, the caution that it has passed."""
    review = plan.review_date
    passed = generated.astimezone(dt.UTC).date() > review
    caution = (f"The workbook's review date, {format_date(review)}, has passed: check its "
               "figures with the local health authority before relying on this pack, and "
               "set a new review date." if passed else "")
    return ReviewWords(date=format_date(review), passed=passed, caution=caution)
