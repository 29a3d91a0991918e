"""Response plots: gain in dB against log frequency, as byte-reproducible SVG.

One panel per knob (one curve per knob position), the part-tolerance band shaded behind, the
-3 dB corners marked. Curves differ in line style as well as colour, so the plot reads the same
in greyscale print.

The layout is worked out in points before anything is drawn: every label's width is taken from
the font's metrics (DejaVu Sans, with a little slack for a browser's stand-in font), a title or
legend label too long for its place wraps onto further lines, and the sheet widens where a
label still needs room, so no text is cut by the sheet's edge or laid over another. The SVG is
written directly (``plot_svg``, drawn by ``plot_draw``): a matplotlib figure cost about 50 ms
per plot, mostly creating axes and measuring text it did not need to measure.
"""

from __future__ import annotations

import functools
import hashlib
from dataclasses import dataclass

import numpy as np
from matplotlib.font_manager import FontProperties
from matplotlib.textpath import text_to_path
from matplotlib.ticker import MaxNLocator

from kitleaf.render import plot_draw as draw
from kitleaf.render.plot_draw import (
    FONT_PT,
    LABEL_PAD_PT,
    LEGEND_GAP_PT,
    LEGEND_HANDLE_PT,
    LEGEND_PT,
    LINE_EM,
    PAD_PT,
    TICK_PT,
    TITLE_PT,
    Frame,
    Label,
)
from kitleaf.render.plot_svg import SvgDocument

FONTS = {weight: FontProperties(family="DejaVu Sans", size=FONT_PT, weight=weight)
         for weight in ("normal", "bold")}
SLACK = 1.08  # a browser without DejaVu Sans sets text in a stand-in, often a little wider
MARGIN_PT = 8.0  # between the sheet's edge and anything drawn on it
WIDTH_PT, LEFT_PT = 518.4, 44.64  # the usual sheet (7.2 in) and left margin; wider on need
PANEL_WIDTH_PT, PANEL_HEIGHT_PT = 333.36, 150.0  # a panel's axes; taller for a long legend
PANEL_TITLE_PAD_PT = 4.0  # from a panel title's last line to the panel's top edge
TITLE_GAP_PT = 8.0  # from the plot's title to the first panel's title
PANEL_GAP_PT = 12.0  # from one panel's tick labels to the next panel's title
LEGEND_SPACE_PT = 10.0  # from a panel's right edge to its legend
LEGEND_WRAP_PT = 170.0  # a longer legend label continues on the next line
# The narrow sheet a phone shows at its own width (350 CSS px, text still at 9 px): the legend
# goes under each panel, in as many columns as fit.
NARROW_WIDTH_PT = 262.0
LEGEND_COLUMN_GAP_PT = 8.0
SPAN_DB = 60.0  # dB shown below the highest curve; quieter curves leave the bottom edge
BAND_LABEL = "part tolerances (5–95 %)"


@dataclass(frozen=True)
class Trace:
    """One trace: a label (a knob position, say) and gain in dB at each frequency."""

    label: str
    gain_db: tuple[float, ...]


@dataclass(frozen=True)
class Panel:
    """One set of axes: curves of one knob's positions, the band and the corners."""

    title: str
    curves: tuple[Trace, ...]
    band_low: tuple[float, ...] = ()
    band_high: tuple[float, ...] = ()
    corners: tuple[tuple[float, str], ...] = ()  # (Hz, label)
    solid: int | None = None  # the curve drawn solid, if not the usual middle one


@dataclass(frozen=True)
class ResponsePlot:
    """Everything a response plot shows."""

    title: str
    freqs: tuple[float, ...]
    panels: tuple[Panel, ...]


@dataclass(frozen=True)
class Placed:
    """One panel laid out: its axes, title lines, y ticks and legend entries."""

    panel: Panel
    frame: Frame
    title: tuple[Label, ...]
    y_ticks: tuple[float, ...]
    legend: tuple[tuple[tuple | None, tuple[str, ...]], ...]  # (curve style or band, lines)
    # under the panel (the narrow sheet): its top left corner, columns and column width
    under: tuple[float, float, int, float] | None = None


def render_response_svg(plot: ResponsePlot, narrow: bool = False) -> str:
    """The plot as SVG text; the same plot always gives the same bytes. ``narrow``: the sheet
    a phone shows, each legend under its panel."""
    width, height, title, placed = narrow_layout(plot) if narrow else layout(plot)
    sheet = SvgDocument(width, height, title=plot.title)
    sheet.rect(0, 0, width, height, "fill: #ffffff")
    draw.labels(sheet, title, extra="; font-weight: 700")
    log_f = np.log10(plot.freqs)
    prefix = "k" + hashlib.sha256(plot.title.encode()).hexdigest()[:8]  # clip ids, if inlined
    for i, one in enumerate(placed):
        _draw(sheet, f"{prefix}-{i + 1}", one, log_f, last=i == len(placed) - 1)
    return sheet.svg()


def _draw(sheet: SvgDocument, name: str, placed: Placed, log_f: np.ndarray, last: bool) -> None:
    frame, panel = placed.frame, placed.panel
    clip = sheet.clip(name, frame.left, frame.top, frame.width, frame.height)
    band = draw.band_outline(frame, log_f, panel.band_low, panel.band_high) \
        if panel.band_low else ""
    draw.background(sheet, frame, band, placed.y_ticks, _corners(frame, panel.corners), clip)
    draw.curves(sheet, frame, log_f, [c.gain_db for c in panel.curves], clip, panel.solid)
    draw.x_axis(sheet, frame, last)
    texts = _number_labels(placed.y_ticks)
    draw.y_axis(sheet, frame, placed.y_ticks, texts, max(map(label_width, texts), default=0.0))
    draw.labels(sheet, placed.title)
    if placed.under is None:
        draw.legend(sheet, frame, frame.right + LEGEND_SPACE_PT, placed.legend)
    else:
        draw.legend_rows(sheet, *placed.under, placed.legend)


def layout(plot: ResponsePlot) -> tuple[float, float, tuple[Label, ...], list[Placed]]:
    """The sheet's width and height, the title's lines and every panel placed, in points."""
    scales = [_y_range(panel) for panel in plot.panels]
    legends = [_legend_entries(panel, floor) for panel, (_, floor) in zip(plot.panels, scales,
                                                                           strict=True)]
    heights = [max(PANEL_HEIGHT_PT, draw.legend_height(entries)) for entries in legends]
    ticks = [_y_ticks(y_range, h) for (y_range, _), h in zip(scales, heights, strict=True)]
    widest_tick = max((label_width(t) for values in ticks for t in _number_labels(values)),
                      default=0.0)
    left = max(LEFT_PT, MARGIN_PT + FONT_PT + LABEL_PAD_PT + widest_tick + PAD_PT + TICK_PT)
    widest_legend = max((label_width(text, LEGEND_PT) for entries in legends
                         for _, lines in entries for text in lines), default=0.0)
    width = max(WIDTH_PT, left + PANEL_WIDTH_PT + LEGEND_SPACE_PT + LEGEND_HANDLE_PT
                + LEGEND_GAP_PT + widest_legend + MARGIN_PT)
    title = wrap_label(plot.title, TITLE_PT, width - 2 * MARGIN_PT, "bold")
    panel_titles = [wrap_label(p.title, FONT_PT, width - left - MARGIN_PT) for p in plot.panels]
    width = max([width, *(2 * MARGIN_PT + label_width(t, TITLE_PT, "bold") for t in title),
                 *(left + MARGIN_PT + label_width(t) for lines in panel_titles for t in lines)])
    y = MARGIN_PT + len(title) * LINE_EM * TITLE_PT + TITLE_GAP_PT
    placed = []
    for k, panel in enumerate(plot.panels):
        title_labels = _lines(left, y, panel_titles[k], FONT_PT)
        y += len(title_labels) * LINE_EM * FONT_PT + PANEL_TITLE_PAD_PT
        frame = Frame(left, y, PANEL_WIDTH_PT, heights[k],
                      x_range=(float(np.log10(plot.freqs[0])), float(np.log10(plot.freqs[-1]))),
                      y_range=scales[k][0])
        placed.append(Placed(panel, frame, title_labels, ticks[k], legends[k]))
        y = frame.bottom + TICK_PT + PAD_PT + LINE_EM * FONT_PT + PANEL_GAP_PT
    bottom = y - PANEL_GAP_PT + (LABEL_PAD_PT + LINE_EM * FONT_PT if placed else 0.0)
    return width, bottom + MARGIN_PT, _lines(MARGIN_PT, MARGIN_PT, title, TITLE_PT), placed


def narrow_layout(plot: ResponsePlot) -> tuple[float, float, tuple[Label, ...], list[Placed]]:
    """:func:`layout` for a phone: the sheet :data:`NARROW_WIDTH_PT` wide, each panel the
    sheet's width and its legend under it, in columns as far as the widest label allows."""
    scales = [_y_range(panel) for panel in plot.panels]
    ticks = [_y_ticks(y_range, PANEL_HEIGHT_PT) for y_range, _ in scales]
    widest_tick = max((label_width(t) for values in ticks for t in _number_labels(values)),
                      default=0.0)
    left = max(LEFT_PT, MARGIN_PT + FONT_PT + LABEL_PAD_PT + widest_tick + PAD_PT + TICK_PT)
    width = NARROW_WIDTH_PT
    room = width - 2 * MARGIN_PT
    label_room = room - LEGEND_HANDLE_PT - LEGEND_GAP_PT
    title = wrap_label(plot.title, TITLE_PT, room, "bold")
    y = MARGIN_PT + len(title) * LINE_EM * TITLE_PT + TITLE_GAP_PT
    placed = []
    for k, panel in enumerate(plot.panels):
        entries = tuple((style, wrap_label(" ".join(text), LEGEND_PT, label_room) or ("",))
                        for style, text in _legend_entries(panel, scales[k][1]))
        widest = max((label_width(t, LEGEND_PT) for _, lines in entries for t in lines),
                     default=0.0)
        cell = LEGEND_HANDLE_PT + LEGEND_GAP_PT + widest + LEGEND_COLUMN_GAP_PT
        columns = max(1, int((room + LEGEND_COLUMN_GAP_PT) // cell))
        title_labels = _lines(left, y, wrap_label(panel.title, FONT_PT, width - left
                                                  - MARGIN_PT), FONT_PT)
        y += len(title_labels) * LINE_EM * FONT_PT + PANEL_TITLE_PAD_PT
        frame = Frame(left, y, width - left - MARGIN_PT, PANEL_HEIGHT_PT,
                      x_range=(float(np.log10(plot.freqs[0])), float(np.log10(plot.freqs[-1]))),
                      y_range=scales[k][0])
        y = frame.bottom + TICK_PT + PAD_PT + LINE_EM * FONT_PT
        if k == len(plot.panels) - 1:  # the axis label under the last panel
            y += LABEL_PAD_PT + LINE_EM * FONT_PT
        under = (MARGIN_PT, y + PAD_PT, columns, cell)
        placed.append(Placed(panel, frame, title_labels, ticks[k], entries, under))
        y += PAD_PT + draw.legend_rows_height(entries, columns) + PANEL_GAP_PT
    return width, y - PANEL_GAP_PT + MARGIN_PT, _lines(MARGIN_PT, MARGIN_PT, title, TITLE_PT), \
        placed


def _lines(x: float, top: float, lines: tuple[str, ...], size: float) -> tuple[Label, ...]:
    """Lines of text set one under another, the first one's top at ``top``."""
    return tuple(Label(x, top + k * LINE_EM * size, text, size) for k, text in enumerate(lines))


def wrap_label(text: str, size: float, limit: float, weight: str = "normal") -> tuple[str, ...]:
    """``text`` in lines no wider than ``limit`` points, broken between words (a single word
    wider than that keeps a line of its own, and the sheet widens for it)."""
    lines: list[str] = []
    for word in text.split():
        if lines and label_width(f"{lines[-1]} {word}", size, weight) <= limit:
            lines[-1] += f" {word}"
        else:
            lines.append(word)
    return tuple(lines)


@functools.lru_cache(maxsize=2048)
def label_width(text: str, size: float = FONT_PT, weight: str = "normal") -> float:
    """A label's width in points, with the slack for a stand-in font (font metrics only, so
    the same in every figure)."""
    measured = text_to_path.get_text_width_height_descent(text, FONTS[weight], ismath=False)[0]
    return measured * size / FONT_PT * SLACK


def _finite(values) -> np.ndarray:
    values = np.asarray(values, float)
    return values[np.isfinite(values)]


def _y_range(panel: Panel) -> tuple[tuple[float, float], float]:
    """The dB range the panel shows, and its floor: every curve and the whole band in view,
    but no more than SPAN_DB below the highest of them."""
    shown = _finite(np.concatenate([np.asarray(c.gain_db, float) for c in panel.curves]
                                   + [_finite(panel.band_low), _finite(panel.band_high)]))
    top, low = (float(shown.max()), float(shown.min())) if shown.size else (0.0, -SPAN_DB)
    floor = max(low, top - SPAN_DB)
    return (floor - 3.0, top + 6.0), floor


def _legend_entries(panel: Panel, floor: float) -> tuple:
    """(curve style, or None for the band; the label's lines) for each legend entry."""
    entries = [(None, BAND_LABEL)] if panel.band_low else []
    for i, curve in enumerate(panel.curves):
        gains = _finite(curve.gain_db)
        below = " (below the plot)" if not gains.size or gains.max() < floor else ""
        entries.append((draw.style_of(i, len(panel.curves), panel.solid), curve.label + below))
    return tuple((style, wrap_label(text, LEGEND_PT, LEGEND_WRAP_PT) or ("",))
                 for style, text in entries)


def _corners(frame: Frame, corners) -> list[tuple[float, Label]]:
    """Each -3 dB corner inside the axes as (log10 Hz, its label): right of its rule, or left
    where the label would pass the panel's edge, a line lower where it would meet another."""
    placed, taken = [], []  # taken: (row, left, right) of each label set so far
    for hz, text in corners:
        at = float(np.log10(hz))
        if not frame.x_range[0] <= at <= frame.x_range[1]:
            continue
        x, wide = float(frame.x(at)), label_width(text, LEGEND_PT)
        ha = "left" if x + 3 + wide <= frame.right - 2 else "right"
        left = x + 3 if ha == "left" else x - 3 - wide
        row = next(r for r in range(len(taken) + 1) if not any(
            r == used and left < right and start < left + wide for used, start, right in taken))
        taken.append((row, left, left + wide))
        placed.append((at, Label(x + 3 if ha == "left" else x - 3,
                                 frame.top + 3 + row * LINE_EM * LEGEND_PT, text, LEGEND_PT,
                                 ha=ha)))
    return placed


def _y_ticks(y_range: tuple[float, float], height: float) -> tuple[float, ...]:
    """Round steps as matplotlib's own locator picks them, one per two label heights."""
    low, high = y_range
    locator = MaxNLocator(nbins=max(int(height // (2 * FONT_PT)), 1), steps=[1, 2, 2.5, 5, 10])
    span = (high - low) * 1e-9
    return tuple(float(v) for v in locator.tick_values(low, high)
                 if low - span <= v <= high + span)


def _number_labels(values) -> list[str]:
    """As few decimals as tell the ticks apart exactly, the same for all; a true minus sign."""
    decimals = next((d for d in range(4)
                     if all(abs(round(v, d) - v) < 1e-9 for v in values)), 3)
    return [f"{v:.{decimals}f}".replace("-", "\u2212") if round(v, decimals) else
            f"{0:.{decimals}f}" for v in values]
