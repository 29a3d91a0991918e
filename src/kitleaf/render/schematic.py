"""Schematic drawing: the one place that speaks schemdraw, behind a small sheet of our own.

A :class:`Sheet` is the canvas a stage kind draws on. Coordinates are grid units (one unit is
half an inch at print size); y grows upwards, so a kind puts ground low, the supply high and
the signal on a row between them, flowing left to right. Every element is added explicitly to
the sheet's own drawing: no drawing stack, no global configuration. Pins have our semantic names
and are mapped to schemdraw anchors in :data:`ANCHORS` alone.
"""

from __future__ import annotations

import math
import xml.etree.ElementTree as ET
from collections import ChainMap
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field

import schemdraw
import schemdraw.elements as elm
from schemdraw.segments import SegmentText
from schemdraw.transform import Transform
from schemdraw.types import BBox
from schemdraw.util import Point as SdPoint

from kitleaf.circuit.parts import Part
from kitleaf.render.schematic_text import (
    FONT_SIZE,
    LABEL_GAP,
    LABEL_NUDGE,
    Box,
    Point,
    label_room,
    normalise_svg,
    part_label,
    part_value,
    text_box,
    text_width,
    tidy_svg,
)

# Words and their room are measured in schematic_text; kinds and tests find them here too.
__all__ = ["ANCHORS", "FONT_SIZE", "GROUND_Y", "RAIL_Y", "SIGNAL_Y", "Point", "Sheet",
           "label_room", "part_label", "part_value", "render_overview_svg", "render_stage_svg",
           "text_width"]

FONT = "DejaVu Sans, Arial, Helvetica, sans-serif"
GROUND_Y = 0.0
SIGNAL_Y = 5.0
RAIL_Y = 10.0

# Our pin names -> schemdraw anchor names, one table for every drawn element.
ANCHORS: Mapping[str, Mapping[str, str]] = {
    "npn": {"base": "base", "collector": "collector", "emitter": "emitter"},
    "pnp": {"base": "base", "collector": "collector", "emitter": "emitter"},
    "njf": {"gate": "gate", "drain": "drain", "source": "source"},
    "pjf": {"gate": "gate", "drain": "drain", "source": "source"},
    # drawn flipped, + input above - input, so schemdraw's "vs" pin is the upper one
    "opamp": {"non_inv": "in2", "inv": "in1", "out": "out", "vpos": "vs", "vneg": "vd"},
    "pot": {"ccw": "start", "cw": "end", "wiper": "tap"},
}
_TWO_TERMINAL = {"resistor": elm.Resistor, "capacitor": elm.Capacitor, "inductor": elm.Inductor,
                 "diode": elm.Diode, "led": elm.LED}
_TRANSISTOR = {"npn": elm.BjtNpn, "pnp": elm.BjtPnp, "njf": elm.JFetN, "pjf": elm.JFetP}
_ALIGN = {"right": ("left", "center"), "left": ("right", "center"),
          "above": ("center", "bottom"), "below": ("center", "top"), "below right": ("left", "top")}


class Sheet:
    """One schematic: parts, wires, rails and labels added explicitly, then written as SVG."""

    def __init__(self, title: str = "", nets: Mapping[str, str] | None = None) -> None:
        self.title = title
        self.nets = {"vcc": "VCC", "vref": "VREF", "supply": "+V IN", **(nets or {})}
        # Where a builder could probe: (device, pin) for device pins, ("", net) for nets.
        self.spots: dict[tuple[str, str], Point] = {}
        self._text_boxes: list[Box] = []
        self._element_boxes: list[Box] = []  # each element's, without its text, once placed
        self._drawing = _Drawing(canvas="svg", show=False)
        self._drawing.config(unit=3, fontsize=FONT_SIZE, font=FONT, lw=1.4, margin=0.4,
                             color="black")

    # -- parts ---------------------------------------------------------------------------------
    def part(self, part: Part | None, a: Point, b: Point, side: str | None = None,
             plus: Point | None = None) -> None:
        """A two-terminal part from ``a`` to ``b`` (a diode's anode at ``a``), labelled.

        An electrolytic's + lead is at ``a`` unless ``plus`` names ``b``, the end that sits at
        the higher DC voltage.
        """
        if part is None:
            return
        if part.type in ("diode", "led"):
            self.spots.setdefault((part.designator, "anode"), a)
            self.spots.setdefault((part.designator, "cathode"), b)
        polar = part.type == "capacitor" and part.polarised
        if polar and plus == b:
            a, b = b, a
        kwargs = {"polar": True} if polar else {}
        self._add(_TWO_TERMINAL[part.type](**kwargs).endpoints(a, b))
        self.label(part_label(part), _label_point(a, b, side, LABEL_GAP[part.type]),
                   side or _default_side(a, b))

    def pot(self, part: Part, ccw: Point, cw: Point, side: str | None = None,
            wiper_right: bool = False) -> Point:
        """A pot from ``ccw`` to ``cw``; returns where its wiper arrow starts.

        The wiper is drawn on the left of the ccw-to-cw direction, or the right if asked.
        """
        drawn = elm.Potentiometer().endpoints(ccw, cw)
        drawn = self._add(drawn.flip() if wiper_right else drawn)
        side = side or _default_side(ccw, cw)
        self.label(part_label(part), _label_point(ccw, cw, side, LABEL_GAP["pot"]), side)
        return self.pin(drawn, "pot", "wiper")

    def rheostat(self, part: Part, a: Point, b: Point, side: str | None = None) -> None:
        """A pot used as a variable resistor: its wiper tied to the ``b`` end."""
        side = side or _default_side(a, b)
        wiper = self.pot(part, a, b, side, wiper_right=_default_tap(a, b) == side)
        bend = (b[0], wiper[1]) if abs(a[1] - b[1]) < 1e-9 else (wiper[0], b[1])
        self.wire(wiper, bend, b)

    def transistor(self, part: Part, family: str, base: Point, mirror: bool = False
                   ) -> dict[str, Point]:
        """A BJT (npn/pnp) or JFET (njf/pjf) with its base or gate at ``base``; pins by name.

        ``mirror`` flips it top to bottom, for a PNP or P-channel part whose emitter or source
        faces the supply above.
        """
        drawn = _TRANSISTOR[family](circle=True) if family in ("npn", "pnp") \
            else _TRANSISTOR[family]().reverse()
        if mirror:
            drawn = drawn.flip()
        first = next(iter(ANCHORS[family]))
        drawn = self._add(drawn.anchor(ANCHORS[family][first]).at(base))
        pins = {name: self.pin(drawn, family, name) for name in ANCHORS[family]}
        self.spots.update({(part.designator, name): at for name, at in pins.items()})
        centre = drawn.absanchors["center"]
        self.label(part_label(part), (max(p[0] for p in pins.values()) + 0.5, centre.y), "right")
        return pins

    def opamp(self, part: Part, non_inv: Point, pin_numbers: Mapping[str, str]
              ) -> dict[str, Point]:
        """An op-amp with its + input at ``non_inv``, the - input below; pins by name.

        Its supply pins are drawn to VCC and ground; ``pin_numbers`` gives the package pin
        shown beside each named pin.
        """
        drawn = self._add(elm.Opamp(leads=True).flip().anchor("in2").at(non_inv))
        pins = {name: self.pin(drawn, "opamp", name) for name in ANCHORS["opamp"]}
        top, bottom = pins["vpos"], pins["vneg"]
        self.wire(top, (top[0], top[1] + 0.5))
        self.rail((top[0], top[1] + 0.5))
        self.wire(bottom, (bottom[0], bottom[1] - 0.5))
        self.ground((bottom[0], bottom[1] - 0.5))
        self.label(part_label(part), (pins["out"][0] - 0.3, top[1] + 0.2), "right")
        for name, number in pin_numbers.items():
            self._pin_number(pins[name], name, number)
            self.spots[(part.designator, number)] = pins[name]
        # the supply pin is probed on its lead to the rail, clear of the op-amp's body
        self.spots[(part.designator, pin_numbers.get("vpos", ""))] = (top[0], top[1] + 0.25)
        return pins

    def _pin_number(self, at: Point, name: str, number: str) -> None:
        x, y = at
        place = {"non_inv": ((x + 0.25, y + 0.05), "above"), "inv": ((x + 0.25, y - 0.15), "below"),
                 "out": ((x - 0.25, y + 0.05), "above"), "vpos": ((x + 0.12, y + 0.25), "right"),
                 "vneg": ((x + 0.12, y - 0.25), "right")}
        point, side = place[name]
        self.text(number, point, size=FONT_SIZE * 0.8, side=side)

    def block(self, lower_left: Point, width: float, height: float, lines: Sequence[str]) -> None:
        """A labelled rectangle (a custom stage, or one stage of the kit overview)."""
        x, y = lower_left
        self._add(elm.Rect(corner1=(0, 0), corner2=(width, height)).at((x, y)))
        self.label("\n".join(lines), (x + width / 2, y + height / 2), "centre")

    # -- connections ---------------------------------------------------------------------------
    def wire(self, *points: Point) -> None:
        """A wire through ``points``, drawn as straight segments."""
        for a, b in zip(points, points[1:], strict=False):
            if a != b:
                self._add(elm.Line().endpoints(a, b))

    def dot(self, at: Point) -> None:
        """A junction dot where three or more wires meet."""
        self._add(elm.Dot(radius=0.09).at(at))

    def terminal(self, at: Point) -> None:
        """A ground symbol at the bottom of the sheet, a VCC rail at the top, else nothing."""
        if at[1] <= GROUND_Y:
            self.ground(at)
        elif at[1] >= RAIL_Y:
            self.rail(at)

    def ground(self, at: Point) -> None:
        self._add(elm.Ground(lead=False).at(at))

    def rail(self, at: Point, net: str = "vcc") -> None:
        """A supply connection pointing up, labelled with the net's name (VCC, VREF...)."""
        self._add(elm.Vdd(lead=False).at(at))
        self.spots.setdefault(("", net), at)
        self.label(self.nets.get(net, net.upper()), (at[0], at[1] + 0.35), "above")

    def net_label(self, at: Point, net: str, side: str = "below") -> None:
        """A net named at a wire's end without a symbol (a reference fed from elsewhere)."""
        self._add(elm.Dot(radius=0.09).at(at))
        self.spots.setdefault(("", net), at)
        self.label(self.nets.get(net, net.upper()), _nudge(at, side, 0.25), side)

    def port(self, at: Point, name: str, side: str = "left") -> None:
        """A connection to the next or previous stage: an open circle with its name."""
        self._add(elm.Dot(open=True, radius=0.12).at(at))
        self.spots.setdefault(("", name.lower()), at)
        self.label(name, _nudge(at, side, 0.3), side)

    def ring(self, centre: Point, radius: float) -> None:
        """An open circle (a test point's marker)."""
        self._add(elm.Dot(open=True, radius=radius).at(centre).zorder(1))  # under its number

    # -- text ----------------------------------------------------------------------------------
    def label(self, text: str, at: Point, side: str) -> None:
        self.text(text, at, side=side)

    def text(self, text: str, at: Point, size: float = FONT_SIZE, side: str = "right",
             exact: bool = False) -> None:
        """Text whose ``side`` says where it lies from ``at`` (right: starts at ``at``).

        schemdraw nudges a label a little off its point; ``exact`` keeps it on the point.
        """
        halign, valign = _ALIGN.get(side, ("center", "center"))
        if exact:
            at = (at[0] - LABEL_NUDGE, at[1] - LABEL_NUDGE)
        self._add(elm.Label().at(at).label(text, halign=halign, valign=valign, fontsize=size))
        self._text_boxes.append(text_box(text, at, size, halign, valign))

    # -- what is drawn ------------------------------------------------------------------------
    def occupied(self) -> list[Box]:
        """The box of every element and label drawn so far, in grid units."""
        return self._element_boxes + self._text_boxes

    def extent(self) -> tuple[float, float, float, float]:
        """The box around everything drawn so far (x0, y0, x1, y1)."""
        boxes = self.occupied()
        return (min(b[0] for b in boxes), min(b[1] for b in boxes),
                max(b[2] for b in boxes), max(b[3] for b in boxes))

    # -- output --------------------------------------------------------------------------------
    def pin(self, drawn: elm.Element, family: str, name: str) -> Point:
        anchor = drawn.absanchors[ANCHORS[family][name]]
        return (round(anchor.x, 4), round(anchor.y, 4))

    def svg(self) -> str:
        """The sheet as an SVG document, byte-identical for the same drawing."""
        return self._drawing.document(self.title)

    def _add(self, element: elm.Element) -> elm.Element:
        """Add ``element`` and return it placed: use the returned one, which may be an equal
        element placed earlier in this process (see :func:`_placement_key`)."""
        # Every element gets its own direction: schemdraw would otherwise turn it the way the
        # previously added element pointed. Two-terminal parts are set by their endpoints.
        if not isinstance(element, elm.Element2Term):
            element.theta(0)
        key = _placement_key(element)
        placed = _PLACED.get(key) if key else None
        if placed is None:
            placed = self._drawing.place(element)
            if key and len(_PLACED) < _PLACED_LIMIT:
                _PLACED[key] = placed
        self._drawing.put(placed)
        self._element_boxes.append(placed.bare)
        return placed.element


@dataclass(frozen=True)
class _Placed:
    """A placed element, its boxes in sheet coordinates (without and with its text), and what
    it writes into the SVG, (z-order, tidied text) pairs, once it has been drawn."""

    element: elm.Element
    bare: Box
    whole: Box
    drawn: list = field(default_factory=list)


class _Drawing(schemdraw.Drawing):
    """A drawing that measures each element once, when placed, and draws each placed element
    once per process: the SVG writer's output for an element depends on the element alone (no
    clipping, gradients or hatching here), so later sheets reuse it."""

    _known: Box = (math.inf, math.inf, -math.inf, -math.inf)  # schemdraw's box of nothing

    def __init__(self, **kwargs) -> None:
        super().__init__(**kwargs)
        self._placed: list[_Placed] = []

    def place(self, element: elm.Element) -> _Placed:
        """``element`` placed as :meth:`add` would, but not added."""
        _flatten_defaults(element)
        self._here, self._theta = element._place(self._here, self._theta, **self.dwgparams)
        _settle(element)
        return _Placed(element, *_placed_boxes(element))

    def put(self, placed: _Placed) -> None:
        self.elements.append(placed.element)
        self._placed.append(placed)
        self._known = _union(self._known, placed.whole)

    def get_bbox(self) -> BBox:
        return BBox(*self._known)

    def document(self, title: str) -> str:
        """schemdraw's SVG root around each element's own tidied text, in z-order as schemdraw
        orders them: the same document schemdraw writes."""
        head = self.draw(show=False).getimage("svg").decode("utf-8")
        body = "".join(text for _, text in sorted(self._parts, key=lambda part: part[0]))
        if not body:
            return normalise_svg(head, title)
        if not head.endswith(" />"):  # the root alone, as an empty element
            raise RuntimeError("schemdraw wrote more than the SVG root around the elements")
        return normalise_svg(f"{head[:-3]}>{body}</svg>", title, tidy=(0, len(head) - 3))

    def _drawelements(self) -> None:
        self._parts = [part for placed in self._placed for part in self._drawn(placed)]

    def _drawn(self, placed: _Placed) -> list[tuple[int, str]]:
        """What the element writes, as (z-order, tidied SVG text), drawn once per process."""
        if placed.drawn:
            return placed.drawn
        fig, extras = self.fig, _extras(self.fig)
        start = len(fig.svgelements)
        placed.element._draw(fig)
        if _extras(fig) != extras:
            raise RuntimeError(f"{type(placed.element).__name__}: a sheet draws no clipped, "
                               "gradient or hatched elements (they write shared definitions)")
        placed.drawn.extend((z, tidy_svg(ET.tostring(xml, encoding="unicode")))
                            for z, xml in fig.svgelements[start:])
        del fig.svgelements[start:]
        return placed.drawn


def _extras(fig) -> tuple[int, int, int]:
    """What an element may add to a figure outside its own elements."""
    return len(fig.svgdefs), len(fig.gradients), len(fig.clips)


_FLAT_DEFAULTS: dict[type, dict] = {}  # per element class, read once per process
# Placed elements with their boxes (without, with text) by what they were asked to be, kept for
# the life of the process: the same kind draws the same wires and symbols in every guide.
_PLACED: dict[str, _Placed] = {}
_PLACED_LIMIT = 1536  # about 6 kB each, placed and drawn: at most some 9 MB a process


def _placement_key(element: elm.Element) -> str | None:
    """What fixes an element's placed geometry: its class, the parameters and labels it was
    given, and the sheet's drawing settings (the same for every sheet). None when it would be
    placed relative to the previous element, or when a value has no faithful text form."""
    given = element._userparams
    if "at" not in given and "endpts" not in given:
        return None
    key = repr((type(element).__module__, type(element).__qualname__, sorted(given.items()),
                element._userlabels))
    return None if " at 0x" in key else key


def _flatten_defaults(element: elm.Element) -> None:
    """Look the class defaults up in one dict instead of a chain with a link per base class.

    The element's own maps stay live in the chain, so placing it reads the same values.
    """
    flat = _FLAT_DEFAULTS.get(type(element))
    if flat is None:
        flat = _FLAT_DEFAULTS[type(element)] = dict(type(element).defaults)
    element.params = ChainMap(element._userparams, element.elmparams, flat, element._dwgparams)


def _settle(element: elm.Element) -> elm.Element:
    """Freeze a placed element for the writer: its parameters as one flat dict (schemdraw looks
    them up through a deep chain for every segment) and its transform as plain float arithmetic.
    Neither changes once the element is placed; the output is the same."""
    element.params = dict(element.params)
    element.transform = _Transform(element.transform)
    return element


class _Transform(Transform):
    """schemdraw's transform with the same float operations in the same order, minus the
    per-step point objects: scale about the local shift, rotate, then shift."""

    def __init__(self, of: Transform) -> None:
        super().__init__(of.theta, of.shift, of.localshift, of.zoom)
        radians = math.radians(of.theta)
        self._cos, self._sin = math.cos(radians), math.sin(radians)

    def transform(self, pt) -> SdPoint:
        x = (pt[0] + self.localshift[0]) * self.zoom[0]
        y = (pt[1] + self.localshift[1]) * self.zoom[1]
        co, so = self._cos, self._sin
        return SdPoint((0 + x * co + y * -so + 0 + self.shift[0],
                        0 + x * so + y * co + 0 + self.shift[1]))


def _placed_boxes(element: elm.Element) -> tuple[Box, Box]:
    """An element's box in sheet coordinates without and with its text, in one pass (the same
    numbers as schemdraw's ``get_bbox(transform=True)``)."""
    bare = whole = (math.inf, math.inf, -math.inf, -math.inf)
    for segment in element.segments:
        b = segment.xform(element.transform).get_bbox()
        whole = _union(whole, b)
        if not isinstance(segment, SegmentText):
            bare = _union(bare, b)
    return bare, whole


def _union(a: Box, b) -> Box:
    return (min(a[0], b[0]), min(a[1], b[1]), max(a[2], b[2]), max(a[3], b[3]))


def _default_side(a: Point, b: Point) -> str:
    return "above" if abs(a[1] - b[1]) < 1e-9 else "right"


def _default_tap(a: Point, b: Point) -> str:
    """The side schemdraw draws a pot's wiper on, for a pot drawn from ``a`` to ``b``."""
    if abs(a[1] - b[1]) < 1e-9:
        return "above" if b[0] > a[0] else "below"
    return "right" if b[1] < a[1] else "left"


def _label_point(a: Point, b: Point, side: str | None, gap: float) -> Point:
    middle = ((a[0] + b[0]) / 2, (a[1] + b[1]) / 2)
    return _nudge(middle, side or _default_side(a, b), gap)


def _nudge(at: Point, side: str, gap: float) -> Point:
    dx, dy = {"right": (gap, 0), "left": (-gap, 0), "above": (0, gap), "below": (0, -gap)}.get(
        side, (0, 0))
    return (at[0] + dx, at[1] + dy)


def render_stage_svg(kit_circuit, stage) -> str:
    """The schematic of one stage, drawn by its kind."""
    sheet = Sheet(stage.title, nets={"supply": f"+{kit_circuit.supply_v:g} V"})
    kit_circuit.kind(stage).draw(stage, sheet)
    from kitleaf.render.schematic_probes import mark_test_points  # it draws on a Sheet

    mark_test_points(sheet, kit_circuit.kind(stage).test_points(stage))
    return sheet.svg()


def render_overview_svg(kit_circuit, headline: Mapping[str, str]) -> str:
    """The kit at a glance: signal stages as blocks with their headline numbers, in chain order,
    the power section below them feeding every stage that draws on it."""
    from kitleaf.render.schematic_overview import draw_overview  # it draws on a Sheet

    sheet = Sheet("Kit overview")
    draw_overview(sheet, kit_circuit, headline)
    return sheet.svg()
