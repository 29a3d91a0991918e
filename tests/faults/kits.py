"""The demo kits' fault readings, solved once per test session."""

from __future__ import annotations

from functools import cache
from pathlib import Path

from kitleaf.circuit.build import build_circuit
from kitleaf.guide import parse_guide

GUIDES = Path(__file__).resolve().parent.parent.parent / "guides"
DEMOS = ("brookside-boost", "heron-opamp-boost", "millrace-jfet-boost")


@cache
def kit(name: str):
    return build_circuit(parse_guide(GUIDES / f"{name}.md"))


@cache
def readings(name: str):
    from kitleaf.faults.solve import solve_faults

    return solve_faults(kit(name))
