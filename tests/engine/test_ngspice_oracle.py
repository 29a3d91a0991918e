"""The engine against Debian's ngspice on the same circuits (exported with spice_export).

Tolerances (the engine's contract): DC node voltages within 1 % or 5 mV, gain within 0.1 dB,
corners within 2 %, input impedance within 2 %.
"""

from __future__ import annotations

import numpy as np
import pytest

from kitleaf.engine import Circuit, corners, solve_ac, solve_dc

from . import reference_circuits as rc
from .ngspice_run import ac_sweep, half_power_corners, operating_point, require_ngspice

pytestmark = pytest.mark.slow
CHECK_HZ = (100.0, 1000.0, 10000.0)


class OracleCase:
    """A circuit whose DC operating point is compared."""

    def circuit(self) -> Circuit:
        raise NotImplementedError

    def test_dc_node_voltages(self):
        require_ngspice()
        c = self.circuit()
        ours, theirs = solve_dc(c), operating_point(c)
        for node in c.nodes():
            # ngspice oracle: within 1 % or 5 mV
            assert ours.voltage(node) == pytest.approx(theirs[node], rel=0.01, abs=5e-3), node


class AcOracleCase(OracleCase):
    """Also its response: gains and corners at ``outputs``, the source's input impedance."""

    source = "VIN"
    outputs: tuple[str, ...] = ("out",)
    band = (1.0, 1e6)

    def test_ac_gain_corners_and_input_impedance(self):
        require_ngspice()
        c = self.circuit()
        freqs, theirs = ac_sweep(c, self.source, list(self.outputs), *self.band, per_decade=200)
        ac = solve_ac(c, solve_dc(c), freqs, self.source)
        for node in self.outputs:
            for hz in CHECK_HZ:
                i = int(np.argmin(np.abs(np.log(freqs / hz))))
                ours_db = 20 * np.log10(abs(ac.transfer(node)[i]))
                # ngspice oracle: gain within 0.1 dB
                assert ours_db == pytest.approx(20 * np.log10(abs(theirs[node][i])), abs=0.1)
            for mine, ref in zip(corners(ac, node, ref_hz=1000.0),
                                 half_power_corners(freqs, theirs[node], 1000.0), strict=True):
                # ngspice oracle: corners within 2 %
                assert (mine is None) == (ref is None)
                if ref is not None:
                    assert mine == pytest.approx(ref, rel=0.02)
        i = int(np.argmin(np.abs(np.log(freqs / 1000.0))))
        assert c.element(self.source).ac == 1.0  # so ngspice's Zin is 1 V over its current
        z_theirs = 1.0 / -theirs[self.source][i]
        # ngspice oracle: input impedance within 2 %
        assert abs(ac.input_impedance()[i]) == pytest.approx(abs(z_theirs), rel=0.02)


class TestPassiveToneNetwork(AcOracleCase):
    def circuit(self) -> Circuit:
        c = Circuit("passive tone network").vsource("VIN", "in", "0", dc=1.0, ac=1.0)
        c.resistor("R1", "in", "a", 4.7e3).inductor("L1", "a", "b", 0.5)
        c.capacitor("C1", "b", "0", 100e-9).resistor("R2", "a", "t", 22e3)
        c.pot("VR1", "t", "w", "0", 100e3, position=0.3, taper="log")
        c.capacitor("C2", "w", "out", 220e-9)
        return c.resistor("RL", "out", "0", 470e3)


class TestDiodeStrings(OracleCase):
    def circuit(self) -> Circuit:
        c = Circuit("indicator and diode string").vsource("VCC", "vcc", "0", dc=9.0)
        c.resistor("R1", "vcc", "a", 4.7e3).diode("D1", "a", "b", "LED-RED")
        c.diode("D2", "b", "c", "1N4148").diode("D3", "c", "d", "1N4001")
        c.diode("D4", "d", "e", "GE-SIGNAL").diode("D5", "e", "0", "1N5817")
        c.resistor("R2", "vcc", "g", 2.2e3).diode("D6", "g", "0", "LED-GREEN")
        c.isource("I1", "0", "k", dc=2e-3).diode("D8", "k", "0", "1N4148")
        return c.diode("D7", "h", "vcc", "1N4148").resistor("R3", "h", "0", 1e3)  # reverse


class TestMoreLibraryParts(AcOracleCase):
    """The LEDs, the germanium PNP with its leakage, the MPF102 and the RC4558."""

    outputs = ("out", "o2")

    def circuit(self) -> Circuit:
        c = Circuit("more library parts").vsource("VCC", "vcc", "0", dc=9.0)
        for i, colour in enumerate(("YELLOW", "BLUE", "WHITE"), start=1):
            c.resistor(f"RL{i}", "vcc", f"l{i}", 1e3).diode(f"D{i}", f"l{i}", "0",
                                                            f"LED-{colour}")
        c.vsource("VIN", "in", "0", ac=1.0).capacitor("C1", "in", "b", 1e-6)
        c.resistor("RB", "b", "0", 470e3).bjt("Q1", "c", "b", "e", "AC128")
        c.resistor("RE", "vcc", "e", 4.7e3).resistor("RC", "c", "0", 2.2e3)
        c.capacitor("C2", "c", "g", 100e-9).resistor("RG", "g", "0", 1e6)
        c.jfet("Q2", "vcc", "g", "out", "MPF102").resistor("RS", "out", "0", 2.2e3)
        c.resistor("R1", "vcc", "r", 100e3).resistor("R2", "r", "0", 100e3)
        c.capacitor("C3", "out", "p2", 100e-9).resistor("R3", "p2", "r", 1e6)
        c.opamp("U1A", "p2", "n2", "o2", "vcc", "0", "4558").resistor("RF", "o2", "n2", 47e3)
        return c.resistor("RN", "n2", "x2", 4.7e3).capacitor("CN", "x2", "0", 10e-6)


class TestChargePumpRails(AcOracleCase):
    """A doubler and an inverter (averaged) feeding op-amps on 18 V and on +-9 V, with the
    supply's own ripple as the source: ngspice's E, F and V elements against the pump."""

    source = "VSUP"
    outputs = ("v2", "vm", "o1", "o2")

    def circuit(self) -> Circuit:
        c = Circuit("charge-pump rails").vsource("VSUP", "sup", "0", dc=9.0, ac=1.0)
        c.diode("D1", "sup", "v", "1N5817").capacitor("C1", "v", "0", 100e-6)
        c.pump("P1", "v", "v2", "0", 2.0, 60.0).capacitor("C2", "v2", "0", 47e-6)
        c.pump("P2", "v", "vm", "0", -1.0, 60.0).capacitor("C3", "vm", "0", 47e-6)
        c.resistor("R1", "v2", "r", 10e3).resistor("R2", "r", "0", 10e3)
        c.capacitor("C4", "r", "0", 1e-6).opamp("U1A", "r", "n1", "o1", "v2", "0", "TL072")
        c.resistor("RF1", "o1", "n1", 100e3).resistor("RG1", "n1", "x1", 10e3)
        c.capacitor("CG1", "x1", "0", 10e-6).resistor("RL1", "o1", "0", 10e3)
        c.opamp("U1B", "0", "n2", "o2", "v", "vm", "RC4558").resistor("RF2", "o2", "n2", 47e3)
        return c.resistor("RG2", "n2", "0", 4.7e3).resistor("RL2", "o2", "0", 10e3)

    def test_pump_currents(self):
        require_ngspice()
        c = self.circuit()
        ours, theirs = solve_dc(c), operating_point(c)
        for name in ("P1", "P2", "VSUP"):
            # ngspice oracle: branch current of a source within 1 %
            assert ours.current(name) == pytest.approx(theirs[name], rel=0.01), name


class TestBiasedDiodeSmallSignal(AcOracleCase):
    def circuit(self) -> Circuit:
        c = Circuit("biased diode").vsource("VCC", "vcc", "0", dc=9.0)
        c.resistor("R1", "vcc", "out", 8.2e3).diode("D1", "out", "0", "1N4148")
        c.vsource("VIN", "in", "0", ac=1.0).resistor("R2", "in", "x", 1e3)
        return c.capacitor("C1", "x", "out", 1e-6)


class TestBoost(AcOracleCase):
    def circuit(self) -> Circuit:
        return rc.boost("2N5089")


class TestBypassedStageIntoPnp(AcOracleCase):
    outputs = ("c", "out")

    def circuit(self) -> Circuit:
        c = rc.boost("2N3904", bypass=None)
        c.resistor("RE2", "e", "ex", 100.0).capacitor("CE", "ex", "0", 47e-6)
        c.capacitor("CM", "c", "b", 100e-12)
        c.resistor("RE3", "vcc", "e3", 2.2e3).bjt("Q2", "c3", "c", "e3", "2N3906")
        return c.resistor("RC3", "c3", "0", 3.3e3)


class TestDirectCoupledPair(AcOracleCase):
    outputs = ("c2",)

    def circuit(self) -> Circuit:
        c = Circuit("direct-coupled pair").vsource("VCC", "vcc", "0", dc=9.0)
        c.vsource("VIN", "in", "0", ac=1.0).capacitor("C1", "in", "b1", 2.2e-6)
        c.bjt("Q1", "c1", "b1", "0", "BC549C").resistor("R1", "vcc", "c1", 33e3)
        c.bjt("Q2", "c2", "c1", "e2", "2N5088").resistor("R2", "vcc", "c2", 8.2e3)
        c.resistor("R3", "e2", "0", 1e3).resistor("RFB", "e2", "b1", 100e3)
        return c.capacitor("CE", "e2", "0", 22e-6)


class TestJfetCommonSource(AcOracleCase):
    def circuit(self) -> Circuit:
        return rc.jfet_common_source("J201")


class TestJfetPairNandP(AcOracleCase):
    outputs = ("d1", "out")

    def circuit(self) -> Circuit:
        c = rc.jfet_common_source("2N5457")
        c.vsource("VIN2", "d1", "d", dc=0.0)  # a 0 V meter: checks branch currents too
        c.resistor("RG2", "g2", "vcc", 1e6).capacitor("C3", "d1", "g2", 100e-9)
        c.jfet("Q2", "0", "g2", "s2", "2N5460").resistor("RS2", "vcc", "s2", 4.7e3)
        return c

    def test_meter_current(self):
        require_ngspice()
        c = self.circuit()
        # ngspice oracle: branch current of a source within 1 %
        assert solve_dc(c).current("VIN2") == pytest.approx(operating_point(c)["VIN2"],
                                                            rel=0.01)


class TestNonInvertingTl072(AcOracleCase):
    def circuit(self) -> Circuit:
        return rc.non_inverting("TL072")


class TestInvertingLm358IntoNe5532(AcOracleCase):
    outputs = ("out", "o2")

    def circuit(self) -> Circuit:
        c = rc.inverting("LM358")
        return c.opamp("U2A", "o", "o2", "o2", "vcc", "0", "NE5532")


class TestOpAmpDrivenIntoTheRail(OracleCase):
    def circuit(self) -> Circuit:
        c = Circuit("op-amp at its rails").vsource("VCC", "vcc", "0", dc=9.0)
        c.vsource("VOFF", "p", "0", dc=3.0).opamp("U1A", "p", "n", "o", "vcc", "0", "TL072")
        c.resistor("RF", "o", "n", 100e3).resistor("RG", "n", "0", 10e3)  # wants 33 V
        c.vsource("VLOW", "p2", "0", dc=0.5).opamp("U1B", "p2", "o2", "o2", "vcc", "0", "LM358")
        return c.resistor("RL", "o2", "0", 10e3)


class TestBetaDroopAtLowCurrent(OracleCase):
    def circuit(self) -> Circuit:
        c = Circuit("low and high collector current").vsource("VCC", "vcc", "0", dc=9.0)
        c.resistor("RB1", "vcc", "b1", 22e6).bjt("Q1", "c1", "b1", "0", "2N3904")
        c.resistor("RC1", "vcc", "c1", 1e6)
        c.resistor("RB2", "vcc", "b2", 47e3).bjt("Q2", "c2", "b2", "0", "2N3904")
        return c.resistor("RC2", "vcc", "c2", 470.0)


class TestOutsideNormalOperation(OracleCase):
    """Collapsed and reversed supplies, junctions in breakdown: what faulty builds do."""

    def circuit(self) -> Circuit:
        c = Circuit("outside normal operation").vsource("VSUP", "sup", "0", dc=9.0)
        c.diode("D1", "low", "sup", "1N5817").resistor("R1", "low", "ref", 22e3)  # backwards
        c.resistor("R2", "ref", "0", 22e3).opamp("U1", "ref", "o1", "o1", "low", "0", "LM358")
        c.resistor("R3", "sup", "neg", 100.0).opamp("U2", "0", "0", "o2", "0", "neg", "TL072")
        c.resistor("R4", "o2", "0", 10e3).resistor("R5", "sup", "one", 33e3)
        c.resistor("R6", "one", "0", 4.7e3).opamp("U3", "one", "o3", "o3", "one", "0", "NE5532")
        c.resistor("R7", "sup", "e", 10e3).bjt("Q1", "c", "0", "e", "2N3904")
        c.resistor("R8", "c", "0", 1e6).resistor("R9", "sup", "k", 4.7e3)
        c.diode("D2", "0", "k", "LED-RED").resistor("R10", "0", "e2", 10e3)
        c.vsource("VNEG", "m", "0", dc=-9.0).resistor("R11", "m", "e2b", 10e3)
        return c.bjt("Q2", "0", "e2b", "e2", "2N3906")
