"""The demo guides solved once per test session, shared by the specs and plot tests."""

from __future__ import annotations

from functools import cache
from pathlib import Path

from kitleaf.circuit.build import build_circuit
from kitleaf.guide import parse_guide
from kitleaf.specs.derive import derive_specs

GUIDES = Path(__file__).resolve().parent.parent / "guides"
DEMOS = ("brookside-boost", "heron-opamp-boost", "millrace-jfet-boost")


@cache
def solved(name: str):
    """(guide, kit circuit, specs) of a demo guide."""
    guide = parse_guide(GUIDES / f"{name}.md")
    kit = build_circuit(guide)
    return guide, kit, derive_specs(guide, kit)
