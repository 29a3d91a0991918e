"""Response plots: gain in dB against log frequency, as byte-reproducible SVG.

One panel per knob (one curve per knob position), the part-tolerance band shaded behind, the
-3 dB corners marked. Curves differ in line style as well as colour, so the plot reads the same
in greyscale print.

The layout is fixed (margins, panel heights, tick and label offsets in points) and every label
is written as SVG text with explicit alignment, so nothing is measured but the widest tick
label, once per string. The SVG is written directly (``plot_svg``): a matplotlib figure cost
about 50 ms per plot, mostly creating axes and measuring text it did not need to measure; the
picture is the one that figure drew, to a fraction of a pixel.
"""

from __future__ import annotations

import functools
import hashlib
from dataclasses import dataclass

import numpy as np
from matplotlib.font_manager import FontProperties
from matplotlib.textpath import text_to_path
from matplotlib.ticker import MaxNLocator

from kitleaf.render.plot_svg import SvgDocument, dash_array, num, polyline
from kitleaf.values import format_value

# (colour, dash pattern, width) per curve: dark to light and distinct dashes, so curves stay
# apart in greyscale; the middle one (knobs at half way, the shaded band's curve) is solid.
STYLES = (("#0b3c5d", (0, (1, 1.5)), 1.7), ("#b35806", (0, (6, 1.5, 1, 1.5)), 1.5),
          ("#111111", "-", 2.2), ("#1b7837", (0, (5, 2)), 1.5), ("#762a83", (0, (9, 2.5)), 1.5))
BAND_COLOUR = "#c9ced6"
CORNER_COLOUR = "#5d6d7e"
FRAME_COLOUR = "#444444"
GRID_COLOUR = "#d5d8dc"
MINOR_COLOUR = "#e5e8e8"
FONT = FontProperties(family="DejaVu Sans", size=9)
FONT_PT, TITLE_PT, LEGEND_PT = 9.0, 10.0, 7.5  # axis text; the plot's title; legend, corners
TICK_PT, PAD_PT = 3.5, 3.5  # tick length and the gap to its label, in points
LABEL_PAD_PT = 5.0  # from the tick labels to the axis label
TITLE_PAD_PT = 6.0  # from a panel's top edge to its title's baseline
LINE_EM = 1.17  # DejaVu Sans's line height in font sizes
# The x axis is linear in log10(f), decades labelled and the steps between them ruled faintly.
DECADES = (1.0, 2.0, 3.0, 4.0)
DECADE_LABELS = tuple(format_value(10**d, "frequency") for d in DECADES)
MINOR = tuple(float(np.log10(m)) + d for d in DECADES for m in (2, 3, 4, 5, 6, 7, 8, 9))
WIDTH_IN = 7.2
PANEL_IN, TOP_IN, BOTTOM_IN, LEFT_IN, RIGHT_IN = 2.45, 0.42, 0.5, 0.62, 1.95
PANEL_GAP_IN = 0.55  # between panels, as a share of a panel's nominal height per row
SPAN_DB = 60.0  # dB shown below the highest curve; quieter curves leave the bottom edge


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


@dataclass(frozen=True)
class ResponsePlot:
    """Everything a response plot shows."""

    title: str
    freqs: tuple[float, ...]
    panels: tuple[Panel, ...]


@dataclass(frozen=True)
class Frame:
    """A panel's rectangle on the sheet in points (y down) and the data ranges it shows."""

    left: float
    top: float
    width: float
    height: float
    x_range: tuple[float, float]
    y_range: tuple[float, float]

    def x(self, value):
        low, high = self.x_range
        return self.left + (np.asarray(value, float) - low) * (self.width / (high - low))

    def y(self, value):
        low, high = self.y_range
        return self.top + (high - np.asarray(value, float)) * (self.height / (high - low))

    @property
    def right(self) -> float:
        return self.left + self.width

    @property
    def bottom(self) -> float:
        return self.top + self.height


def render_response_svg(plot: ResponsePlot) -> str:
    """The plot as SVG text; the same plot always gives the same bytes."""
    rows = max(len(plot.panels), 1)
    height = (0.75 + PANEL_IN * rows) * 72
    sheet = SvgDocument(WIDTH_IN * 72, height, title=plot.title)
    sheet.rect(0, 0, sheet.width, height, "fill: #ffffff")
    sheet.text(0.02 * sheet.width, 0.02 * height, plot.title, TITLE_PT, va="top",
               extra="; font-weight: 700")
    log_f = np.log10(plot.freqs)
    prefix = "k" + hashlib.sha256(plot.title.encode()).hexdigest()[:8]  # clip ids, if inlined
    for i, (panel, box) in enumerate(zip(plot.panels, panel_boxes(rows, height), strict=False)):
        _draw(sheet, f"{prefix}-{i + 1}", box, log_f, panel, last=i == rows - 1)
    return sheet.svg()


def panel_boxes(rows: int, height: float) -> list[tuple[float, float, float, float]]:
    """(left, top, width, height) of each panel in points: fixed margins, equal panels."""
    gap = PANEL_GAP_IN / PANEL_IN * rows  # as a share of a panel's height
    inner = height - (TOP_IN + BOTTOM_IN) * 72
    each = inner / (rows + gap * (rows - 1))
    width = (WIDTH_IN - LEFT_IN - RIGHT_IN) * 72
    return [(LEFT_IN * 72, TOP_IN * 72 + i * each * (1 + gap), width, each) for i in range(rows)]


def _draw(sheet: SvgDocument, name: str, box, log_f: np.ndarray, panel: Panel, last: bool) -> None:
    top = max(max(c.gain_db) for c in panel.curves)
    floor = max(min(min(c.gain_db) for c in panel.curves), top - SPAN_DB)
    frame = Frame(*box, x_range=(log_f[0], log_f[-1]), y_range=(floor - 3.0, top + 6.0))
    clip = sheet.clip(name, frame.left, frame.top, frame.width, frame.height)
    values = _y_ticks(frame)
    _background(sheet, frame, log_f, panel, values, clip)
    entries = [(None, "part tolerances (5–95 %)")] if panel.band_low else []
    entries += _curves(sheet, frame, log_f, panel.curves, floor, clip)
    _x_axis(sheet, frame, last)
    _y_axis(sheet, frame, values)
    if panel.title:
        sheet.text(frame.left, frame.top - TITLE_PAD_PT, panel.title, FONT_PT)
    _legend(sheet, frame, entries)


def _background(sheet: SvgDocument, frame: Frame, log_f, panel: Panel, values, clip: str) -> None:
    """Everything behind the curves, back to front: faint rules, band, grid, corners, frame."""
    _rules(sheet, frame, x=MINOR, style=f"stroke: {MINOR_COLOUR}; stroke-width: 0.3", clip=clip)
    if panel.band_low:
        _band(sheet, frame, log_f, panel, clip)
    grid = f"stroke: {GRID_COLOUR}; stroke-width: 0.6"
    _rules(sheet, frame, x=DECADES, style=grid, clip=clip)
    _rules(sheet, frame, y=values, style=grid, clip=clip)
    _corners(sheet, frame, panel.corners, clip)
    sheet.rect(frame.left, frame.top, frame.width, frame.height,
               f"fill: none; stroke: {FRAME_COLOUR}; stroke-width: 0.8; stroke-linejoin: miter")


def _curves(sheet: SvgDocument, frame: Frame, log_f, curves, floor: float, clip: str) -> list:
    """The curves in their styles; returns their legend entries (style, label)."""
    entries = []
    for i, curve in enumerate(curves):
        style = STYLES[_style(i, len(curves))]
        sheet.path(polyline(frame.x(log_f), frame.y(curve.gain_db)), _line(*style), clip)
        below = " (below the plot)" if max(curve.gain_db) < floor else ""
        entries.append((style, curve.label + below))
    return entries


def _style(i: int, count: int) -> int:
    """Five positions take the five styles in order; a single curve is the solid one."""
    return 2 if count == 1 else i % len(STYLES)


def _stroke(colour: str, dashes, width: float) -> str:
    # matplotlib's caps: a solid line's ends project by half its width, dashes end flat
    cap = "; stroke-linecap: square" if dashes == "-" else ""
    return f"stroke: {colour}; stroke-width: {num(width)}{dash_array(dashes, width)}{cap}"


def _line(colour: str, dashes, width: float) -> str:
    return "fill: none; " + _stroke(colour, dashes, width)


def _band(sheet: SvgDocument, frame: Frame, log_f: np.ndarray, panel: Panel, clip: str) -> None:
    """The tolerance band as one closed outline: along the high edge, back along the low."""
    xs = frame.x(np.concatenate([log_f, log_f[::-1]]))
    ys = frame.y(np.concatenate([panel.band_high, panel.band_low[::-1]]))
    sheet.path(polyline(xs, ys) + "Z", f"fill: {BAND_COLOUR}", clip)


def _rules(sheet: SvgDocument, frame: Frame, style: str, clip: str, x=(), y=()) -> None:
    """Lines across the panel at data values ``x`` (vertical) or ``y`` (horizontal), one path."""
    top, bottom, left, right = (num(v) for v in (frame.top, frame.bottom, frame.left, frame.right))
    segments = [f"M{num(v)} {bottom}V{top}" for v in frame.x(x).tolist()]
    segments += [f"M{left} {num(v)}H{right}" for v in frame.y(y).tolist()]
    if segments:
        sheet.path("".join(segments), "fill: none; " + style, clip)


def _corners(sheet: SvgDocument, frame: Frame, corners, clip: str) -> None:
    if not corners:
        return
    x = [float(np.log10(hz)) for hz, _ in corners]
    _rules(sheet, frame, x=x, clip=clip, style=_stroke(CORNER_COLOUR, (0, (2, 2)), 0.9))
    for at, (_, label) in zip(frame.x(x).tolist(), corners, strict=True):
        sheet.text(at + 3, frame.top + 3, label, LEGEND_PT, va="top", extra="; fill: #333333")


def _x_axis(sheet: SvgDocument, frame: Frame, last: bool) -> None:
    """Decade ticks and labels under the panel; the axis label under the last panel only."""
    xs = frame.x(DECADES).tolist()
    ticks = "".join(f"M{num(x)} {num(frame.bottom)}v{num(TICK_PT)}" for x in xs)
    sheet.path(ticks, "fill: none; stroke: #000000; stroke-width: 0.8")
    for x, label in zip(xs, DECADE_LABELS, strict=True):
        sheet.text(x, frame.bottom + TICK_PT + PAD_PT, label, FONT_PT, ha="center", va="top")
    if last:
        sheet.text(frame.left + frame.width / 2, frame.bottom + TICK_PT + PAD_PT
                   + LINE_EM * FONT_PT + LABEL_PAD_PT, "Frequency", FONT_PT, ha="center",
                   va="top")


def _y_axis(sheet: SvgDocument, frame: Frame, values: list[float]) -> None:
    """dB ticks and labels left of the panel, the axis label clear of the widest of them."""
    ys = frame.y(values).tolist()
    ticks = "".join(f"M{num(frame.left)} {num(y)}h{num(-TICK_PT)}" for y in ys)
    sheet.path(ticks, "fill: none; stroke: #000000; stroke-width: 0.8")
    labels = _number_labels(values)
    for y, label in zip(ys, labels, strict=True):
        sheet.text(frame.left - TICK_PT - PAD_PT, y, label, FONT_PT, ha="right",
                   va="center_baseline")
    width = max(map(_width_pt, labels), default=0.0)
    sheet.upright_text(frame.left - (TICK_PT + PAD_PT + width + LABEL_PAD_PT),
                       frame.top + frame.height / 2, "Gain (dB)", FONT_PT)


def _y_ticks(frame: Frame) -> list[float]:
    """Round steps as matplotlib's own locator picks them, one per two label heights."""
    low, high = frame.y_range
    locator = MaxNLocator(nbins=max(int(frame.height // (2 * FONT_PT)), 1),
                          steps=[1, 2, 2.5, 5, 10])
    span = (high - low) * 1e-9
    return [float(v) for v in locator.tick_values(low, high) if low - span <= v <= high + span]


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


def _legend(sheet: SvgDocument, frame: Frame, entries: list) -> None:
    """Handles and labels in a column centred beside the panel."""
    row = LEGEND_PT * (LINE_EM + 0.5)  # a line and half a font size between lines
    handle, gap = 3.2 * LEGEND_PT, 0.8 * LEGEND_PT
    x0 = frame.right + 0.01 * frame.width + 0.9 * LEGEND_PT  # border pad and gap to the axes
    middle = frame.top + frame.height / 2
    for k, (style, label) in enumerate(entries):
        y = middle - row * ((len(entries) - 1) / 2 - k)
        if style is None:
            sheet.rect(x0, y - 0.35 * LEGEND_PT, handle, 0.7 * LEGEND_PT, f"fill: {BAND_COLOUR}")
        else:
            sheet.path(f"M{num(x0)} {num(y)}H{num(x0 + handle)}", _line(*style))
        sheet.text(x0 + handle + gap, y, label, LEGEND_PT, va="center")
