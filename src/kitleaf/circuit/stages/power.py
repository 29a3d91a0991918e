"""The power section: reverse-polarity protection, supply filtering, the mid-rail reference
and the power-on LED. It joins the supply terminal to the rail VCC the other stages use.

Protection is a series diode (its drop is lost from VCC) or a shunt diode across the supply
that conducts, and blows the adapter's fuse or current limit, only when the plug is reversed.

A charge pump fed from VCC makes one more rail (kitleaf.circuit.rails): as a doubler the
doubled rail (the reference divider then sits across it), as an inverter the negative rail.
It is the engine's averaged pump: the chip's switch resistance plus the flying capacitor's
1 / (f C), its own quiescent draw, the reservoir capacitor on the new rail, and a doubler's
diodes in series on the way out (each loses its forward drop, as in the chip's usual doubler
circuit).
"""

from __future__ import annotations

from kitleaf.circuit.drawing import Sheet
from kitleaf.circuit.kind import Option, Role, Stage, StageKind, TestPoint
from kitleaf.circuit.stages import register
from kitleaf.circuit.stages._shared import (
    capacitor_role,
    check_part_family,
    require_together,
    resistor_role,
)
from kitleaf.errors import CircuitError

ROLES = (
    Role("reverse-diode", ("diode",), required=False,
         help="reverse-polarity protection diode, e.g. D1 1N5817 (series or shunt)"),
    resistor_role("supply-resistor", "series resistor before the bulk cap (an RC filter)",
                  required=False),
    capacitor_role("bulk-cap", "bulk capacitor from VCC to ground, e.g. C10 100u electrolytic"),
    capacitor_role("filter-cap", "small capacitor beside the bulk cap", required=False),
    resistor_role("vref-top", "upper resistor of the reference divider", required=False),
    resistor_role("vref-bottom", "lower resistor of the reference divider", required=False),
    capacitor_role("vref-cap", "smoothing capacitor on the reference", required=False),
    Role("led", ("led",), required=False, help="power-on indicator, e.g. LED1 red"),
    resistor_role("led-resistor", "series resistor setting the LED current", required=False),
    Role("pump", ("pump",), required=False,
         help="charge-pump chip, e.g. U9 7660, with 'charge-pump: doubler' or 'inverter'"),
    capacitor_role("pump-cap", "the pump's flying capacitor, e.g. C20 10u electrolytic",
                   required=False),
    capacitor_role("reservoir-cap", "on the rail the pump makes, e.g. C21 47u electrolytic",
                   required=False),
    Role("pump-diode", ("diode",), required=False, many=True,
         help="a doubler's diodes, in series from the chip to the doubled rail"),
)
# The pump's parts, needed as soon as a charge pump is chosen.
PUMP_ROLES = ("pump", "pump-cap", "reservoir-cap")
OPTIONS = (
    Option("reverse-protection", ("series", "shunt"), "series",
           help="series: the diode carries the supply current; shunt: it sits across the "
                "supply and only conducts when the plug is reversed"),
    Option("charge-pump", ("none", "doubler", "inverter"), "none",
           help="doubler: a doubled rail (18 V from 9 V); inverter: a negative rail (+-9 V)"),
)


@register
class Power(StageKind):
    name = "power"
    summary = "supply protection and filtering, the VREF divider and the power LED"
    roles = ROLES
    options = OPTIONS
    signal = False
    provides_power = True

    def build(self, stage: Stage, wiring) -> None:
        part = stage.part
        after = self._protection(stage, wiring)
        if part("supply-resistor"):
            wiring.place(part("supply-resistor"), after, "vcc")
        else:
            wiring.internal("vsource", "link", after, "vcc", dc=0.0)  # a plain wire
        wiring.place(part("bulk-cap"), "vcc", "0")
        wiring.place(part("filter-cap"), "vcc", "0")
        self._pump(stage, wiring)
        top = "v2" if stage.options["charge-pump"] == "doubler" else "vcc"
        wiring.place(part("vref-top"), top, "vref")
        wiring.place(part("vref-bottom"), "vref", "0")
        wiring.place(part("vref-cap"), "vref", "0")
        wiring.place(part("led-resistor"), "vcc", "led")
        wiring.place(part("led"), "led", "0")

    def _pump(self, stage: Stage, wiring) -> None:
        """The charge pump from VCC to the rail it makes (nothing when there is none)."""
        mode, part = stage.options["charge-pump"], stage.part
        if mode == "inverter":
            wiring.pump(part("pump"), "vcc", "vneg", -1.0, part("pump-cap"))
            wiring.place(part("reservoir-cap"), "0", "vneg")
        elif mode == "doubler":
            diodes = stage.parts.get("pump-diode", ())
            nodes = [f"pump{i}" for i in range(len(diodes))] + ["v2"]
            wiring.pump(part("pump"), "vcc", nodes[0], 2.0, part("pump-cap"))
            for diode, a, k in zip(diodes, nodes, nodes[1:], strict=False):
                wiring.place(diode, a, k)
            wiring.place(part("reservoir-cap"), "v2", "0")

    def _protection(self, stage: Stage, wiring) -> str:
        """Place the protection diode; returns the node after it."""
        diode = stage.part("reverse-diode")
        if diode is not None and stage.options["reverse-protection"] == "series":
            wiring.place(diode, "supply", "protected")
            return "protected"
        wiring.place(diode, "0", "supply")  # shunt: reverse-biased in normal use
        return "supply"

    def check(self, stage: Stage) -> None:
        require_together(stage, "led", "led-resistor")
        require_together(stage, "led-resistor", "led")
        require_together(stage, "vref-top", "vref-bottom")
        require_together(stage, "vref-bottom", "vref-top")
        require_together(stage, "vref-cap", "vref-top")
        check_part_family(stage, "reverse-diode", stage.part("reverse-diode"), ("diode",))
        check_part_family(stage, "led", stage.part("led"), ("diode",))
        if stage.options["reverse-protection"] == "shunt" and not stage.part("reverse-diode"):
            raise CircuitError(f"stage '{stage.id}': 'reverse-protection: shunt' needs a "
                               "'reverse-diode: ...' part", stage.span)
        self._check_pump(stage)

    def _check_pump(self, stage: Stage) -> None:
        mode = stage.options["charge-pump"]
        check_part_family(stage, "pump", stage.part("pump"), ("pump",))
        for diode in stage.parts.get("pump-diode", ()):
            check_part_family(stage, "pump-diode", diode, ("diode",))
            if mode != "doubler":
                raise CircuitError(f"stage '{stage.id}', role 'pump-diode': only a doubler "
                                   "has diodes on its output; drop it or make the pump "
                                   "'charge-pump: doubler'", diode.span)
        for role in PUMP_ROLES:
            found = stage.part(role)
            if mode == "none" and found is not None:
                raise CircuitError(f"stage '{stage.id}', role '{role}': {found.designator} "
                                   "belongs to a charge pump; add 'charge-pump: doubler' or "
                                   "'charge-pump: inverter'", found.span)
            if mode != "none" and found is None:
                raise CircuitError(f"stage '{stage.id}': 'charge-pump: {mode}' needs a "
                                   f"'{role}:' part", stage.span)

    def test_points(self, stage: Stage) -> tuple[TestPoint, ...]:
        points = [TestPoint("VCC (supply after protection)", "vcc")]
        if stage.part("vref-top"):
            points.append(TestPoint("VREF (mid-rail reference)", "vref"))
        mode = stage.options["charge-pump"]
        if mode != "none":
            rail = ("V2 (doubled rail)", "v2") if mode == "doubler" else \
                ("VEE (negative rail)", "vneg")
            points.append(TestPoint(*rail))
        if stage.part("led"):
            points.append(TestPoint(f"{stage.part('led').designator} anode", "led",
                                    stage.part("led").designator, "anode"))
        return tuple(points)

    def draw(self, stage: Stage, sheet: Sheet) -> None:
        from kitleaf.circuit.stages._power_drawing import draw_power

        draw_power(stage, sheet)
