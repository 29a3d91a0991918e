"""tone-cut: the cap cuts the highs through the series resistor; clockwise brings them back."""

from __future__ import annotations

import math

import pytest
from tests.stages.kits import gain_at, make_kit, stage_block

TONE = stage_block("tone", "tone-cut", "series: R1 10k", "tone: VR1 B100k", "cap: C1 22n")


def test_pot_at_zero_is_a_low_pass_through_the_series_resistor():
    # single-pole RC: |H| = 1 / sqrt(1 + (f/fc)^2), fc = 1 / (2 pi R C) (same source as the
    # passive filters); R is the series resistor plus the 100 ohm source
    kit = make_kit(TONE, load="10M")
    fc = 1 / (2 * math.pi * 10.1e3 * 22e-9)
    f = 5e3
    expected = 1 / math.sqrt(1 + (f / fc) ** 2)
    assert abs(gain_at(kit, f, positions={"VR1": 0.0})) == pytest.approx(expected, rel=0.02)


def test_clockwise_is_brighter():
    kit = make_kit(TONE, load="10M")
    dark = abs(gain_at(kit, 5e3, positions={"VR1": 0.0}))
    bright = abs(gain_at(kit, 5e3, positions={"VR1": 1.0}))
    assert bright > dark and bright > 0.9
