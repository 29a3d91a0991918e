"""The off-board wiring: every wire between the jacks, the footswitch, the battery clip, the LED
and the board's pads, for the bypass scheme the kit block states.

Schemes (``bypass:``): ``true`` sends the input jack straight to the output jack when the
effect is off, through a three-pole footswitch whose third pole lights the LED; ``buffered``
keeps the first stage (the buffer) in the path and switches the output jack between the
board's output and the buffer's; ``none`` wires the jacks straight to the board. The board's
pads carry the schematic's names: IN, OUT, the supply (+9 V), GND, and the LED's anode, where
its resistor on the board ends. Wiring common practice, no source.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from functools import partial
from typing import TYPE_CHECKING

from kitleaf.circuit.offboard import Lug, Piece, read_pieces, switch_lug
from kitleaf.circuit.parts import Part
from kitleaf.circuit.stages import KINDS
from kitleaf.errors import CircuitError
from kitleaf.guide.model import Entry, Guide

if TYPE_CHECKING:  # the kit circuit lives in chain.py, which needs none of this module
    from kitleaf.circuit.chain import KitCircuit

BOARD = "board"
SCHEMES = ("true", "buffered", "none")


@dataclass(frozen=True)
class Wire:
    """One wire: its two ends, what it carries (signal, ground, supply, battery, led,
    bypass) and a short note for the builder."""

    a: Lug
    b: Lug
    carries: str
    note: str = ""


@dataclass(frozen=True)
class Harness:
    """The off-board wiring of a kit: its scheme, pieces, the board's pads and the wires."""

    scheme: str
    pieces: tuple[Piece, ...]
    pads: tuple[str, ...]
    wires: tuple[Wire, ...]
    led: Part | None = None
    led_resistor: Part | None = None

    def piece(self, role: str) -> Piece | None:
        return next((p for p in self.pieces if p.role == role), None)


@dataclass(frozen=True)
class _Kit:
    """What a scheme needs: the pieces by role, the supply pad's name, the LED and the stages."""

    pieces: dict[str, Piece]
    supply_pad: str
    led: Part | None
    led_resistor: Part | None
    buffer_pad: str
    entry: Entry


def build_harness(guide: Guide, circuit: KitCircuit) -> Harness | None:
    """The kit's wiring for its ``bypass:`` line, or None when the guide states no scheme."""
    entry = guide.kit.bypass
    if entry is None:
        return None
    scheme = entry.value.strip().lower()
    if scheme not in SCHEMES:
        raise CircuitError(f"'bypass: {entry.value}' is not a scheme kitleaf draws; write "
                           "'true', 'buffered' or 'none'", entry.span)
    kit = _kit(entry, circuit)
    _check_common(kit)
    wires = _SCHEMES[scheme](kit) + _supply_wires(kit)
    pads = tuple(dict.fromkeys(w.name for x in wires for w in (x.a, x.b) if w.owner == BOARD))
    return Harness(scheme, tuple(kit.pieces.values()), pads, wires, kit.led, kit.led_resistor)


def _kit(entry: Entry, circuit: KitCircuit) -> _Kit:
    power = next((s for s in circuit.stages if KINDS[s.kind].provides_power), None)
    signal = circuit.signal_stages
    return _Kit(read_pieces(circuit.hardware), circuit.supply_label,
                power.part("led") if power else None,
                power.part("led-resistor") if power else None,
                f"{signal[0].id.upper()} OUT" if len(signal) > 1 else "", entry)


def _require(kit: _Kit, role: str, example: str, why: str) -> Piece:
    piece = kit.pieces.get(role)
    if piece is None:
        raise CircuitError(f"'bypass: {kit.entry.value}' {why}, but the kit block lists no "
                           f"{role.replace('-', ' ')}; add 'hardware: {example}'",
                           kit.entry.span)
    return piece


def _check_common(kit: _Kit) -> None:
    _require(kit, "input-jack", "J1 input jack, 6.35 mm mono", "wires the guitar to the board")
    _require(kit, "output-jack", "J2 output jack, 6.35 mm mono",
             "wires the board to the amplifier")
    if "dc-jack" not in kit.pieces and "battery" not in kit.pieces:
        raise CircuitError(f"'bypass: {kit.entry.value}' needs a supply to wire, but the kit "
                           "block lists no DC jack and no battery clip; add 'hardware: J3 DC "
                           "jack, 2.1 mm, centre negative'", kit.entry.span)
    battery, dc = kit.pieces.get("battery"), kit.pieces.get("dc-jack")
    if battery is not None and not kit.pieces["input-jack"].stereo:
        jack = kit.pieces["input-jack"]
        raise CircuitError(
            f"battery clip {battery.designator} is switched by the ring lug of a stereo input "
            f"jack, but {jack.designator} is mono; write 'stereo' in {jack.designator}'s "
            "hardware line (a mono plug then joins ring and sleeve, so the battery is on only "
            "while a cable is in)", battery.span)
    if battery is not None and dc is not None and dc.centre != "negative":
        raise CircuitError(
            f"DC jack {dc.designator} is centre positive, but its switched lug can take the "
            f"battery {battery.designator} off only on a centre-negative jack (common practice "
            "for pedals); use a centre-negative jack or drop the battery clip", dc.span)


def _led_wires(kit: _Kit, cathode_to: Lug) -> tuple[Wire, ...]:
    """The LED's anode to its resistor's pad on the board, its cathode to ``cathode_to``."""
    if kit.led is None:
        return ()
    led = kit.led.designator
    return (Wire(Lug(led, "anode"), Lug(BOARD, f"{led} anode"), "led",
                 f"long leg; {kit.led_resistor.designator} on the board feeds it"),
            Wire(Lug(led, "cathode"), cathode_to, "led", "short leg, flat side"))


def _true_bypass(kit: _Kit) -> tuple[Wire, ...]:
    switch = _require(kit, "footswitch", "SW1 footswitch, 3PDT latching",
                      "switches the signal and the LED")
    if switch.poles != 3:
        raise CircuitError(f"true bypass with an LED needs a three-pole footswitch (3PDT), but "
                           f"{switch.designator} has {switch.poles}; write '3PDT' in its "
                           "hardware line", switch.span)
    if kit.led is None:
        raise CircuitError("'bypass: true' lights the LED through the footswitch's third pole, "
                           "but the power stage has no LED; add 'led: LED1 red' and "
                           "'led-resistor: R10 4k7' to it", kit.entry.span)
    tip_in, tip_out = kit.pieces["input-jack"].lug("tip"), kit.pieces["output-jack"].lug("tip")
    lug = partial(switch_lug, switch)
    return (
        Wire(tip_in, lug(0, "common"), "signal", "the guitar in"),
        Wire(lug(0, "on"), Lug(BOARD, "IN"), "signal", "effect on: into the board"),
        Wire(lug(0, "bypass"), lug(1, "bypass"), "bypass", "effect off: input straight to output"),
        Wire(lug(1, "on"), Lug(BOARD, "OUT"), "signal", "effect on: out of the board"),
        Wire(lug(1, "common"), tip_out, "signal", "to the amplifier"),
        *_led_wires(kit, lug(2, "common")),
        Wire(lug(2, "on"), Lug(BOARD, "GND"), "ground", "effect on: the LED lights"),
    )


def _buffered(kit: _Kit) -> tuple[Wire, ...]:
    switch = _require(kit, "footswitch", "SW1 footswitch, DPDT latching",
                      "switches the output jack between the effect and the buffer")
    if not kit.buffer_pad:
        raise CircuitError("'bypass: buffered' keeps the first stage, a buffer, in the path and "
                           "takes the dry signal after it, but the kit has one signal stage; "
                           "add the buffer stage or write 'bypass: true'", kit.entry.span)
    if kit.led is not None and switch.poles < 2:
        raise CircuitError(f"{switch.designator} has one pole, for the output; the LED needs a "
                           "second: write 'DPDT' in its hardware line", switch.span)
    lug = partial(switch_lug, switch)
    led_pole = switch.poles - 1
    return (
        Wire(kit.pieces["input-jack"].lug("tip"), Lug(BOARD, "IN"), "signal",
             "the guitar in, always through the buffer"),
        Wire(lug(0, "on"), Lug(BOARD, "OUT"), "signal", "effect on: the effect's output"),
        Wire(lug(0, "bypass"), Lug(BOARD, kit.buffer_pad), "bypass",
             "effect off: the buffer's output"),
        Wire(lug(0, "common"), kit.pieces["output-jack"].lug("tip"), "signal",
             "to the amplifier"),
        *(_led_wires(kit, lug(led_pole, "common")) if kit.led else ()),
        *((Wire(lug(led_pole, "on"), Lug(BOARD, "GND"), "ground",
                "effect on: the LED lights"),) if kit.led else ()),
    )


def _always_on(kit: _Kit) -> tuple[Wire, ...]:
    switch = kit.pieces.get("footswitch")
    if switch is not None:
        raise CircuitError(f"'bypass: none' wires the jacks straight to the board, so "
                           f"{switch.designator} has nothing to switch; drop its line or "
                           "write 'bypass: true'", switch.span)
    return (
        Wire(kit.pieces["input-jack"].lug("tip"), Lug(BOARD, "IN"), "signal", "the guitar in"),
        Wire(Lug(BOARD, "OUT"), kit.pieces["output-jack"].lug("tip"), "signal",
             "to the amplifier"),
        *_led_wires(kit, Lug(BOARD, "GND")),
    )


def _supply_wires(kit: _Kit) -> tuple[Wire, ...]:
    """Grounds, the DC jack and the battery: the adapter's plug takes the battery off through
    the DC jack's switched lug, and a battery runs only while a plug is in the input jack."""
    ground, supply = Lug(BOARD, "GND"), Lug(BOARD, kit.supply_pad)
    jack_in, jack_out = kit.pieces["input-jack"], kit.pieces["output-jack"]
    wires = [Wire(jack_in.lug("sleeve"), ground, "ground"),
             Wire(jack_out.lug("sleeve"), ground, "ground")]
    dc, battery = kit.pieces.get("dc-jack"), kit.pieces.get("battery")
    if dc is not None:
        negative, positive = ("centre pin", "sleeve") if dc.centre == "negative" else (
            "sleeve", "centre pin")
        wires += [Wire(dc.lug(negative), ground, "ground", "the adapter's negative"),
                  Wire(dc.lug(positive), supply, "supply", "the adapter's positive")]
    if battery is not None:
        plus_to = dc.lug("switched lug") if dc is not None else supply
        note = "off while an adapter is plugged in" if dc is not None else ""
        wires += [Wire(battery.lug("red lead +"), plus_to, "supply", note),
                  Wire(battery.lug("black lead -"), jack_in.lug("ring"), "battery",
                       "on only while a cable is in the input jack")]
    return tuple(wires)


_SCHEMES: dict[str, Callable[[_Kit], tuple[Wire, ...]]] = {
    "true": _true_bypass, "buffered": _buffered, "none": _always_on}
