"""Schematic drawing: schemdraw's public elements behind a small sheet of our own.

A :class:`SchematicSheet` is the canvas a stage kind draws on: it implements the drawing
protocol the circuit layer states (:class:`kitleaf.circuit.drawing.Sheet`: grid units, y
upwards, the rows a kind draws on). Every element is added explicitly to
the sheet's own drawing: no drawing stack, no global configuration. Pins have our semantic names
and are mapped to schemdraw anchors in :data:`ANCHORS` alone. Beside it: ``schematic_text``
(words and where they sit), ``schematic_devices`` (transistors and op-amps on a sheet),
``schemdraw_adapter`` (the one user of schemdraw's internals: elements placed and written once
per process), ``schematic_probes`` and ``schematic_overview``.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

import schemdraw.elements as elm
from schemdraw.segments import Segment

from kitleaf.circuit.drawing import GROUND_Y, RAIL_Y, SIGNAL_Y, Point
from kitleaf.circuit.parts import Part
from kitleaf.circuit.rails import negative_supply, rail_labels
from kitleaf.circuit.switches import form_of
from kitleaf.render import schemdraw_adapter as adapter
from kitleaf.render.schematic_devices import draw_opamp, draw_transistor
from kitleaf.render.schematic_geometry import junctions
from kitleaf.render.schematic_record import PORT_NETS, SheetRecord
from kitleaf.render.schematic_text import (
    ALIGN,
    FONT_SIZE,
    LABEL_GAP,
    LABEL_NUDGE,
    Box,
    default_side,
    label_point,
    label_room,
    nudge,
    part_label,
    part_value,
    text_box,
    text_width,
    wiper_side,
)

# Words and their room are measured in schematic_text; the drawings beside this module and
# the tests find them here too.
__all__ = ["ANCHORS", "FONT_SIZE", "GROUND_Y", "RAIL_Y", "SIGNAL_Y", "Point", "SchematicSheet",
           "label_room", "part_label", "part_value", "render_overview_svg", "render_stage_svg",
           "text_width"]

FONT = "DejaVu Sans, Arial, Helvetica, sans-serif"

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
                 "diode": elm.Diode, "led": elm.LED,
                 "trimmer": elm.ResistorVar}  # in a resistor's place: a variable resistor


class JfetSymbol(elm.JFet):
    """A JFET drawn to IEEE 315 (as IEC 60617): the gate arrow points into an N channel and out
    of a P channel. schemdraw's own JFetN and JFetP glyphs point the other way."""

    def __init__(self, channel: str, **kwargs) -> None:
        super().__init__(**kwargs)
        gate_x, gate_y = self.anchors["gate"]
        bar_x = self.segments[0].path[2][0]  # the channel bar; the gate lead runs right from it
        near, far = bar_x + 0.1, bar_x + 0.3  # the span schemdraw's own arrow takes
        tail, head = (far, near) if channel == "n" else (near, far)
        self.segments.append(Segment([(tail, gate_y), (head, gate_y)], arrow="->",
                                     arrowwidth=self.params["arrowwidth"],
                                     arrowlength=self.params["arrowlength"]))


# Multi-pin symbols facing the way the drawings use them: a BJT or JFET with collector or drain
# up (mirrored for a PNP or P-channel part, emitter or source up), the op-amp with + above -.
# schemdraw draws its PNP emitter-up, so ours starts flipped; flip() sets, it does not toggle.
_DEVICE = {"npn": lambda flip: elm.BjtNpn(circle=True).flip() if flip else elm.BjtNpn(circle=True),
           "pnp": lambda flip: elm.BjtPnp(circle=True) if flip else elm.BjtPnp(circle=True).flip(),
           "njf": lambda flip: _flipped(JfetSymbol("n").reverse(), flip),
           "pjf": lambda flip: _flipped(JfetSymbol("p").reverse(), flip),
           "opamp": lambda flip: elm.Opamp(leads=True).flip()}


def _flipped(element: elm.Element, flip: bool) -> elm.Element:
    return element.flip() if flip else element


class SchematicSheet:
    """One schematic: parts, wires, rails and labels added explicitly, then written as SVG.

    It is the :class:`kitleaf.circuit.drawing.Sheet` a stage kind draws on, plus what the
    test-point markers and the overview need (text, rings, devices, what is occupied)."""

    def __init__(self, title: str = "", nets: Mapping[str, str] | None = None,
                 plus_pins: Mapping[str, int] | None = None,
                 rests: Mapping[str, int] | None = None, vneg: str = "0") -> None:
        self.title = title
        # The net an op-amp's negative supply pin is drawn to: ground, or the negative rail.
        self.vneg = vneg
        # The position each switch rests at (the kit block's ``*``), where its lever is drawn.
        self.rests = dict(rests or {})
        # Each polarised capacitor's + pin from the computed DC (0: its first node, as its
        # kind places it); a part not named here takes the kind's ``plus`` hint.
        self.plus_pins = dict(plus_pins or {})
        self.nets = {"vcc": "VCC", "vref": "VREF", "supply": "+V IN", **(nets or {})}
        # Where a builder could probe: (device, pin) for device pins, ("", net) for nets.
        self.spots: dict[tuple[str, str], Point] = {}
        self._text_boxes: list[Box] = []
        self.record = SheetRecord()  # what was drawn, as data, for the drawing checker
        self._element_boxes: list[Box] = []  # each element's, without its text, once placed
        self._drawing = adapter.SheetDrawing(canvas="svg", show=False)
        self._drawing.config(unit=3, fontsize=FONT_SIZE, font=FONT, lw=1.4, margin=0.4,
                             color="black")

    # -- parts ---------------------------------------------------------------------------------
    def part(self, part: Part | None, a: Point, b: Point, side: str | None = None,
             plus: Point | None = None) -> None:
        """A two-terminal part from ``a`` (its first node) to ``b`` (a diode's anode at
        ``a``), labelled.

        An electrolytic's + lead is at the end the computed DC puts higher (``plus_pins``),
        else at ``a`` unless the kind's ``plus`` hint names ``b``.
        """
        if part is None:
            return
        if part.type in ("diode", "led"):
            self.spots.setdefault((part.designator, "anode"), a)
            self.spots.setdefault((part.designator, "cathode"), b)
        self.record.part(part.designator, part.type, {"a": a, "b": b, "anode": a, "cathode": b})
        self.record.body(part.designator, a, b)
        polar = part.type == "capacitor" and part.polarised
        if polar:
            pin = self.plus_pins.get(part.designator, 1 if plus == b else 0)
            self.record.plus[part.designator] = pin
            a, b = (b, a) if pin == 1 else (a, b)
        kwargs = {"polar": True} if polar else {}
        self._add(_TWO_TERMINAL[part.type](**kwargs).endpoints(a, b))
        self.record.shape(part.designator, self._element_boxes[-1], a, b)
        self.label(part_label(part), label_point(a, b, side, LABEL_GAP[part.type]),
                   side or default_side(a, b))

    def pot(self, part: Part, ccw: Point, cw: Point, side: str | None = None,
            wiper_right: bool = False) -> Point:
        """A pot from ``ccw`` to ``cw``; returns where its wiper arrow starts.

        The wiper is drawn on the left of the ccw-to-cw direction, or the right if asked.
        """
        drawn = elm.Potentiometer().endpoints(ccw, cw)
        drawn = self._add(drawn.flip() if wiper_right else drawn)
        self.record.shape(part.designator, self._element_boxes[-1], ccw, cw)
        side = side or default_side(ccw, cw)
        self.label(part_label(part), label_point(ccw, cw, side, LABEL_GAP["pot"]), side)
        wiper = self.pin(drawn, "pot", "wiper")
        self.record.part(part.designator, "pot", {"ccw": ccw, "wiper": wiper, "cw": cw})
        self.record.body(part.designator, ccw, cw)
        return wiper

    def rheostat(self, part: Part, a: Point, b: Point, side: str | None = None,
                 grows: bool = True) -> None:
        """A pot used as a variable resistor from ``a`` to ``b``, its wiper tied to the ``b``
        end: its ccw end at ``a`` when its resistance ``grows`` clockwise, else at ``b``."""
        side = side or default_side(a, b)
        ccw, cw = (a, b) if grows else (b, a)
        wiper = self.pot(part, ccw, cw, side, wiper_right=wiper_side(ccw, cw) == side)
        bend = (b[0], wiper[1]) if abs(a[1] - b[1]) < 1e-9 else (wiper[0], b[1])
        self.wire(wiper, bend, b)

    def switch(self, part: Part, pole: int, common: Point,
               throws: Sequence[Point | None]) -> None:
        """Pole ``pole`` of a switch: open contacts at the common and each wired throw, the
        lever from the common towards the throw of the position the switch rests at (half
        way between the throws where that position joins nothing); the first pole is
        labelled."""
        wired = [t for t in throws if t is not None]
        for at in (common, *wired):
            self._add(elm.Dot(radius=0.09, open=True).at(at))
        pins = [common, *wired]  # the pole as the drawing checker reads it (S1:p1)
        self.record.part(f"{part.designator}:p{pole}", "pole",
                         {str(i): at for i, at in enumerate(pins)})
        rest = form_of(part).throws[self.rests.get(part.designator, 0)]
        aim = throws[rest] if rest is not None and rest < len(throws) else None
        if aim is None:
            aim = (sum(t[0] for t in wired) / len(wired), sum(t[1] for t in wired) / len(wired))
        reach = 0.85  # the lever stops short of the contact, as switches are drawn
        tip = (common[0] + reach * (aim[0] - common[0]), common[1] + reach * (aim[1] - common[1]))
        self._add(elm.Line().endpoints(common, tip))
        self.record.levers[f"{part.designator}:p{pole}"] = (common, tip)
        if pole == 1:
            side = "below" if all(t[1] >= common[1] for t in wired) else "above"
            self.label(part_label(part), (common[0], common[1] + (-0.3 if side == "below"
                                                                    else 0.3)), side)

    def transistor(self, part: Part, family: str, base: Point, mirror: bool = False
                   ) -> dict[str, Point]:
        """A BJT (npn/pnp) or JFET (njf/pjf) with its base or gate at ``base``; pins by name.

        ``mirror`` flips it top to bottom, for a PNP or P-channel part whose emitter or source
        faces the supply above.
        """
        return draw_transistor(self, part, family, base, mirror)

    def opamp(self, part: Part, non_inv: Point, pin_numbers: Mapping[str, str]
              ) -> dict[str, Point]:
        """An op-amp with its + input at ``non_inv``, the - input below; pins by name.

        Its supply pins are drawn to VCC and to ground (or the negative rail, on bipolar
        rails); ``pin_numbers`` gives the package pin
        shown beside each named pin.
        """
        return draw_opamp(self, part, non_inv, pin_numbers)

    def device(self, family: str, at: Point, pin: str | None = None, flip: bool = False
               ) -> tuple[dict[str, Point], Point]:
        """The symbol of a multi-pin ``family`` with ``pin`` (else its first) at ``at``, flipped
        top to bottom if asked, unlabelled: its pins by our names, and its centre."""
        drawn = _DEVICE[family](flip)
        anchor = ANCHORS[family][pin or next(iter(ANCHORS[family]))]
        drawn = self._add(drawn.anchor(anchor).at(at))
        centre = drawn.absanchors["center"]
        pins = {name: self.pin(drawn, family, name) for name in ANCHORS[family]}
        return pins, (centre.x, centre.y)

    def block(self, lower_left: Point, width: float, height: float, lines: Sequence[str]) -> None:
        """A labelled rectangle (a custom stage, or one stage of the kit overview)."""
        x, y = lower_left
        self._add(elm.Rect(corner1=(0, 0), corner2=(width, height)).at((x, y)))
        self.record.blocks.append((x, y, x + width, y + height))
        self.label("\n".join(lines), (x + width / 2, y + height / 2), "centre")

    def chip(self, part: Part, lower_left: Point, width: float, height: float,
             pins: Mapping[str, Point], role: str) -> None:
        """A chip as a labelled rectangle, its pins by name on its edges (a part, unlike a
        block of text)."""
        x, y = lower_left
        self._add(elm.Rect(corner1=(0, 0), corner2=(width, height)).at((x, y)))
        self.label("\n".join([part.designator, part.text, role]),
                   (x + width / 2, y + height / 2), "centre")
        self.record.part(part.designator, part.type, dict(pins))

    # -- connections ---------------------------------------------------------------------------
    def wire(self, *points: Point) -> None:
        """A wire through ``points``, drawn as straight segments."""
        for a, b in zip(points, points[1:], strict=False):
            if a != b:
                self._add(elm.Line().endpoints(a, b))
                self.record.wire(a, b)

    def dot(self, at: Point) -> None:
        """A junction dot where three or more wires meet."""
        self._add(elm.Dot(radius=0.09).at(at))
        self.record.dot(at)

    def terminal(self, at: Point) -> None:
        """A ground symbol at the bottom of the sheet, a VCC rail at the top, else nothing."""
        if at[1] <= GROUND_Y:
            self.ground(at)
        elif at[1] >= RAIL_Y:
            self.rail(at)

    def ground(self, at: Point) -> None:
        self._add(elm.Ground(lead=False).at(at))
        self.record.name(at, "0")

    def rail(self, at: Point, net: str = "vcc") -> None:
        """A supply connection pointing up, labelled with the net's name (VCC, VREF...)."""
        self._add(elm.Vdd(lead=False).at(at))
        self.record.name(at, net)
        self.spots.setdefault(("", net), at)
        self.label(self.net_name(net), (at[0], at[1] + 0.35), "above")

    def negative_rail(self, at: Point, net: str = "vee") -> None:
        """A negative supply connection pointing down, labelled with the net's name on its
        right (below it may run a feedback loop's wire)."""
        self._add(elm.Vss(lead=False).at(at))
        self.record.name(at, net)
        self.spots.setdefault(("", net), at)
        self.label(self.net_name(net), (at[0] + 0.3, at[1] - 0.15), "right")

    def net_label(self, at: Point, net: str, side: str = "below") -> None:
        """A net named at a wire's end without a symbol (a reference fed from elsewhere)."""
        self._add(elm.Dot(radius=0.09).at(at))
        self.record.name(at, net)
        self.spots.setdefault(("", net), at)
        self.label(self.net_name(net), nudge(at, side, 0.25), side)

    def net_name(self, net: str) -> str:
        """How the sheet names a net: its rail label (VCC, V2, 0 V...), else its name."""
        return self.nets.get(net, net.upper())

    def port(self, at: Point, name: str, side: str = "left") -> None:
        """A connection to the next or previous stage: an open circle with its name."""
        self._add(elm.Dot(open=True, radius=0.12).at(at))
        self.record.name(at, PORT_NETS.get(name, name.lower()))
        self.spots.setdefault(("", name.lower()), at)
        self.label(name, nudge(at, side, 0.3), side)

    def probe(self, at: Point, node: str) -> None:
        """Where a builder may probe the stage's own ``node``; nothing is drawn."""
        self.spots.setdefault(("", node), at)

    def ring(self, centre: Point, radius: float) -> None:
        """An open circle (a test point's marker)."""
        self._add(elm.Dot(open=True, radius=radius).at(centre).zorder(1))  # under its number

    def leader(self, node: str, at: Point, end: Point, ring: Point) -> None:
        """A test point's leader from ``at`` on its node to ``end`` at its ring: a line, but
        no wire of the circuit."""
        self._add(elm.Line().endpoints(at, end))
        self.record.leader(node, at, ring)

    # -- text ----------------------------------------------------------------------------------
    def part_label(self, part: Part) -> str:
        return part_label(part)

    def label_room(self, part: Part) -> float:
        return label_room(part)

    def label(self, text: str, at: Point, side: str) -> None:
        self.text(text, at, side=side)

    def text(self, text: str, at: Point, size: float = FONT_SIZE, side: str = "right",
             exact: bool = False) -> None:
        """Text whose ``side`` says where it lies from ``at`` (right: starts at ``at``).

        schemdraw nudges a label a little off its point; ``exact`` keeps it on the point.
        """
        halign, valign = ALIGN.get(side, ("center", "center"))
        if exact:
            at = (at[0] - LABEL_NUDGE, at[1] - LABEL_NUDGE)
        self._add(elm.Label().at(at).label(text, halign=halign, valign=valign, fontsize=size))
        self._text_boxes.append(text_box(text, at, size, halign, valign))
        self.record.texts.append((text, self._text_boxes[-1]))

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
        self.mark_junctions()
        return self._drawing.document(self.title)

    def mark_junctions(self) -> None:
        """A dot wherever three or more lines meet and one ends there (a kind need not know
        that the next branch will join its wire)."""
        for at in junctions(self.record):
            if at not in self.record.dots:
                self.dot(at)

    def _add(self, element: elm.Element) -> elm.Element:
        """Add ``element`` and return it placed: use the returned one, which may be an equal
        element placed earlier in this process (see :func:`adapter.placed_once`)."""
        # Every element gets its own direction: schemdraw would otherwise turn it the way the
        # previously added element pointed. Two-terminal parts are set by their endpoints.
        if not isinstance(element, elm.Element2Term):
            element.theta(0)
        placed = adapter.placed_once(element, self._drawing.place)
        self._drawing.put(placed)
        self._element_boxes.append(placed.bare)
        return placed.element


def render_stage_svg(kit_circuit, stage, plus_pins: Mapping[str, int] | None = None) -> str:
    """The schematic of one stage, drawn by its kind; ``plus_pins`` gives each polarised
    capacitor's + pin from the computed DC (:func:`plus_pins_of`)."""
    return draw_stage(kit_circuit, stage, plus_pins).svg()


def plus_pins_of(stage, orientations: Mapping) -> dict[str, int]:
    """The + pin of each of the stage's polarised capacitors, from the specs' orientations."""
    return {p.designator: orientations[p.designator].plus_pin for p in stage.all_parts()
            if p.designator in orientations}


def draw_stage(kit_circuit, stage, plus_pins: Mapping[str, int] | None = None
               ) -> SchematicSheet:
    """The sheet of one stage, drawn by its kind, with its test points marked."""
    nets = {"supply": kit_circuit.supply_label, **rail_labels(stage.rails)}
    rests = {s.designator: s.rest for s in kit_circuit.switches}
    sheet = SchematicSheet(stage.title, nets=nets, plus_pins=plus_pins, rests=rests,
                           vneg=negative_supply(stage.rails))
    kit_circuit.kind(stage).draw(stage, sheet)
    from kitleaf.render.schematic_probes import mark_test_points  # it draws on a SchematicSheet

    mark_test_points(sheet, kit_circuit.kind(stage).test_points(stage))
    return sheet


def render_overview_svg(kit_circuit, headline: Mapping[str, str], *, narrow: bool = False) -> str:
    """The kit at a glance: signal stages as blocks with their headline numbers, in chain order,
    the power section below them feeding every stage that draws on it. ``narrow`` puts one
    block to a row, for a phone's width."""
    from kitleaf.render.schematic_overview import NARROW_PER_ROW, PER_ROW, draw_overview

    sheet = SchematicSheet("Kit overview")
    draw_overview(sheet, kit_circuit, headline, NARROW_PER_ROW if narrow else PER_ROW)
    return sheet.svg()
