"""Large-signal pictures as byte-reproducible SVG, narrow enough for a phone without scrolling.

Two pictures per kit: the output over two cycles at each playing level beside the pickup's
own sine (one panel per level), and the drive curve: THD and output peak against the pickup
level, one line per position of each knob (others at half way), each line's part-tolerance
band shaded behind it in its colour. The sheet is 262 pt (349 CSS px) wide with 7.5 pt
text and more, so every label stays 10 px or larger on a 390 px phone, where the figure
keeps its drawn size. Each panel's legend sits under its axis labels, in as many columns as
the sheet holds, so it never covers a line.
"""

from __future__ import annotations

import hashlib
import math
from dataclasses import dataclass

import numpy as np

from kitleaf.render import plot_draw as draw
from kitleaf.render.plot import label_width, wrap_label
from kitleaf.render.plot_draw import FONT_PT, LEGEND_PT, LINE_EM, Frame
from kitleaf.render.plot_svg import SvgDocument, num, polyline
from kitleaf.values import format_value

WIDTH_PT = 262.0
LEFT_PT, RIGHT_PT = 64.0, 16.0  # room for '−100 mV' and the axis's name beside it
PANEL_HEIGHT_PT = 110.0
TITLE_PT = 10.0
GAP_PT = 14.0
EDGE_PT = 8.0  # the sheet's margin left and right of a legend
HANDLE_PT, HANDLE_GAP_PT, COLUMN_GAP_PT = 16.0, 4.0, 8.0  # a legend entry's parts
X_LABELS_PT = 3.5 + 3.5 + LINE_EM * FONT_PT  # ticks, their gap and the labels under a frame
DECADES = 3  # the most a curve panel spans: a far lower line (a volume near zero) is named
INPUT_STYLE = ("#7f8c8d", (0, (4, 2)), 1.1)
OUTPUT_STYLE = ("#111111", "-", 1.8)
BAND_OPACITY = 0.2  # a line's band in its colour


@dataclass(frozen=True)
class WavePanel:
    """One playing level: the pickup's peak, the title's words and the output's samples over
    one period (repeated to two cycles when drawn)."""

    level: float
    title: str
    output: tuple[float, ...]


@dataclass(frozen=True)
class CurvePanel:
    """One knob's lines against the pickup levels: (label, values) per position; ``bands``
    holds each line's tolerance band, (low, high) per level, or None where it has none (or
    is empty: no bands). ``axis``: "thd" on decades, else volts."""

    title: str
    axis: str
    lines: tuple[tuple[str, tuple[float, ...]], ...]
    bands: tuple = ()


@dataclass(frozen=True)
class DrivePicture:
    """A picture's title and panels; ``levels`` are the curves' pickup levels (volts peak),
    of which the ``playing`` ones are labelled; ``freq`` is the pickup's tone (hertz)."""

    title: str
    panels: tuple
    levels: tuple[float, ...] = ()
    playing: tuple[float, ...] = (0.1, 0.3, 1.0)
    freq: float = 1000.0


def render_drive_svg(picture: DrivePicture) -> str:
    """The picture as SVG text; the same picture always gives the same bytes."""
    title_lines = wrap_label(picture.title, TITLE_PT, WIDTH_PT - 2 * EDGE_PT, "bold")
    y = 8.0 + len(title_lines) * LINE_EM * TITLE_PT + 6.0
    frames = []
    for panel in picture.panels:
        y += LINE_EM * FONT_PT * len(_panel_title(panel)) + 3.0
        frames.append(y)
        y += PANEL_HEIGHT_PT + X_LABELS_PT + _legend_height(_entries(panel)) + GAP_PT
    sheet = SvgDocument(WIDTH_PT, y, title=picture.title)
    sheet.rect(0, 0, WIDTH_PT, y, "fill: #ffffff")
    for k, text in enumerate(title_lines):
        sheet.text(8.0, 8.0 + k * LINE_EM * TITLE_PT, text, TITLE_PT, extra="; font-weight: 700")
    prefix = "d" + hashlib.sha256(picture.title.encode()).hexdigest()[:8]
    for i, (panel, top) in enumerate(zip(picture.panels, frames, strict=True)):
        lines = _panel_title(panel)
        for k, text in enumerate(lines):
            sheet.text(EDGE_PT, top - 3.0 - (len(lines) - k) * LINE_EM * FONT_PT, text, FONT_PT)
        name = f"{prefix}-{i + 1}"
        if isinstance(panel, WavePanel):
            _waves(sheet, name, panel, top, picture.freq)
        else:
            _curves(sheet, name, panel, picture, top)
    return sheet.svg()


def _panel_title(panel) -> tuple[str, ...]:
    return wrap_label(panel.title, FONT_PT, WIDTH_PT - 2 * EDGE_PT)


def _frame(top: float, x_range, y_range) -> Frame:
    return Frame(LEFT_PT, top, WIDTH_PT - LEFT_PT - RIGHT_PT, PANEL_HEIGHT_PT, x_range, y_range)


def _waves(sheet: SvgDocument, name: str, panel: WavePanel, top: float, freq: float) -> None:
    """Two cycles of the pickup's sine and of the output, time in milliseconds."""
    out = np.asarray(panel.output, float)
    points = out.size
    t = np.arange(2 * points + 1) / points  # periods
    output = np.concatenate([out, out, out[:1]])
    source = panel.level * np.sin(2 * math.pi * t)
    top_v = max(float(np.max(np.abs(output))), panel.level) * 1.15
    frame = _frame(top, (0.0, 2.0), (-top_v, top_v))
    ticks = _volt_ticks(top_v)
    clip = sheet.clip(name, frame.left, frame.top, frame.width, frame.height)
    _grid(sheet, frame, [0.5, 1.0, 1.5], ticks, [], clip)
    sheet.path(polyline(frame.x(t), frame.y(source)), draw.line(*INPUT_STYLE), clip)
    sheet.path(polyline(frame.x(t), frame.y(output)), draw.line(*OUTPUT_STYLE), clip)
    ticks_x = [0.0, 0.5, 1.0, 1.5, 2.0]  # periods
    texts = [f"{t * 1000 / freq:.3g}" if t else "0" for t in ticks_x]
    _x_labels(sheet, frame, ticks_x, [*texts[:-1], f"{texts[-1]} ms"])
    _y_labels(sheet, frame, ticks, [_volts(v) for v in ticks], "Volts")
    _legend(sheet, frame, _entries(panel))


def _curves(sheet: SvgDocument, name: str, panel: CurvePanel, picture: DrivePicture,
            top: float) -> None:
    """One line per knob position on log scales: THD in % or output peak in volts."""
    levels = picture.levels
    x = np.log10(np.asarray(levels, float))
    values = [np.asarray(v, float) for _, v in panel.lines]
    low, high = _decades(panel)
    frame = _frame(top, (float(x[0]), float(x[-1])), (float(low), float(high)))
    clip = sheet.clip(name, frame.left, frame.top, frame.width, frame.height)
    bands = [(draw.band_outline(frame, x, _log(b[0]), _log(b[1])), _band_fill(i, len(values)))
             for i, b in enumerate(panel.bands) if b]
    decades = [float(d) for d in range(low, high + 1)]
    _grid(sheet, frame, [], decades, bands, clip)
    for i, v in enumerate(values):
        sheet.path(polyline(frame.x(x), frame.y(_log(v))),
                   draw.line(*draw.style_of(i, len(values))), clip)
    _x_labels(sheet, frame, x.tolist(), [_volts(v) for v in levels],
              every=_every(levels, picture.playing))
    text = [_percent(10 ** d) if panel.axis == "thd" else _volts(10 ** d) for d in decades]
    _y_labels(sheet, frame, decades, text, "THD" if panel.axis == "thd" else "Output peak")
    _legend(sheet, frame, _entries(panel))


def _band_fill(i: int, count: int) -> str:
    """Line ``i``'s band: grey behind a lone line, else its line's colour, faint enough
    that overlapping bands and every line stay readable."""
    if count == 1:
        return f"fill: {draw.BAND_COLOUR}"
    return f"fill: {draw.style_of(i, count)[0]}; fill-opacity: {BAND_OPACITY}"


def _grid(sheet: SvgDocument, frame: Frame, x, y, bands, clip: str) -> None:
    """Behind the lines: the bands (outline, fill style), the grid and the frame."""
    for outline, fill in bands:
        sheet.path(outline, fill, clip)
    draw.rules(sheet, frame, x=x, y=y, style=f"stroke: {draw.GRID_COLOUR}; stroke-width: 0.6",
               clip=clip)
    sheet.rect(frame.left, frame.top, frame.width, frame.height,
               f"fill: none; stroke: {draw.FRAME_COLOUR}; stroke-width: 0.8")


def _log(values) -> np.ndarray:
    v = np.asarray(values, float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(v > 0, np.log10(np.where(v > 0, v, 1.0)), np.nan)


def _every(levels, playing) -> list[bool]:
    """Which level labels to print: the playing levels and the ends (the rest would crowd)."""
    return [i in (0, len(levels) - 1) or v in playing for i, v in enumerate(levels)]


def _x_labels(sheet: SvgDocument, frame: Frame, at, texts, every=None) -> None:
    xs = frame.x(at).tolist()
    sheet.path("".join(f"M{num(x)} {num(frame.bottom)}v3.5" for x in xs),
               "fill: none; stroke: #000000; stroke-width: 0.8")
    for k, (x, text) in enumerate(zip(xs, texts, strict=True)):
        if every is None or every[k]:
            sheet.text(x, frame.bottom + 7.0, text, FONT_PT, ha="center", va="top")


def _y_labels(sheet: SvgDocument, frame: Frame, at, texts, axis: str) -> None:
    ys = frame.y(at).tolist()
    sheet.path("".join(f"M{num(frame.left)} {num(y)}h-3.5" for y in ys),
               "fill: none; stroke: #000000; stroke-width: 0.8")
    for y, text in zip(ys, texts, strict=True):
        sheet.text(frame.left - 6.0, y, text, FONT_PT, ha="right", va="center_baseline")
    sheet.upright_text(11.0, frame.top + frame.height / 2, axis, FONT_PT)


def _decades(panel: CurvePanel) -> tuple[int, int]:
    """The decades a curve panel's axis runs between: every line and the band, but at most
    :data:`DECADES` below the top, so the lines that matter keep their room."""
    shown = np.concatenate([np.asarray(v, float) for _, v in panel.lines]
                           + [np.asarray(edge, float) for b in panel.bands if b
                              for edge in b])
    shown = shown[np.isfinite(shown) & (shown > 0)]
    low = math.floor(math.log10(max(shown.min(), 1e-6))) if shown.size else -3
    high = math.ceil(math.log10(shown.max())) if shown.size else 0
    high = max(high, low + 1)
    return max(low, high - DECADES), high


def _entries(panel) -> list[tuple]:
    """A panel's legend: (line style, or None for the band; label) per entry; a line wholly
    under the axis's bottom says so."""
    if isinstance(panel, WavePanel):
        return [(INPUT_STYLE, "pickup"), (OUTPUT_STYLE, "output")]
    floor = 10.0 ** _decades(panel)[0]
    entries = [(draw.style_of(i, len(panel.lines)),
                label + (" (below the plot)" if _under(values, floor) else ""))
               for i, (label, values) in enumerate(panel.lines)]
    return entries + ([(None, "part tolerances")] if any(panel.bands) else [])


def _under(values, floor: float) -> bool:
    v = np.asarray(values, float)
    v = v[np.isfinite(v)]
    return bool(v.size) and bool(v.max() < floor)


def _columns(entries) -> tuple[int, float]:
    """How many legend columns the sheet holds, and each column's width."""
    widest = max(label_width(text, LEGEND_PT) for _, text in entries)
    cell = HANDLE_PT + HANDLE_GAP_PT + widest + COLUMN_GAP_PT
    return max(1, min(len(entries), int((WIDTH_PT - 2 * EDGE_PT + COLUMN_GAP_PT) // cell))), cell


def _legend_height(entries) -> float:
    columns, _ = _columns(entries)
    return math.ceil(len(entries) / columns) * LINE_EM * LEGEND_PT + 2.0


def _legend(sheet: SvgDocument, frame: Frame, entries) -> None:
    """Handles and labels under the panel's axis labels, row by row in columns, so that no
    entry covers a line or another entry."""
    columns, cell = _columns(entries)
    row = LINE_EM * LEGEND_PT
    for k, (style, text) in enumerate(entries):
        x = EDGE_PT + (k % columns) * cell
        y = frame.bottom + X_LABELS_PT + 2.0 + (k // columns + 0.5) * row
        if style is None:
            sheet.rect(x, y - 0.35 * LEGEND_PT, HANDLE_PT, 0.7 * LEGEND_PT,
                       f"fill: {draw.BAND_COLOUR}")
        else:
            sheet.path(f"M{num(x)} {num(y)}H{num(x + HANDLE_PT)}", draw.line(*style))
        sheet.text(x + HANDLE_PT + HANDLE_GAP_PT, y, text, LEGEND_PT, va="center")


def _volt_ticks(top: float) -> list[float]:
    step = 10 ** math.floor(math.log10(top))
    step = next(s * step for s in (0.25, 0.5, 1.0, 2.0, 5.0) if top / (s * step) <= 3)
    count = int(top // step)
    return [k * step for k in range(-count, count + 1)]


def _volts(v: float) -> str:
    return "0" if v == 0 else format_value(v, "voltage").replace("-", "\u2212")


def _percent(fraction: float) -> str:
    return f"{fraction * 100:g} %"
