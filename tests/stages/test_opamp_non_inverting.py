"""opamp-non-inverting: mid-band gain 1 + Rf/Rg, output biased at the reference."""

from __future__ import annotations

import pytest
from tests.stages.kits import POWER, dc_at, gain_at, make_kit, stage_block


def drive(*extra: str) -> str:
    return stage_block("drive", "opamp-non-inverting", "input-cap: C1 1u", "bias: R1 1M",
                       "opamp: U1A TL072", "feedback: R2 100k", "gain-resistor: R3 4k7",
                       "gain-cap: C2 100u electrolytic", "output-cap: C3 10u", *extra)


def test_gain_is_one_plus_rf_over_rg():
    # G = 1 + Rf / Rg (Horowitz & Hill, The Art of Electronics 3e, 4.2.2)
    kit = make_kit(POWER, drive(), load="10M")
    assert abs(gain_at(kit, 1e3)) == pytest.approx(1 + 100e3 / 4.7e3, rel=0.02)


def test_gain_pot_adds_to_rg_and_turns_up_clockwise():
    kit = make_kit(POWER, drive("gain: VR1 B100k"), load="10M")
    full = abs(gain_at(kit, 1e3, positions={"VR1": 1.0}))
    low = abs(gain_at(kit, 1e3, positions={"VR1": 0.0}))
    assert full == pytest.approx(1 + 100e3 / 4.7e3, rel=0.02)
    assert low == pytest.approx(1 + 100e3 / 104.7e3, rel=0.02)


def test_output_and_inputs_sit_at_the_reference():
    kit = make_kit(POWER, drive(), load="10M")
    vref = dc_at(kit, "vref")
    for node in ("drive.p", "drive.m", "drive.o"):
        assert dc_at(kit, node) == pytest.approx(vref, abs=0.02)


def test_test_points_use_section_a_pins():
    kit = make_kit(POWER, drive())
    stage = kit.stages[1]
    pins = [p.pin for p in kit.kind(stage).test_points(stage)]
    assert pins == ["3", "2", "1", "8"]  # TL072 section A (datasheet pinout, from memory)
