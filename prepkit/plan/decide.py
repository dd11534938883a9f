"""What the decide-by dates must achieve (see :mod:`prepkit.plan`)."""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["DECISION_DELAY_DAYS", "WITHIN_BEDS_SHARE", "DecideBy"]

WITHIN_BEDS_SHARE = 0.9
"""Default share of plausible futures that must stay within the beds [fraction]: 9 in 10, the
range the pack reports (a project choice, to be set with the health authority)."""

DECISION_DELAY_DAYS = 3.0
"""Default days from a decision to the measures taking effect [days] (a typical value)."""


@dataclass(frozen=True, kw_only=True)
class DecideBy:
    """The planner's terms for the decide-by dates.

    Attributes
    ----------
    within_beds_share : float
        Share of plausible futures in which ward and ICU demand must stay
        within the beds [fraction].
    delay_days : float
        Days from the decision until the measures take effect [days]; the
        decide-by date is this much before the latest start.
    """

    within_beds_share: float = WITHIN_BEDS_SHARE
    delay_days: float = DECISION_DELAY_DAYS
