"""Device equations against their textbook forms: Shockley, Gummel-Poon, Shichman-Hodges."""

import math

import numpy as np
import pytest

from kitleaf.engine import Circuit, DeviceModel, solve_ac, solve_dc
from kitleaf.engine.devices.base import GMIN, VT

IDEAL_DIODE = DeviceModel("test-diode", "diode", {"IS": 1e-14, "N": 1.0})


def forward_voltage(model, amps: float) -> float:
    c = Circuit().isource("I1", "0", "a", dc=amps).diode("D1", "a", "0", model)
    return solve_dc(c).voltage("a")


class TestShockleyDiode:
    def test_shockley_equation(self):
        # Shockley diode equation V = N VT ln(I / IS + 1), any semiconductor devices textbook
        for amps in (1e-6, 1e-3, 1e-2):
            expected = VT * math.log(amps / 1e-14 + 1.0)
            assert forward_voltage(IDEAL_DIODE, amps) == pytest.approx(expected, rel=1e-6)

    def test_sixty_millivolts_per_decade(self):
        # kT/q ln 10 = 59.5 mV per decade of current at 27 degC (textbook)
        step = forward_voltage(IDEAL_DIODE, 1e-2) - forward_voltage(IDEAL_DIODE, 1e-3)
        assert step == pytest.approx(0.0595, abs=0.0005)

    def test_series_resistance_adds_ir(self):
        with_rs = DeviceModel("test-rs", "diode", {"IS": 1e-14, "N": 1.0, "RS": 10.0})
        # series resistance: V = Vj + I RS (SPICE diode model, any SPICE manual)
        assert forward_voltage(with_rs, 1e-2) == pytest.approx(
            forward_voltage(IDEAL_DIODE, 1e-2) + 0.1, rel=1e-6)

    def test_reverse_junction_capacitance(self):
        model = DeviceModel("test-cj", "diode", {"IS": 1e-14, "CJO": 10e-12, "VJ": 0.7,
                                                 "M": 0.5})
        c = Circuit().vsource("VB", "k", "0", dc=5.0).vsource("VIN", "a", "0", ac=1.0)
        c.diode("D1", "a", "k", model)
        ac = solve_ac(c, solve_dc(c), [1e6], "VIN")
        # depletion capacitance C = CJO / (1 - V / VJ) ** M at V = -5 V (textbook)
        cap = 10e-12 / (1.0 + 5.0 / 0.7) ** 0.5
        assert abs(ac.input_impedance()[0]) == pytest.approx(1 / (2 * math.pi * 1e6 * cap),
                                                             rel=1e-5)

    def test_library_leds_light_near_their_rated_voltage(self):
        # red LEDs run near 1.8-2.0 V and green (GaP) near 2.1 V at 10 mA (common practice,
        # no source)
        assert 1.7 < forward_voltage("LED-RED", 10e-3) < 2.1
        assert 1.9 < forward_voltage("LED-GREEN", 10e-3) < 2.3
        # germanium signal diodes conduct at roughly 0.3 V at 1 mA (common practice, no source)
        assert 0.2 < forward_voltage("GE-SIGNAL", 1e-3) < 0.4
        assert forward_voltage("1N34A", 1e-3) == forward_voltage("GE-SIGNAL", 1e-3)

    @pytest.mark.parametrize("model, low, high", [
        # yellow near 2.0 V, blue and white (InGaN) near 3.0-3.2 V at 10 mA (common
        # practice, no source)
        ("LED-YELLOW", 1.9, 2.2), ("LED blue", 2.8, 3.3), ("LED-WHITE", 2.9, 3.4),
    ])
    def test_more_led_colours(self, model, low, high):
        assert low < forward_voltage(model, 10e-3) < high


def biased_bjt(model, vbe: float, vce: float) -> dict:
    c = Circuit().vsource("VB", "b", "0", dc=vbe).vsource("VC", "c", "0", dc=vce)
    return solve_dc(c.bjt("Q1", "c", "b", "0", model)).device("Q1")


class TestGummelPoon:
    def test_ideal_transistor_follows_ebers_moll(self):
        model = DeviceModel("test-npn", "npn", {"IS": 1e-15, "BF": 200.0})
        q = biased_bjt(model, 0.65, 5.0)
        # forward-active Ebers-Moll: IC = IS exp(VBE / VT), IB = IC / BF (textbook), plus the
        # reverse-biased collector junction's -IS and SPICE's gmin across both junctions
        ic = 1e-15 * math.exp(0.65 / VT)
        assert q["ic"] == pytest.approx(ic, rel=1e-6)
        assert q["ib"] == pytest.approx(ic / 200.0 - 1e-15 + GMIN * (0.65 - 4.35), rel=1e-6)
        assert q["gm"] == pytest.approx(ic / VT, rel=1e-5)  # gm = IC / VT (textbook)
        assert q["region"] == "active"

    def test_early_effect(self):
        model = DeviceModel("test-early", "npn", {"IS": 1e-15, "BF": 200.0, "VAF": 50.0})
        low, high = biased_bjt(model, 0.65, 2.0), biased_bjt(model, 0.65, 12.0)
        # Gummel-Poon base charge q1 = 1 / (1 - VBC / VAF): IC grows by (1 + dVCE / (VAF -
        # VBC)) (SPICE Gummel-Poon model, e.g. Getreu, Modeling the Bipolar Transistor)
        assert high["ic"] / low["ic"] == pytest.approx((1 + 11.35 / 50) / (1 + 1.35 / 50),
                                                       rel=1e-6)

    def test_zero_early_voltage_and_knee_current_mean_off(self):
        # SPICE reads VAF = 0 and IKF = 0 as "no Early effect" and "no high-injection
        # roll-off" (SPICE3 user's manual, BJT model parameters, from memory): IC then stays
        # IS exp(VBE / VT) whatever VCE (Ebers-Moll, textbook)
        model = DeviceModel("test-off", "npn", {"IS": 1e-15, "BF": 200.0, "VAF": 0.0,
                                                "VAR": 0.0, "IKF": 0.0, "IKR": 0.0})
        low, high = biased_bjt(model, 0.75, 2.0), biased_bjt(model, 0.75, 12.0)
        assert high["ic"] == pytest.approx(1e-15 * math.exp(0.75 / VT), rel=1e-6)
        assert low["ic"] == pytest.approx(high["ic"], rel=1e-6)
        assert model.get("VAF") == math.inf

    def test_beta_droops_at_low_and_high_current(self):
        low = biased_bjt("2N3904", 0.45, 5.0)
        mid = biased_bjt("2N3904", 0.65, 5.0)
        high = biased_bjt("2N3904", 0.85, 5.0)
        assert low["ic"] < 1e-6 < mid["ic"] < 1e-3 < 20e-3 < high["ic"]
        # hFE falls away at low collector current (ISE recombination) and at high current (IKF
        # high injection), as datasheet hFE curves show (common practice, no source)
        assert low["beta"] < 0.6 * mid["beta"]
        assert high["beta"] < 0.8 * mid["beta"]

    def test_germanium_pnp_leaks(self):
        # a germanium small-signal PNP: VBE about 0.2 V at 1 mA, and with its base open the
        # collector-base leakage, multiplied by hFE, draws 100-500 uA at 9 V (ICEO; common
        # practice, no source)
        q = biased_bjt("AC128", -0.2, -5.0)
        assert 0.3e-3 < -q["ic"] < 3e-3
        c = Circuit().vsource("VCC", "c", "0", dc=-9.0).resistor("RB", "b", "0", 10e6)
        leak = solve_dc(c.bjt("Q1", "c", "b", "0", "AC128")).device("Q1")
        assert 100e-6 < -leak["ic"] < 500e-6
        # with its emitter open the leakage is ICBO alone: a few microamps (from memory)
        c = Circuit().vsource("VCB", "c", "0", dc=-9.0).vsource("VE", "e", "x", dc=0.0)
        c.resistor("RE", "x", "0", 1e12)
        icbo = solve_dc(c.bjt("Q1", "c", "0", "e", "AC128")).device("Q1")
        assert 1e-6 < -icbo["ic"] < 10e-6

    def test_pnp_mirrors_npn(self):
        npn = DeviceModel("test-n", "npn", {"IS": 1e-15, "BF": 150.0, "VAF": 60.0})
        pnp = DeviceModel("test-p", "pnp", {"IS": 1e-15, "BF": 150.0, "VAF": 60.0})
        a, b = biased_bjt(npn, 0.62, 4.0), biased_bjt(pnp, -0.62, -4.0)
        # a PNP is the NPN with every voltage and current reversed (textbook)
        assert b["ic"] == pytest.approx(-a["ic"], rel=1e-9)
        assert b["gm"] == pytest.approx(a["gm"], rel=1e-9)

    def test_saturation_is_reported(self):
        c = Circuit().vsource("VCC", "vcc", "0", dc=9.0).resistor("RB", "vcc", "b", 10e3)
        c.resistor("RC", "vcc", "c", 10e3).bjt("Q1", "c", "b", "0", "2N3904")
        # a base current of ~0.8 mA into a 10k collector load saturates it (textbook)
        assert solve_dc(c).device("Q1")["region"] == "saturated"


def biased_jfet(model, vgs: float, vds: float) -> dict:
    c = Circuit().vsource("VG", "g", "0", dc=vgs).vsource("VD", "d", "0", dc=vds)
    return solve_dc(c.jfet("Q1", "d", "g", "0", model)).device("Q1")


JFET = DeviceModel("test-jfet", "njf", {"VTO": -2.0, "BETA": 1e-3, "LAMBDA": 0.01})


class TestShichmanHodges:
    def test_square_law_in_saturation(self):
        q = biased_jfet(JFET, -1.0, 6.0)
        # Shichman-Hodges: ID = BETA (VGS - VTO)^2 (1 + LAMBDA VDS) (SPICE JFET model,
        # Shichman and Hodges 1968)
        assert q["id"] == pytest.approx(1e-3 * 1.0 * (1 + 0.06), rel=1e-6)
        assert q["gm"] == pytest.approx(2e-3 * 1.0 * 1.06, rel=1e-6)
        assert q["region"] == "saturation"

    def test_triode_region(self):
        q = biased_jfet(JFET, -1.0, 0.4)
        # below pinch-off: ID = BETA (2 (VGS - VTO) VDS - VDS^2) (1 + LAMBDA VDS)
        assert q["id"] == pytest.approx(1e-3 * (2 * 1.0 * 0.4 - 0.16) * 1.004, rel=1e-6)
        assert q["region"] == "ohmic"

    def test_cutoff(self):
        assert biased_jfet(JFET, -2.5, 6.0)["id"] == pytest.approx(0.0, abs=1e-10)

    def test_p_channel_mirrors(self):
        pjf = DeviceModel("test-pjf", "pjf", {"VTO": -2.0, "BETA": 1e-3, "LAMBDA": 0.01})
        # a P-JFET is the N-JFET with every voltage and current reversed (textbook)
        assert biased_jfet(pjf, 1.0, -6.0)["id"] == pytest.approx(-1.06e-3, rel=1e-6)


    @pytest.mark.parametrize("model", ["2N5457", "J201"])
    def test_first_guess_starts_the_channel_working(self, model):
        # Newton's first guess puts the channel on and saturated (vgs = VTO / 2, vds = -VTO):
        # a source follower and a common-source stage then settle in a few steps. From
        # vgs = vgd the channel starts as a bare resistor and the 2N5457 follower's source
        # swings to the drain and back (seven steps: this engine's own count, measured)
        follower = Circuit().vsource("VCC", "vcc", "0", dc=9.0)
        follower.resistor("RA", "vcc", "g", 1e6).resistor("RB", "g", "0", 1e6)
        follower.jfet("Q1", "vcc", "g", "s", model).resistor("RS", "s", "0", 10e3)
        stage = Circuit().vsource("VCC", "vcc", "0", dc=9.0).resistor("RG", "g", "0", 1e6)
        stage.jfet("Q1", "d", "g", "s", model).resistor("RD", "vcc", "d", 4.7e3)
        stage.resistor("RS", "s", "0", 1e3)
        for c in (follower, stage):
            op = solve_dc(c)
            assert op.method == "newton" and op.iterations <= 5

    def test_first_guess_for_a_model_without_depletion(self):
        # VTO >= 0 starts at vgs = 0: the follower still settles by plain Newton, and the
        # source resistor carries the channel and the (here forward) gate current, by
        # Kirchhoff's current law (common practice, no source)
        model = DeviceModel("test-jfet-enh", "njf", {"VTO": 0.5, "BETA": 1e-3, "LAMBDA": 0.01})
        c = Circuit().vsource("VCC", "vcc", "0", dc=9.0)
        c.resistor("RA", "vcc", "g", 1e6).resistor("RB", "g", "0", 1e6)
        c.jfet("Q1", "vcc", "g", "s", model).resistor("RS", "s", "0", 10e3)
        op = solve_dc(c)
        q = op.device("Q1")
        assert op.method == "newton"
        assert op.voltage("s") / 10e3 == pytest.approx(q["id"] + q["ig"], rel=1e-6)

class TestOpAmpMacroModel:
    def open_loop(self, model="TL072", vdiff=0.0):
        c = Circuit().vsource("VCC", "vcc", "0", dc=9.0).vsource("VREF", "r", "0", dc=4.5)
        c.vsource("VIN", "p", "r", dc=vdiff, ac=1.0)
        return c.opamp("U1", "p", "r", "o", "vcc", "0", model).resistor("RL", "o", "0", 1e6)

    def test_output_stays_inside_its_rails(self):
        for vdiff, end in ((0.1, "out_max"), (-0.1, "out_min")):
            u = solve_dc(self.open_loop(vdiff=vdiff)).device("U1")
            # the model's output swing ends SWING_HI/LO short of its own rails (datasheet)
            assert u["vout"] == pytest.approx(u[end], abs=0.001 * 9)
            assert u["region"].startswith("saturated")

    def test_rests_mid_supply_and_has_gain_bandwidth(self):
        c = self.open_loop()
        op = solve_dc(c)
        assert op.voltage("o") == pytest.approx(4.5, abs=0.01)
        ac = solve_ac(c, op, np.array([1.0, 3e6]), "VIN")
        gains = np.abs(ac.transfer("o")) * (1e6 + 100.0) / 1e6  # ROUT into the 1M load
        # one-pole op-amp: DC gain AOL with its pole at GBW / AOL, and |A| = 1 at GBW
        # (datasheet definitions; TL072 typical 200 V/mV and 3 MHz)
        assert gains[0] == pytest.approx(2e5 / math.sqrt(1 + (1 / 15.0) ** 2), rel=1e-3)
        assert gains[1] == pytest.approx(1.0, rel=1e-3)
