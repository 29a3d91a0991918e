"""The fault board: the kit's circuit with a switch wherever a builder can go wrong, so every
fault is the good board with some switches flipped and some values scaled, and all of them
solve in one batch.

Each semiconductor pin reaches each pad it may land in through a switch; every pair of pads
solder can bridge has one; each electrolytic has a leak path beside it; the supply comes
from a battery, a flat battery or a reversed adapter through one switch each, and board
ground reaches the supply's negative terminal (the circuit's node 0) through a ground wire.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np

from kitleaf.circuit.chain import GROUND, SUPPLY, KitCircuit
from kitleaf.engine import Circuit
from kitleaf.engine import elements as el
from kitleaf.faults.model import Bridge, Fault, Leak, Pins, Supply, Value, Wire
from kitleaf.faults.packages import Package, device_package, opamp_packages

BOARD_GROUND = "gnd"  # the board's ground; node 0 is the supply's negative terminal
R_ON = 1e-2  # ohms: a solder joint, a wire, a bridge
R_OFF = 1e11  # ohms: a switch of the board that is open (a pin not in that pad)
# R_OFF / R_ON stays near 1e-13: much beyond it an open switch's current drowns in the
# rounding of the closed ones' (double precision, 1e-16 of 9 V across 1e-2 ohm)
R_STRAY = 1e9  # ohms: what still joins two points a builder left apart (surface leakage,
# flux; assumed): an open resistor, a missing wire, each semiconductor pad to ground. Far
# below R_OFF, so the open switches of the board do not decide where a floating node sits
R_OPEN = R_STRAY
R_LEAK = 10e3  # ohms: a reversed electrolytic (about 1 mA at 9 V; from memory, no source)
FLAT_V = 7.0  # volts: a run-down 9 V battery
_SOURCES = ("bat", "flat", "rev")


@dataclass(frozen=True)
class Board:
    """The switched circuit and what its switches are called."""

    circuit: Circuit
    packages: tuple[Package, ...]
    electrolytics: tuple[str, ...]
    supply_v: float
    has_reference: bool

    def package(self, name: str) -> Package:
        return next(p for p in self.packages if p.name == name)

    def scale(self, faults: list[Fault]) -> np.ndarray:
        """Value multipliers (faults, elements) that turn the good board into each fault."""
        index = {e.name: i for i, e in enumerate(self.circuit.elements)}
        out = np.ones((len(faults), len(index)))
        for row, fault in enumerate(faults):
            for name, factor in self.changes(fault).items():
                out[row, index[name]] *= factor
        return out

    def changes(self, fault: Fault) -> dict[str, float]:
        """Element -> multiplier for one fault."""
        found: dict[str, float] = {}
        for edit in fault.edits:
            found.update(_CHANGES[type(edit)](self, edit))
        return found


def _on(name: str) -> dict[str, float]:
    return {name: R_ON / R_OFF}


def _off(name: str) -> dict[str, float]:
    return {name: R_OFF / R_ON}


def _value(board: Board, edit: Value) -> dict[str, float]:
    return {edit.part: edit.factor}


def _pins(board: Board, edit: Pins) -> dict[str, float]:
    out: dict[str, float] = {}
    for pin, pad in enumerate(edit.pads):
        if pad != pin:
            out |= _off(pin_switch(edit.package, pin, pin)) | _on(
                pin_switch(edit.package, pin, pad))
    return out


def _bridge(board: Board, edit: Bridge) -> dict[str, float]:
    return _on(bridge_switch(edit.package, edit.a, edit.b))


def _leak(board: Board, edit: Leak) -> dict[str, float]:
    return {f"{edit.part}#leak": R_LEAK / R_OFF}


def _wire(board: Board, edit: Wire) -> dict[str, float]:
    return {"wire.ground" if edit.name == "ground" else "wire.bat": R_STRAY / R_ON}


def _supply(board: Board, edit: Supply) -> dict[str, float]:
    return _off("wire.bat") | _on("wire.flat" if edit.name == "flat" else "wire.rev")


_CHANGES = {Value: _value, Pins: _pins, Bridge: _bridge, Leak: _leak, Wire: _wire,
            Supply: _supply}


def pin_switch(package: str, pin: int, pad: int) -> str:
    return f"{package}#{pin + 1}>{pad + 1}"


def meter_switch(node: str, black: str) -> str:
    return f"meter:{node}>{black}"


def bridge_switch(package: str, a: int, b: int) -> str:
    return f"{package}#{a + 1}~{b + 1}"


@dataclass(frozen=True)
class Parts:
    """The kit's elements on the board's ground, its packages and electrolytics."""

    loose: tuple  # elements in no package
    packages: tuple[tuple[Package, tuple], ...]  # each package with its elements
    electrolytics: tuple[str, ...]
    has_reference: bool


def board_parts(kit: KitCircuit) -> Parts:
    """What both the fault board and a single faulted circuit are made of (knobs half way)."""
    plain = kit.netlist()
    nodes = set(plain.nodes())
    spare = "vref" if "vref" in nodes else BOARD_GROUND
    elements = [_grounded(e) for e in plain.elements if e.name != "VSUPPLY"]
    devices = [e for e in elements if isinstance(e, el.Diode | el.Bjt | el.Jfet)]
    packages = [(device_package(e), (e,)) for e in devices]
    packages += opamp_packages([e for e in elements if isinstance(e, el.OpAmp)], spare)
    placed = {e.name for _, sections in packages for e in sections}
    electrolytics = tuple(p.designator for p in kit.parts()
                          if p.type == "capacitor" and p.dielectric == "electrolytic")
    return Parts(tuple(e for e in elements if e.name not in placed), tuple(packages),
                 electrolytics, "vref" in nodes)


def build_board(kit: KitCircuit, supply_v: float | None = None,
                meters: tuple[tuple[str, str], ...] = ()) -> Board:
    """The fault board of ``kit`` (knobs half way), fed from ``supply_v`` (default: the
    kit's supply), with a meter that can be switched across each (node, black) pair of
    ``meters``."""
    volts = kit.supply_v if supply_v is None else supply_v
    parts = board_parts(kit)
    circuit = Circuit("fault board")
    for e in parts.loose:
        circuit.add(e)
    for package, sections in parts.packages:
        _place(circuit, package, sections)
    for name in parts.electrolytics:
        cap = circuit.element(name)
        circuit.resistor(f"{name}#leak", cap.a, cap.b, R_OFF)
    add_strays(circuit, parts)
    _supply_network(circuit, volts)
    for node, black in meters:
        if node != black:
            circuit.resistor(meter_switch(node, black), node, black, R_OFF)
    return Board(circuit, tuple(p for p, _ in parts.packages), parts.electrolytics, volts,
                 parts.has_reference)


def add_strays(circuit: Circuit, parts: Parts) -> None:
    """Each semiconductor pad's leak to board ground: a pin moved off a pad may leave its
    node held by nothing else, and this is where it then sits."""
    for pad in sorted({p for package, _ in parts.packages for p in package.pads}):
        if pad != BOARD_GROUND:
            circuit.resistor(f"stray:{pad}", pad, BOARD_GROUND, R_STRAY)


def _grounded(element):
    """The element with the kit's ground moved to the board's ground."""
    fields = {f.name: BOARD_GROUND for f in dataclasses.fields(element)
              if getattr(element, f.name) == GROUND and isinstance(getattr(element, f.name), str)
              and f.name not in ("name", "model")}
    return dataclasses.replace(element, **fields) if fields else element


def _place(circuit: Circuit, package: Package, sections) -> None:
    """The package's elements on their pin nodes, each pin switched to the pads it may use."""
    pin_node = {(name, field): f"{package.name}#{i + 1}"
                for i, wired in enumerate(package.wiring) for name, field in wired}
    for e in sections:
        moved = {field: node for (name, field), node in pin_node.items() if name == e.name}
        circuit.add(dataclasses.replace(e, **moved))
    for pin in range(len(package.pins)):
        pads = sorted({pin} | {fit[pin] for fit in package.fits})
        for pad in pads:
            circuit.resistor(pin_switch(package.name, pin, pad), f"{package.name}#{pin + 1}",
                             package.pads[pad], R_ON if pad == pin else R_OFF)
    for a, b in package.neighbours:
        if package.pads[a] != package.pads[b]:
            circuit.resistor(bridge_switch(package.name, a, b), package.pads[a],
                             package.pads[b], R_OFF)


def _supply_network(circuit: Circuit, volts: float) -> None:
    for name, dc in zip(_SOURCES, (volts, FLAT_V, -volts), strict=True):
        circuit.vsource(f"V{name.upper()}", name, GROUND, dc=dc)
        circuit.resistor(f"wire.{name}", name, SUPPLY, R_ON if name == "bat" else R_OFF)
    circuit.resistor("wire.ground", BOARD_GROUND, GROUND, R_ON)
