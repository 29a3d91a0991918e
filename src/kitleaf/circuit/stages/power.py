"""The power section: reverse-polarity protection, supply filtering, the mid-rail reference
and the power-on LED. It joins the supply terminal to the rail VCC the other stages use.

Protection is a series diode (its drop is lost from VCC) or a shunt diode across the supply
that conducts, and blows the adapter's fuse or current limit, only when the plug is reversed.

Charge pumps fed from VCC make more rails (``_pump.py``): a doubler the doubled rail (the
reference divider then sits across it), an inverter the negative rail.
"""

from __future__ import annotations

from kitleaf.circuit.drawing import Sheet
from kitleaf.circuit.kind import Option, Role, Stage, StageKind, TestPoint
from kitleaf.circuit.stages import register
from kitleaf.circuit.stages._pump import check_pumps, place_pumps, pump_roles
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
    *pump_roles(),
)
OPTIONS = (
    Option("reverse-protection", ("series", "shunt"), "series",
           help="series: the diode carries the supply current; shunt: it sits across the "
                "supply and only conducts when the plug is reversed"),
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
        place_pumps(stage, wiring)
        top = "v2" if part("doubler") else "vcc"
        wiring.place(part("vref-top"), top, "vref")
        wiring.place(part("vref-bottom"), "vref", "0")
        wiring.place(part("vref-cap"), "vref", "0")
        wiring.place(part("led-resistor"), "vcc", "led")
        wiring.place(part("led"), "led", "0")

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
        check_pumps(stage)

    def test_points(self, stage: Stage) -> tuple[TestPoint, ...]:
        points = [TestPoint("VCC (supply after protection)", "vcc")]
        if stage.part("vref-top"):
            points.append(TestPoint("VREF (mid-rail reference)", "vref"))
        if stage.part("doubler"):
            points.append(TestPoint("V2 (doubled rail)", "v2"))
        if stage.part("inverter"):
            points.append(TestPoint("VEE (negative rail)", "vee"))
        if stage.part("led"):
            points.append(TestPoint(f"{stage.part('led').designator} anode", "led",
                                    stage.part("led").designator, "anode"))
        return tuple(points)

    def draw(self, stage: Stage, sheet: Sheet) -> None:
        from kitleaf.circuit.stages._power_drawing import draw_power

        draw_power(stage, sheet)
