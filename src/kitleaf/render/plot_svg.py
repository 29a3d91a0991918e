"""A small SVG sheet for the response plots: paths, rectangles and text in points, byte-stable.

Coordinates are points with y pointing down, as in SVG; every number is written with two
decimals (a hundredth of a point is far below a pixel), so the same drawing gives the same bytes.
Text is written as SVG text and placed from the font's fixed line metrics, never measured.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from xml.sax.saxutils import escape

import numpy as np

# DejaVu Sans's typographic ascender and descender (its OS/2 table: 1556 and 492 of 2048 units),
# the line box matplotlib aligned our single-line labels by.
ASCENT_EM, DESCENT_EM = 1556 / 2048, 492 / 2048
FONT_FAMILY = "'DejaVu Sans', sans-serif"
ANCHORS = {"left": "start", "center": "middle", "right": "end"}
# Where the baseline sits below the anchor, in ems, for each vertical alignment.
BASELINE_EM = {"top": ASCENT_EM, "center": (ASCENT_EM - DESCENT_EM) / 2,
               "center_baseline": ASCENT_EM / 2, "baseline": 0.0}


def num(value: float) -> str:
    """A coordinate as written: two decimals, no trailing zeros, never ``-0``."""
    text = f"{value:.2f}".rstrip("0").rstrip(".")
    return "0" if text == "-0" else text


def polyline(xs: np.ndarray, ys: np.ndarray) -> str:
    """Path data through the points; a non-finite point breaks the line, as matplotlib did."""
    ok = np.isfinite(xs) & np.isfinite(ys)
    rounded = np.round(np.stack([xs, ys], axis=1), 2) + 0.0  # + 0.0 turns -0.0 into 0.0
    parts, pen_down = [], False
    for good, (x, y) in zip(ok.tolist(), rounded.tolist(), strict=True):
        if good:
            parts.append(f"{'L' if pen_down else 'M'}{x:g} {y:g}")
        pen_down = good
    return "".join(parts)


def dash_array(dashes, width: float) -> str:
    """An SVG dash array from a matplotlib-style ``(offset, (on, off, ...))`` or "-" (solid);
    the pattern scales with the line width, as matplotlib's did."""
    if dashes == "-":
        return ""
    return f"; stroke-dasharray: {','.join(num(d * width) for d in dashes[1])}"


@dataclass
class SvgDocument:
    """An SVG drawing being written, element by element, in drawing order."""

    width: float
    height: float
    title: str = ""
    defs: list[str] = field(default_factory=list)
    body: list[str] = field(default_factory=list)

    def clip(self, name: str, x: float, y: float, w: float, h: float) -> str:
        """A clip rectangle under ``name`` (unique within the drawing); returns the reference."""
        self.defs.append(f'<clipPath id="{name}"><rect x="{num(x)}" y="{num(y)}" '
                         f'width="{num(w)}" height="{num(h)}"/></clipPath>')
        return f' clip-path="url(#{name})"'

    def path(self, d: str, style: str, clip: str = "") -> None:
        self.body.append(f'<path d="{d}" style="{style}"{clip}/>')

    def rect(self, x: float, y: float, w: float, h: float, style: str) -> None:
        self.body.append(f'<rect x="{num(x)}" y="{num(y)}" width="{num(w)}" '
                         f'height="{num(h)}" style="{style}"/>')

    def text(self, x: float, y: float, text: str, size: float, ha: str = "left",
             va: str = "baseline", extra: str = "") -> None:
        """One line of text whose anchor is at (x, y), aligned as matplotlib's ha and va."""
        base = y + BASELINE_EM[va] * size
        self.body.append(f'<text x="{num(x)}" y="{num(base)}" style="font-size: {num(size)}px; '
                         f'text-anchor: {ANCHORS[ha]}{extra}">{escape(text)}</text>')

    def upright_text(self, x: float, y: float, text: str, size: float) -> None:
        """Text read bottom to top, centred on y, its line box's right edge at x."""
        base = x - DESCENT_EM * size
        self.body.append(f'<text transform="translate({num(base)} {num(y)}) rotate(-90)" '
                         f'style="font-size: {num(size)}px; text-anchor: middle">'
                         f'{escape(text)}</text>')

    def svg(self) -> str:
        width, height = num(self.width), num(self.height)
        head = (f'<?xml version="1.0" encoding="utf-8"?>\n'
                f'<svg xmlns="http://www.w3.org/2000/svg" version="1.1" width="{width}pt" '
                f'height="{height}pt" viewBox="0 0 {width} {height}">\n'
                f'<title>{escape(self.title)}</title>\n'
                f'<defs>\n<style type="text/css">*{{stroke-linejoin: round; '
                f'stroke-linecap: butt}} text{{font-family: {FONT_FAMILY}}}</style>\n')
        return head + "\n".join([*self.defs, "</defs>", *self.body, "</svg>\n"])
