"""The soft-clipping op-amp drive: a non-inverting stage with diodes across its feedback.

While the output swing stays below a diode drop, the diodes carry next to nothing and the gain
is the small-signal 1 + (Rf + pot) / Rg; beyond it they conduct and shunt the feedback path,
so the gain falls smoothly towards one instead of the output hitting a rail. A series resistor
in the diodes' path softens the knee further.
"""

from __future__ import annotations

from kitleaf.circuit.drawing import GROUND_Y, Sheet
from kitleaf.circuit.kind import Role, Stage, TestPoint
from kitleaf.circuit.stages import register
from kitleaf.circuit.stages._clip_drawing import clip_width, draw_clip_network
from kitleaf.circuit.stages._opamp import (
    BIASED_INPUT_ROLES,
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
    check_part_family,
    diode_stack,
    opamp_test_points,
    output_roles,
    place_output,
    resistor_role,
    series,
)
from kitleaf.circuit.switches import form_of, require_form
from kitleaf.errors import CircuitError

CLIP_ROLES = ("clip-positive", "clip-negative")
ALT_ROLES = ("alt-positive", "alt-negative")
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
    Role("clip-switch", ("switch",), required=False,
         help="chooses the clipping: its first throw takes the clip-positive and "
              "clip-negative diodes, its second the alt- ones; a throw or position with no "
              "diodes leaves the drive unclipped"),
    Role("alt-positive", ("diode", "led"), required=False, many=True,
         help="the second pair's diodes, anode towards the output, on the switch's second throw"),
    Role("alt-negative", ("diode", "led"), required=False, many=True,
         help="the second pair's diodes, cathode towards the output, on the switch's second "
              "throw"),
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
        first, second = knee, None
        switch = part("clip-switch")
        if switch is not None:
            first, second = "t1", "t2" if any(stage.parts.get(r) for r in ALT_ROLES) else None
            throws = [first, second] + [None] * form_of(switch).throw_count
            wiring.place(switch, knee, *throws[:form_of(switch).throw_count])
        for role, top, prefix in ((CLIP_ROLES[0], first, "pos"), (CLIP_ROLES[1], first, "neg"),
                                  (ALT_ROLES[0], second, "apos"), (ALT_ROLES[1], second, "aneg")):
            diode_stack(wiring, stage.parts.get(role, ()), top, "m", prefix, "positive" in role)
        series(wiring, [(part("gain-resistor"), True), (part("gain-cap"), True)], "m", "0", "leg")
        place_output(stage, wiring, "o")

    def check(self, stage: Stage) -> None:
        super().check(stage)
        check_diodes(stage, CLIP_ROLES)
        switch = stage.part("clip-switch")
        for role in ALT_ROLES:
            for part in stage.parts.get(role, ()):
                check_part_family(stage, role, part, ("diode",))
                if switch is None:
                    raise CircuitError(
                        f"stage '{stage.id}', role '{role}': {part.designator} is a second "
                        "clipping pair, which only a switch can choose; add a line "
                        "'clip-switch: S1 SPDT' or move it to a clip- role", part.span)
        if switch is not None and any(stage.parts.get(r) for r in ALT_ROLES):
            require_form(switch, f"stage '{stage.id}', role 'clip-switch'",
                         max(2, form_of(switch).throw_count))

    def test_points(self, stage: Stage) -> tuple[TestPoint, ...]:
        return opamp_test_points(stage.part("opamp"), "p", "m", "o")

    def draw(self, stage: Stage, sheet: Sheet) -> None:
        part = stage.part
        draw_biased_input(sheet, stage)
        groups = [[(stage.parts[r], "positive" in r) for r in roles if stage.parts.get(r)]
                  for roles in (CLIP_ROLES, ALT_ROLES)]
        switch, series_part = part("clip-switch"), part("clip-series")
        width = clip_width(groups, series_part, switch is not None)
        rows = feedback_rows(stage, True)
        pins, out = draw_opamp_core(sheet, stage, rows, (), min_width=width)
        top = (pins["inv"][0], row_y(pins, len(rows) - 1))
        bottom = draw_clip_network(sheet, groups, series_part, switch, top, out[0])
        leg = [p for p in (part("gain-resistor"), part("gain-cap")) if p]
        left = top[0]
        sheet.dot((left, bottom))
        sheet.wire((left, bottom), (left, bottom - 1.4))  # clear of the diodes' labels
        end = (left, min(GROUND_Y, bottom - 1.4 - 2.4 * len(leg)))
        draw_leg(sheet, leg, (left, bottom - 1.4), end)
        draw_output(sheet, stage, out)
