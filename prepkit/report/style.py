"""Colours, line styles and figure sizes shared by the charts and the PDF.

Briefing packs are printed, photocopied and read by people with colour
vision deficiencies, so no chart relies on colour alone: every series has a
colour from the Okabe-Ito palette *and* its own dash pattern *and* its own
marker, and reads the same in black and white.

The same palette names the colours of ``templates/pack.css`` (its custom
properties ``--series-1`` ... and the interface colours in
:data:`CSS_COLORS`); a test keeps the two in step.

Charts are written byte-for-byte reproducibly: :func:`chart_rcparams` fixes
the font, the SVG id salt and the resolution, and :func:`figure_bytes` drops
the date and software stamps that PNG and SVG files would otherwise carry.

References
----------
.. [1] Okabe, M. and Ito, K. (2008). Color Universal Design (CUD): how to
   make figures and presentations that are friendly to colorblind people.
   J*FLY Data Depository for Drosophila Researchers.
   https://jfly.uni-koeln.de/color/
.. [2] Wong, B. (2011). Points of view: Color blindness. Nature Methods
   8, 441. https://doi.org/10.1038/nmeth.1618
"""

from __future__ import annotations

import io
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any, Literal

if TYPE_CHECKING:
    from matplotlib.figure import Figure

__all__ = [
    "CSS_COLORS",
    "FIGURE_SIZES",
    "OKABE_ITO",
    "SERIES_STYLES",
    "PageSize",
    "SeriesStyle",
    "chart_rcparams",
    "figure_bytes",
    "figure_size",
    "series_style",
]

PageSize = Literal["A4", "Letter"]

#: The eight colours of the Okabe-Ito palette [1]_, as sRGB hex codes.
OKABE_ITO: dict[str, str] = {
    "black": "#000000",
    "orange": "#E69F00",
    "sky_blue": "#56B4E9",
    "bluish_green": "#009E73",
    "yellow": "#F0E442",
    "blue": "#0072B2",
    "vermillion": "#D55E00",
    "reddish_purple": "#CC79A7",
}


@dataclass(frozen=True, kw_only=True)
class SeriesStyle:
    """How one data series is drawn.

    Parameters
    ----------
    color : str
        sRGB hex colour from :data:`OKABE_ITO`.
    color_name : str
        Key of the colour in :data:`OKABE_ITO`.
    dashes : tuple of float
        Dash pattern, alternating on and off lengths [points]; empty for a
        solid line.
    marker : str
        matplotlib marker code.
    """

    color: str
    color_name: str
    dashes: tuple[float, ...]
    marker: str

    @property
    def linestyle(self) -> str | tuple[float, tuple[float, ...]]:
        """The dash pattern in matplotlib's ``linestyle`` form."""
        return "solid" if not self.dashes else (0.0, self.dashes)

    def plot_kwargs(self) -> dict[str, Any]:
        """Keyword arguments for :meth:`matplotlib.axes.Axes.plot`."""
        return {"color": self.color, "linestyle": self.linestyle, "marker": self.marker}


def _series(name: str, dashes: tuple[float, ...], marker: str) -> SeriesStyle:
    return SeriesStyle(color=OKABE_ITO[name], color_name=name, dashes=dashes, marker=marker)


#: Series styles in the order they are used. The darkest, most distinct
#: colours come first; yellow, which fades on white paper, comes last.
SERIES_STYLES: tuple[SeriesStyle, ...] = (
    _series("blue", (), "o"),
    _series("vermillion", (6.0, 2.5), "s"),
    _series("bluish_green", (1.5, 1.5), "^"),
    _series("reddish_purple", (6.0, 2.0, 1.5, 2.0), "D"),
    _series("orange", (3.0, 3.0), "v"),
    _series("sky_blue", (8.0, 2.0, 1.5, 2.0, 1.5, 2.0), "P"),
    _series("black", (10.0, 3.0), "X"),
    _series("yellow", (1.0, 3.0), "*"),
)


def series_style(index: int) -> SeriesStyle:
    """Style of the ``index``-th series, cycling after eight.

    Parameters
    ----------
    index : int
        Series number, from 0.

    Returns
    -------
    SeriesStyle
        Its colour, dash pattern and marker.
    """
    return SERIES_STYLES[index % len(SERIES_STYLES)]


#: Colours of the pack stylesheet besides the series colours. Greys are
#: chosen so text keeps at least 7:1 contrast on white (WCAG AAA).
CSS_COLORS: dict[str, str] = {
    "ink": "#1A1A1A",
    "muted": "#4D4D4D",
    "rule": "#8C8C8C",
    "shade": "#F2F2F2",
    "accent": OKABE_ITO["blue"],
    "caution": OKABE_ITO["vermillion"],
    "caution-shade": "#FBEFE6",
}

#: Width of the text block and a default chart height for each page size
#: [inches]: A4 is 210 mm wide with 18 mm side margins, Letter 8.5 in with
#: 0.75 in margins, as set in ``templates/pack.css``.
FIGURE_SIZES: dict[str, tuple[float, float]] = {
    "A4": (174.0 / 25.4, 3.6),
    "Letter": (7.0, 3.6),
}


def figure_size(
    page_size: PageSize, *, width_fraction: float = 1.0, aspect: float = 0.52
) -> tuple[float, float]:
    """Figure size that fits the text block of a page.

    Parameters
    ----------
    page_size : {"A4", "Letter"}
        Paper size of the pack.
    width_fraction : float, optional
        Share of the text block width the figure spans [fraction].
    aspect : float, optional
        Height divided by width [fraction].

    Returns
    -------
    tuple of float
        ``(width, height)`` [inches], for ``plt.figure(figsize=...)``.

    Raises
    ------
    ValueError
        For an unknown page size or a width fraction outside (0, 1].
    """
    if page_size not in FIGURE_SIZES:
        raise ValueError(f"page_size: expected one of {sorted(FIGURE_SIZES)}, found {page_size!r}")
    if not 0.0 < width_fraction <= 1.0:
        raise ValueError(f"width_fraction: expected a value in (0, 1], found {width_fraction!r}")
    width = FIGURE_SIZES[page_size][0] * width_fraction
    return (width, width * aspect)


def chart_rcparams() -> dict[str, Any]:
    """Settings of matplotlib for pack charts.

    Use as ``with matplotlib.rc_context(chart_rcparams()): ...``. The
    settings give DejaVu Sans text (the font matplotlib ships and the pack
    embeds), the palette and line styles of :data:`SERIES_STYLES` as the
    property cycle, text drawn as paths in SVG (so SVG charts need no font
    on the reader's machine), and a fixed SVG id salt and resolution so
    saved charts are byte-reproducible. Mathematical text is off, so a
    ``$`` in a scenario or measure name is drawn as a dollar sign.

    Returns
    -------
    dict
        rcParams names and values.
    """
    from cycler import cycler

    return {
        "font.family": "sans-serif",
        "font.sans-serif": ["DejaVu Sans"],
        "font.size": 9.0,
        "axes.titlesize": 10.0,
        "axes.labelsize": 9.0,
        "axes.edgecolor": CSS_COLORS["muted"],
        "axes.labelcolor": CSS_COLORS["ink"],
        "axes.grid": True,
        "axes.spines.top": False,
        "axes.spines.right": False,
        "axes.prop_cycle": cycler(
            color=[s.color for s in SERIES_STYLES],
            linestyle=[s.linestyle for s in SERIES_STYLES],
            marker=[s.marker for s in SERIES_STYLES],
        ),
        "grid.color": "#D9D9D9",
        "grid.linewidth": 0.6,
        "lines.linewidth": 1.6,
        "lines.markersize": 4.5,
        "legend.frameon": False,
        "legend.handlelength": 3.5,
        "text.color": CSS_COLORS["ink"],
        "xtick.color": CSS_COLORS["muted"],
        "ytick.color": CSS_COLORS["muted"],
        "figure.dpi": 100,
        "savefig.dpi": 200,
        "svg.fonttype": "path",
        "svg.hashsalt": "prepkit-chart",
        "svg.image_inline": True,
        "path.simplify": True,
        # Planners' text ("Budget $5m vs $10m") is text: never mathematics or TeX.
        "text.parse_math": False,
        "text.usetex": False,
    }


#: Metadata passed to ``savefig`` so files carry no date or version stamp.
_SAVE_METADATA: dict[str, dict[str, Any]] = {
    "png": {"Software": None},
    "svg": {"Date": None, "Creator": None},
}


def figure_bytes(fig: Figure, fmt: Literal["png", "svg"]) -> bytes:
    """Save a figure to PNG or SVG bytes with no date or software stamp.

    Together with :func:`chart_rcparams`, saving the same figure twice gives
    the same bytes, on any day.

    Parameters
    ----------
    fig : matplotlib.figure.Figure
        Figure to save.
    fmt : {"png", "svg"}
        File format.

    Returns
    -------
    bytes
        The file's bytes.
    """
    if fmt not in _SAVE_METADATA:
        raise ValueError(f"fmt: expected 'png' or 'svg', found {fmt!r}")
    buffer = io.BytesIO()
    fig.savefig(buffer, format=fmt, metadata=_SAVE_METADATA[fmt])
    return buffer.getvalue()
