"""Linear circuits (R, C, L, pots, sources) against hand analysis."""

import math

import numpy as np
import pytest

from kitleaf.engine import (
    Circuit,
    band_gain_db,
    corners,
    gain_db_at,
    phase_deg_at,
    solve_ac,
    solve_dc,
    taper_fraction,
)

FREQS = np.geomspace(1.0, 1e6, 61)


class TestDivider:
    def test_voltage_divider(self):
        c = Circuit().vsource("V1", "in", "0", dc=9.0)
        c.resistor("R1", "in", "mid", 10e3).resistor("R2", "mid", "0", 4.7e3)
        op = solve_dc(c)
        # Ohm's law divider, any circuits textbook: Vout = Vin * R2 / (R1 + R2)
        assert op.voltage("mid") == pytest.approx(9.0 * 4.7e3 / 14.7e3, rel=1e-12)
        # SPICE source sign: the branch current of a source feeding the circuit is negative
        assert op.current("V1") == pytest.approx(-9.0 / 14.7e3, rel=1e-12)
        assert op.current("R1") == pytest.approx(9.0 / 14.7e3, rel=1e-12)

    def test_current_source_into_resistor(self):
        c = Circuit().isource("I1", "0", "a", dc=1e-3).resistor("R1", "a", "0", 2.2e3)
        # SPICE convention: current flows from p through the source to n, so into node a
        assert solve_dc(c).voltage("a") == pytest.approx(2.2, rel=1e-12)


class TestRcHighPass:
    def circuit(self) -> Circuit:
        c = Circuit().vsource("VIN", "in", "0", ac=1.0)
        return c.capacitor("C1", "in", "out", 100e-9).resistor("R1", "out", "0", 100e3)

    def test_corner(self):
        c = self.circuit()
        ac = solve_ac(c, solve_dc(c), FREQS, "VIN")
        low, high = corners(ac, "out")
        # first-order RC corner f = 1 / (2 pi R C), any filter textbook; 100 nF into 100 kOhm
        # is ~15.9 Hz (common practice, no source)
        assert low == pytest.approx(1.0 / (2 * math.pi * 100e3 * 100e-9), rel=1e-6)
        assert low == pytest.approx(15.9, abs=0.05)
        assert high is None

    def test_input_impedance(self):
        c = self.circuit()
        ac = solve_ac(c, solve_dc(c), [1000.0], "VIN")
        # series RC impedance Z = R + 1 / (j w C), circuits textbook
        expected = 100e3 + 1.0 / (2j * math.pi * 1000.0 * 100e-9)
        assert ac.input_impedance()[0] == pytest.approx(expected, rel=1e-9)

    def test_gain_at_corner_is_minus_3db(self):
        c = self.circuit()
        ac = solve_ac(c, solve_dc(c), FREQS, "VIN")
        f0 = 1.0 / (2 * math.pi * 100e3 * 100e-9)
        # |H| = 1/sqrt(2) at the corner of a first-order section (filter textbook)
        assert gain_db_at(ac, "out", f0) == pytest.approx(-10 * math.log10(2), abs=1e-9)


class TestRlcSeries:
    def test_resonance(self):
        c = Circuit().vsource("VIN", "in", "0", ac=1.0)
        c.resistor("R1", "in", "a", 100.0).inductor("L1", "a", "b", 0.1)
        c.capacitor("C1", "b", "0", 1e-6)
        ac = solve_ac(c, solve_dc(c), [1.0 / (2 * math.pi * math.sqrt(0.1 * 1e-6))], "VIN")
        # series RLC at f0 = 1 / (2 pi sqrt(LC)) looks purely resistive (circuits textbook)
        assert ac.input_impedance()[0] == pytest.approx(100.0, rel=1e-9)
        # inductor is a short at DC: the capacitor charges to the source (0 V here)
        assert solve_dc(c).voltage("b") == pytest.approx(0.0, abs=1e-12)


class TestPot:
    def test_lin_wiper_divides(self):
        c = Circuit().vsource("V1", "top", "0", dc=9.0)
        c.pot("VR1", "0", "w", "top", 100e3, position=0.25, taper="lin")
        # a linear track at a quarter turn divides by four (definition of linear taper)
        assert solve_dc(c).voltage("w") == pytest.approx(9.0 * 0.25, rel=1e-6)

    def test_audio_taper_mid_point(self):
        # audio taper passes ~10 % at half rotation (common practice, no source)
        assert taper_fraction("log", 0.5) == pytest.approx(0.10, rel=1e-12)
        assert taper_fraction("rlog", 0.5) == pytest.approx(0.90, rel=1e-12)
        assert taper_fraction("log", 0.0) == 0.0 and taper_fraction("log", 1.0) == 1.0

    def test_output_impedance_of_wiper(self):
        c = Circuit().vsource("V1", "top", "0", dc=9.0, ac=1.0)
        c.pot("VR1", "0", "w", "top", 100e3, position=0.5)
        ac = solve_ac(c, solve_dc(c), [1000.0], "V1")
        # Thevenin resistance of a 50k/50k divider is 25k (circuits textbook)
        assert ac.output_impedance("w")[0] == pytest.approx(25e3, rel=1e-6)


class TestMeasurements:
    def test_phase_at_corner(self):
        c = Circuit().vsource("VIN", "in", "0", ac=1.0)
        c.capacitor("C1", "in", "out", 100e-9).resistor("R1", "out", "0", 100e3)
        ac = solve_ac(c, solve_dc(c), FREQS, "VIN")
        # a first-order high-pass leads by 45 degrees at its corner (filter textbook)
        assert phase_deg_at(ac, "out", 1 / (2 * math.pi * 1e-2)) == pytest.approx(45.0, abs=1e-6)

    def test_band_pass_corners(self):
        c = Circuit().vsource("VIN", "in", "0", ac=1.0).inductor("L1", "in", "a", 0.1)
        c.capacitor("C1", "a", "out", 100e-9).resistor("R1", "out", "0", 200.0)
        ac = solve_ac(c, solve_dc(c), FREQS, "VIN")
        low, high = corners(ac, "out")
        # series RLC band-pass: f_low f_high = f0^2 = 1 / (4 pi^2 L C) and bandwidth
        # f_high - f_low = R / (2 pi L) (circuits textbook)
        assert low * high == pytest.approx(1 / (4 * math.pi**2 * 0.1 * 100e-9), rel=1e-8)
        assert high - low == pytest.approx(200.0 / (2 * math.pi * 0.1), rel=1e-8)

    def test_band_gain_of_a_divider_is_flat(self):
        c = Circuit().vsource("VIN", "in", "0", ac=1.0)
        c.resistor("R1", "in", "out", 1e3).resistor("R2", "out", "0", 1e3)
        ac = solve_ac(c, solve_dc(c), FREQS, "VIN")
        low, high = band_gain_db(ac, "out", 20.0, 20e3)
        # a 1:1 divider halves the voltage, -6.02 dB at every frequency (textbook)
        assert low == pytest.approx(-6.0206, abs=1e-4) and high == pytest.approx(low, abs=1e-12)


class TestChargePump:
    def test_averaged_doubler_and_inverter(self):
        # an ideal switched-capacitor converter, averaged: Vout = k Vin - Rout Iout, and
        # without loss the input carries k times the output current (charge conservation;
        # common practice, no source)
        c = Circuit().vsource("V1", "in", "0", dc=9.0)
        c.pump("P1", "in", "v2", "0", 2.0, 50.0).resistor("RL", "v2", "0", 10e3)
        c.pump("P2", "in", "vm", "0", -1.0, 50.0).resistor("RL2", "vm", "0", 4.7e3)
        op = solve_dc(c)
        i2, im = 18.0 / (10e3 + 50.0), -9.0 / (4.7e3 + 50.0)
        assert op.voltage("v2") == pytest.approx(i2 * 10e3, rel=1e-9)
        assert op.voltage("vm") == pytest.approx(im * 4.7e3, rel=1e-9)
        assert op.current("P1") == pytest.approx(-i2, rel=1e-9)  # delivered: negative
        assert -op.current("V1") == pytest.approx(2 * i2 - im, rel=1e-9)
