"""opamp-spare: the unused half of a dual op-amp, a follower tied to a stated node, drawing
its quiescent current; a half no stage names still draws it."""

from __future__ import annotations

import pytest
from tests.stages.kits import POWER, dc_at, make_kit, stage_block

from kitleaf.engine import solve_dc
from kitleaf.errors import CircuitError

# TL072 supply current per amplifier, 1.4 mA typical (datasheet typical, from memory)
TL072_IQ = 1.4e-3


def drive(opamp: str = "U1A TL072") -> str:
    return stage_block("drive", "opamp-non-inverting", "input-cap: C1 1u", "bias: R1 1M",
                       f"opamp: {opamp}", "feedback: R2 100k", "gain-resistor: R3 4k7",
                       "gain-cap: C2 100u electrolytic", "output-cap: C3 10u")


def spare(*lines: str) -> str:
    return stage_block("spare", "opamp-spare", "opamp: U1B TL072", *lines)


def kit_current(kit) -> float:
    return -solve_dc(kit.netlist()).current("VSUPPLY")


def test_a_follower_sits_at_the_node_its_input_is_tied_to():
    # a unity-gain follower's output equals its + input (Horowitz & Hill 3e, 4.2.3)
    kit = make_kit(POWER, drive(), spare("tie: vref"))
    assert dc_at(kit, "spare.o") == pytest.approx(dc_at(kit, "vref"), abs=0.01)


def test_the_unused_half_draws_its_quiescent_current_declared_or_not():
    alone = make_kit(POWER, drive())
    sources = [e for e in alone.netlist().elements if e.name == "U1B.quiescent"]
    assert len(sources) == 1 and sources[0].p == "vcc" and sources[0].dc == TL072_IQ
    tied = make_kit(POWER, drive(), spare("tie: vref"))
    assert not [e for e in tied.netlist().elements if e.name == "U1B.quiescent"]
    # declared, the half is an op-amp of its own drawing the same quiescent current
    assert kit_current(tied) == pytest.approx(kit_current(alone), rel=0.01)


def test_the_tie_must_be_stated():
    with pytest.raises(CircuitError, match="tie: vref") as err:
        make_kit(POWER, drive(), spare())
    assert err.value.span.line > 0


def test_the_spare_half_has_its_own_current_meter_and_pins():
    kit = make_kit(POWER, drive(), spare("tie: vref"))
    stage = kit.stages[2]
    assert [p.pin for p in kit.kind(stage).test_points(stage)] == ["5", "6", "7", "8"]
    meter = solve_dc(kit.netlist()).current("spare.isupply")
    assert meter == pytest.approx(TL072_IQ, rel=0.01)
