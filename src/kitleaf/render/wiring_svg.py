"""The off-board wiring drawn as SVG: the pieces with their lugs named, and every wire of the
harness as a numbered curve from lug to lug, coloured by what it carries.

Each lug is a circle carrying its name (``data-lug``) and each wire a path whose ends sit on
the centres of its two lugs, so the drawing's connections can be read back from the SVG alone.
"""

from __future__ import annotations

import math
from xml.sax.saxutils import escape, quoteattr

from kitleaf.circuit.harness import BOARD, Harness, Wire
from kitleaf.circuit.offboard import Lug
from kitleaf.render.wiring_layout import HEIGHT, WIDTH, LugSpot, PieceBox, Point, lay_out

FONT = 11.0  # CSS px at the drawing's natural size: readable on a phone without zooming
# What a wire carries -> its colour; red and black as the battery clip's leads are.
COLOURS = {"signal": "#1f5fbf", "bypass": "#2e7d4f", "ground": "#222222", "battery": "#222222",
           "supply": "#c0392b", "led": "#b86e00"}
BODY = 'fill="#f6f4ee" stroke="#555555" stroke-width="1.2"'


def render_wiring_svg(harness: Harness, title: str) -> str:
    """The whole drawing as one SVG document."""
    boxes, spots = lay_out(harness)
    parts = [_head(title)]
    parts += [_piece(box, harness, spots) for box in boxes]
    parts += [_wire(n, wire, spots) for n, wire in enumerate(harness.wires, start=1)]
    parts += [_lug(spot) for spot in spots.values()]
    parts += [_badge(n, wire, spots) for n, wire in enumerate(harness.wires, start=1)]
    parts.append("</svg>\n")
    return "\n".join(parts)


def _head(title: str) -> str:
    return (f'<svg xmlns="http://www.w3.org/2000/svg" width="{WIDTH:g}" height="{HEIGHT:g}" '
            f'viewBox="0 0 {WIDTH:g} {HEIGHT:g}" font-family="DejaVu Sans, sans-serif" '
            f'font-size="{FONT:g}">\n<title>{escape(title)}</title>\n'
            f'<rect width="{WIDTH:g}" height="{HEIGHT:g}" fill="#ffffff"/>')


def _text(text: str, at: Point, anchor: str = "start", size: float = FONT,
          weight: str = "normal") -> str:
    return (f'<text x="{at[0]:.1f}" y="{at[1]:.1f}" text-anchor="{anchor}" '
            f'font-size="{size:g}" font-weight="{weight}">{escape(text)}</text>')


def _piece(box: PieceBox, harness: Harness, spots: dict) -> str:
    left, top, width, height = box.box
    if box.role == "led":
        return _led(box)
    rows = [f'<g class="piece" data-piece={quoteattr(box.designator)}>',
            f'<rect x="{left:g}" y="{top:g}" width="{width:g}" height="{height:g}" rx="6" '
            f'{BODY}/>']
    title_y = top + height + 16.0 if box.role == BOARD else top - 22.0
    for i, line in enumerate(t for t in box.title if t):
        rows.append(_text(line, (left, title_y + 14.0 * i), size=FONT + 1 if i == 0 else FONT,
                          weight="bold" if i == 0 else "normal"))
    if box.role == BOARD and harness.led is not None:
        led_pad = spots[Lug(BOARD, f"{harness.led.designator} anode")]
        rows.append(_resistor(harness, led_pad.at))
    rows.append("</g>")
    return "\n".join(rows)


def _resistor(harness: Harness, pad: Point) -> str:
    """The LED's resistor on the board, from its pad down to VCC."""
    x, top = pad[0] + 40.0, pad[1]
    resistor = harness.led_resistor
    return "\n".join([
        f'<path d="M {pad[0]:.1f} {top:.1f} V {top + 8:.1f} H {x:.1f} V {top + 18:.1f} '
        f'M {x:.1f} {top + 46:.1f} V {top + 54:.1f}" stroke="#555555" fill="none"/>',
        f'<rect x="{x - 5:.1f}" y="{top + 18:.1f}" width="10" height="28" fill="#ffffff" '
        'stroke="#555555"/>',
        _text(f"{resistor.designator} {resistor.text}", (x - 9.0, top + 36.0), "end"),
        _text("to VCC", (x - 9.0, top + 52.0), "end"),
    ])


def _led(box: PieceBox) -> str:
    """An LED standing with its cathode up: a triangle pointing up onto its bar."""
    left, top, width, height = box.box
    x, mid = left + width / 2, top + height / 2
    return "\n".join([
        f'<g class="piece" data-piece={quoteattr(box.designator)}>',
        f'<path d="M {x:.1f} {top:.1f} V {mid - 12:.1f} M {x:.1f} {mid + 12:.1f} '
        f'V {top + height:.1f}" stroke="#555555" fill="none"/>',
        f'<path d="M {x - 12:.1f} {mid + 12:.1f} H {x + 12:.1f} L {x:.1f} {mid - 8:.1f} Z" '
        f'{BODY}/>',
        f'<path d="M {x - 12:.1f} {mid - 10:.1f} H {x + 12:.1f}" stroke="#555555" '
        'stroke-width="2"/>',
        _text(box.title[0], (x + 18.0, mid - 2.0), weight="bold", size=FONT + 1),
        _text(box.title[1], (x + 18.0, mid + 13.0)),
        "</g>",
    ])


def _lug(spot: LugSpot) -> str:
    x, y = spot.at
    return "\n".join([
        f'<circle class="lug" data-lug={quoteattr(str(spot.lug))} cx="{x:.1f}" cy="{y:.1f}" '
        'r="4.5" fill="#ffffff" stroke="#333333" stroke-width="1.5"/>',
        _text(spot.label, spot.label_at, spot.anchor),
    ])


def _curve(wire: Wire, spots: dict) -> tuple[Point, Point, Point, Point]:
    """A wire's curve: out of each lug the way it faces, bending towards the other end."""
    a, b = spots[wire.a], spots[wire.b]
    reach = min(90.0, max(30.0, math.dist(a.at, b.at) / 2.5))
    return (a.at, _ahead(a, b.at, reach), _ahead(b, a.at, reach), b.at)


def _ahead(spot: LugSpot, other: Point, reach: float) -> Point:
    """The point ``reach`` out of a lug the way its wire leaves (towards ``other`` if free)."""
    x, y = spot.at
    if spot.exit is None or abs(other[1] - y) < 1.0:
        return (x + (other[0] - x) / 3, y + (other[1] - y) / 3)
    return (x + spot.exit[0] * reach, y + spot.exit[1] * reach)


def _wire(number: int, wire: Wire, spots: dict) -> str:
    p0, p1, p2, p3 = _curve(wire, spots)
    return (f'<path class="wire" data-wire="{number}" d="M {p0[0]:.1f} {p0[1]:.1f} '
            f'C {p1[0]:.1f} {p1[1]:.1f} {p2[0]:.1f} {p2[1]:.1f} {p3[0]:.1f} {p3[1]:.1f}" '
            f'fill="none" stroke="{COLOURS[wire.carries]}" stroke-width="2.4" '
            'stroke-linecap="round"/>')


def _badge(number: int, wire: Wire, spots: dict) -> str:
    """The wire's number from the wiring list, in a ring on the middle of the curve."""
    p0, p1, p2, p3 = _curve(wire, spots)
    x = (p0[0] + 3 * p1[0] + 3 * p2[0] + p3[0]) / 8
    y = (p0[1] + 3 * p1[1] + 3 * p2[1] + p3[1]) / 8
    return (f'<g class="wire-number"><circle cx="{x:.1f}" cy="{y:.1f}" r="8.5" fill="#ffffff" '
            f'stroke="{COLOURS[wire.carries]}" stroke-width="1.5"/>'
            + _text(str(number), (x, y + 3.8), "middle", FONT - 1, "bold") + "</g>")
