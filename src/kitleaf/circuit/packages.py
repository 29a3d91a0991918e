"""Dual op-amp packages: every op-amp a guide names is one half of an 8-pin dual (U1A, U1B),
so a package whose other half no stage uses still sits on the board and draws its current.
"""

from __future__ import annotations

from collections.abc import Iterable

from kitleaf.circuit.parts import Part

HALVES = ("A", "B")


def package(designator: str) -> str:
    """The package a section belongs to: U1A and U1B are U1; an unsuffixed U1 is its half A."""
    return designator[:-1] if designator[-1:] in HALVES else designator


def other_half(designator: str) -> str:
    """The designator of the package's other section: U1A <-> U1B, U1 -> U1B."""
    half = designator[-1] if designator[-1:] in HALVES else "A"
    return package(designator) + ("B" if half == "A" else "A")


def unused_halves(parts: Iterable[Part]) -> tuple[tuple[str, Part], ...]:
    """(the unused half's designator, the op-amp part using the other half) for each dual
    package only one of whose sections appears among ``parts``."""
    opamps = [p for p in parts if p.type == "opamp"]
    used = {(package(p.designator), p.designator[-1] if p.designator[-1:] in HALVES else "A")
            for p in opamps}
    found = []
    for part in opamps:
        missing = other_half(part.designator)
        if (package(missing), missing[-1]) not in used:
            found.append((missing, part))
    return tuple(found)
