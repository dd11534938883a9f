"""Quantities given as Low / Central / High, and the names of the levels."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

__all__ = ["LEVELS", "Level", "Range3"]

Level = Literal["low", "central", "high"]
LEVELS: tuple[Level, ...] = ("low", "central", "high")


@dataclass(frozen=True, kw_only=True)
class Range3:
    """A quantity given as Low / Central / High, in the unit of its field.

    When the workbook leaves Low or High blank they equal Central.
    """

    low: float
    central: float
    high: float

    @classmethod
    def point(cls, value: float) -> Range3:
        """A quantity with no stated uncertainty."""
        return cls(low=value, central=value, high=value)

    def at(self, level: Level) -> float:
        """Value at a named level."""
        return {"low": self.low, "central": self.central, "high": self.high}[level]

    @property
    def is_point(self) -> bool:
        """True when Low = Central = High."""
        return self.low == self.central == self.high
