"""emitter-follower: unity gain and a VBE-shifted DC level, NPN and PNP."""

from __future__ import annotations

import pytest
from tests.stages.kits import dc_at, gain_at, make_kit, stage_block


def ef(transistor: str = "Q1 2N3904", *extra: str) -> str:
    return stage_block("buf", "emitter-follower", "input-cap: C1 10u", "bias-top: R1 100k",
                       "bias-bottom: R2 100k", f"transistor: {transistor}", "emitter: R3 4k7",
                       "output-cap: C2 10u", *extra)


@pytest.mark.parametrize("transistor", ["Q1 2N3904", "Q1 2N3906"])
def test_gain_is_just_under_one(transistor):
    # Av = RE' / (RE' + re) ~ 1 (Horowitz & Hill, The Art of Electronics 3e, 2.2.3)
    kit = make_kit(ef(transistor), load="10M")
    assert 0.95 < abs(gain_at(kit, 1e3)) < 1.0
    assert gain_at(kit, 1e3).real > 0  # non-inverting


def test_npn_emitter_sits_one_vbe_below_the_base():
    kit = make_kit(ef(), load="10M")
    assert dc_at(kit, "buf.b") - dc_at(kit, "buf.e") == pytest.approx(0.65, abs=0.08)


def test_pnp_emitter_sits_one_vbe_above_the_base():
    kit = make_kit(ef("Q1 2N3906"), load="10M")
    assert dc_at(kit, "buf.e") - dc_at(kit, "buf.b") == pytest.approx(0.65, abs=0.08)


def test_collector_stopper_is_optional_and_placed():
    kit = make_kit(ef("Q1 2N3904", "collector: R4 100R"), load="10M")
    assert dc_at(kit, "buf.c") < 9.0
    points = dict((p.label, p.node) for p in kit.kind(kit.stages[0]).test_points(kit.stages[0]))
    assert points["Q1 collector"] == "c"
