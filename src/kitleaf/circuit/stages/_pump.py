"""The power section's charge pumps: a doubler making the doubled rail, an inverter making the
negative rail (kitleaf.circuit.rails), either or both, each fed from VCC.

Each is the engine's averaged pump (docs/engine.md): the chip's switch resistance plus its
flying capacitor's 1 / (f C), its own quiescent draw, its reservoir capacitor on the new rail,
and for the doubler the diodes in series on the way out (each loses its forward drop, as in
such a chip's usual doubler circuit).
"""

from __future__ import annotations

from kitleaf.circuit.drawing import GROUND_Y, Sheet
from kitleaf.circuit.kind import Role, Stage
from kitleaf.circuit.stages._shared import capacitor_role, check_part_family, require_together

# The local node of the rail each pump makes, and its ratio to VCC.
PUMPS = {"doubler": ("v2", 2.0), "inverter": ("vee", -1.0)}
NOTES = {"doubler": "a doubled rail, about 2 x VCC (18 V from 9 V)",
         "inverter": "a negative rail, about -VCC (+-9 V)"}


def pump_roles() -> tuple[Role, ...]:
    roles: list[Role] = []
    for pump in PUMPS:
        roles += [
            Role(pump, ("pump",), required=False,
                 help=f"charge-pump chip wired as a {pump}, e.g. U9 7660: {NOTES[pump]}"),
            capacitor_role(f"{pump}-cap", f"the {pump}'s flying capacitor, e.g. C20 10u "
                           "electrolytic", required=False),
            capacitor_role(f"{pump}-reservoir", f"on the rail the {pump} makes, e.g. C21 47u "
                           "electrolytic", required=False),
        ]
    roles.append(Role("doubler-diode", ("diode",), required=False, many=True,
                      help="the doubler's diodes, in series from the chip to the doubled rail"))
    return tuple(roles)


def place_pumps(stage: Stage, wiring) -> None:
    """Each pump the stage has, from VCC to the rail it makes."""
    for pump, (rail, ratio) in PUMPS.items():
        chip = stage.part(pump)
        if chip is None:
            continue
        diodes = stage.parts.get("doubler-diode", ()) if pump == "doubler" else ()
        nodes = [f"{pump}{i}" for i in range(len(diodes))] + [rail]
        wiring.pump(chip, "vcc", nodes[0], ratio, stage.part(f"{pump}-cap"))
        for diode, a, k in zip(diodes, nodes, nodes[1:], strict=False):
            wiring.place(diode, a, k)
        reservoir = stage.part(f"{pump}-reservoir")
        wiring.place(reservoir, *((rail, "0") if ratio > 0 else ("0", rail)))  # + lead up


def check_pumps(stage: Stage) -> None:
    """A pump comes with its flying and reservoir capacitors, and they with it."""
    for pump in PUMPS:
        check_part_family(stage, pump, stage.part(pump), ("pump",))
        for role in (f"{pump}-cap", f"{pump}-reservoir"):
            require_together(stage, pump, role)
            require_together(stage, role, pump)
    require_together(stage, "doubler-diode", "doubler")
    for diode in stage.parts.get("doubler-diode", ()):
        check_part_family(stage, "doubler-diode", diode, ("diode",))


def draw_pumps(stage: Stage, sheet: Sheet, rail_y: float, rail_end: float, x: float,
               next_column) -> tuple[float, float]:
    """Each pump as a chip fed from the rail, its flying cap charged from the rail beside it,
    its output (through the doubler's diodes) to the rail it makes, with the reservoir cap.
    Returns where the rail now ends and the next free column."""
    for pump, (rail, ratio) in PUMPS.items():
        chip = stage.part(pump)
        if chip is None:
            continue
        x += 2.6  # room for the flying cap and its label on the chip's left
        top, out_y = 6.0, 4.5
        # no dot of its own: where the rail runs on past it, the sheet dots the junction
        sheet.wire((rail_end, rail_y), (x, rail_y), (x, top))
        sheet.chip(chip, (x - 0.9, 3.0), 1.8, 3.0,
                   {"inp": (x, top), "out": (x + 0.9, out_y), "ref": (x, 3.0)}, pump)
        sheet.wire((x, 3.0), (x, GROUND_Y))
        sheet.ground((x, GROUND_Y))
        sheet.wire((x, 7.0), (x - 1.6, 7.0))
        sheet.dot((x, 7.0))
        sheet.part(stage.part(f"{pump}-cap"), (x - 1.6, 7.0), (x - 1.6, 5.0), side="left")
        sheet.wire((x - 1.6, 5.0), (x - 1.6, 4.0), (x - 0.9, 4.0))
        end = x + 0.9
        for diode in (stage.parts.get("doubler-diode", ()) if pump == "doubler" else ()):
            sheet.part(diode, (end, out_y), (end + 2.4, out_y))
            end += 2.4
        out = (end + 1.2, out_y)
        sheet.wire((end, out_y), out)
        sheet.dot(out)
        reservoir = stage.part(f"{pump}-reservoir")
        ends = (out, (out[0], GROUND_Y)) if ratio > 0 else ((out[0], GROUND_Y), out)
        sheet.part(reservoir, *ends, side="right")
        sheet.ground((out[0], GROUND_Y))
        label = (next_column(sheet, out[0], [reservoir]) - 0.6, out_y)
        sheet.wire(out, label)
        sheet.net_label(label, rail, "right")
        rail_end, x = x, label[0] + 1.2
    return rail_end, x
