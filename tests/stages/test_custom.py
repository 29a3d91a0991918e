"""custom: a netlist written in the guide builds the same circuit as the equivalent kind."""

from __future__ import annotations

import pytest
from tests.stages.kits import dc_at, gain_at, make_kit, stage_block

from kitleaf.errors import CircuitError

CUSTOM = stage_block(
    "core", "custom", "nodes: b c e", "part: C1 10u @ in b", "part: R1 82k @ vcc b",
    "part: R2 18k @ b 0", "part: Q1 2N3904 @ c b e", "part: R3 4k7 @ vcc c",
    "part: R4 1k @ e 0", "part: C2 10u @ c out", "test-point: Q1 collector = c")
SAME_AS_KIND = stage_block(
    "core", "common-emitter", "input-cap: C1 10u", "bias-top: R1 82k", "bias-bottom: R2 18k",
    "transistor: Q1 2N3904", "collector: R3 4k7", "emitter: R4 1k", "output-cap: C2 10u")


def test_matches_the_common_emitter_kind():
    custom, kind = make_kit(CUSTOM, load="10M"), make_kit(SAME_AS_KIND, load="10M")
    for node in ("core.b", "core.c", "core.e"):
        assert dc_at(custom, node) == pytest.approx(dc_at(kind, node), rel=1e-9)
    assert gain_at(custom, 1e3) == pytest.approx(gain_at(kind, 1e3), rel=1e-9)


def test_input_alias_names_an_own_node():
    block = CUSTOM.replace("@ in b", "@ x b").replace("nodes: b c e", "nodes: b c e x\ninput: x")
    assert gain_at(make_kit(block, load="10M"), 1e3) == pytest.approx(
        gain_at(make_kit(CUSTOM, load="10M"), 1e3), rel=1e-9)


def test_test_points_come_from_the_guide():
    kit = make_kit(CUSTOM)
    points = kit.kind(kit.stages[0]).test_points(kit.stages[0])
    assert [(p.label, p.node) for p in points] == [("Q1 collector", "c")]


def test_jfet_type_comes_from_the_model():
    block = CUSTOM.replace("Q1 2N3904 @ c b e", "Q1 J201 @ c b e")
    parts = {p.designator: p for p in make_kit(block).stages[0].all_parts()}
    assert parts["Q1"].type == "jfet"


class TestBadNetlists:
    def test_unknown_node_names_the_line(self):
        block = CUSTOM.replace("part: R3 4k7 @ vcc c", "part: R3 4k7 @ vcc cc")
        with pytest.raises(CircuitError, match=r"part R3: unknown node 'cc' \(did you mean") as err:
            make_kit(block)
        assert err.value.span.line == 14  # the R3 line

    def test_wrong_pin_count(self):
        block = CUSTOM.replace("Q1 2N3904 @ c b e", "Q1 2N3904 @ c b")
        with pytest.raises(CircuitError, match=r"a bjt joins 3 nodes \(collector base emitter\)"):
            make_kit(block)

    def test_missing_nodes(self):
        block = CUSTOM.replace("part: R4 1k @ e 0", "part: R4 1k")
        with pytest.raises(CircuitError, match=r"name the nodes R4 joins after '@'"):
            make_kit(block)

    def test_nodes_on_an_ordinary_kind_are_refused(self):
        block = SAME_AS_KIND.replace("emitter: R4 1k", "emitter: R4 1k @ e 0")
        with pytest.raises(CircuitError, match=r"drop the '@ ...' nodes"):
            make_kit(block)

    def test_unknown_test_point_node(self):
        block = CUSTOM.replace("= c", "= q")
        with pytest.raises(CircuitError, match=r"test point 'Q1 collector': unknown node 'q'"):
            make_kit(block)

    def test_output_never_joined(self):
        block = CUSTOM.replace("@ c out", "@ c e")
        with pytest.raises(CircuitError, match=r"no part joins the stage's 'out'"):
            make_kit(block)
