"""opamp-inverting: mid-band gain -Rf/Rin, section B pin numbers."""

from __future__ import annotations

import pytest
from tests.stages.kits import POWER, gain_at, make_kit, stage_block


def inv(*extra: str) -> str:
    return stage_block("inv", "opamp-inverting", "input-cap: C1 10u", "input: R1 10k",
                       "opamp: U1B TL072", "feedback: R2 47k", "output-cap: C2 10u", *extra)


def test_gain_is_minus_rf_over_rin():
    # G = -Rf / Rin (Horowitz & Hill, The Art of Electronics 3e, 4.2.1); the 100 ohm low-z
    # source adds to Rin
    kit = make_kit(POWER, inv(), load="10M")
    gain = gain_at(kit, 1e3)
    assert abs(gain) == pytest.approx(47e3 / 10.1e3, rel=0.02)
    assert gain.real < 0


def test_gain_pot_in_series_with_rf():
    kit = make_kit(POWER, inv("gain: VR1 B100k"), load="10M")
    assert abs(gain_at(kit, 1e3, positions={"VR1": 1.0})) == pytest.approx(147e3 / 10.1e3,
                                                                             rel=0.02)


def test_section_b_pins():
    kit = make_kit(POWER, inv())
    stage = kit.stages[1]
    assert [p.pin for p in kit.kind(stage).test_points(stage)] == ["5", "6", "7", "8"]
