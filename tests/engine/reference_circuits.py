"""Circuits the engine tests share: each builds a fresh Circuit of one topology."""

from __future__ import annotations

from kitleaf.engine import Circuit


def rc_high_pass() -> Circuit:
    c = Circuit("rc high-pass").vsource("VIN", "in", "0", ac=1.0)
    return c.capacitor("C1", "in", "out", 100e-9).resistor("R1", "out", "0", 100e3)


def boost(model: str = "2N5089", bypass: float | None = None) -> Circuit:
    """One-transistor boost: 1M over 100k bias from 9 V, 10k collector, 390R emitter."""
    c = Circuit("one-transistor boost")
    c.vsource("VCC", "vcc", "0", dc=9.0).vsource("VIN", "in", "0", ac=1.0)
    c.capacitor("C1", "in", "b", 100e-9, tol=0.10)
    c.resistor("R1", "vcc", "b", 1e6, tol=0.05).resistor("R2", "b", "0", 100e3, tol=0.05)
    c.bjt("Q1", "c", "b", "e", model)
    c.resistor("RC", "vcc", "c", 10e3, tol=0.05).resistor("RE", "e", "0", 390.0, tol=0.05)
    if bypass is not None:
        c.capacitor("CE", "e", "0", bypass)
    c.capacitor("C2", "c", "out", 1e-6, tol=0.10).resistor("RL", "out", "0", 100e3)
    return c


def non_inverting(model: str = "TL072", rf: float = 56e3, rg: float = 2.7e3) -> Circuit:
    """Single 9 V supply, mid-rail reference from a 10k/10k divider, gain 1 + rf/rg."""
    c = Circuit("non-inverting op-amp stage")
    c.vsource("VCC", "vcc", "0", dc=9.0).vsource("VIN", "in", "0", ac=1.0)
    c.resistor("RA", "vcc", "vref", 10e3).resistor("RB", "vref", "0", 10e3)
    c.capacitor("CREF", "vref", "0", 47e-6)
    c.capacitor("C1", "in", "p", 100e-9).resistor("RBIAS", "p", "vref", 1e6)
    c.opamp("U1A", "p", "n", "o", "vcc", "0", model)
    c.resistor("RF", "o", "n", rf).resistor("RG", "n", "g", rg).capacitor("CG", "g", "0", 22e-6)
    return c.capacitor("C2", "o", "out", 1e-6).resistor("RL", "out", "0", 100e3)


def inverting(model: str = "LM358", rf: float = 47e3, rin: float = 10e3) -> Circuit:
    """Single 9 V supply, mid-rail reference on the + input, gain -rf/rin."""
    c = Circuit("inverting op-amp stage")
    c.vsource("VCC", "vcc", "0", dc=9.0).vsource("VIN", "in", "0", ac=1.0)
    c.resistor("RA", "vcc", "vref", 22e3).resistor("RB", "vref", "0", 22e3)
    c.capacitor("CREF", "vref", "0", 10e-6)
    c.capacitor("C1", "in", "a", 1e-6).resistor("RIN", "a", "n", rin)
    c.opamp("U1A", "vref", "n", "o", "vcc", "0", model)
    c.resistor("RF", "o", "n", rf).capacitor("CF", "o", "n", 100e-12)
    return c.capacitor("C2", "o", "out", 1e-6).resistor("RL", "out", "0", 100e3)


def jfet_common_source(model: str = "J201") -> Circuit:
    c = Circuit("JFET common-source stage")
    c.vsource("VCC", "vcc", "0", dc=9.0).vsource("VIN", "in", "0", ac=1.0)
    c.capacitor("C1", "in", "g", 22e-9).resistor("RG", "g", "0", 1e6)
    c.jfet("Q1", "d", "g", "s", model).resistor("RD", "vcc", "d", 6.8e3)
    c.resistor("RS", "s", "0", 1.5e3).capacitor("CS", "s", "0", 10e-6)
    return c.capacitor("C2", "d", "out", 100e-9).resistor("RL", "out", "0", 1e6)
