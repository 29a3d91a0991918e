"""Which way round a polarised capacitor goes, from the solved DC: the schematic's + mark, the
BOM line and the design rule cap-polarity agree, and follow the DC, not the drawing's layout."""

from __future__ import annotations

from tests.stages.kits import POWER, guide_text, stage_block

from kitleaf.bom import bom_lines, fitting_notes
from kitleaf.circuit.build import build_circuit
from kitleaf.guide.parse import parse_guide
from kitleaf.render.schematic import draw_stage, plus_pins_of
from kitleaf.render.schematic_check import check_stage
from kitleaf.specs.claims import verify
from kitleaf.specs.derive import derive_specs

# A DC-coupled divider holding its output at half the rail, feeding a common-emitter stage
# whose electrolytic input cap has the transistor's base (about 1.5 V) on its far side.
DIVIDER = stage_block("div", "custom", "part: R40 10k @ vcc out", "part: R41 10k @ out 0",
                      "part: R42 100k @ in 0", "part: C40 100n film @ in out")
BOOST = stage_block("boost", "common-emitter", "input-cap: C1 10u electrolytic 25V",
                    "bias-top: R1 470k", "bias-bottom: R2 100k", "transistor: Q1 2N3904",
                    "collector: R3 10k", "emitter: R4 1k", "output-cap: C2 1u film",
                    "pulldown: R5 1M")
# An electrolytic between two nodes that both sit at 0 V.
AT_ZERO = stage_block("hp", "custom", "part: C50 10u electrolytic 25V @ in out",
                      "part: R50 100k @ out 0")


def _solved(*blocks: str):
    guide = parse_guide("test.md", guide_text(*blocks))
    kit = build_circuit(guide)
    return kit, verify(guide, kit, derive_specs(guide, kit))


def test_the_plus_faces_the_higher_side_even_when_it_is_the_input():
    kit, checks = _solved(POWER, DIVIDER, BOOST)
    c1 = checks.orientations["C1"]
    vcc = c1.plus_v * 2  # hand calculation: two equal resistors halve the rail
    assert c1.plus_pin == 0  # the stage input, the first node its kind places it on
    assert abs(c1.plus_v - vcc / 2) < 1e-6 * vcc and 8.0 < vcc < 9.0
    assert c1.minus_v < 2.0  # the base, held by 470k over 100k (hand calculation: ~1.5 V)
    boost = next(s for s in kit.stages if s.id == "boost")
    plus = plus_pins_of(boost, checks.orientations)
    # the kind's own hint puts + on the base side, right for an AC-coupled input only
    assert draw_stage(kit, boost).record.plus["C1"] == 1
    assert draw_stage(kit, boost, plus).record.plus["C1"] == 0
    assert check_stage(kit, boost, plus) == []


def test_the_checker_sees_a_plus_drawn_on_the_lower_side():
    kit, checks = _solved(POWER, DIVIDER, BOOST)
    boost = next(s for s in kit.stages if s.id == "boost")
    drawn_by_hint = draw_stage(kit, boost).record
    from kitleaf.render.schematic_check import plus_problems

    assert plus_problems(drawn_by_hint, plus_pins_of(boost, checks.orientations)) == [
        "C1: its + is drawn at pin 2, but pin 1 sits higher"]


def test_the_bom_line_says_which_way_round():
    kit, checks = _solved(POWER, DIVIDER, BOOST)
    lines = fitting_notes(bom_lines(kit.parts()), checks.orientations)
    c1 = next(line for line in lines if "C1" in line.designators)
    assert c1.fitting[0].startswith("C1: + lead to the 4.4")
    assert "− lead to the 1." in c1.fitting[0]
    film = next(line for line in lines if "C2" in line.designators)
    assert film.fitting == ()


def test_an_electrolytic_at_zero_volts_is_a_finding():
    kit, checks = _solved(POWER, AT_ZERO)
    found = [f for f in checks.findings if f.rule == "cap-polarity"]
    assert [f.subject for f in found] == ["C50"]
    assert "does not say which way it goes" in found[0].message
    assert not checks.orientations["C50"].settled


def test_an_electrolytic_shorted_only_at_one_knob_end_is_no_finding():
    # VR6 across C60 shorts it with the knob at 0 %; every other setting holds it forward,
    # which settles its way round (the + to the VCC side through R60)
    block = stage_block("set", "custom", "nodes: m", "part: R60 10k @ vcc m",
                        "part: VR6 B1k @ m 0 0", "part: C60 22u electrolytic 25V @ m 0",
                        "part: C61 100n film @ in m", "part: R61 100k @ m out",
                        "part: R62 1M @ out 0")
    text = guide_text(POWER, block).replace("source: low-z", "source: low-z\nknob: Set = VR6")
    guide = parse_guide("test.md", text)
    kit = build_circuit(guide)
    checks = verify(guide, kit, derive_specs(guide, kit))
    c60 = checks.orientations["C60"]
    assert c60.setting == "Set at 0 %" and abs(c60.margin) < 0.01  # shorted there
    assert c60.settled and c60.plus_pin == 0
    assert [f for f in checks.findings if f.rule == "cap-polarity"] == []
