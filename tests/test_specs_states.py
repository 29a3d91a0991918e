"""Kit states that share an operating point: a pot idle at DC moves no bias."""

from __future__ import annotations

from types import SimpleNamespace

import numpy as np
import pytest

from kitleaf.circuit.build import build_circuit
from kitleaf.circuit.chain import INPUT, OUTPUT, SOURCE
from kitleaf.engine import Circuit
from kitleaf.errors import SolveError
from kitleaf.guide import parse_guide
from kitleaf.specs.derive import SolvedKit
from kitleaf.specs.response import REFERENCE_HZ
from kitleaf.specs.sampled import solve_nominal, solve_samples
from kitleaf.specs.solve import KNOB_STEPS, View, idle_at_dc
from specs_kits import DEMOS, GUIDES


def kit_states(name: str) -> SolvedKit:
    return SolvedKit(build_circuit(parse_guide(GUIDES / f"{name}.md")))


def fresh_gain_db(circuit) -> np.ndarray:
    """Gain at 1 kHz per sample from a Newton solve of the circuit's own samples."""
    batch = solve_samples(circuit)
    x = batch.solve(np.array([REFERENCE_HZ]), batch.excitation(SOURCE))[:, 0]
    return 20 * np.log10(np.abs(x[:, batch.row(OUTPUT)] / x[:, batch.row(INPUT)]))


@pytest.mark.parametrize("name", DEMOS)
def test_a_shared_operating_point_gives_the_fresh_solves_gains(name):
    solved = kit_states(name)
    shared = [s for states in solved.sweeps.values() for s in states if s.same_dc]
    assert shared  # every demo has a knob behind a coupling cap
    for state in shared:
        batch = state.samples.batch
        x = batch.solve(np.array([REFERENCE_HZ]), batch.excitation(SOURCE))[:, 0]
        gain = 20 * np.log10(np.abs(x[:, batch.row(OUTPUT)] / x[:, batch.row(INPUT)]))
        # the fresh solve stops within Newton's tolerance of the same point
        assert gain == pytest.approx(fresh_gain_db(state.circuit), abs=1e-6)


def test_a_volume_pot_behind_a_coupling_cap_is_idle_at_dc():
    # A cap blocks DC, so a volume pot after it carries none (common practice, no source).
    solved = kit_states("brookside-boost")
    states = solved.sweeps["VR1"]
    assert [s.same_dc for s in states] == [p != 0.5 for p in KNOB_STEPS]
    assert states[0].samples.batch.x is solved.base.samples.batch.x


def divider(coupled: bool) -> SimpleNamespace:
    """9 V into 10k and a 10k pot to ground, the pot behind a 100n cap if ``coupled``."""
    circuit = Circuit().vsource("VSUPPLY", "vcc", "0", dc=9.0)
    circuit.resistor("R1", "vcc", "a", 10e3, tol=0.05)
    if coupled:
        circuit.capacitor("C1", "a", "b", 100e-9)
    circuit.pot("VR9", "b" if coupled else "a", "w", "0", 10e3)
    return SimpleNamespace(circuit=circuit, nominal=View(solve_nominal(circuit)),
                           samples=View(solve_samples(circuit)))


def test_a_pot_is_idle_only_with_no_volts_across_its_legs():
    # A divider's pot carries the divider current; behind a cap it carries none (Ohm's law).
    assert not idle_at_dc(divider(coupled=False), {"VR9"})
    assert idle_at_dc(divider(coupled=True), {"VR9"})
    assert not idle_at_dc(divider(coupled=True), {"VR8"})  # no such pot: never assumed idle


def test_a_new_supply_is_solved_afresh():
    assert not any(s.same_dc for s in kit_states("brookside-boost").by_supply)


@pytest.mark.parametrize("name", DEMOS)
def test_samples_started_from_a_given_nominal_batch_match_their_own_nominal_start(name):
    # The engine's own nominal start is the reference: the same samples, bit for bit.
    circuit = kit_states(name).base.circuit
    given = solve_samples(circuit, nominal=solve_nominal(circuit))
    own = solve_samples(circuit)
    assert np.array_equal(given.x, own.x)


def test_a_nominal_batch_of_another_circuit_is_refused():
    solved = kit_states("brookside-boost")
    other = next(s for s in solved.by_supply if s is not solved.base)
    with pytest.raises(SolveError, match="another circuit"):
        solve_samples(solved.base.circuit, nominal=other.nominal.batch)
