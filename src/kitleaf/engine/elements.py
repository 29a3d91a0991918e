"""Circuit elements as frozen values, with the pot taper curves they rely on."""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

from kitleaf.engine.models import DeviceModel

GROUND = "0"

# A carbon pot never reaches 0 ohm at its ends; this floor keeps both legs finite (from memory:
# a few ohms of end resistance is typical).
POT_END_RESISTANCE = 1.0

# The audio ("log") taper is the exponential that passes through 10 % of the track at half
# rotation: f(p) = (81**p - 1) / 80 (81 = (1 / 0.1 - 1) ** 2). Pot makers' catalogues describe
# audio taper as 10 % (some 15 %) at the mid-point (common practice, no source).
_AUDIO_BASE = 81.0


def _lin(p: float) -> float:
    return p


def _log(p: float) -> float:
    return (_AUDIO_BASE**p - 1.0) / (_AUDIO_BASE - 1.0)


def _rlog(p: float) -> float:
    return 1.0 - _log(1.0 - p)


TAPERS: dict[str, Callable[[float], float]] = {"lin": _lin, "log": _log, "rlog": _rlog}


def taper_fraction(taper: str, position: float) -> float:
    """Fraction of the track between the ccw end and the wiper at a knob ``position`` (0..1)."""
    return TAPERS[taper](position)


@dataclass(frozen=True)
class _TwoTerminal:
    """A part between nodes ``a`` and ``b``: its value in SI units and its tolerance as a
    fraction (0.05 for 5 %)."""

    name: str
    a: str
    b: str
    value: float
    tol: float = 0.0


@dataclass(frozen=True)
class Resistor(_TwoTerminal):
    """Ohms."""


@dataclass(frozen=True)
class Capacitor(_TwoTerminal):
    """Farads."""


@dataclass(frozen=True)
class Inductor(_TwoTerminal):
    """Henries."""


@dataclass(frozen=True)
class Pot:
    """A potentiometer: track ccw..cw of ``value`` ohms, wiper ``w`` at ``position`` (0..1)."""

    name: str
    ccw: str
    w: str
    cw: str
    value: float
    position: float = 0.5
    taper: str = "lin"
    tol: float = 0.0

    def legs(self) -> tuple[float, float]:
        """Resistances (ccw..w, w..cw) in ohms, each floored at the end resistance."""
        lower = self.value * taper_fraction(self.taper, self.position)
        upper = self.value - lower
        return max(lower, POT_END_RESISTANCE), max(upper, POT_END_RESISTANCE)


@dataclass(frozen=True)
class _Source:
    """An independent source between ``p`` and ``n``: its DC value and its AC amplitude."""

    name: str
    p: str
    n: str
    dc: float = 0.0
    ac: float = 0.0


@dataclass(frozen=True)
class VSource(_Source):
    """Voltage source; its branch current flows into ``p``, through it, out of ``n`` (SPICE)."""


@dataclass(frozen=True)
class ISource(_Source):
    """Current source; ``dc`` amperes flow from ``p`` through the source to ``n`` (SPICE)."""


@dataclass(frozen=True)
class Pump:
    """A switched-capacitor converter, averaged over its switching: the output ``out`` sits at
    ``ratio`` times the input ``inp`` (both to ``ref``) less ``rout`` times the current it
    delivers, and the input draws ``ratio`` times that current (no loss but ``rout``; the
    chip's own quiescent current is a separate source). A doubler is ratio 2, an inverter
    ratio -1. Its branch current flows into ``out``, through it, out of ``ref`` (SPICE's
    sign for a voltage source), so a pump delivering current reads negative."""

    name: str
    inp: str
    out: str
    ref: str
    ratio: float
    rout: float


@dataclass(frozen=True)
class Diode:
    name: str
    a: str
    k: str
    model: DeviceModel


@dataclass(frozen=True)
class Bjt:
    name: str
    c: str
    b: str
    e: str
    model: DeviceModel


@dataclass(frozen=True)
class Jfet:
    name: str
    d: str
    g: str
    s: str
    model: DeviceModel


@dataclass(frozen=True)
class OpAmp:
    name: str
    inp: str
    inn: str
    out: str
    vpos: str
    vneg: str
    model: DeviceModel


Element = (
    Resistor | Capacitor | Inductor | Pot | VSource | ISource | Pump | Diode | Bjt | Jfet | OpAmp
)


def upper_leg_columns(elements) -> dict[str, int]:
    """Each pot's second column of a tolerance batch's part factors: after one column per
    element, one per pot in the circuit's order. A pot's own column scales its lower leg (ccw
    to wiper) and this one its upper leg (wiper to cw): drawn alike, they scale the track;
    apart, they move the wiper (a trimmer each build sets where it needs)."""
    pots = [e.name for e in elements if isinstance(e, Pot)]
    return {name: len(elements) + k for k, name in enumerate(pots)}


def terminals(element: Element) -> tuple[str, ...]:
    """The element's nodes in declaration order."""
    names = _TERMINALS[type(element)]
    return tuple(getattr(element, n) for n in names)


_TERMINALS: dict[type, tuple[str, ...]] = {
    Resistor: ("a", "b"),
    Capacitor: ("a", "b"),
    Inductor: ("a", "b"),
    Pot: ("ccw", "w", "cw"),
    VSource: ("p", "n"),
    ISource: ("p", "n"),
    Pump: ("inp", "out", "ref"),
    Diode: ("a", "k"),
    Bjt: ("c", "b", "e"),
    Jfet: ("d", "g", "s"),
    OpAmp: ("inp", "inn", "out", "vpos", "vneg"),
}


def is_finite(x: float) -> bool:
    return isinstance(x, int | float) and math.isfinite(x)
