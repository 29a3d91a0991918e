"""A fault whose DC operating point cannot be found is set aside by name; the rest still rank."""

from __future__ import annotations

from pathlib import Path

from kitleaf.circuit.build import build_circuit
from kitleaf.faults.report import unsolved_text
from kitleaf.faults.solve import solve_faults
from kitleaf.guide import parse_guide

BIRCH = Path(__file__).parent / "guides" / "birch-jfet-inverter.md"


def test_a_kit_with_an_unsolvable_fault_keeps_every_other_fault():
    # A dual op-amp turned in its socket puts the model where it finds no operating point;
    # the whole batch used to fail, and with it the guide's build.
    readings = solve_faults(build_circuit(parse_guide(BIRCH)))
    keys = [f.key for f in readings.faults]
    assert keys[0] == "good"
    assert readings.centre.shape[0] == len(keys) > 40
    assert len(readings.unsolved) <= 3
    assert not set(keys) & {f.key for f in readings.unsolved}
    if readings.unsolved:
        assert unsolved_text(readings).startswith("Not ranked:")
