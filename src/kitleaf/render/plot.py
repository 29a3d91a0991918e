"""Response plots: gain in dB against log frequency, as byte-reproducible SVG.

One panel per knob (one curve per knob position), the part-tolerance band shaded behind, the
-3 dB corners marked. Curves differ in line style as well as colour, so the plot reads the same
in greyscale print. Every figure gets its own canvas and rc_context; nothing global is touched.
"""

from __future__ import annotations

import io
from dataclasses import dataclass

import matplotlib
from matplotlib.backends.backend_svg import FigureCanvasSVG
from matplotlib.figure import Figure
from matplotlib.ticker import FixedLocator, FuncFormatter, NullLocator

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
    "axes.grid": True,
    "axes.edgecolor": "#444444",
    "grid.color": "#d5d8dc",
    "grid.linewidth": 0.6,
    "legend.frameon": False,
}
DECADES = (10.0, 100.0, 1e3, 1e4)
MINOR = tuple(m * d for d in (10.0, 100.0, 1e3, 1e4) for m in (2, 3, 4, 5, 6, 7, 8, 9))
WIDTH_IN = 7.2
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
    height = 0.75 + 2.45 * rows
    fig = Figure(figsize=(WIDTH_IN, height), dpi=100)
    FigureCanvasSVG(fig)
    # Fixed margins in inches (a layout engine costs more than the drawing itself).
    fig.subplots_adjust(left=0.62 / WIDTH_IN, right=1 - 1.95 / WIDTH_IN, top=1 - 0.42 / height,
                        bottom=0.5 / height, hspace=0.55 / 2.45 * rows)
    fig.suptitle(plot.title, fontsize=10, fontweight="bold", x=0.02, ha="left")
    for i, panel in enumerate(plot.panels):
        ax = fig.add_subplot(rows, 1, i + 1)
        _draw(ax, plot.freqs, panel, last=i == rows - 1)
    return fig


def _draw(ax, freqs: tuple[float, ...], panel: Panel, last: bool) -> None:
    top = max(max(c.gain_db) for c in panel.curves)
    floor = max(min(min(c.gain_db) for c in panel.curves), top - SPAN_DB)
    if panel.band_low:
        ax.fill_between(freqs, panel.band_low, panel.band_high, color=BAND_COLOUR,
                        linewidth=0, label="part tolerances (5–95 %)", zorder=1)
    for i, curve in enumerate(panel.curves):
        colour, dashes, width = STYLES[_style(i, len(panel.curves))]
        below = max(curve.gain_db) < floor
        ax.plot(freqs, curve.gain_db, color=colour, linestyle=dashes, linewidth=width, zorder=3,
                label=curve.label + (" (below the plot)" if below else ""))
    for hz, label in panel.corners:
        ax.axvline(hz, color=CORNER_COLOUR, linestyle=(0, (2, 2)), linewidth=0.9, zorder=2)
        ax.annotate(label, (hz, 1.0), xycoords=("data", "axes fraction"), xytext=(3, -3),
                    textcoords="offset points", va="top", fontsize=7.5, color="#333333")
    _axes(ax, freqs, floor - 3.0, top + 6.0, panel.title, last)


def _style(i: int, count: int) -> int:
    """Five positions take the five styles in order; a single curve is the solid one."""
    return 2 if count == 1 else i % len(STYLES)


def _axes(ax, freqs, low: float, high: float, title: str, last: bool) -> None:
    ax.set_xscale("log")
    ax.set_xlim(freqs[0], freqs[-1])
    ax.set_ylim(low, high)
    ax.xaxis.set_major_locator(FixedLocator(DECADES))
    ax.xaxis.set_minor_locator(NullLocator())
    ax.xaxis.set_major_formatter(FuncFormatter(lambda x, _: format_value(x, "frequency")))
    # The in-between lines as one collection: far cheaper to draw than minor ticks.
    ax.vlines(MINOR, 0, 1, transform=ax.get_xaxis_transform(), linewidth=0.3,
              color="#e5e8e8", zorder=0)
    ax.set_ylabel("Gain (dB)")
    if last:
        ax.set_xlabel("Frequency")
    if title:
        ax.set_title(title, fontsize=9, loc="left")
    ax.legend(loc="center left", bbox_to_anchor=(1.01, 0.5), fontsize=7.5, handlelength=3.2)
