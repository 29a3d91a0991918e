"""The whole-kit chain: each stage loads the one before it; source and load are configurable."""

from __future__ import annotations

import math

import numpy as np
import pytest
from tests.stages.kits import (
    EVERY_KIND,
    POWER,
    gain_at,
    guide_text,
    make_kit,
    stage_block,
)

from kitleaf.circuit.chain import LOW_Z, PICKUP
from kitleaf.engine import corners, solve_ac, solve_dc
from kitleaf.errors import CircuitError, KitleafError

HIGH_PASS = stage_block("hp", "high-pass", "series-cap: C1 10n", "shunt-resistor: R1 100k")
LOW_PASS = stage_block("lp", "low-pass", "series-resistor: R2 10k", "shunt-cap: C2 1n")
# an inverting op-amp whose input resistor is the next stage's load: 10k to a virtual ground
INVERTING = stage_block("inv", "opamp-inverting", "input: R3 10k",
                        "input-cap: C3 100u electrolytic",
                        "opamp: U1A TL072", "feedback: R4 10k", "output-cap: C4 10u")


def low_corner(kit) -> float:
    circuit = kit.netlist()
    ac = solve_ac(circuit, solve_dc(circuit), np.geomspace(1, 1e5, 300), source="VIN")
    return corners(ac, "output", ref_hz=2e4)[0]


def rc_corner(r: float, c: float) -> float:
    """f = 1 / (2 pi R C) (Horowitz & Hill, The Art of Electronics 3e, 1.7.1)."""
    return 1 / (2 * math.pi * r * c)


class TestLoading:
    def test_high_pass_alone_corners_at_its_own_rc(self):
        kit = make_kit(HIGH_PASS, load="100M")
        assert low_corner(kit) == pytest.approx(rc_corner(100e3 + 100, 10e-9), rel=0.01)

    def test_high_pass_into_a_low_impedance_stage_corners_higher(self):
        # the next stage's 10k input (to a virtual ground) is in parallel with the 100k
        kit = make_kit(POWER, HIGH_PASS, INVERTING, load="100M")
        combined = 1 / (1 / 100e3 + 1 / 10e3)
        assert low_corner(kit) == pytest.approx(rc_corner(combined + 100, 10e-9), rel=0.03)
        assert low_corner(kit) > rc_corner(100e3, 10e-9) * 5

    def test_low_pass_driven_by_a_given_source_resistance(self):
        # the source's resistance is in series with the low-pass resistor
        kit = make_kit(LOW_PASS, source="40k", load="100M")
        circuit = kit.netlist()
        ac = solve_ac(circuit, solve_dc(circuit), np.geomspace(10, 1e6, 300), source="VIN")
        high = corners(ac, "output", ref_hz=20.0)[1]
        assert high == pytest.approx(rc_corner(50e3, 1e-9), rel=0.01)

    def test_load_resistance_divides_a_volume_pot(self):
        # wiper at cw: source 100 ohm, pot 100k and a 100k load in parallel (divider)
        vol = stage_block("vol", "volume", "volume: VR1 B100k")
        kit = make_kit(vol, load="100k")
        expected = 50e3 / (100 + 50e3)
        assert abs(gain_at(kit, 100, positions={"VR1": 1.0})) == pytest.approx(expected, rel=0.01)


class TestSource:
    def test_default_source_is_the_pickup(self):
        kit = make_kit(HIGH_PASS, source="pickup")
        assert kit.source == PICKUP and make_kit(HIGH_PASS, source="low-z").source == LOW_Z

    def test_pickup_resonance_peaks_into_a_high_impedance_load(self):
        # series L with parallel C: f0 = 1 / (2 pi sqrt(L C)) (any circuits text, LC resonance)
        vol = stage_block("vol", "volume", "volume: VR1 B1M")
        kit = make_kit(vol, source="pickup", load="10M")
        f0 = 1 / (2 * math.pi * math.sqrt(PICKUP.inductance * PICKUP.capacitance))
        circuit = kit.netlist({"VR1": 1.0})
        freqs = np.geomspace(500, 2e4, 600)
        ac = solve_ac(circuit, solve_dc(circuit), freqs, source="VIN")
        peak = freqs[np.argmax(abs(ac.transfer("output")))]
        assert peak == pytest.approx(f0, rel=0.1)

    def test_a_low_z_source_is_flat(self):
        vol = stage_block("vol", "volume", "volume: VR1 B1M")
        kit = make_kit(vol, source="low-z", load="10M")
        ratio = abs(gain_at(kit, 5e3, positions={"VR1": 1.0})) / abs(
            gain_at(kit, 100, positions={"VR1": 1.0}))
        assert ratio == pytest.approx(1.0, abs=1e-3)


class TestNodeOf:
    def test_chain_connections_and_private_nodes(self):
        kit = make_kit(POWER, HIGH_PASS, LOW_PASS)
        hp, lp = (s for s in kit.signal_stages)
        assert kit.node_of(hp, "in") == "input" and kit.node_of(hp, "out") == "hp.out"
        assert kit.node_of(lp, "in") == "hp.out" and kit.node_of(lp, "out") == "output"
        assert kit.node_of(lp, "vcc") == "vcc" and kit.node_of(lp, "0") == "0"
        assert kit.node_of(lp, "mid") == "lp.mid"

    def test_every_test_point_names_a_node_of_the_solved_circuit(self):
        # a node_of name the engine does not know would read as no voltage at all
        kit = make_kit(*EVERY_KIND)
        op = solve_dc(kit.netlist())
        for stage in kit.stages:
            for tp in kit.kind(stage).test_points(stage):
                assert math.isfinite(op.voltage(kit.node_of(stage, tp.node))), tp.label


# An output cap straight into the next stage's input cap: a node only capacitors reach, whose DC
# voltage nothing sets (nodal analysis needs a DC path from every node to ground; common
# practice, no source).
BOOST = stage_block("boost", "common-emitter", "input-cap: C5 100n", "bias-top: R5 470k",
                    "bias-bottom: R6 100k", "transistor: Q1 2N5089", "collector: R7 10k",
                    "emitter: R8 1k", "output-cap: C6 1u film")


def line_of(start: str, *blocks: str) -> int:
    """The 1-based line of the guide made of ``blocks`` that starts with ``start``."""
    lines = guide_text(*blocks).splitlines()
    return 1 + next(i for i, line in enumerate(lines) if line.startswith(start))


class TestDcPaths:
    def test_coupling_caps_in_a_row_name_the_output_cap_and_the_remedy(self):
        with pytest.raises(CircuitError) as caught:
            make_kit(POWER, BOOST, HIGH_PASS)
        error = caught.value
        assert error.span.line == line_of("output-cap: C6", POWER, BOOST, HIGH_PASS)
        assert "C6 (output-cap of stage 'boost') meets C1 (series-cap of stage 'hp')" \
            in error.message
        assert "pulldown: R93 1M" in error.message

    def test_a_pulldown_gives_the_junction_its_path(self):
        fixed = BOOST.replace("output-cap: C6 1u film", "output-cap: C6 1u film\npulldown: R9 1M")
        assert len(make_kit(POWER, fixed, HIGH_PASS).signal_stages) == 2

    def test_a_floating_node_inside_a_stage_is_located_at_its_part(self):
        core = stage_block("core", "custom", "nodes: b", "part: C20 100n @ in b",
                           "part: C21 100n @ b out", "part: R20 100k @ out 0")
        with pytest.raises(KitleafError) as caught:
            make_kit(core)
        assert caught.value.span is not None and "'core.b'" in caught.value.message
        assert caught.value.span.line == line_of("part: C20", core)
