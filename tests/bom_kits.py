"""Invented kits of the fictional maker Fernbrook Circuitworks, as parts, for the BOM tests."""

from __future__ import annotations

from types import MappingProxyType

from kitleaf.circuit.parts import Part
from kitleaf.errors import SourceSpan

GUIDE = "guides/fernbrook-tidewater-boost.md"


def part(designator, type_, text, line=1, **fields):
    attrs = MappingProxyType(fields.pop("attrs", {}))
    return Part(designator, type_, text, SourceSpan(GUIDE, line), attrs=attrs, **fields)


def resistor(designator, ohms, tol=0.05, **fields):
    return part(designator, "resistor", str(ohms), value=ohms, tolerance=tol, **fields)


def capacitor(designator, farads, dielectric="film", tol=0.05, **fields):
    return part(designator, "capacitor", str(farads), value=farads, tolerance=tol,
                attrs={"dielectric": dielectric}, **fields)


def device(designator, type_, model, **fields):
    return part(designator, type_, model, model=model, **fields)


# The invented Fernbrook Circuitworks "Tidewater Boost" kit, for the demo only.
TIDEWATER = [
    resistor("R10", 4700.0, line=12),
    resistor("R2", 4700.0, line=5),
    resistor("R1", 1e6, line=4),
    resistor("R3", 10e3, tol=0.01, line=6),
    capacitor("C1", 100e-9, line=7),
    capacitor("C2", 47e-9, line=8),
    capacitor("C3", 100e-6, "electrolytic", tol=0.2, rating=25.0, line=9),
    device("Q1", "bjt", "2N5088", line=10),
    device("D1", "diode", "1N4148", line=11),
    device("LED1", "led", "red"),
    device("U1", "opamp", "TL072"),
    part("VR1", "pot", "A100k", value=100e3, tolerance=0.2, attrs={"taper": "log"}),
    part("J2", "hardware", "6.35 mm mono jack"),
    part("J1", "hardware", "6.35 mm mono jack"),
    part("J3", "hardware", "2.1 mm DC jack, centre negative"),
    part("SW1", "hardware", "3PDT footswitch"),
    part("MP1", "hardware", "knob, 15 mm"),
]

# A second invented kit, the "Millrace Fuzz", for the demo only.
MILLRACE = [
    resistor("R1", 4700.0),
    resistor("R2", 100e3),
    capacitor("C1", 100e-9),
    capacitor("C2", 100e-6, "electrolytic", tol=0.2, rating=25.0),
    device("Q1", "bjt", "2N5088"),
    part("J1", "hardware", "6.35 mm mono jack"),
    part("J2", "hardware", "6.35 mm mono jack"),
]


def by_designator(lines):
    return {line.designators[0]: line for line in lines}
