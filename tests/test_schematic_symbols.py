"""Device symbols face the way the symbol standard draws them, whatever the drawing library does."""

from __future__ import annotations

import pytest
from tests.stages.kits import POWER, make_kit, stage_block

from kitleaf.render.schematic import JfetSymbol, SchematicSheet

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
