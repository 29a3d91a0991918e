"""The circuit model of a whole kit: stages in chain order between a signal source and a load."""

from __future__ import annotations

import re
from collections.abc import Mapping
from dataclasses import dataclass
from functools import cached_property
from types import MappingProxyType

from kitleaf.circuit.kind import Stage, StageKind
from kitleaf.circuit.packages import unused_halves
from kitleaf.circuit.parts import Part
from kitleaf.circuit.rails import DOUBLED_NODE, NEGATIVE_NODE, POWER_RAILS, rail_nodes
from kitleaf.circuit.stages import KINDS
from kitleaf.circuit.switches import contacts, form_of, wired_poles
from kitleaf.engine import Circuit, get_model
from kitleaf.engine.elements import POT_END_RESISTANCE, taper_fraction, terminals
from kitleaf.errors import CircuitError, KitleafError

GROUND = "0"
SUPPLY = "supply"  # the battery or adapter terminal, before any protection
INPUT = "input"  # the kit's input jack
OUTPUT = "output"  # the kit's output jack
SOURCE = "VIN"  # the engine's name for the signal source


@dataclass(frozen=True)
class SignalSource:
    """What drives the kit's input: a guitar pickup or a source of some resistance.

    The default pickup is a series resistance and inductance with a parallel capacitance
    (pickup plus a few metres of cable), loaded inside the guitar by its own volume and tone
    pots: 6.5 kΩ, 2.5 H, 470 pF and 250 kΩ (common practice, values from memory, no source).
    The pots are what keeps a real pickup's resonance to a modest peak.
    """

    name: str
    resistance: float
    inductance: float = 0.0
    capacitance: float = 0.0
    shunt: float = 0.0  # resistance across the source's output (the guitar's pots); 0: none

    @property
    def is_pickup(self) -> bool:
        return self.inductance > 0


PICKUP = SignalSource("passive guitar pickup", 6.5e3, 2.5, 470e-12, 250e3)
LOW_Z = SignalSource("low-impedance source", 100.0)
DEFAULT_LOAD = 1e6  # an amplifier input (common practice, no source)


# Where each knob is set when the kit is solved across its travel (0..1 of rotation).
KNOB_STEPS = (0.0, 0.25, 0.5, 0.75, 1.0)


@dataclass(frozen=True)
class KnobRef:
    """A knob of the kit: its name, its pot and the stage the pot sits in."""

    name: str
    designator: str
    stage_id: str

    @property
    def steps(self) -> tuple[tuple[float, float], ...]:
        """(position the netlist takes, position as shown) at each step of the sweep."""
        return tuple((p, p) for p in KNOB_STEPS)

    @property
    def nominal(self) -> float:
        """Where the knob sits while the others are swept: half way."""
        return 0.5


@dataclass(frozen=True)
class SwitchRef:
    """A switch of the kit: its name, its part, the stage it sits in and the maker's name
    for each of its positions, in the switch's order, and the one it rests at while the
    knobs and other switches are swept."""

    name: str
    designator: str
    stage_id: str
    positions: tuple[str, ...]
    rest: int = 0  # the position it rests at while the rest of the kit is swept

    @property
    def steps(self) -> tuple[tuple[float, str], ...]:
        """(position the netlist takes, its name) for each position."""
        return tuple((float(i), name) for i, name in enumerate(self.positions))

    @property
    def nominal(self) -> float:
        return float(self.rest)


class Wiring:
    """What a stage kind uses to add its parts to the engine circuit, in local node names."""

    def __init__(self, circuit: Circuit, stage: Stage, nodes: Mapping[str, str],
                 positions: Mapping[str, float]) -> None:
        self.circuit = circuit
        self.stage = stage
        self._nodes = nodes
        self._positions = positions

    def node(self, local: str) -> str:
        """The circuit node for a local name; private names get the stage id as prefix."""
        return self._nodes.get(local) or f"{self.stage.id}.{local}"

    def position(self, designator: str) -> float:
        """A pot's position (0..1 of rotation; half way unless set), or a switch's position
        (0-based, in the order the kit block names them; the first unless set)."""
        return self._positions.get(designator, 0.5)

    def place(self, part: Part | None, *nodes: str | None) -> None:
        """Add ``part`` between the local ``nodes`` (in the part type's pin order).

        A switch's pins are pole by pole, the common then each throw; a throw wired to
        nothing is None. Its contacts are two-terminal elements named ``S1:p1t2`` (pole 1,
        throw 2), closed or open by the switch's position in this state.
        """
        if part is None:
            return
        if part.type == "switch":
            self._switch(part, nodes)
            return
        if part.type == "opamp" and nodes[4:] == ("0",) and "vee" in self._nodes:
            nodes = (*nodes[:4], "vee")  # the negative supply pin: ground, or the - rail
        names = [self.node(n) for n in nodes]
        c, d = self.circuit, part.designator
        tol = part.tolerance or 0.0
        if part.type == "resistor":
            c.resistor(d, *names, part.value, tol=tol)
        elif part.type == "capacitor":
            c.capacitor(d, *names, part.value, tol=tol)
        elif part.type == "inductor":
            c.inductor(d, *names, part.value, tol=tol)
        elif part.type == "pot" or part.type == "trimmer" and len(names) == 3:
            c.pot(d, *names, part.value, position=self.position(d),
                  taper=part.attrs["taper"], tol=tol)
        elif part.type == "trimmer":  # in a resistor's place: the track it is set to
            track = taper_fraction(part.attrs["taper"], self.position(d))
            c.resistor(d, *names, max(part.value * track, POT_END_RESISTANCE), tol=tol)
        else:
            getattr(c, _DEVICE_METHOD[part.type])(d, *names, part.device or part.model)

    def pump(self, part: Part, inp: str, out: str, ratio: float, flying: Part) -> None:
        """A charge-pump chip wired as a doubler (``ratio`` 2) or inverter (-1), averaged:
        its switches' resistance plus the flying capacitor's 1 / (f C), and its own draw.

        The flying capacitor charges to the input's voltage on every cycle; it stands from
        the input to a node held at ground by a gigaohm, so its rating and polarity are
        checked at that voltage while it loads nothing."""
        model = part.device
        rout = model.get("ROUT") + 1.0 / (model.get("FOSC") * flying.value)
        self.circuit.pump(part.designator, self.node(inp), self.node(out), GROUND, ratio, rout)
        self.circuit.isource(f"{part.designator}.quiescent", self.node(inp), GROUND,
                             dc=model.get("IQ"))
        held = f"{part.designator}.flying"
        self.place(flying, inp, held)
        self.internal("resistor", f"{held}-hold", held, "0", value=1e9)

    def _switch(self, part: Part, nodes: tuple[str | None, ...]) -> None:
        form = form_of(part)
        if not wired_poles(form, nodes):
            raise CircuitError(
                f"stage '{self.stage.id}': {part.designator} is a {part.attrs['form']} "
                f"({1 + form.throw_count} pins a pole), but the stage wires {len(nodes)} pins; "
                "fit the switch the stage's kind describes", part.span)
        position = int(self._positions.get(part.designator, 0))
        wired = tuple(None if n is None else self.node(n) for n in nodes)
        for suffix, common, throw, ohms in contacts(form, position, wired):
            self.circuit.resistor(f"{part.designator}:{suffix}", common, throw, ohms)

    def internal(self, method: str, name: str, *nodes: str, **kwargs) -> None:
        """Add an element that is not a part (an ideal source, say), named within the stage."""
        getattr(self.circuit, method)(f"{self.stage.id}.{name}", *map(self.node, nodes), **kwargs)


_DEVICE_METHOD = {"diode": "diode", "led": "diode", "bjt": "bjt", "jfet": "jfet", "opamp": "opamp"}


@dataclass(frozen=True)
class KitCircuit:
    """Every stage of a kit resolved, with what the chain needs to build engine circuits."""

    stages: tuple[Stage, ...]
    hardware: tuple[Part, ...]
    knobs: tuple[KnobRef, ...]
    source: SignalSource
    load: float
    supply_v: float
    switches: tuple[SwitchRef, ...] = ()
    # Trimmers: their set-up targets and the positions that reach them (circuit/trim.py);
    # every netlist takes these positions unless told otherwise.
    trims: tuple = ()
    presets: tuple[tuple[str, float], ...] = ()  # (trimmer, position 0..1)
    # What reading the guide's own device models warned of (circuit.devices.DeviceWarning).
    warnings: tuple = ()

    @cached_property
    def cache(self) -> dict:
        """What upper layers derive once per kit object (each trimmer's position in every
        tolerance build, say); a changed kit (``dataclasses.replace``) starts empty."""
        return {}

    def rest_positions(self) -> dict[str, float]:
        """Every knob half way and every switch where it rests: where the voltage
        table and the headline figures are read."""
        return {control.designator: control.nominal for control in self.controls}

    @property
    def controls(self) -> tuple[KnobRef | SwitchRef, ...]:
        """What the player sets, each solved at its steps: the knobs, then the switches."""
        return self.knobs + self.switches

    def kind(self, stage: Stage) -> StageKind:
        return KINDS[stage.kind]

    @property
    def signal_stages(self) -> tuple[Stage, ...]:
        return tuple(s for s in self.stages if KINDS[s.kind].signal)

    @property
    def supply_label(self) -> str:
        """The supply terminal's name on the schematic and on the board's pad: '+9 V'."""
        return f"+{self.supply_v:g} V"

    @property
    def has_power_stage(self) -> bool:
        return any(KINDS[s.kind].provides_power for s in self.stages)

    def parts(self) -> tuple[Part, ...]:
        """Every part on the board, then the off-board hardware."""
        return tuple(p for s in self.stages for p in s.all_parts()) + self.hardware

    def locate(self, error: KitleafError) -> KitleafError:
        """The engine's error placed at the guide line of the part or stage it names."""
        if error.span is not None:
            return error
        parts = {p.designator: p for p in self.parts()}
        names = re.findall(r"[\w.-]+", error.message)
        part = next((parts[n] for n in names if n in parts), None)
        if part is not None:
            return error.located(part.span)
        for name in names:
            stage = next((s for s in self.stages if name.startswith(f"{s.id}.")), None)
            if stage is not None:
                return error.located(stage.span)
        return error

    def stage_nodes(self, stage_id: str) -> tuple[str, str]:
        """The circuit nodes of a signal stage's input and output."""
        chain = self.signal_stages
        ids = [s.id for s in chain]
        i = ids.index(stage_id)
        first = INPUT if i == 0 else f"{ids[i - 1]}.out"
        last = OUTPUT if i == len(ids) - 1 else f"{stage_id}.out"
        return first, last

    @cached_property
    def joints(self) -> tuple[str, ...]:
        """The nodes where the stages meet: the chain's nodes between them and the power
        section's rails (a large kit's AC response is solved stage by stage, joined here)."""
        chain = [INPUT] + [self.stage_nodes(s.id)[1] for s in self.signal_stages]
        rails = list(POWER_RAILS) if self.has_power_stage else []
        return tuple(dict.fromkeys(chain + [OUTPUT] + rails))

    @cached_property
    def corner_pairs(self) -> tuple[tuple[str, str], ...]:
        """The (input, output) nodes whose corners the specs read: each signal stage's and
        the kit's."""
        return tuple(self.stage_nodes(s.id) for s in self.signal_stages) + ((INPUT, OUTPUT),)

    @property
    def sweep_nodes(self) -> tuple[tuple[str, ...], tuple[tuple[str, str], ...]]:
        """(:attr:`joints`, :attr:`corner_pairs`): what a sweep of the kit is told."""
        return self.joints, self.corner_pairs

    def netlist(self, positions: Mapping[str, float] | None = None,
                supply_v: float | None = None) -> Circuit:
        """A fresh engine circuit of the whole kit at the given knob positions and supply."""
        rests = {s.designator: s.nominal for s in self.switches}
        positions = MappingProxyType({**rests, **dict(self.presets), **(positions or {})})
        circuit = Circuit()
        volts = self.supply_v if supply_v is None else supply_v
        circuit.vsource("VSUPPLY", SUPPLY, GROUND, dc=volts)
        add_source(circuit, self.source)
        for stage in self.stages:
            nodes = self._nodes(stage)
            if self.metered(stage):
                nodes = _with_meters(circuit, stage.id, nodes, KINDS[stage.kind].signal)
            KINDS[stage.kind].build(stage, Wiring(circuit, stage, nodes, positions))
        circuit.resistor("RLOAD", OUTPUT, GROUND, self.load)
        self._unused_halves(circuit)
        return circuit

    def metered(self, stage: Stage) -> bool:
        """Whether the stage draws its supply through its own meter (every stage but the
        power section, whose draw is the rest of the kit's)."""
        return not KINDS[stage.kind].provides_power

    def _unused_halves(self, circuit: Circuit) -> None:
        """The half of a dual op-amp no stage uses still draws its quiescent current (the
        design rule unused-half asks for a stage that ties its inputs)."""
        stages = {s.id: s for s in self.stages}
        for missing, used in unused_halves(self.parts()):
            rail = self._nodes(stages[used.stage_id])["vcc"]
            circuit.isource(f"{missing}.quiescent", rail, GROUND,
                            dc=get_model(used.device or used.model).get("IQ"))

    def rails_used(self, stage: Stage) -> tuple[str, ...]:
        """Which of the power section's rails the stage's parts join, by what they are:
        ``vcc``, the doubled rail ``v2``, ``vref`` and the negative rail ``vee``."""
        circuit = Circuit()
        KINDS[stage.kind].build(stage, Wiring(circuit, stage, self._nodes(stage), {}))
        joined = {n for e in circuit.elements for n in terminals(e)}
        return tuple(r for r in POWER_RAILS if r in joined)

    def node_of(self, stage: Stage, local: str) -> str:
        """The circuit node a stage's local node name stands for (``vcc``, ``in``, ``c``...).

        Chain connections give the shared node (the rail itself, not the stage's 0 V meter
        behind it, which reads the same voltage); private names get the stage id as prefix.
        """
        return self._nodes(stage).get(local) or f"{stage.id}.{local}"

    def _nodes(self, stage: Stage) -> dict[str, str]:
        main = "vcc" if self.has_power_stage else SUPPLY
        rails = {"0": GROUND, **rail_nodes(stage.rails, main), "supply": SUPPLY}
        if KINDS[stage.kind].provides_power:
            rails.update(v2=DOUBLED_NODE, vee=NEGATIVE_NODE)
        if KINDS[stage.kind].signal:
            rails["in"], rails["out"] = self.stage_nodes(stage.id)
        return rails


def supply_meter(stage_id: str) -> str:
    """The 0 V source whose current is what a signal stage draws from the supply rail."""
    return f"{stage_id}.isupply"


def input_meter(stage_id: str) -> str:
    """The 0 V source whose current is what flows into a signal stage's input."""
    return f"{stage_id}.iinput"


def _with_meters(circuit: Circuit, stage_id: str, nodes: dict[str, str],
                 signal: bool = True) -> dict[str, str]:
    """Feed the stage's supply (and a signal stage's input) through 0 V sources, so their
    currents can be read."""
    fed = dict(nodes)
    fed["vcc"] = f"{stage_id}.vcc"
    circuit.vsource(supply_meter(stage_id), nodes["vcc"], fed["vcc"], dc=0.0)
    if signal:
        fed["in"] = f"{stage_id}.in"
        circuit.vsource(input_meter(stage_id), nodes["in"], fed["in"], dc=0.0)
    return fed


def add_source(circuit: Circuit, source: SignalSource) -> None:
    """The signal source: an AC generator behind the source's own impedance."""
    if source.is_pickup:
        circuit.vsource(SOURCE, "src", GROUND, dc=0.0, ac=1.0)
        circuit.resistor("RSRC", "src", "src.l", source.resistance)
        circuit.inductor("LSRC", "src.l", INPUT, source.inductance)
        circuit.capacitor("CSRC", INPUT, GROUND, source.capacitance)
        if source.shunt > 0:
            circuit.resistor("RPOTS", INPUT, GROUND, source.shunt)
    else:
        circuit.vsource(SOURCE, "src", GROUND, dc=0.0, ac=1.0)
        circuit.resistor("RSRC", "src", INPUT, source.resistance)
