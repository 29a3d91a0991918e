"""Drawing the power section: the supply entering on the left along the top rail, every
filter, reference and indicator branch dropping from the rail to ground."""

from __future__ import annotations

from kitleaf.circuit.drawing import GROUND_Y, Sheet
from kitleaf.circuit.kind import Stage
from kitleaf.circuit.stages._pump import draw_pumps

RAIL = 8.0
STEP = 2.4  # between the branches hanging off the rail, at least
AIR = 0.4  # between a label's end and the next branch's wire


def draw_power(stage: Stage, sheet: Sheet) -> None:
    part = stage.part
    sheet.net_label((0.0, RAIL), "supply", "above")
    x = _draw_protection(stage, sheet)
    if part("supply-resistor"):
        sheet.part(part("supply-resistor"), (x, RAIL), (x + STEP, RAIL))
        x += STEP
    vcc = (x + 0.8, RAIL)
    sheet.wire((x, RAIL), vcc, (vcc[0], RAIL + 0.7))
    sheet.dot(vcc)
    sheet.rail((vcc[0], RAIL + 0.7))
    rail_end, free_x = vcc[0], vcc[0] + STEP
    for cap in (part("bulk-cap"), part("filter-cap")):
        if cap is not None:
            rail_end, free_x = _branch(sheet, rail_end, free_x, [cap])
    rail_end, free_x = draw_pumps(stage, sheet, RAIL, rail_end, free_x, _next_column)
    # a divider across the doubled rail comes last, so the VCC rail runs on past nothing
    across_v2 = part("doubler") is not None
    if part("vref-top") and not across_v2:
        rail_end, free_x = _draw_reference(stage, sheet, rail_end, free_x)
    if part("led"):
        rail_end, free_x = _branch(sheet, rail_end, free_x, [part("led-resistor"), part("led")])
    if part("vref-top") and across_v2:
        _draw_reference(stage, sheet, rail_end, free_x)


def _next_column(sheet: Sheet, x: float, parts) -> float:
    """The first column right of ``x`` clear of the labels written right of its parts."""
    return x + max(STEP, max(sheet.label_room(p) for p in parts if p is not None) + AIR)


def _draw_protection(stage: Stage, sheet: Sheet) -> float:
    diode = stage.part("reverse-diode")
    if diode is None:
        return 0.0
    if stage.options["reverse-protection"] == "series":
        sheet.part(diode, (0.0, RAIL), (STEP, RAIL))
        return STEP
    sheet.wire((0.0, RAIL), (1.2, RAIL))
    sheet.dot((1.2, RAIL))
    sheet.part(diode, (1.2, GROUND_Y), (1.2, RAIL), side="right")  # cathode to the supply
    sheet.ground((1.2, GROUND_Y))
    return 1.2


def _branch(sheet: Sheet, rail_end: float, x_new: float, parts) -> tuple[float, float]:
    """Parts in series from the rail at ``x_new`` down to ground.

    Returns where the rail now ends and the next free column."""
    sheet.wire((rail_end, RAIL), (x_new, RAIL))  # the sheet dots it once another branch joins
    step = (RAIL - GROUND_Y) / len(parts)
    for i, part in enumerate(parts):
        sheet.part(part, (x_new, RAIL - step * i), (x_new, RAIL - step * (i + 1)), side="right")
    sheet.ground((x_new, GROUND_Y))
    return x_new, _next_column(sheet, x_new, parts)


def _draw_reference(stage: Stage, sheet: Sheet, rail_end: float, x: float) -> tuple[float, float]:
    """The divider down column ``x``, VREF taken from its middle, its cap beside it.

    Returns where the rail now ends and the next free column."""
    if stage.part("doubler"):  # the divider sits across the doubled rail
        sheet.net_label((x, RAIL), "v2", "above")
        x_rail = rail_end
    else:
        sheet.wire((rail_end, RAIL), (x, RAIL))  # dotted by the sheet if the rail runs on
        x_rail = x
    middle = (x, (RAIL + GROUND_Y) / 2)
    sheet.part(stage.part("vref-top"), (x, RAIL), middle, side="right")
    sheet.part(stage.part("vref-bottom"), middle, (x, GROUND_Y), side="right")
    sheet.ground((x, GROUND_Y))
    sheet.dot(middle)
    tap = (_next_column(sheet, x, [stage.part("vref-top"), stage.part("vref-bottom")]), middle[1])
    sheet.wire(middle, tap)
    cap = stage.part("vref-cap")
    if cap is not None:
        sheet.dot(tap)
        sheet.part(cap, tap, (tap[0], GROUND_Y), side="right")
        sheet.ground((tap[0], GROUND_Y))
    end = (_next_column(sheet, tap[0], [cap]) - 1.0 if cap is not None else tap[0] + 1.2, middle[1])
    sheet.wire(tap, end)
    sheet.net_label(end, "vref", "right")
    return x_rail, end[0] + STEP
