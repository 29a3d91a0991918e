"""Circuits driven into clipping for the large-signal checks: each builds a fresh Circuit whose
input source is VIN and whose output node is "out".

Coupling time constants are kept to a few milliseconds so that the outside simulator's plain
transient settles within tens of milliseconds; the engine's periodic solve does not need it.
"""

from __future__ import annotations

from kitleaf.engine import Circuit

SETTLE_S = 0.04  # 40 ms: over 15 of the slowest time constant below


def _driven(title: str) -> Circuit:
    """A 9 V supply and the AC drive at ``in``."""
    return Circuit(title).vsource("VCC", "vcc", "0", dc=9.0).vsource("VIN", "in", "0", ac=1.0)


def _supplied(title: str) -> Circuit:
    return _driven(title).vsource("VREF", "ref", "0", dc=4.5)


def _series_clipper(title: str, ohms: float, model: str) -> Circuit:
    """A series resistor into two diodes of ``model`` to ground, back to back."""
    c = Circuit(title).vsource("VIN", "in", "0", ac=1.0)
    c.capacitor("C1", "in", "a", 220e-9).resistor("R1", "a", "b", ohms)
    c.diode("D1", "b", "0", model).diode("D2", "0", "b", model)
    return c.capacitor("C2", "b", "out", 22e-9).resistor("RL", "out", "0", 100e3)


def diodes_to_ground() -> Circuit:
    return _series_clipper("diodes to ground", 4.7e3, "1N4148")


def _feedback_clipper(title: str) -> Circuit:
    """An inverting op-amp stage (gain 10) with two diodes across its feedback resistor,
    its output at ``o``."""
    c = _supplied(title)
    c.capacitor("C1", "in", "a", 220e-9).resistor("RIN", "a", "n", 10e3)
    c.opamp("U1", "ref", "n", "o", "vcc", "0", "TL072").resistor("RF", "o", "n", 100e3)
    return c.diode("D1", "o", "n", "1N4148").diode("D2", "n", "o", "1N4148")


def feedback_diodes() -> Circuit:
    c = _feedback_clipper("diodes across feedback")
    return c.capacitor("C2", "o", "out", 22e-9).resistor("RL", "out", "0", 100e3)


def clipped_edge_treble() -> Circuit:
    """The diodes across feedback into a treble path, 220 pF into 47 kohm: each clipped
    edge leaves a spike some 10 us wide at ``out``, about a 96th of a period at 1 kHz."""
    c = _feedback_clipper("clipped edge through a treble path")
    return c.capacitor("C2", "o", "out", 220e-12).resistor("RL", "out", "0", 47e3)


def led_clipper() -> Circuit:
    return _series_clipper("LED clipper", 2.2e3, "LED-RED")


def common_emitter() -> Circuit:
    """A 2N3904 common-emitter stage (gain about 4) that saturates and cuts off when driven."""
    c = _driven("common emitter")
    c.capacitor("C1", "in", "b", 220e-9).resistor("R1", "vcc", "b", 47e3)
    c.resistor("R2", "b", "0", 10e3).bjt("Q1", "c", "b", "e", "2N3904")
    c.resistor("RC", "vcc", "c", 4.7e3).resistor("RE", "e", "0", 1e3)
    return c.capacitor("C2", "c", "out", 100e-9).resistor("RL", "out", "0", 22e3)


def jfet_common_source() -> Circuit:
    """A J201 common-source stage with an unbypassed source resistor."""
    c = _driven("JFET common source")
    c.capacitor("C1", "in", "g", 22e-9).resistor("RG", "g", "0", 100e3)
    c.jfet("Q1", "d", "g", "s", "J201").resistor("RD", "vcc", "d", 6.8e3)
    c.resistor("RS", "s", "0", 470.0)
    return c.capacitor("C2", "d", "out", 22e-9).resistor("RL", "out", "0", 100e3)


def direct_coupled_fuzz() -> Circuit:
    """Two NPN stages, the first's collector straight into the second's base, biased by
    feedback from the second's emitter to the first's base."""
    c = _driven("two-transistor fuzz")
    c.capacitor("C1", "in", "b1", 100e-9).bjt("Q1", "c1", "b1", "0", "2N5088")
    c.resistor("RC1", "vcc", "c1", 47e3).bjt("Q2", "c2", "c1", "e2", "2N5088")
    c.resistor("RC2", "vcc", "c2", 6.8e3).resistor("RE2", "e2", "0", 1e3)
    c.resistor("RFB", "e2", "b1", 100e3)
    return c.capacitor("C2", "c2", "out", 22e-9).resistor("RL", "out", "0", 100e3)


def opamp_rail_clip() -> Circuit:
    """An LM358 non-inverting stage of gain 11 whose output meets its swing limits."""
    c = _supplied("op-amp rail clipping")
    c.capacitor("C1", "in", "p", 10e-9).resistor("RB", "p", "ref", 220e3)
    c.opamp("U1", "p", "n", "o", "vcc", "0", "LM358")
    c.resistor("RF", "o", "n", 100e3).resistor("RG", "n", "ref", 10e3)
    return c.capacitor("C2", "o", "out", 22e-9).resistor("RL", "out", "0", 100e3)


def emitter_follower() -> Circuit:
    """A 2N3904 emitter follower into a 4.7 kohm load: it cuts off on deep negative swings."""
    c = _driven("emitter follower")
    c.capacitor("C1", "in", "b", 47e-9).resistor("R1", "vcc", "b", 100e3)
    c.resistor("R2", "b", "0", 100e3).bjt("Q1", "vcc", "b", "e", "2N3904")
    c.resistor("RE", "e", "0", 10e3)
    return c.capacitor("C2", "e", "out", 470e-9).resistor("RL", "out", "0", 4.7e3)


# name -> (builder, input peak levels in volts)
CIRCUITS = {
    "diodes to ground": (diodes_to_ground, (0.1, 0.3, 1.0, 3.0)),
    "diodes across feedback": (feedback_diodes, (0.03, 0.1, 0.3, 1.0)),
    "LED clipper": (led_clipper, (0.3, 1.0, 2.0, 4.0)),
    "common emitter": (common_emitter, (0.3, 0.6, 1.0, 2.0)),
    "JFET common source": (jfet_common_source, (0.1, 0.3, 1.0, 2.0)),
    "two-transistor fuzz": (direct_coupled_fuzz, (0.01, 0.03, 0.1, 0.3)),
    "op-amp rail clipping": (opamp_rail_clip, (0.1, 0.3, 0.6, 1.0)),
    "emitter follower": (emitter_follower, (0.3, 1.0, 2.0, 3.5)),
}
