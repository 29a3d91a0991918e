"""What a fault is: a named change to the board, made of edits the solver can apply."""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Value:
    """The part fitted has ``factor`` times the intended value (a misread, or open)."""

    part: str
    factor: float


@dataclass(frozen=True)
class Pins:
    """A package's pins sit in ``pads`` (pad index per pin, package order)."""

    package: str
    pads: tuple[int, ...]


@dataclass(frozen=True)
class Bridge:
    """Solder joins pads ``a`` and ``b`` of a package (indices in package order)."""

    package: str
    a: int
    b: int


@dataclass(frozen=True)
class Leak:
    """A reversed electrolytic: it conducts where it should block."""

    part: str


@dataclass(frozen=True)
class Wire:
    """An off-board wire is missing: ``ground`` or ``supply``."""

    name: str


@dataclass(frozen=True)
class Supply:
    """The board is fed from another source: ``flat`` (a run-down battery) or ``reversed``
    (an adapter of the wrong polarity)."""

    name: str


Edit = Value | Pins | Bridge | Leak | Wire | Supply


@dataclass(frozen=True)
class Fault:
    """One thing a builder can get wrong: a stable ``key``, the part it concerns ("" for
    wiring), its ``kind``, a sentence for the builder, and the edits that make it.

    ``dc_visible`` is False for faults no DC reading can show (a coupling cap of the wrong
    value): they are listed, never ranked on readings."""

    key: str
    part: str
    kind: str
    text: str
    edits: tuple[Edit, ...]
    dc_visible: bool = True


GOOD = Fault("good", "", "none", "a good build: every part right and in its place", ())
