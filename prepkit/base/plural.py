"""Counting words for messages and the pack: "both scenarios", "1 problem".

A low-level module: errors, the workbook layer and the report all use it, so a
count of things reads the same everywhere.
"""

from __future__ import annotations

__all__ = ["all_of", "counted"]


def all_of(count: int, noun: str, plural: str | None = None) -> str:
    """Every one of a number of things, in words.

    Parameters
    ----------
    count : int
        How many there are [count].
    noun : str
        The thing, singular (``"scenario"``).
    plural : str, optional
        Its plural, when not ``noun + "s"``.

    Returns
    -------
    str
        ``"no scenarios"``, ``"the scenario"``, ``"both scenarios"``, then
        ``"all 3 scenarios"``.

    Examples
    --------
    >>> all_of(2, "scenario")
    'both scenarios'
    >>> all_of(5, "measure")
    'all 5 measures'
    """
    many = plural if plural is not None else noun + "s"
    if count <= 0:
        return f"no {many}"
    if count == 1:
        return f"the {noun}"
    if count == 2:
        return f"both {many}"
    return f"all {count:,} {many}"


def counted(count: int, noun: str, plural: str | None = None) -> str:
    """A number of things, in words: ``"1 problem"``, ``"3 problems"``.

    Parameters
    ----------
    count : int
        How many [count].
    noun : str
        The thing, singular.
    plural : str, optional
        Its plural, when not ``noun + "s"``.

    Returns
    -------
    str
        The count and the noun, singular only for exactly one.
    """
    many = plural if plural is not None else noun + "s"
    return f"{count:,} {noun if count == 1 else many}"
