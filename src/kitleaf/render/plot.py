"""Response plots: gain in dB against log frequency, as byte-reproducible SVG.

One panel per knob (one curve per knob position), the part-tolerance band shaded behind, the
-3 dB corners marked. Curves differ in line style as well as colour, so the plot reads the same
in greyscale print. Every figure gets its own canvas and rc_context; nothing global is touched.

The frame, grid, ticks, their labels and the legend are drawn here as a few plain artists in a
fixed layout rather than by matplotlib's axis and legend machinery: that machinery builds a
dozen artists per tick and measures every label for placement, and cost about two thirds of a
plot's time.
"""

from __future__ import annotations

import functools
import io
from dataclasses import dataclass

import matplotlib
import numpy as np
from matplotlib.backends.backend_svg import FigureCanvasSVG
from matplotlib.collections import LineCollection
from matplotlib.figure import Figure
from matplotlib.font_manager import FontProperties
from matplotlib.lines import TICKDOWN, TICKLEFT, Line2D
from matplotlib.patches import Rectangle
from matplotlib.textpath import text_to_path
from matplotlib.ticker import MaxNLocator
from matplotlib.transforms import Affine2D, ScaledTranslation, offset_copy

from kitleaf.values import format_value

# (colour, dash pattern, width) per curve: dark to light and distinct dashes, so curves stay
# apart in greyscale; the middle one (knobs at half way, the shaded band's curve) is solid.
STYLES = (("#0b3c5d", (0, (1, 1.5)), 1.7), ("#b35806", (0, (6, 1.5, 1, 1.5)), 1.5),
          ("#111111", "-", 2.2), ("#1b7837", (0, (5, 2)), 1.5), ("#762a83", (0, (9, 2.5)), 1.5))
BAND_COLOUR = "#c9ced6"
CORNER_COLOUR = "#5d6d7e"
RC = {
    "svg.hashsalt": "kitleaf",  # fixed ids: the same input gives the same bytes
    "svg.fonttype": "none",
    "font.family": "DejaVu Sans",
    "font.size": 9,
}
FRAME_COLOUR = "#444444"
GRID_COLOUR = "#d5d8dc"
FONT = FontProperties(family="DejaVu Sans", size=9)
LEGEND_PT = 7.5  # legend and corner labels
TICK_PT, PAD_PT = 3.5, 3.5  # tick length and the gap to its label, in points
LABEL_PAD_PT = 5.0  # from the tick labels to the axis label
LINE_EM = 1.17  # DejaVu Sans's line height in font sizes
# The x axis is linear in log10(f): the same picture as a log scale, without the scale
# object and the non-affine transform matplotlib builds and applies for one on every draw.
DECADES = (1.0, 2.0, 3.0, 4.0)
DECADE_LABELS = tuple(format_value(10**d, "frequency") for d in DECADES)
MINOR = tuple(float(np.log10(m)) + d for d in DECADES for m in (2, 3, 4, 5, 6, 7, 8, 9))
WIDTH_IN = 7.2
PANEL_IN, TOP_IN, BOTTOM_IN, LEFT_IN, RIGHT_IN = 2.45, 0.42, 0.5, 0.62, 1.95
SPAN_DB = 60.0  # dB shown below the highest curve; quieter curves leave the bottom edge


@dataclass(frozen=True)
class Curve:
    """One trace: a label (a knob position, say) and gain in dB at each frequency."""

    label: str
    gain_db: tuple[float, ...]


@dataclass(frozen=True)
class Panel:
    """One set of axes: curves of one knob's positions, the band and the corners."""

    title: str
    curves: tuple[Curve, ...]
    band_low: tuple[float, ...] = ()
    band_high: tuple[float, ...] = ()
    corners: tuple[tuple[float, str], ...] = ()  # (Hz, label)


@dataclass(frozen=True)
class ResponsePlot:
    """Everything a response plot shows."""

    title: str
    freqs: tuple[float, ...]
    panels: tuple[Panel, ...]


def render_response_svg(plot: ResponsePlot) -> str:
    """The plot as SVG text; the same plot always gives the same bytes."""
    with matplotlib.rc_context(RC):
        fig = draw_figure(plot)
        out = io.StringIO()
        fig.savefig(out, format="svg", metadata={"Date": None, "Creator": "kitleaf"})
    return out.getvalue()


def render_response_png(plot: ResponsePlot, dpi: int = 110) -> bytes:
    """The same figure as PNG, for looking at a plot while working on it."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    with matplotlib.rc_context(RC):
        fig = draw_figure(plot)
        FigureCanvasAgg(fig)
        out = io.BytesIO()
        fig.savefig(out, format="png", dpi=dpi, metadata={"Software": None})
    return out.getvalue()


def draw_figure(plot: ResponsePlot) -> Figure:
    rows = max(len(plot.panels), 1)
    height = 0.75 + PANEL_IN * rows
    fig = Figure(figsize=(WIDTH_IN, height), dpi=100)
    FigureCanvasSVG(fig)
    # Fixed margins in inches (a layout engine costs more than the drawing itself).
    fig.subplots_adjust(left=LEFT_IN / WIDTH_IN, right=1 - RIGHT_IN / WIDTH_IN,
                        top=1 - TOP_IN / height, bottom=BOTTOM_IN / height,
                        hspace=0.55 / PANEL_IN * rows)
    fig.text(0.02, 0.98, plot.title, fontsize=10, fontweight="bold", ha="left", va="top")
    for i, panel in enumerate(plot.panels):
        ax = fig.add_subplot(rows, 1, i + 1)
        _draw(ax, np.log10(plot.freqs), panel, last=i == rows - 1)
    return fig


def _draw(ax, log_f: np.ndarray, panel: Panel, last: bool) -> None:
    top = max(max(c.gain_db) for c in panel.curves)
    floor = max(min(min(c.gain_db) for c in panel.curves), top - SPAN_DB)
    entries = []  # (handle, label) for the legend, in drawing order
    if panel.band_low:
        ax.fill_between(log_f, panel.band_low, panel.band_high, color=BAND_COLOUR,
                        linewidth=0, zorder=1)
        entries.append((None, "part tolerances (5–95 %)"))
    for i, curve in enumerate(panel.curves):
        colour, dashes, width = STYLES[_style(i, len(panel.curves))]
        below = max(curve.gain_db) < floor
        ax.plot(log_f, curve.gain_db, color=colour, linestyle=dashes, linewidth=width, zorder=3)
        entries.append(((colour, dashes, width), curve.label + (" (below the plot)" if below
                                                                else "")))
    _corners(ax, panel.corners)
    _axes(ax, log_f, floor - 3.0, top + 6.0, panel.title, last)
    _legend(ax, entries)


def _style(i: int, count: int) -> int:
    """Five positions take the five styles in order; a single curve is the solid one."""
    return 2 if count == 1 else i % len(STYLES)


def _corners(ax, corners: tuple[tuple[float, str], ...]) -> None:
    if not corners:
        return
    _rules(ax, [np.log10(hz) for hz, _ in corners], ax.get_xaxis_transform(), color=CORNER_COLOUR,
           linestyle=(0, (2, 2)), linewidth=0.9, zorder=2)
    at = offset_copy(ax.get_xaxis_transform(), fig=ax.figure, x=3, y=-3, units="points")
    for hz, label in corners:
        ax.figure.text(np.log10(hz), 1.0, label, transform=at, va="top", fontsize=LEGEND_PT,
                       color="#333333")


def _rules(ax, values, transform, **style) -> None:
    """Lines across the panel at ``values`` (x in a blended x transform, or y), one collection
    added as is: ``vlines`` would also work out data limits we set by hand anyway."""
    flip = transform is ax.get_yaxis_transform()
    segments = [((0, v), (1, v)) if flip else ((v, 0), (v, 1)) for v in values]
    ax.add_collection(LineCollection(segments, transform=transform, **style), autolim=False)


def _axes(ax, log_f: np.ndarray, low: float, high: float, title: str, last: bool) -> None:
    """Limits, frame, grid, ticks and labels as a few plain artists (see the module note)."""
    ax.set_xlim(log_f[0], log_f[-1])
    ax.set_ylim(low, high)
    ax.set_axis_off()
    fig = ax.figure
    ax.add_artist(Rectangle((0, 0), 1, 1, transform=ax.transAxes, fill=False, clip_on=False,
                            edgecolor=FRAME_COLOUR, linewidth=0.8, zorder=2.5))
    # The in-between lines as one collection: far cheaper to draw than minor ticks.
    _rules(ax, MINOR, ax.get_xaxis_transform(), linewidth=0.3, color="#e5e8e8", zorder=0)
    values = _y_ticks(ax, low, high)
    _rules(ax, DECADES, ax.get_xaxis_transform(), color=GRID_COLOUR, linewidth=0.6,
           zorder=1.5)
    _rules(ax, values, ax.get_yaxis_transform(), color=GRID_COLOUR, linewidth=0.6, zorder=1.5)
    _x_labels(ax)
    width = _y_labels(ax, values)
    fig.text(0, 0.5, "Gain (dB)", rotation=90, ha="right", va="center", fontproperties=FONT,
             transform=offset_copy(ax.transAxes, fig=fig, units="points",
                                   x=-(TICK_PT + PAD_PT + width + LABEL_PAD_PT)))
    if last:
        fig.text(0.5, 0, "Frequency", ha="center", va="top", fontproperties=FONT,
                 transform=offset_copy(ax.transAxes, fig=fig, units="points",
                                       y=-(TICK_PT + PAD_PT + LINE_EM * FONT.get_size()
                                          + LABEL_PAD_PT)))
    if title:
        ax.set_title(title, fontsize=9, loc="left", y=1.0)  # a fixed y skips a layout pass


def _y_ticks(ax, low: float, high: float) -> list[float]:
    """Round steps as matplotlib's own locator picks them, one per two label heights."""
    height_pt = ax.get_position().height * ax.figure.get_figheight() * 72
    locator = MaxNLocator(nbins=max(int(height_pt // (2 * FONT.get_size())), 1),
                          steps=[1, 2, 2.5, 5, 10])
    span = (high - low) * 1e-9
    return [float(v) for v in locator.tick_values(low, high) if low - span <= v <= high + span]


def _x_labels(ax) -> None:
    ax.figure.add_artist(Line2D(DECADES, [0] * len(DECADES), transform=ax.get_xaxis_transform(),
                                linestyle="none", marker=TICKDOWN, markersize=TICK_PT,
                                markeredgewidth=0.8, color="black"))
    at = offset_copy(ax.get_xaxis_transform(), fig=ax.figure, y=-(TICK_PT + PAD_PT),
                     units="points")
    for decade, label in zip(DECADES, DECADE_LABELS, strict=True):
        ax.figure.text(decade, 0, label, transform=at, ha="center", va="top", fontproperties=FONT)


def _y_labels(ax, values: list[float]) -> float:
    """Tick marks and labels on the left edge; returns the widest label's width in points."""
    ax.figure.add_artist(Line2D([0] * len(values), values, transform=ax.get_yaxis_transform(),
                                linestyle="none", marker=TICKLEFT, markersize=TICK_PT,
                                markeredgewidth=0.8, color="black"))
    at = offset_copy(ax.get_yaxis_transform(), fig=ax.figure, x=-(TICK_PT + PAD_PT),
                     units="points")
    labels = _number_labels(values)
    for value, label in zip(values, labels, strict=True):
        ax.figure.text(0, value, label, transform=at, ha="right", va="center_baseline",
                       fontproperties=FONT)
    return max(map(_width_pt, labels), default=0.0)


@functools.lru_cache(maxsize=256)
def _width_pt(text: str) -> float:
    """A label's width in points (font metrics only, so the same in every figure)."""
    return text_to_path.get_text_width_height_descent(text, FONT, ismath=False)[0]


def _number_labels(values: list[float]) -> list[str]:
    """As few decimals as tell the ticks apart exactly, the same for all; a true minus sign."""
    decimals = next((d for d in range(4)
                     if all(abs(round(v, d) - v) < 1e-9 for v in values)), 3)
    return [f"{v:.{decimals}f}".replace("-", "\u2212") if round(v, decimals) else
            f"{0:.{decimals}f}" for v in values]


def _legend(ax, entries: list) -> None:
    """Handles and labels in a column centred beside the panel, in points from its anchor."""
    row = LEGEND_PT * (LINE_EM + 0.5)  # a line and half a font size between lines
    handle, gap = 3.2 * LEGEND_PT, 0.8 * LEGEND_PT
    anchor = Affine2D().scale(1 / 72) + ax.figure.dpi_scale_trans + ScaledTranslation(
        1.01, 0.5, ax.transAxes)
    x0 = 0.9 * LEGEND_PT  # matplotlib's border padding and the gap to the axes
    for k, (style, label) in enumerate(entries):
        y = row * ((len(entries) - 1) / 2 - k)
        if style is None:
            ax.figure.add_artist(Rectangle((x0, y - 0.35 * LEGEND_PT), handle,
                                           0.7 * LEGEND_PT, transform=anchor,
                                           color=BAND_COLOUR, linewidth=0))
        else:
            colour, dashes, width = style
            ax.figure.add_artist(Line2D([x0, x0 + handle], [y, y], transform=anchor,
                                        color=colour, linestyle=dashes, linewidth=width))
        ax.figure.text(x0 + handle + gap, y, label, transform=anchor, va="center", ha="left",
                       fontsize=LEGEND_PT)
