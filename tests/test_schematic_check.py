"""The drawing checker: the nets each drawing shows are the stage's netlist, pin for pin, and
the marks a builder reads (junction dots, words, test-point rings) are where they belong.

Conventions checked (IEEE 315, as the docs name it): wires that join at a T or at a crossing
carry a dot, wires that only cross do not; a part's pins touch only their own nets.
"""

from __future__ import annotations

import random
from pathlib import Path

import pytest
from tests.drawing_variants import random_netlist, variants
from tests.stages.kits import EVERY_KIND, POWER, guide_text, make_kit, stage_block

from kitleaf.circuit.build import build_circuit
from kitleaf.circuit.parts import Part
from kitleaf.errors import SourceSpan
from kitleaf.guide.parse import parse_guide
from kitleaf.render.schematic import SchematicSheet
from kitleaf.render.schematic_check import StageNetlist, check_record, check_stage
from kitleaf.specs.claims import verify
from kitleaf.specs.derive import derive_specs

EVERY = make_kit(*EVERY_KIND)
DEMO = sorted((Path(__file__).parents[1] / "guides").glob("*.md"))


def _part(designator: str, part_type: str = "resistor") -> Part:
    value, model = (None, "1N4148") if part_type == "diode" else (10e3, None)
    return Part(designator, part_type, f"{designator} x", SourceSpan("test.md", 1), value, model)


def _divider(sheet: SchematicSheet) -> StageNetlist:
    """R1 from IN down to a node, R2 from it to ground, the node out: drawn right."""
    sheet.port((0.0, 5.0), "IN")
    sheet.part(_part("R1"), (0.0, 5.0), (2.0, 5.0))
    sheet.wire((2.0, 5.0), (4.0, 5.0))
    sheet.port((4.0, 5.0), "OUT", "right")
    sheet.part(_part("R2"), (3.0, 5.0), (3.0, 2.0), side="right")
    sheet.ground((3.0, 2.0))
    return StageNetlist({"R1": ("in", "out"), "R2": ("out", "0")}, {})


def test_a_correct_drawing_has_no_problems():
    sheet = SchematicSheet()
    netlist = _divider(sheet)
    sheet.mark_junctions()
    assert check_record(sheet.record, netlist) == []


def test_a_t_without_a_dot_is_found():
    sheet = SchematicSheet()
    netlist = _divider(sheet)
    assert check_record(sheet.record, netlist) == ["wires join at (3, 5) without a dot"]


def test_a_short_between_two_nodes_is_found():
    sheet = SchematicSheet()
    netlist = _divider(sheet)
    sheet.wire((0.0, 5.0), (0.0, 6.0), (2.0, 6.0), (2.0, 5.0))  # a wire across R1
    sheet.mark_junctions()
    assert any("joins the nodes in, out" in p for p in check_record(sheet.record, netlist))


def test_a_node_in_two_unjoined_pieces_is_found():
    sheet = SchematicSheet()
    sheet.port((0.0, 5.0), "IN")
    sheet.part(_part("R1"), (0.0, 5.0), (2.0, 5.0))
    sheet.part(_part("R2"), (3.0, 5.0), (5.0, 5.0))  # a gap where a wire belongs
    sheet.port((5.0, 5.0), "OUT", "right")
    netlist = StageNetlist({"R1": ("in", "m"), "R2": ("m", "out")}, {})
    assert any("node m is drawn in 2 pieces" in p for p in check_record(sheet.record, netlist))


def test_wires_that_only_cross_are_not_joined_and_a_dot_there_joins_them():
    sheet = SchematicSheet()
    netlist = _divider(sheet)
    sheet.mark_junctions()
    sheet.wire((1.0, 6.0), (1.0, 4.0))  # across R1's body
    problems = check_record(sheet.record, netlist)
    assert "a wire crosses R1 at (1, 6)-(1, 4)" in problems
    crossing = SchematicSheet()
    netlist = _divider(crossing)
    crossing.mark_junctions()
    crossing.wire((3.5, 6.0), (3.5, 4.0))  # crosses the output wire: not joined
    assert not any("joins the nodes" in p for p in check_record(crossing.record, netlist))
    crossing.dot((3.5, 5.0))
    crossing.ground((3.5, 4.0))  # joined by the dot, it now shorts the output to ground
    assert any("joins the nodes 0, out" in p for p in check_record(crossing.record, netlist))


def test_a_dot_where_nothing_branches_is_found():
    sheet = SchematicSheet()
    netlist = _divider(sheet)
    sheet.mark_junctions()
    sheet.dot((3.5, 5.0))
    assert check_record(sheet.record, netlist) == ["a dot at (3.5, 5) where no three lines meet"]


def test_a_part_missing_or_extra_is_found():
    sheet = SchematicSheet()
    netlist = _divider(sheet)
    sheet.mark_junctions()
    fewer = StageNetlist({"R1": ("in", "out")}, {})
    more = StageNetlist({**netlist.parts, "R3": ("out", "0")}, {})
    assert "R2 is drawn but is no part of the stage's circuit" in check_record(sheet.record, fewer)
    assert "R3 is in the circuit but not drawn" in check_record(sheet.record, more)


def test_a_capacitor_or_diode_drawn_the_other_way_round_is_found():
    # a resistor fits either way; a capacitor's ends are linked to its nodes, a diode's too
    for part_type in ("capacitor", "diode"):
        sheet = SchematicSheet()
        sheet.port((0.0, 5.0), "IN")
        sheet.part(_part("X1", part_type), (2.0, 5.0), (0.0, 5.0))
        sheet.port((2.0, 5.0), "OUT", "right")
        netlist = StageNetlist({"X1": ("in", "out")}, {})
        assert any("joins the nodes in, out" in p for p in check_record(sheet.record, netlist))


def test_overlapping_words_and_words_on_a_wire_are_found():
    sheet = SchematicSheet()
    netlist = _divider(sheet)
    sheet.mark_junctions()
    sheet.text("Fernbrook", (0.4, 5.0), side="centre")
    problems = check_record(sheet.record, netlist)
    assert "a line runs through the words 'Fernbrook'" in problems
    assert any("'Fernbrook'" in p and "overlap" in p for p in problems)


def test_a_test_point_ring_on_another_node_is_found():
    sheet = SchematicSheet()
    netlist = _divider(sheet)
    sheet.mark_junctions()
    sheet.leader("out", (0.0, 5.0), (-0.5, 5.5), (-0.6, 5.6))  # on IN, said to be OUT
    assert check_record(sheet.record, netlist) == [
        "the test-point ring for node out at (-0.6, 5.6) sits on node in"]


def test_a_text_box_stage_is_no_schematic():
    sheet = SchematicSheet()
    sheet.block((0.0, 0.0), 4.0, 3.0, ["R1 10k @ in out"])
    assert check_record(sheet.record, StageNetlist({"R1": ("in", "out")}, {})) == [
        "the stage is drawn as a box of text, not as a schematic"]


VARIANTS = list(variants())


def test_every_kind_has_variants():
    assert {v.kind for v in VARIANTS} == {k for k in _kinds() if k != "custom"}


def _kinds():
    from kitleaf.circuit.stages import KINDS

    return set(KINDS)


@pytest.mark.parametrize("variant", VARIANTS, ids=lambda v: v.id)
def test_every_variant_of_every_kind_draws_its_netlist(variant):
    from kitleaf.errors import CircuitError

    try:
        kit = make_kit(*variant.blocks, lines=variant.kit_lines)
    except CircuitError:  # a kind may refuse some roles alone (one needs another), not all
        assert not variant.every_role, variant.id
        return
    stage = next(s for s in kit.stages if s.id == "stage")
    assert check_stage(kit, stage) == []


@pytest.mark.parametrize("stage", EVERY.stages, ids=lambda s: s.id)
def test_the_every_kind_kit_draws_its_netlist(stage):
    assert check_stage(EVERY, stage) == []


@pytest.mark.parametrize("path", DEMO, ids=lambda p: p.stem)
def test_every_demo_stage_draws_its_netlist(path):
    kit = build_circuit(parse_guide(path))
    assert {s.id: check_stage(kit, s) for s in kit.stages} == {s.id: [] for s in kit.stages}


# Seeded custom netlists of 3 to 25 random parts (and a resistor to ground from each of their
# own nodes): each is drawn as a schematic, not a text box.
NETLISTS = [random_netlist(random.Random(seed), 3 + seed) for seed in range(23)]


@pytest.mark.parametrize("block", NETLISTS, ids=lambda b: f"{b.count('part:')}-parts")
def test_a_generated_custom_netlist_is_drawn_as_its_schematic(block):
    kit = make_kit(POWER, block)
    stage = next(s for s in kit.stages if s.id == "stage")
    assert check_stage(kit, stage) == []


def test_a_netlist_the_placement_cannot_draw_is_a_text_box_with_a_located_warning():
    # an op-amp supplied from VREF and ground, which the placement does not lead to rails
    block = stage_block("odd", "custom", "part: U1A TL072 @ n out out vref 0",
                        "part: R1 100k @ in n", "part: R2 100k @ n 0", "nodes: n")
    guide = parse_guide("test.md", guide_text(POWER, block))
    kit = build_circuit(guide)
    stage = next(s for s in kit.stages if s.id == "odd")
    assert check_stage(kit, stage) == ["the stage is drawn as a box of text, not as a schematic"]
    found = [f for f in verify(guide, kit, derive_specs(guide, kit)).findings
             if f.rule == "custom-drawing"]
    assert [(f.subject, f.span.line) for f in found] == [("odd", stage.span.line)]
    assert "U1A takes its supply from vref and 0, not VCC and ground" in found[0].message


def _switched(sheet: SchematicSheet, throws) -> StageNetlist:
    """IN to a toggle's common; its two throws each to a resistor to ground, drawn right
    (the netlist as stage_netlist reads a switch: a pole's common, then its throws)."""
    from kitleaf.circuit.partline import read_part
    from kitleaf.guide.model import Entry

    switch = read_part(Entry("part", "S1 SPDT", SourceSpan("test.md", 1)), ("switch",), "here")
    sheet.port((0.0, 5.0), "IN")
    sheet.switch(switch, 1, (0.0, 5.0), throws)
    for designator, at in (("R1", (1.0, 6.0)), ("R2", (1.0, 4.0))):
        sheet.part(_part(designator), at, (3.0, at[1]))
        sheet.ground((3.0, at[1]))
    return StageNetlist({"S1:p1": ("in", "a", "b"), "R1": ("a", "0"), "R2": ("b", "0")}, {})


def test_a_switch_is_checked_pole_by_pole():
    sheet = SchematicSheet()
    netlist = _switched(sheet, [(1.0, 6.0), (1.0, 4.0)])
    assert check_record(sheet.record, netlist) == []
    crossed = SchematicSheet()  # its throws drawn the other way round
    netlist = _switched(crossed, [(1.0, 4.0), (1.0, 6.0)])
    assert any("joins the nodes" in p for p in check_record(crossed.record, netlist))


def test_the_netlist_reads_a_switch_pole_from_its_contacts():
    from kitleaf.circuit.resolve import resolve_stage
    from kitleaf.render.schematic_check import stage_netlist

    text = stage_block("clip", "custom", "nodes: d l", "part: R1 4k7 @ in out",
                       "part: S1 SP3T @ out d - l", "part: D1 1N4148 @ d 0",
                       "part: D2 1N4148 @ l 0")
    guide = parse_guide("test.md", "```kit\ntitle: T\ncode: T-1\nsupply: 9 V\n```\n" + text)
    stage = resolve_stage(guide.stages[0])
    assert stage_netlist(stage).parts["S1:p1"] == ("out", "d", "l")  # the unwired throw left out
