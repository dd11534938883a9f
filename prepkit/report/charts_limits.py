"""Axis limits that hold everything drawn: no chart clips its data.

Fixing one end of an axis while panels are still being drawn freezes the
other end at what is drawn so far; axes shared with later panels then keep
the first panel's range and cut the larger series off. So the charts set
their value limits once every panel is drawn, with :func:`fit_limits`, from
every line, band, bar, marker and label on every panel sharing the axis.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import TYPE_CHECKING, Any, Literal

import numpy as np
from matplotlib.collections import Collection, PathCollection
from matplotlib.lines import Line2D
from matplotlib.patches import Patch
from matplotlib.text import Text

if TYPE_CHECKING:
    from matplotlib.axes import Axes

__all__ = ["drawn_extent", "fit_limits"]


def _data_points(artist: Any, ax: Axes) -> tuple[np.ndarray, tuple[bool, bool]] | None:
    """An artist's points in its own coordinates, and which of them are data coordinates."""
    points: Any
    if isinstance(artist, Line2D):
        points, transform = artist.get_xydata(), artist.get_transform()
    elif isinstance(artist, PathCollection):
        points, transform = artist.get_offsets(), artist.get_offset_transform()
    elif isinstance(artist, Collection):
        paths = [np.asarray(p.vertices, dtype=np.float64) for p in artist.get_paths()]
        points = np.concatenate(paths) if paths else np.empty((0, 2))
        transform = artist.get_transform()
    elif isinstance(artist, Patch):
        points = artist.get_patch_transform().transform(artist.get_path().vertices)
        transform = artist.get_data_transform()
    elif isinstance(artist, Text):
        points, transform = np.asarray([artist.get_position()]), artist.get_transform()
    else:
        return None
    data = transform.contains_branch_seperately(ax.transData)
    return np.asarray(points, dtype=np.float64).reshape(-1, 2), (bool(data[0]), bool(data[1]))


def drawn_extent(ax: Axes, axis: Literal["x", "y"]) -> tuple[float, float] | None:
    """Smallest and largest value drawn along one axis of an axes [data units].

    Every visible line (with its markers), band, strip, bar, scatter point
    and text anchor counts, along each of its coordinates given in data
    units: a reference line across the axes (``axhline``) counts on y, a
    shading spanning the axes height counts on x only.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
        Axes drawn on.
    axis : {"x", "y"}
        Which axis.

    Returns
    -------
    tuple of float or None
        Lowest and highest value, or None when nothing is drawn along it.
    """
    column = 0 if axis == "x" else 1
    values: list[np.ndarray] = []
    for artist in (*ax.lines, *ax.collections, *ax.patches, *ax.texts):
        if not artist.get_visible():
            continue
        found = _data_points(artist, ax)
        if found is None or not found[1][column]:
            continue
        along = found[0][:, column]
        values.append(along[np.isfinite(along)])
    every = np.concatenate(values) if values else np.empty(0)
    if not every.size:
        return None
    return float(every.min()), float(every.max())


def fit_limits(
    axes: Sequence[Axes],
    axis: Literal["x", "y"] = "y",
    *,
    floor: float | None = 0.0,
    margin: float = 0.05,
) -> tuple[float, float]:
    """Give every axes the same limits along one axis, covering everything drawn in all of them.

    Call it once every panel is drawn. Panels sharing an axis (``sharey``)
    then show the largest series of any panel, and panels drawn alone get
    limits that hold their every line, band, marker and label.

    Parameters
    ----------
    axes : sequence of matplotlib.axes.Axes
        The panels whose limits are set, together.
    axis : {"x", "y"}
        Which axis.
    floor : float or None, optional
        Start of the axis when nothing drawn lies below it (0 for counts of
        beds or people) [data units]; None starts it a margin below the
        lowest value.
    margin : float, optional
        Room beyond the drawn values, as a share of their range [fraction].

    Returns
    -------
    tuple of float
        The limits set [data units].
    """
    extents = [e for ax in axes if (e := drawn_extent(ax, axis)) is not None]
    low = min((e[0] for e in extents), default=floor or 0.0)
    high = max((e[1] for e in extents), default=(floor or 0.0) + 1.0)
    start = floor if floor is not None and low >= floor else low
    span = high - start if high > start else max(abs(high), 1.0)
    limits = (start if start == floor else start - margin * span, high + margin * span)
    for ax in axes:
        if axis == "x":
            ax.set_xlim(*limits)
        else:
            ax.set_ylim(*limits)
    return limits
