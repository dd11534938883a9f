"""Where a workbook field lands in the plan: the dotted paths of ``Field.target``.

A target names a part of :class:`~prepkit.plan.Plan` and a path inside it:

* ``"capacity.icu_beds"``: an attribute of one part of the plan;
* ``"severity.icu_share[band]"``: a tuple with one entry per age band, in
  the order of :attr:`Plan.bands`, read from a per-band table;
* ``"contacts.setting_shares[band].home"``: one key of a per-band dict;
* ``"bands[].people"``: one plan entry per table row; the path after ``[]``
  may go deeper (``"interventions[].vaccination.doses_per_day"``).
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass

__all__ = ["Target", "parse_target", "resolve"]


@dataclass(frozen=True)
class Target:
    """A parsed ``Field.target``.

    Attributes
    ----------
    section : str
        Attribute of the plan, e.g. ``"capacity"`` or ``"interventions"``.
    path : tuple of str
        Attributes inside the section (inside one row entry when
        ``per_row``).
    per_band : bool
        One value per age band (``[band]``).
    per_row : bool
        One plan entry per table row (``[]``).
    key : str or None
        Dict key after ``[band]``, e.g. ``"home"``.
    """

    section: str
    path: tuple[str, ...]
    per_band: bool = False
    per_row: bool = False
    key: str | None = None

    @property
    def attribute(self) -> str:
        """First attribute of the path inside the section (or the row entry)."""
        return self.path[0]


def parse_target(text: str) -> Target:
    """Parse a dotted target path (see the module notes).

    Raises
    ------
    ValueError
        When the text is not a target.
    """
    head, _, rest = text.partition(".")
    if not rest:
        raise ValueError(f"target {text!r} names no attribute")
    if head.endswith("[]"):
        return Target(section=head[:-2], path=tuple(rest.split(".")), per_row=True)
    attribute, band, key = rest.partition("[band]")
    if not band:
        return Target(section=head, path=tuple(rest.split(".")))
    if key and not key.startswith("."):
        raise ValueError(f"target {text!r}: '[band]' must end the path or come before '.key'")
    return Target(section=head, path=(attribute,), per_band=True, key=key[1:] or None)


def resolve(obj: object, path: Iterable[str]) -> object:
    """Value at an attribute path; None as soon as a step is None."""
    for name in path:
        if obj is None:
            return None
        obj = getattr(obj, name)
    return obj

