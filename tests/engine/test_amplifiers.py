"""Gain stages against hand analysis and the numbers of the trade."""

import math

import numpy as np
import pytest

from kitleaf.engine import (
    Circuit,
    band_gain_db,
    corners,
    gain_db_at,
    get_model,
    phase_deg_at,
    solve_ac,
    solve_dc,
)
from kitleaf.engine.devices.base import VT

from . import reference_circuits as rc

FREQS = np.geomspace(1.0, 1e6, 121)


def analyse(c: Circuit):
    op = solve_dc(c)
    return op, solve_ac(c, op, FREQS, "VIN")


def parallel(a: float, b: float) -> float:
    return a * b / (a + b)


class TestNonInvertingOpAmp:
    def test_gain_is_one_plus_rf_over_rg(self):
        op, ac = analyse(rc.non_inverting("TL072", 56e3, 2.7e3))
        # non-inverting gain 1 + Rf/Rg (op-amp textbook); 56k over 2.7k is ~26.7 dB
        # (common practice, no source)
        assert gain_db_at(ac, "out", 1000.0) == pytest.approx(
            20 * math.log10(1 + 56 / 2.7), abs=0.01)
        assert gain_db_at(ac, "out", 1000.0) == pytest.approx(26.7, abs=0.1)
        # the mid-rail reference biases the output at half the 9 V supply
        assert op.voltage("o") == pytest.approx(4.5, abs=0.01)
        assert op.device("U1A")["region"] == "linear"

    def test_closed_loop_bandwidth(self):
        _, ac = analyse(rc.non_inverting("TL072", 56e3, 2.7e3))
        # closed-loop bandwidth = GBW / noise gain for a one-pole op-amp (op-amp textbook)
        _, high = corners(ac, "out", ref_hz=1000.0)
        assert high == pytest.approx(3e6 / (1 + 56 / 2.7), rel=0.02)


class TestInputBiasCurrent:
    """A follower biased from a 4.5 V reference through 1 Mohm: its input bias current drops
    IB x 1 Mohm across the resistor, and the output follows the input (Ohm's law; the
    input-bias error of op-amp textbooks). The library's IB values are from memory."""

    @staticmethod
    def follower(model: str) -> Circuit:
        c = Circuit().vsource("VCC", "vcc", "0", dc=9.0).vsource("VREF", "ref", "0", dc=4.5)
        c.resistor("RB", "ref", "p", 1e6).opamp("U1", "p", "out", "out", "vcc", "0", model)
        return c.resistor("RL", "out", "0", 10e3)

    @pytest.mark.parametrize("model", ["NE5532", "LM358", "TL072"])
    def test_the_bias_resistor_drops_ib_times_r(self, model):
        ib = get_model(model).get("IB")
        op = solve_dc(self.follower(model))
        # current into the pin flows from the reference through RB: V+ = 4.5 V - IB * 1 Mohm
        # within 10 uV (the finite gain's input current through RIN moves it a few uV), so a
        # TL072's 30 uV shows too
        assert op.voltage("p") == pytest.approx(4.5 - ib * 1e6, abs=1e-5)
        assert op.voltage("out") == pytest.approx(op.voltage("p"), abs=1e-3)

    def test_bipolar_inputs_move_the_bias_by_a_tenth_of_a_volt(self):
        # 200 nA into an NE5532 input (typical, from memory) is 0.2 V across 1 Mohm, and a
        # PNP-input LM358's 45 nA the other way 45 mV: both show on a builder's meter
        assert 4.5 - solve_dc(self.follower("NE5532")).voltage("out") == pytest.approx(0.2,
                                                                                       abs=0.01)
        assert solve_dc(self.follower("LM358")).voltage("out") - 4.5 == pytest.approx(0.045,
                                                                                      abs=0.005)


class TestInvertingOpAmp:
    def test_gain_is_minus_rf_over_rin(self):
        _, ac = analyse(rc.inverting("LM358", 47e3, 10e3))
        # inverting gain -Rf/Rin (op-amp textbook)
        assert gain_db_at(ac, "o", 1000.0) == pytest.approx(20 * math.log10(4.7), abs=0.02)
        assert abs(phase_deg_at(ac, "o", 1000.0)) == pytest.approx(180.0, abs=2.0)

    def test_input_impedance_is_rin(self):
        _, ac = analyse(rc.inverting("LM358", 47e3, 10e3))
        # the inverting input is a virtual ground, so the source sees Rin (op-amp textbook)
        i = int(np.argmin(np.abs(FREQS - 1000.0)))
        assert abs(ac.input_impedance()[i]) == pytest.approx(10e3, rel=0.01)


class TestDegeneratedCommonEmitter:
    def test_gain_matches_hand_analysis(self):
        op, ac = analyse(rc.boost("2N3904"))
        q = op.device("Q1")
        re = VT / q["ic"]
        # degenerated CE: |Av| ~ (RC || RL) / (re + RE), re = VT / IC (Sedra & Smith,
        # Microelectronic Circuits, common-emitter with emitter resistance)
        hand = parallel(10e3, 100e3) / (re + 390.0)
        assert gain_db_at(ac, "out", 1000.0) == pytest.approx(20 * math.log10(hand), abs=0.3)

    def test_classic_boost_gains_about_26_db(self):
        op, ac = analyse(rc.boost("2N5089"))
        # the one-transistor boost (1M over 100k from 9 V, 10k collector, 390R emitter,
        # 100k load) gains roughly 26 dB across the audio band (common practice, no source)
        low, high = band_gain_db(ac, "out", 100.0, 20e3)
        assert 24.5 < low <= high < 27.0
        assert high - low < 0.5
        assert op.device("Q1")["region"] == "active"
        f_low, f_high = corners(ac, "out", ref_hz=1000.0)
        assert f_low < 100.0 and (f_high is None or f_high > 20e3)

    def test_bypass_raises_gain_to_gm_rc(self):
        op, ac = analyse(rc.boost("2N3904", bypass=100e-6))
        q = op.device("Q1")
        # fully bypassed emitter: |Av| = gm (RC || RL || ro) (textbook); rb and rpi loading
        # of the source are negligible here
        hand = q["gm"] * parallel(parallel(10e3, 100e3), q["ro"])
        assert gain_db_at(ac, "out", 10e3) == pytest.approx(20 * math.log10(hand), abs=0.3)


class TestEmitterFollower:
    def test_gain_just_below_one(self):
        c = Circuit().vsource("VCC", "vcc", "0", dc=9.0).vsource("VIN", "in", "0", ac=1.0)
        c.capacitor("C1", "in", "b", 1e-6).resistor("R1", "vcc", "b", 470e3)
        c.resistor("R2", "b", "0", 470e3).bjt("Q1", "vcc", "b", "e", "2N3904")
        c.resistor("RE", "e", "0", 10e3)
        op, ac = analyse(c)
        re = VT / op.device("Q1")["ic"]
        # follower gain RE / (re + RE) (textbook)
        assert abs(ac.transfer("e")[60]) == pytest.approx(10e3 / (re + 10e3), rel=0.005)


class TestJfetCommonSource:
    def test_gain_is_gm_rd(self):
        op, ac = analyse(rc.jfet_common_source("J201"))
        q = op.device("Q1")
        model = {"VTO": -0.8, "BETA": 0.9e-3, "LAMBDA": 4e-3}  # the library's J201
        # square law: gm = 2 sqrt(BETA (1 + LAMBDA VDS) ID) (Shichman-Hodges), bypassed
        # source, gain gm (RD || RL) (textbook)
        gm = 2 * math.sqrt(model["BETA"] * (1 + model["LAMBDA"] * q["vds"]) * q["id"])
        assert q["gm"] == pytest.approx(gm, rel=0.01)
        hand = gm * parallel(6.8e3, 1e6)
        assert gain_db_at(ac, "out", 1000.0) == pytest.approx(20 * math.log10(hand), abs=0.2)
