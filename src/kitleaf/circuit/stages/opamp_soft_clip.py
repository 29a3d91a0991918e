"""The soft-clipping op-amp drive: a non-inverting stage with diodes across its feedback.

While the output swing stays below a diode drop, the diodes carry next to nothing and the gain
is the small-signal 1 + (Rf + pot) / Rg; beyond it they conduct and shunt the feedback path,
so the gain falls smoothly towards one instead of the output hitting a rail. A series resistor
in the diodes' path softens the knee further.
"""

from __future__ import annotations

from kitleaf.circuit.drawing import GROUND_Y, Point, Sheet
from kitleaf.circuit.kind import Role, Stage, TestPoint
from kitleaf.circuit.parts import Part
from kitleaf.circuit.stages import register
from kitleaf.circuit.stages._opamp import (
    BIASED_INPUT_ROLES,
    ROW_GAP,
    OpampKind,
    draw_biased_input,
    draw_leg,
    draw_opamp_core,
    draw_output,
    feedback_rows,
    place_biased_input,
    row_y,
)
from kitleaf.circuit.stages._shared import (
    capacitor_role,
    check_diodes,
    diode_stack,
    opamp_test_points,
    output_roles,
    place_output,
    resistor_role,
    series,
)

CLIP_ROLES = ("clip-positive", "clip-negative")
ROLES = (
    *BIASED_INPUT_ROLES,
    resistor_role("feedback", "feedback resistor Rf, output to - input"),
    Role("gain", ("pot",), required=False,
         help="pot in series with Rf, wired so clockwise gives more gain"),
    capacitor_role("feedback-cap", "across the feedback path: rolls off the highs",
                   required=False),
    resistor_role("clip-series", "in series with the clipping diodes: a softer knee",
                  required=False),
    Role("clip-positive", ("diode", "led"), required=False, many=True,
         help="diodes in series across the feedback, anode towards the output"),
    Role("clip-negative", ("diode", "led"), required=False, many=True,
         help="diodes in series across the feedback, cathode towards the output"),
    resistor_role("gain-resistor", "Rg, from the - input towards ground; sets the gain"),
    capacitor_role("gain-cap", "in series with Rg to ground: unity gain at DC"),
    *output_roles("the op-amp output"),
)


@register
class OpampSoftClip(OpampKind):
    name = "opamp-soft-clip"
    summary = "op-amp drive with diodes or LEDs across the feedback: soft clipping"
    roles = ROLES
    clips = True

    def build(self, stage: Stage, wiring) -> None:
        part = stage.part
        place_biased_input(stage, wiring)
        series(wiring, [(part("feedback"), True), (part("gain"), True)], "m", "o", "fb")
        wiring.place(part("feedback-cap"), "o", "m")
        knee = "k" if part("clip-series") else "o"
        wiring.place(part("clip-series"), "o", "k")
        diode_stack(wiring, stage.parts.get("clip-positive", ()), knee, "m", "pos", True)
        diode_stack(wiring, stage.parts.get("clip-negative", ()), knee, "m", "neg", False)
        series(wiring, [(part("gain-resistor"), True), (part("gain-cap"), True)], "m", "0", "leg")
        place_output(stage, wiring, "o")

    def check(self, stage: Stage) -> None:
        super().check(stage)
        check_diodes(stage, CLIP_ROLES)

    def test_points(self, stage: Stage) -> tuple[TestPoint, ...]:
        return opamp_test_points(stage.part("opamp"), "p", "m", "o")

    def draw(self, stage: Stage, sheet: Sheet) -> None:
        part = stage.part
        draw_biased_input(sheet, stage)
        stacks = [(stage.parts[r], r == "clip-positive") for r in CLIP_ROLES if stage.parts.get(r)]
        series_part = part("clip-series")
        width = 2.2 * (max(len(s) for s, _ in stacks) + (1 if series_part else 0))
        rows = feedback_rows(stage, True)
        pins, out = draw_opamp_core(sheet, stage, rows, (), min_width=width)
        left, right, top = pins["inv"][0], out[0], row_y(pins, len(rows) - 1)
        bottom = draw_clip_rows(sheet, stacks, series_part, (left, top), right)
        leg = [p for p in (part("gain-resistor"), part("gain-cap")) if p]
        sheet.dot((left, bottom))
        sheet.wire((left, bottom), (left, bottom - 1.0))  # clear of the diodes' labels
        end = (left, min(GROUND_Y, bottom - 1.0 - 2.4 * len(leg)))
        draw_leg(sheet, leg, (left, bottom - 1.0), end)
        draw_output(sheet, stage, out)


def draw_clip_rows(sheet: Sheet, stacks: list[tuple[tuple[Part, ...], bool]],
                   series_part: Part | None, top_left: Point, right: float) -> float:
    """The diode stacks, one row each below the feedback rows, between the - input's column
    (``top_left`` is its lowest feedback junction) and the output's column at ``right``; a
    series resistor sits between the output column and the stacks. Returns the lowest row."""
    left, top = top_left
    ys = [top - ROW_GAP * (i + 1) for i in range(len(stacks))]
    bus = right - 2.2 if series_part else right
    sheet.dot((left, top))
    sheet.dot((right, top))
    sheet.wire((left, top), (left, ys[-1]))
    sheet.wire((right, top), (right, ys[0]))
    for (stack, anode_right), y in zip(stacks, ys, strict=True):
        step = (bus - left) / len(stack)
        for i, diode in enumerate(stack):  # the first diode of a stack at the knee's end
            a, b = (bus - step * (i + 1), y), (bus - step * i, y)
            sheet.part(diode, *((b, a) if anode_right else (a, b)), side="below")
    if series_part is not None:
        sheet.part(series_part, (right, ys[0]), (bus, ys[0]), side="below")
    if len(ys) > 1:
        sheet.wire((bus, ys[0]), (bus, ys[-1]))
        sheet.dot((bus, ys[0]))
        sheet.dot((left, ys[0]))
    return ys[-1]
