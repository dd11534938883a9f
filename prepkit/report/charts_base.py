"""What every chart of the pack shares: the drawn chart, drawing and saving, dates, axes.

Charts are drawn on :class:`matplotlib.figure.Figure` objects with the Agg
canvas directly, never through ``pyplot``: no global figure registry, no
GUI backend, nothing to close, and safe to call from any thread.

Every series has a colour from the Okabe-Ito palette *and* a dash pattern
*and* a marker, so the charts read in black and white. weasyprint does not
draw SVG hatch patterns, so areas are told apart by lightness and outline
instead.

No chart clips what it draws: value axes get their limits from
:func:`prepkit.report.charts_limits.fit_limits` once every panel is drawn.
"""

from __future__ import annotations

import base64
import datetime as dt
import textwrap
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any, Literal

import matplotlib
import matplotlib.dates as mdates
import pandas as pd
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

from prepkit.report.style import (
    OKABE_ITO,
    PageSize,
    chart_rcparams,
    figure_bytes,
    series_style,
)
from prepkit.report.words.chart_words import ChartWords
from prepkit.report.words.formatting import format_date

if TYPE_CHECKING:
    from matplotlib.axes import Axes

__all__ = [
    "legend_entries",
    "BUSY_SHARE",
    "PNG_DPI",
    "SHORT_FILL",
    "STILL_SHORT_FILL",
    "TAIL_DAYS",
    "TEXT_BLOCK_HEIGHTS_IN",
    "WITHOUT_STYLE",
    "WITH_STYLE",
    "Chart",
    "as_day",
    "beds_axis",
    "chart_height",
    "date_axis",
    "make_chart",
    "plot_series",
    "render_chart",
    "tick_number",
    "window_slice",
    "wrap_label",
]

#: Resolution of the PNG copies [dots per inch]: the PDF embeds them, so high
#: enough to print sharply; small enough to keep files and drawing time modest.
PNG_DPI = 200

#: Fill of days on which beds run short (light) and still short with surge (dark).
SHORT_FILL = "#F5C9AA"
STILL_SHORT_FILL = OKABE_ITO["vermillion"]

WITH_STYLE = series_style(0)
WITHOUT_STYLE = series_style(1)

#: Height of the text block of each paper [inches]: the page less the top and
#: bottom margins of ``templates/pack.css`` (A4: 297 mm less 20 and 24 mm;
#: Letter: 11 in less 0.75 and 0.95 in). tests/report/test_pack_layout.py keeps the
#: two in step.
TEXT_BLOCK_HEIGHTS_IN: dict[str, float] = {
    "A4": (297.0 - 20.0 - 24.0) / 25.4,
    "Letter": 11.0 - 0.75 - 0.95,
}

#: Days shown after the last busy day (and after every peak), and what counts
#: as busy: demand of at least this share of the scenario's largest peak.
#: Importations keep a long, low tail going that would otherwise squeeze the
#: wave into a corner of each chart.
TAIL_DAYS = 28
BUSY_SHARE = 0.03


@dataclass(frozen=True, kw_only=True)
class Chart:
    """One drawn chart.

    Parameters
    ----------
    name : str
        File stem, e.g. ``"demand-1"``; the pack writes
        ``charts/<name>.svg`` and ``.png``.
    title : str
        Short title.
    caption : str
        Caption printed below the chart.
    alt : str
        Alternate text for readers who cannot see it, written from the data.
    svg : bytes
        The chart as SVG (text as paths), for the HTML page and print work.
    png : bytes
        The chart as PNG at :data:`PNG_DPI`, for the PDF and slides.
    """

    name: str
    title: str
    caption: str
    alt: str
    svg: bytes
    png: bytes

    def data_uri(self, fmt: Literal["svg", "png"] = "svg") -> str:
        """The chart as a ``data:`` URI for embedding in HTML.

        Parameters
        ----------
        fmt : {"svg", "png"}
            Which copy.

        Returns
        -------
        str
            ``data:image/svg+xml;base64,...`` or ``data:image/png;base64,...``.
        """
        media = "image/svg+xml" if fmt == "svg" else "image/png"
        body = self.svg if fmt == "svg" else self.png
        return f"data:{media};base64,{base64.b64encode(body).decode('ascii')}"


# ---- Shared helpers ------------------------------------------------------------------------------


def make_chart(name: str, words: ChartWords, images: tuple[bytes, bytes]) -> Chart:
    """A drawn chart with its words.

    Parameters
    ----------
    name : str
        File stem (:attr:`Chart.name`).
    words : ChartWords
        Its title, caption and alternate text.
    images : tuple of bytes
        SVG and PNG bytes (:func:`render_chart`).

    Returns
    -------
    Chart
        The chart.
    """
    svg, png = images
    return Chart(name=name, title=words.title, caption=words.caption, alt=words.alt, svg=svg,
                 png=png)


def render_chart(
    draw: Callable[[Figure], None],
    *,
    size: tuple[float, float],
) -> tuple[bytes, bytes]:
    """Draw a figure and save it as SVG and PNG.

    Parameters
    ----------
    draw : callable
        Called with a fresh figure (constrained layout) to draw on.
    size : tuple of float
        Figure size [inches].

    Returns
    -------
    tuple of bytes
        SVG and PNG bytes, both reproducible.
    """
    settings: Any = chart_rcparams()
    with matplotlib.rc_context(settings):
        fig = Figure(figsize=size, layout="constrained", facecolor="white")
        FigureCanvasAgg(fig)
        draw(fig)
        # Lay out once, then freeze: each save would otherwise redo the
        # constrained layout, the slowest step of drawing a chart.
        engine = fig.get_layout_engine()
        if engine is not None:
            engine.execute(fig)
            fig.set_layout_engine("none")
        svg = figure_bytes(fig, "svg")
        with matplotlib.rc_context({"savefig.dpi": PNG_DPI}):
            png = figure_bytes(fig, "png")
    return svg, png


def chart_height(page_size: PageSize, a4_height_in: float) -> float:
    """A chart's height on the pack's paper, from its height on A4 [inches].

    Letter's text block is shorter than A4's (and about as wide), so charts
    shrink with it: each page then holds on Letter what it holds on A4, a
    scenario's findings with its chart, two charts of a comparison.

    Parameters
    ----------
    page_size : {"A4", "Letter"}
        Paper size of the pack.
    a4_height_in : float
        Height of the chart on A4 [inches].

    Returns
    -------
    float
        Height on ``page_size`` [inches].
    """
    return a4_height_in * TEXT_BLOCK_HEIGHTS_IN[page_size] / TEXT_BLOCK_HEIGHTS_IN["A4"]


def as_day(stamp: Any) -> dt.date:
    """The calendar day of a timestamp, a ``numpy.datetime64`` or a date."""
    return pd.Timestamp(stamp).date()


def window_slice(daily: pd.DataFrame, window: tuple[dt.date, dt.date]) -> pd.DataFrame:
    """The rows of a daily frame (indexed by date) inside a window, both ends included."""
    start, end = (pd.Timestamp(day) for day in window)
    return daily.loc[(daily.index >= start) & (daily.index <= end)]


def _month_starts(start: dt.date, end: dt.date) -> list[dt.date]:
    first = dt.date(start.year, start.month, 1)
    if first < start:
        first = dt.date(first.year + (first.month == 12), first.month % 12 + 1, 1)
    out = []
    day = first
    while day <= end:
        out.append(day)
        day = dt.date(day.year + (day.month == 12), day.month % 12 + 1, 1)
    return out


def date_axis(ax: Axes, window: tuple[dt.date, dt.date]) -> None:
    """Month ticks (every 1, 2 or 3 months), the year under the first and each January.

    The ticks are computed here once rather than by matplotlib's date
    locators, which recompute them with ``dateutil`` rules at every draw.
    The axis shows exactly the window.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
        Axes with dates on x.
    window : tuple of datetime.date
        First and last day shown.
    """
    start, end = window
    months = _month_starts(start, end)
    step = 1 if len(months) <= 9 else (2 if len(months) <= 18 else 3)
    major = [m for m in months if (m.month - 1) % step == 0] or months[:1]
    labels = []
    for i, day in enumerate(major):
        name = format_date(day, year=False).split(" ", 1)[1]
        labels.append(f"{name}\n{day.year}" if i == 0 or day.month == 1 else name)
    ax.xaxis.set_major_locator(matplotlib.ticker.FixedLocator(mdates.date2num(major)))
    ax.xaxis.set_major_formatter(matplotlib.ticker.FixedFormatter(labels))
    ax.xaxis.set_minor_locator(matplotlib.ticker.FixedLocator(mdates.date2num(months)))
    ax.set_xlim(mdates.date2num(start), mdates.date2num(end))


def _marks(length: int, index: int, count: int = 10) -> tuple[int, int]:
    """``markevery`` giving about ``count`` markers, offset per series."""
    step = max(1, length // count)
    return (min(step - 1, (index * step) // 3), step)


def wrap_label(text: str, width: int) -> str:
    """A label wrapped to at most two lines of ``width`` characters, cut with "..."."""
    return "\n".join(textwrap.wrap(text, width=width, max_lines=2, placeholder="...")) or text


def plot_series(
    ax: Axes,
    x: Any,
    y: Any,
    style_index: int,
    label: str,
    *,
    linewidth: float = 1.6,
    zorder: float = 2.0,
) -> None:
    """Draw one series in the colour, dash pattern and marker of its place in the legend.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
        Where to draw.
    x, y : array-like
        Dates and values [unit of the series].
    style_index : int
        Place of the series (:func:`prepkit.report.style.series_style`).
    label : str
        Legend entry.
    linewidth : float, optional
        Line width [points].
    zorder : float, optional
        Drawing order.
    """
    style = series_style(style_index)
    ax.plot(
        x, y, label=label, linewidth=linewidth, markevery=_marks(len(y), style_index),
        zorder=zorder, **style.plot_kwargs(),
    )


def beds_axis(ax: Axes) -> None:
    """Thousands separators on the ticks of a y axis of counts.

    The limits are left to :func:`prepkit.report.charts_limits.fit_limits`,
    called once everything is drawn: fixing one end here would freeze the
    other at what is drawn so far, and axes shared with later panels would
    keep that range.
    """
    ax.yaxis.set_major_formatter(matplotlib.ticker.FuncFormatter(tick_number))


def tick_number(value: float, _pos: int) -> str:
    """Tick label of a count: ``1,250`` from a thousand up, else the shortest form."""
    if abs(value) >= 1000:
        return f"{value:,.0f}"
    return f"{value:g}"


def legend_entries(axes: Sequence[Axes]) -> tuple[list[Any], list[str]]:
    """Handles and labels of every panel's legend entries, each label once, first seen first.

    Parameters
    ----------
    axes : sequence of Axes
        The panels, in the order their entries should come.

    Returns
    -------
    tuple of (list, list of str)
        Handles and labels for one legend of the whole figure.
    """
    handles: list[Any] = []
    labels: list[str] = []
    for ax in axes:
        for handle, label in zip(*ax.get_legend_handles_labels(), strict=True):
            if label not in labels:
                handles.append(handle)
                labels.append(label)
    return handles, labels
