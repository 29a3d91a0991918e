"""power: the protection drop, the reference at half VCC, the LED current (V - Vf) / R."""

from __future__ import annotations

import pytest
from tests.stages.kits import POWER, make_kit, stage_block

from kitleaf.engine import solve_dc
from kitleaf.errors import CircuitError

VOL = stage_block("vol", "volume", "volume: VR1 A100k")


def op(block: str = POWER):
    return solve_dc(make_kit(block, VOL).netlist())


def test_series_schottky_drops_a_few_tenths():
    # a Schottky rectifier drops 0.1-0.45 V at milliamps (1N5817 datasheet curves, from memory)
    assert 9.0 - op().voltage("vcc") == pytest.approx(0.25, abs=0.2)


def test_shunt_protection_loses_nothing():
    block = POWER.replace("kind: power", "kind: power\nreverse-protection: shunt")
    assert op(block).voltage("vcc") == pytest.approx(9.0, abs=1e-3)


def test_reference_is_half_vcc():
    # equal divider resistors: VREF = VCC / 2 (voltage divider)
    solved = op()
    assert solved.voltage("vref") == pytest.approx(solved.voltage("vcc") / 2, rel=1e-3)


def test_led_current_is_supply_less_forward_drop_over_r():
    # I = (VCC - Vf) / R, Vf of a red LED 1.5-2.1 V at a milliamp or two (from memory)
    solved = op()
    vcc = solved.voltage("vcc")
    current = (vcc - solved.voltage("power.led")) / 4.7e3
    assert (vcc - 2.1) / 4.7e3 < current < (vcc - 1.5) / 4.7e3


def test_led_without_its_resistor_is_refused():
    block = POWER.replace("led-resistor: R92 4k7\n", "")
    with pytest.raises(CircuitError, match=r"'led': LED90 needs a 'led-resistor'") as err:
        make_kit(block, VOL)
    assert err.value.span.line == 15  # the led line


def test_stages_needing_the_reference_need_a_power_stage():
    block = stage_block("inv", "opamp-inverting", "input-cap: C1 10u", "input: R1 10k",
                        "opamp: U1A TL072", "feedback: R2 47k", "output-cap: C2 10u")
    with pytest.raises(CircuitError, match="needs the mid-rail reference"):
        make_kit(block)
