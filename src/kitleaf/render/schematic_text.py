"""Words on a schematic: part labels, where they sit, how much room text takes, and SVG tidying.

The room text takes is estimated from a wide sans-serif's average advance per character, not
measured from a font, so a layout is the same on every machine.
"""

from __future__ import annotations

import re

from kitleaf.bom.describe import describe
from kitleaf.circuit.drawing import Point
from kitleaf.circuit.parts import Part

Box = tuple[float, float, float, float]  # x0, y0, x1, y1

FONT_SIZE = 11.0
POINTS_PER_UNIT = 36.0  # one grid unit is half an inch: 36 pt in the SVG
CHAR_WIDTH = 0.62  # a sans-serif character's average advance, in font sizes (common practice)
# How far a label sits from the axis of a two-terminal part (half the body's width plus air).
LABEL_GAP = {"resistor": 0.45, "capacitor": 0.55, "inductor": 0.5, "diode": 0.5, "led": 1.0,
             "pot": 0.5, "block": 0.3, "switch": 0.3,
             "trimmer": 0.8,  # clear of the arrow through it
             "bjt": 0.5, "jfet": 0.5, "opamp": 0.0}  # beside a device: from its pins
LABEL_NUDGE = 0.1  # schemdraw writes a label this far right of and above its point
# The side a label lies on from its point -> schemdraw's (halign, valign) for it.
ALIGN = {"right": ("left", "center"), "left": ("right", "center"),
         "above": ("center", "bottom"), "below": ("center", "top"), "below right": ("left", "top")}


def part_value(part: Part) -> str:
    """The value as the bill of materials writes it, so sheet and BOM agree: the RKM code for
    resistors, capacitors and pots (``470R``, ``4k7``, ``100n``, ``100k log``), the model for
    semiconductors."""
    return describe(part).value_text


def part_label(part: Part) -> str:
    """Designator over value, as printed beside a part: ``R3`` / ``10k``."""
    value = part_value(part)
    if part.polarised and part.type == "capacitor":
        value = f"{value} {part.dielectric[:4]}."
    return f"{part.designator}\n{value}"


def default_side(a: Point, b: Point) -> str:
    """Where a part drawn from ``a`` to ``b`` is labelled unless told: above a level part, to
    the right of an upright one."""
    return "above" if abs(a[1] - b[1]) < 1e-9 else "right"


def wiper_side(a: Point, b: Point) -> str:
    """The side schemdraw draws a pot's wiper on, for a pot drawn from ``a`` to ``b``."""
    if abs(a[1] - b[1]) < 1e-9:
        return "above" if b[0] > a[0] else "below"
    return "right" if b[1] < a[1] else "left"


def label_point(a: Point, b: Point, side: str | None, gap: float) -> Point:
    """Where the label of a part drawn from ``a`` to ``b`` goes: ``gap`` off its middle."""
    middle = ((a[0] + b[0]) / 2, (a[1] + b[1]) / 2)
    return nudge(middle, side or default_side(a, b), gap)


def nudge(at: Point, side: str, gap: float) -> Point:
    dx, dy = {"right": (gap, 0), "left": (-gap, 0), "above": (0, gap), "below": (0, -gap)}.get(
        side, (0, 0))
    return (at[0] + dx, at[1] + dy)


def text_width(text: str, size: float = FONT_SIZE) -> float:
    """The width of the longest line of ``text`` in grid units (a generous estimate)."""
    return max(map(len, text.split("\n"))) * size * CHAR_WIDTH / POINTS_PER_UNIT


def label_room(part: Part) -> float:
    """How far a part's label reaches from the part's axis when written beside it."""
    return LABEL_GAP[part.type] + text_width(part_label(part))


def text_box(text: str, at: Point, size: float, halign: str, valign: str) -> Box:
    """Where a label's text lies, in grid units (an estimate, as wide as :func:`text_width`)."""
    width = text_width(text, size)
    height = (text.count("\n") + 1) * size / POINTS_PER_UNIT
    x, y = at[0] + LABEL_NUDGE, at[1] + LABEL_NUDGE
    x0 = {"left": x, "center": x - width / 2, "right": x - width}[halign]
    y0 = {"bottom": y, "center": y - height / 2, "top": y - height}[valign]
    return (x0, y0, x0 + width, y0 + height)


_NUMBER = re.compile(r"-?\d+\.\d{4,}")


def normalise_svg(raw: str, title: str, tidy: tuple[int, int] | None = None) -> str:
    """Tidy the text (:func:`tidy_svg`), or only its ``tidy`` slice if the rest is tidy
    already, and add a title."""
    start, end = tidy or (0, len(raw))
    text = raw[:start] + tidy_svg(raw[start:end]) + raw[end:]
    if title:
        escaped = title.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
        text = re.sub(r"(<svg[^>]*>)", lambda m: f"{m.group(1)}<title>{escaped}</title>", text,
                      count=1)
    return text if text.endswith("\n") else text + "\n"


def tidy_svg(text: str) -> str:
    """Round long decimals (float noise differs across platforms) and fix the dash style.

    schemdraw writes ``stroke-dasharray:-`` for solid lines, which is not valid CSS; solid is
    the default, so the declaration is dropped.
    """
    return _NUMBER.sub(lambda m: _short(float(m.group())), text).replace(
        "stroke-dasharray:-;", "")


def _short(x: float) -> str:
    out = f"{x:.3f}".rstrip("0").rstrip(".")
    return "0" if out in ("-0", "") else out
