"""Drawing one panel of a response plot onto an SVG sheet, from a layout already worked out.

Everything placed here was measured and positioned by :mod:`kitleaf.render.plot` (the one
module that asks the font for widths); this module only strokes, fills and writes text where
it is told, back to front.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

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
FONT_PT, TITLE_PT, LEGEND_PT = 9.0, 10.0, 7.5  # axis text; the plot's title; legend, corners
TICK_PT, PAD_PT = 3.5, 3.5  # tick length and the gap to its label, in points
LABEL_PAD_PT = 5.0  # from the tick labels to the axis label
LINE_EM = 1.17  # DejaVu Sans's line height in font sizes
LEGEND_HANDLE_PT, LEGEND_GAP_PT = 3.2 * LEGEND_PT, 0.8 * LEGEND_PT  # a handle; it to its label
LEGEND_ROW_GAP_PT = 0.5 * LEGEND_PT  # between two legend entries
# The x axis is linear in log10(f), decades labelled and the steps between them ruled faintly.
DECADES = (1.0, 2.0, 3.0, 4.0)
DECADE_LABELS = tuple(format_value(10**d, "frequency") for d in DECADES)
MINOR = tuple(float(np.log10(m)) + d for d in DECADES for m in (2, 3, 4, 5, 6, 7, 8, 9))


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


@dataclass(frozen=True)
class Label:
    """A line of text placed on the sheet: anchor point, size and alignment."""

    x: float
    y: float
    text: str
    size: float
    ha: str = "left"
    va: str = "top"


def style_of(i: int, count: int, solid: int | None = None) -> tuple:
    """Five positions take the five styles in order; a single curve is the solid one. With
    ``solid`` (a switch's resting position, the band's curve) that curve is the solid one
    and the others take the other styles in order."""
    if solid is None:
        return STYLES[2 if count == 1 else i % len(STYLES)]
    others = [s for k, s in enumerate(STYLES) if k != 2]
    return STYLES[2] if i == solid else others[(i - (i > solid)) % len(others)]


def stroke(colour: str, dashes, width: float) -> str:
    # matplotlib's caps: a solid line's ends project by half its width, dashes end flat
    cap = "; stroke-linecap: square" if dashes == "-" else ""
    return f"stroke: {colour}; stroke-width: {num(width)}{dash_array(dashes, width)}{cap}"


def line(colour: str, dashes, width: float) -> str:
    return "fill: none; " + stroke(colour, dashes, width)


def labels(sheet: SvgDocument, placed, extra: str = "") -> None:
    for label in placed:
        sheet.text(label.x, label.y, label.text, label.size, ha=label.ha, va=label.va,
                   extra=extra)


def background(sheet: SvgDocument, frame: Frame, band, y_ticks, corners, clip: str) -> None:
    """Everything behind the curves, back to front: faint rules, band, grid, corners, frame.

    ``band`` is the tolerance band's closed outlines (path data, possibly empty); ``corners``
    the -3 dB corners as (log10 Hz, label placed beside its rule).
    """
    rules(sheet, frame, x=MINOR, style=f"stroke: {MINOR_COLOUR}; stroke-width: 0.3", clip=clip)
    if band:
        sheet.path(band, f"fill: {BAND_COLOUR}", clip)
    grid = f"stroke: {GRID_COLOUR}; stroke-width: 0.6"
    rules(sheet, frame, x=DECADES, style=grid, clip=clip)
    rules(sheet, frame, y=y_ticks, style=grid, clip=clip)
    if corners:
        rules(sheet, frame, x=[at for at, _ in corners], clip=clip,
              style=stroke(CORNER_COLOUR, (0, (2, 2)), 0.9))
        labels(sheet, [label for _, label in corners], extra="; fill: #333333")
    sheet.rect(frame.left, frame.top, frame.width, frame.height,
               f"fill: none; stroke: {FRAME_COLOUR}; stroke-width: 0.8; stroke-linejoin: miter")


def band_outline(frame: Frame, log_f: np.ndarray, low, high) -> str:
    """The band as closed outlines, one per stretch where both edges have a value: along the
    high edge, back along the low. Values beyond the axes are held just outside them, so the
    clip cuts a band that leaves the axes instead of the outline folding back."""
    y_low, y_high = frame.y_range
    low = np.clip(np.asarray(low, float), y_low - 1.0, y_high + 1.0)
    high = np.clip(np.asarray(high, float), y_low - 1.0, y_high + 1.0)
    ok = np.isfinite(low) & np.isfinite(high)
    edges = np.flatnonzero(np.diff(np.concatenate([[0], ok.astype(int), [0]])))
    outlines = []
    for start, stop in zip(edges[::2], edges[1::2], strict=True):
        xs = frame.x(np.concatenate([log_f[start:stop], log_f[start:stop][::-1]]))
        ys = frame.y(np.concatenate([high[start:stop], low[start:stop][::-1]]))
        outlines.append(polyline(xs, ys) + "Z")
    return "".join(outlines)


def curves(sheet: SvgDocument, frame: Frame, log_f, gains, clip: str,
           solid: int | None = None) -> None:
    """The curves in their styles, in order."""
    for i, gain_db in enumerate(gains):
        style = style_of(i, len(gains), solid)
        sheet.path(polyline(frame.x(log_f), frame.y(gain_db)), line(*style), clip)


def rules(sheet: SvgDocument, frame: Frame, style: str, clip: str, x=(), y=()) -> None:
    """Lines across the panel at data values ``x`` (vertical) or ``y`` (horizontal), one path."""
    top, bottom, left, right = (num(v) for v in (frame.top, frame.bottom, frame.left, frame.right))
    segments = [f"M{num(v)} {bottom}V{top}" for v in frame.x(x).tolist()]
    segments += [f"M{left} {num(v)}H{right}" for v in frame.y(y).tolist()]
    if segments:
        sheet.path("".join(segments), "fill: none; " + style, clip)


def x_axis(sheet: SvgDocument, frame: Frame, last: bool) -> None:
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


def y_axis(sheet: SvgDocument, frame: Frame, values, texts, widest: float) -> None:
    """dB ticks and labels left of the panel, the axis label clear of the widest of them."""
    ys = frame.y(values).tolist()
    ticks = "".join(f"M{num(frame.left)} {num(y)}h{num(-TICK_PT)}" for y in ys)
    sheet.path(ticks, "fill: none; stroke: #000000; stroke-width: 0.8")
    for y, text in zip(ys, texts, strict=True):
        sheet.text(frame.left - TICK_PT - PAD_PT, y, text, FONT_PT, ha="right",
                   va="center_baseline")
    sheet.upright_text(frame.left - (TICK_PT + PAD_PT + widest + LABEL_PAD_PT),
                       frame.top + frame.height / 2, "Gain (dB)", FONT_PT)


def legend_height(entries) -> float:
    """The height of a legend column of ``entries`` (style, lines)."""
    lines = sum(len(text) for _, text in entries)
    return lines * LINE_EM * LEGEND_PT + LEGEND_ROW_GAP_PT * max(len(entries) - 1, 0)


def legend_rows_height(entries, columns: int) -> float:
    """The height of a legend laid out in rows of ``columns`` entries (each row as tall as
    its longest label)."""
    rows = [entries[i:i + columns] for i in range(0, len(entries), columns)]
    lines = sum(max(len(text) for _, text in row) for row in rows)
    return lines * LINE_EM * LEGEND_PT + LEGEND_ROW_GAP_PT * max(len(rows) - 1, 0)


def legend_rows(sheet: SvgDocument, left: float, top: float, columns: int, cell: float,
                entries) -> None:
    """Handles and labels row by row in ``columns`` columns ``cell`` wide, from ``top``."""
    row_h = LINE_EM * LEGEND_PT
    y = top + row_h / 2
    for start in range(0, len(entries), columns):
        row = entries[start:start + columns]
        for k, (style, text) in enumerate(row):
            _entry(sheet, left + k * cell, y, style, text)
        y += max(len(text) for _, text in row) * row_h + LEGEND_ROW_GAP_PT


def _entry(sheet: SvgDocument, x: float, y: float, style, text) -> None:
    """One legend entry: its handle (a line, or the band's swatch) and its label's lines."""
    if style is None:
        sheet.rect(x, y - 0.35 * LEGEND_PT, LEGEND_HANDLE_PT, 0.7 * LEGEND_PT,
                   f"fill: {BAND_COLOUR}")
    else:
        sheet.path(f"M{num(x)} {num(y)}H{num(x + LEGEND_HANDLE_PT)}", line(*style))
    for k, part in enumerate(text):
        sheet.text(x + LEGEND_HANDLE_PT + LEGEND_GAP_PT, y + k * LINE_EM * LEGEND_PT, part,
                   LEGEND_PT, va="center")


def legend(sheet: SvgDocument, frame: Frame, left: float, entries) -> None:
    """Handles and labels in a column centred beside the panel, a label on one or more lines;
    each handle sits beside its label's first line."""
    row = LINE_EM * LEGEND_PT
    y = frame.top + frame.height / 2 - legend_height(entries) / 2 + row / 2
    for style, text in entries:
        _entry(sheet, left, y, style, text)
        y += len(text) * row + LEGEND_ROW_GAP_PT
