"""Devices pushed where a working kit never takes them: collapsed and reversed supplies,
reversed junctions. A faulty build puts them there, and its readings must still make sense."""

import math

import pytest

from kitleaf.engine import Circuit, solve_dc
from kitleaf.engine.devices.base import VT
from kitleaf.engine.devices.bjt import EBO_AMPS
from kitleaf.engine.devices.opamp import SUB_KNEE, SUB_R
from kitleaf.engine.library import BJTS
from kitleaf.engine.models import get_model

OPAMPS = ("TL072", "NE5532", "LM358")


def follower(model: str, supply: float) -> Circuit:
    """A voltage follower of a 1/3-rail divider on a supply of ``supply`` volts."""
    c = Circuit().vsource("VCC", "vcc", "0", dc=supply)
    c.resistor("R1", "vcc", "ref", 20e3).resistor("R2", "ref", "0", 10e3)
    return c.opamp("U1", "ref", "out", "out", "vcc", "0", model).resistor("RL", "out", "0", 10e3)


class TestOpAmpOnACollapsingSupply:
    @pytest.mark.parametrize("model", OPAMPS)
    @pytest.mark.parametrize("supply", [9.0, 3.0, 2.0, 1.0, 0.5, 0.1])
    def test_output_stays_between_the_rails(self, model, supply):
        # an output stage is fed by its own rails: it cannot drive beyond them (common
        # practice, no source)
        vout = solve_dc(follower(model, supply)).voltage("out")
        assert -1e-6 <= vout <= supply + 1e-6

    @pytest.mark.parametrize("model", OPAMPS)
    def test_quiescent_current_fades_below_a_volt_or_two(self, model):
        iq = get_model(model).get("IQ")

        def chip_current(supply: float) -> float:
            c = Circuit().vsource("VCC", "vcc", "0", dc=supply)
            c.opamp("U1", "0", "0", "out", "vcc", "0", model).resistor("RL", "out", "0", 1e6)
            return -solve_dc(c).current("VCC")  # the output's current returns via ground

        # datasheet curves of supply current against supply voltage are flat over the working
        # range and fall toward zero below the minimum supply (from memory)
        assert chip_current(9.0) == pytest.approx(iq, rel=1e-6)
        assert chip_current(0.5) < 0.5 * iq
        assert abs(chip_current(0.05)) < 0.06 * iq

    def test_a_reversed_protection_diode_no_longer_pulls_the_rail_negative(self):
        # a series Schottky fitted backwards: the rail is fed only by its leakage, so it sits
        # near 0 V; a constant quiescent current would drag it toward -10 V (engine history)
        c = Circuit().vsource("VSUP", "sup", "0", dc=9.0).diode("D1", "vcc", "sup", "1N5817")
        c.resistor("R1", "vcc", "ref", 22e3).resistor("R2", "ref", "0", 22e3)
        c.opamp("U1", "ref", "out", "out", "vcc", "0", "LM358")
        op = solve_dc(c.resistor("RL", "out", "0", 10e3))
        assert -0.1 < op.voltage("vcc") < 1.0
        assert min(0.0, op.voltage("vcc")) - 1e-6 <= op.voltage("out") <= max(
            0.0, op.voltage("vcc")) + 1e-6


class TestReversedChip:
    @pytest.mark.parametrize("model", OPAMPS)
    def test_substrate_diode_conducts_a_reversed_supply(self, model):
        # the supply pins swapped: vpos at 0 V, vneg at +9 V behind 100 ohms
        c = Circuit().vsource("VSUP", "sup", "0", dc=9.0).resistor("RS", "sup", "neg", 100.0)
        c.opamp("U1", "0", "0", "out", "0", "neg", model).resistor("RL", "out", "0", 10e3)
        op = solve_dc(c)
        amps = (9.0 - op.voltage("neg")) / 100.0
        # the substrate junction is a diode: forward once its knee is passed, then ohmic
        # (the model's assumption, docs/engine.md); hand solution of 9 = 100 I + knee + R I
        expected = (9.0 - SUB_KNEE) / (100.0 + SUB_R)
        assert amps == pytest.approx(expected, rel=0.01)
        assert 0.0 <= op.voltage("out") <= op.voltage("neg")


class TestJunctionBreakdown:
    @pytest.mark.parametrize("model", [m.name for m in BJTS])
    def test_base_emitter_breaks_down_at_its_rating(self, model):
        bv = get_model(model).get("BVEBO")
        npn = get_model(model).kind == "npn"
        sign = 1.0 if npn else -1.0
        # the emitter driven 15 V beyond the base (past every rating of the library) through
        # 10 kohm, collector open to ground
        c = Circuit().vsource("V1", "v", "0", dc=15.0 * sign).resistor("R1", "v", "e", 10e3)
        c.bjt("Q1", "c", "0", "e", model).resistor("RC", "c", "0", 1e6)
        op = solve_dc(c)
        veb = sign * op.voltage("e")
        amps = (15.0 - veb) / 10e3
        ohmic = amps * (get_model(model).get("RB") + get_model(model).get("RE"))
        # a breakdown junction's exponential knee: V = BV + VT ln(I / I_BV) plus the series
        # resistances' drop, with V(BR)EBO specified at 10 uA of emitter current (datasheet
        # convention, from memory)
        assert veb == pytest.approx(bv + VT * math.log(amps / EBO_AMPS) + ohmic, abs=2e-4)

    def test_led_reversed_across_the_supply_breaks_down(self):
        model = get_model("LED-RED")
        c = Circuit().vsource("V1", "v", "0", dc=9.0).resistor("R1", "v", "k", 4.7e3)
        op = solve_dc(c.diode("D1", "0", "k", model))
        vr = op.voltage("k")
        amps = (9.0 - vr) / 4.7e3
        n_vt = model.get("N") * VT
        # the SPICE diode's breakdown: V = BV + N VT ln(I / IBV) + I RS (any SPICE manual)
        expected = model.get("BV") + n_vt * math.log(amps / model.get("IBV")) + amps * model.get(
            "RS")
        assert vr == pytest.approx(expected, abs=2e-4)
