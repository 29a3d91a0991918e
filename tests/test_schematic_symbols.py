"""Device symbols face the way the symbol standard draws them, whatever the drawing library does."""

from __future__ import annotations

import itertools
import re
from pathlib import Path

import pytest
from tests.stages.kits import EVERY_KIND, POWER, make_kit, stage_block

from kitleaf.circuit.build import build_circuit
from kitleaf.guide.parse import parse_guide
from kitleaf.render.schematic import JfetSymbol, SchematicSheet, render_stage_svg

EVERY = make_kit(*EVERY_KIND)
SIGN_PT = 10.0  # strokes of a + or - sign are shorter; wires and leads are longer

# IEEE 315 (as IEC 60617): a JFET's gate arrow points from P to N material, so into an N
# channel and out of a P channel.


@pytest.mark.parametrize(("channel", "points_into_channel"), [("n", True), ("p", False)])
def test_the_jfet_gate_arrow_follows_the_channel_type(channel, points_into_channel):
    symbol = JfetSymbol(channel)
    bar_x = symbol.segments[0].path[2][0]
    arrow = symbol.segments[-1]
    assert arrow.arrow == "->"
    tail, head = arrow.path[0][0], arrow.path[-1][0]
    assert (abs(head - bar_x) < abs(tail - bar_x)) is points_into_channel


def _drawn_pins(block: str) -> dict[str, tuple[float, float]]:
    kit = make_kit(POWER, block)
    stage = next(s for s in kit.stages if s.kind != "power")
    sheet = SchematicSheet(stage.title)
    kit.kind(stage).draw(stage, sheet)
    return {pin: at for (designator, pin), at in sheet.spots.items() if designator == "Q1"}


PNP_GAIN = stage_block("boost", "common-emitter", "input-cap: C1 100n film", "bias-top: R1 470k",
                       "bias-bottom: R2 100k", "collector: R3 10k", "emitter: R4 1k",
                       "output-cap: C2 1u film", "transistor: Q1 2N3906")
NPN_GAIN = PNP_GAIN.replace("2N3906", "2N3904")
PNP_FOLLOWER = stage_block("buffer", "emitter-follower", "input-cap: C1 100n film",
                           "bias-top: R1 470k", "bias-bottom: R2 470k", "emitter: R3 4k7",
                           "output-cap: C2 1u film", "transistor: Q1 2N3906")


@pytest.mark.parametrize("block", [PNP_GAIN, PNP_FOLLOWER], ids=["common-emitter", "follower"])
def test_a_pnp_is_drawn_emitter_up_towards_the_supply(block):
    # A PNP on a positive rail has its emitter towards the supply; drawn the other way up, the
    # wire from the emitter resistor runs through the symbol from collector to emitter.
    pins = _drawn_pins(block)
    assert pins["emitter"][1] > pins["base"][1] > pins["collector"][1]


def test_an_npn_stays_collector_up():
    pins = _drawn_pins(NPN_GAIN)
    assert pins["collector"][1] > pins["base"][1] > pins["emitter"][1]


def straight_segments(svg: str) -> list[tuple[int, tuple[float, float, float, float]]]:
    """Every horizontal or vertical stroke of the drawing's unfilled paths, as (which path,
    (x0, y0, x1, y1)); filled paths are arrowheads, whose back edge is no wire."""
    found = []
    paths = re.findall(r'<path d="([^"]*)" style="([^"]*)"', svg)
    for index, (d, style) in enumerate(paths):
        if "fill:none" not in style:
            continue
        # only moves and lines: any other command (an arc, a curve) ends the run of points
        for run in re.findall(r"M([-\d.,\sL]*)", d):
            numbers = [float(n) for n in re.findall(r"-?\d+(?:\.\d*)?", run)]
            points = list(zip(numbers[::2], numbers[1::2], strict=False))
            for (x0, y0), (x1, y1) in itertools.pairwise(points):
                if (x0 == x1) != (y0 == y1):
                    found.append((index, (x0, y0, x1, y1)))
    return found


def crossings(svg: str) -> list[tuple[float, float]]:
    """Points where a vertical stroke passes through the inside of a horizontal one of another
    path: two wires (or a wire and a part) crossing without meeting at either's end. A sign's
    strokes (an op-amp's +, under 10 pt long) cross each other by design."""
    segments = straight_segments(svg)
    vertical = [(i, s) for i, s in segments if s[0] == s[2]]
    horizontal = [(i, s) for i, s in segments if s[1] == s[3]]
    found = []
    for i, (x, ya, _, yb) in vertical:
        for j, (xa, y, xb, _) in horizontal:
            inside_h = min(xa, xb) + 0.5 < x < max(xa, xb) - 0.5
            inside_v = min(ya, yb) + 0.5 < y < max(ya, yb) - 0.5
            signs = abs(yb - ya) < SIGN_PT and abs(xb - xa) < SIGN_PT
            if i != j and inside_h and inside_v and not signs:
                found.append((x, y))
    return found


def test_the_pulldown_stands_clear_of_the_bypass_network():
    # Drawn beside the output cap, the pulldown's lead to ground crossed the gain pot's tie to
    # the bypass cap.
    block = stage_block("boost", "common-emitter", "input-cap: C1 100n film", "bias-top: R1 470k",
                        "bias-bottom: R2 100k", "collector: R3 10k", "emitter: R4 1k",
                        "bypass-cap: C3 22u electrolytic", "gain: VR1 B10k",
                        "output-cap: C2 1u film", "pulldown: R5 1M", "transistor: Q1 2N3904")
    kit = make_kit(POWER, block)
    stage = next(s for s in kit.stages if s.kind != "power")
    assert crossings(render_stage_svg(kit, stage)) == []


@pytest.mark.parametrize("stage", [s for s in EVERY.stages], ids=lambda s: s.id)
def test_no_stage_of_any_kind_draws_a_wire_through_another(stage):
    assert crossings(render_stage_svg(EVERY, stage)) == []


DEMO = sorted((Path(__file__).parents[1] / "guides").glob("*.md"))


@pytest.mark.parametrize("path", DEMO, ids=lambda p: p.stem)
def test_no_demo_stage_draws_a_wire_through_another(path):
    kit = build_circuit(parse_guide(path))
    for stage in kit.stages:
        assert crossings(render_stage_svg(kit, stage)) == [], stage.id
