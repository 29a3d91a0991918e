"""diode-clipper: the output stops at about one silicon diode drop per diode in the stack."""

from __future__ import annotations

import pytest
from tests.stages.kits import gain_at, make_kit, stage_block

from kitleaf.engine import solve_dc
from kitleaf.errors import CircuitError

CLIP = stage_block("clip", "diode-clipper", "series: R1 2k2", "clip-positive: D1 1N4148",
                   "clip-negative: D2 1N4148", "clip-negative: D3 1N4148")


def output_for(volts: float) -> float:
    circuit = make_kit(CLIP, load="10M").netlist().replaced("VIN", dc=volts)
    return solve_dc(circuit).voltage("output")


def test_clips_at_about_one_diode_drop_positive():
    # a silicon diode conducts a few mA at 0.6-0.75 V (Horowitz & Hill 3e, 1.6.1)
    assert 0.55 < output_for(5.0) < 0.8


def test_two_diodes_clip_at_twice_the_drop_negative():
    assert -1.6 < output_for(-5.0) < -1.1


def test_small_signals_pass():
    kit = make_kit(CLIP, load="10M")
    assert abs(gain_at(kit, 1e3)) == pytest.approx(1.0, rel=0.02)


def test_a_clipper_without_diodes_is_refused():
    with pytest.raises(CircuitError, match="has no diodes"):
        make_kit(stage_block("clip", "diode-clipper", "series: R1 2k2"))


def test_a_clipper_of_one_polarity_clips_that_one_and_passes_the_other():
    # only the positive stack: a diode drop up (Horowitz & Hill 3e, 1.6.1), nothing down
    kit = make_kit(stage_block("clip", "diode-clipper", "series: R1 2k2",
                               "clip-positive: D1 1N4148"), load="10M")
    up = solve_dc(kit.netlist().replaced("VIN", dc=5.0)).voltage("output")
    down = solve_dc(kit.netlist().replaced("VIN", dc=-0.3)).voltage("output")
    assert 0.55 < up < 0.8 and down == pytest.approx(-0.3, abs=0.01)
