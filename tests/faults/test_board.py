"""The fault board: the good build as the kit, and faults whose readings the trade knows."""

import numpy as np
import pytest

from kitleaf.engine import Circuit, solve_dc
from kitleaf.faults.board import build_board
from kitleaf.faults.catalogue import catalogue
from kitleaf.faults.inject import faulted_circuit
from kitleaf.faults.probes import BLACK, METER_OHMS

from .kits import kit, readings

SUPPLY, GROUND = 0, 1  # black probe positions, in BLACK's order


def reading(name: str, fault: str, probe: str, black: int = SUPPLY) -> float:
    r = readings(name)
    return float(r.centre[r.index(fault), [p.name for p in r.probes].index(probe), black])


class TestGoodBuild:
    def test_black_probe_places(self):
        assert [b.key for b in BLACK] == ["supply", "ground"]

    @pytest.mark.parametrize("name", ["brookside-boost", "millrace-jfet-boost"])
    def test_low_impedance_points_read_as_the_kit_solves_them(self, name):
        op = solve_dc(kit(name).netlist())
        r = readings(name)
        for i, probe in enumerate(r.probes):
            if probe.name.endswith(("vcc", "emitter", "source", "anode")):
                # the switches of the board add at most a few millivolts
                assert r.centre[0, i, SUPPLY] == pytest.approx(op.voltage(probe.node), abs=5e-3)

    def test_an_input_behind_a_megohm_reads_low_on_a_10_megohm_meter(self):
        op = solve_dc(kit("heron-opamp-boost").netlist())
        # the meter and the 1 Mohm bias resistor (plus the 11k reference) divide the
        # voltage: V Rm / (Rm + R) (textbook voltage divider); the board's stray leakage
        # (1 Gohm at the pin) takes a few millivolts more
        expected = op.voltage("vref") * METER_OHMS / (METER_OHMS + 1e6 + 11e3)
        assert reading("heron-opamp-boost", "good", "gain.u1a.pin3") == pytest.approx(
            expected, abs=0.015)
        assert op.voltage("vref") - expected > 0.35  # hundreds of millivolts low


class TestFaultsTheTradeKnows:
    # what a builder's meter shows for these faults is common practice, no source
    @pytest.mark.parametrize("name", ["brookside-boost", "heron-opamp-boost"])
    def test_no_supply_wire_no_voltages(self, name):
        r = readings(name)
        assert np.all(np.abs(r.centre[r.index("wire:supply")]) < 0.01)

    def test_no_ground_wire_reads_the_supply_from_its_negative_and_nothing_from_the_board(self):
        r = readings("brookside-boost")
        i = r.index("wire:ground")
        assert np.all(np.abs(r.centre[i, :, GROUND]) < 0.05)
        vcc = [p.name for p in r.probes].index("power.vcc")
        assert r.centre[i, vcc, SUPPLY] == pytest.approx(9.0, abs=0.05)

    def test_an_open_led_resistor_leaves_the_anode_near_zero(self):
        # the LED holds the anode at its drop for the open joint's stray nanoamperes
        assert abs(reading("brookside-boost", "R10:open", "power.led1.anode")) < 0.1

    def test_a_flat_battery_lowers_the_rail_by_its_two_volts(self):
        good = reading("brookside-boost", "good", "power.vcc")
        flat = reading("brookside-boost", "supply:flat", "power.vcc")
        assert good - flat == pytest.approx(2.0, abs=0.05)

    def test_an_open_emitter_resistor_cuts_the_collector_current(self):
        # no emitter current: the collector rises to the rail
        assert reading("brookside-boost", "R4:open", "boost.q1.collector") == pytest.approx(
            reading("brookside-boost", "good", "power.vcc"), abs=0.05)


class TestCatalogue:
    def test_what_a_one_transistor_kit_can_go_wrong(self):
        k = kit("brookside-boost")
        faults = catalogue(k, build_board(k))
        kinds = {}
        for f in faults:
            kinds.setdefault(f.kind, []).append(f.key)
        # 2N5088 pinout E-B-C (kitleaf's pinout table): five other orders, one turned round
        q1 = [f for f in faults if f.part == "Q1"]
        assert sum(f.kind in ("pinout", "reversed") for f in q1) == 5
        assert [f.text for f in q1 if f.kind == "reversed"] == [
            "Q1 turned round (C-B-E where the board has E-B-C)"]
        assert sorted(kinds["bridge"]) == ["Q1:bridge:1-2", "Q1:bridge:2-3"]
        assert "D1:fit:cathode-anode" in kinds["reversed"]
        assert {"C10:reversed", "C3:reversed"} <= set(kinds["reversed"])
        assert kinds["wiring"] == ["wire:ground", "wire:supply"]
        assert kinds["supply"] == ["supply:flat", "supply:reversed"]

    def test_every_board_fault_matches_the_same_fault_built_in(self):
        """The switched board against each fault wired directly, meter in place."""
        name = "brookside-boost"
        r = readings(name)
        for i, fault in enumerate(r.faults):
            plain = faulted_circuit(kit(name), fault)
            for j, probe in enumerate(r.probes):
                c = Circuit()
                for e in plain.elements:
                    c.add(e)
                op = solve_dc(c.resistor("METER", probe.node, "0", METER_OHMS))
                # nodes held by nanoamperes (a reversed supply through the protection
                # diode's leakage) feel the board's open switches by a few tens of mV
                assert r.centre[i, j, SUPPLY] == pytest.approx(
                    op.voltage(probe.node), rel=0.02, abs=0.02), (fault.key, probe)
