"""Writes a Circuit as a SPICE netlist, so an outside simulator can check the engine's answers."""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

from kitleaf.engine import elements as el
from kitleaf.engine.devices.base import VT
from kitleaf.engine.devices.bjt import EBO_AMPS
from kitleaf.engine.devices.opamp import (
    CLAMP_OVERDRIVE,
    CLAMP_U,
    CLAMP_WIDTH,
    H_FLOOR,
    H_MIN,
    IQ_FADE,
    LIMIT_FLOOR,
    R1,
    SUB_KNEE,
    SUB_R,
    compensation,
    slew_current,
)
from kitleaf.engine.models import NON_SPICE, DeviceModel

_SPICE_KIND = {"diode": "D", "npn": "NPN", "pnp": "PNP", "njf": "NJF", "pjf": "PJF"}


@dataclass(frozen=True)
class SpiceNetlist:
    """Netlist text (no analysis or .end) and the names each part and node got in it."""

    text: str
    nodes: dict[str, str]
    parts: dict[str, str]

    def node(self, name: str) -> str:
        return "0" if name == el.GROUND else self.nodes[name]


def to_spice(circuit) -> SpiceNetlist:
    """Element lines, model cards and op-amp subcircuits for every part of ``circuit``."""
    nodes = {n: f"n{i + 1}" for i, n in enumerate(circuit.nodes())}
    writer = _Writer(nodes)
    for element in circuit.elements:
        _WRITERS[type(element)](writer, element)
    lines = [f"* {circuit.title or 'kitleaf circuit'}", *writer.lines, *writer.cards]
    return SpiceNetlist("\n".join(lines) + "\n", nodes, writer.parts)


class _Writer:
    def __init__(self, nodes: dict[str, str]) -> None:
        self.nodes, self.lines, self.cards = nodes, [], []
        self.parts: dict[str, str] = {}
        self.models: dict[int | str, str] = {}

    def n(self, node: str) -> str:
        return "0" if node == el.GROUND else self.nodes[node]

    def line(self, prefix: str, part: str, nodes: tuple[str, ...], rest: str) -> str:
        name = f"{prefix}{len(self.parts) + 1}"
        self.parts[part] = name
        self.lines.append(f"{name} {' '.join(self.n(x) for x in nodes)} {rest}")
        return name

    def model_text(self, body: str) -> str:
        """A model card given as text (one per distinct text)."""
        if body not in self.models:
            name = f"m{len(self.models) + 1}"
            self.models[body] = name
            self.cards.append(f".model {name} {body}")
        return self.models[body]

    def model(self, model: DeviceModel, card: Callable[[str, DeviceModel], list[str]]) -> str:
        if id(model) not in self.models:
            name = f"m{len(self.models) + 1}"
            self.models[id(model)] = name
            self.cards.extend(card(name, model))
        return self.models[id(model)]


def _num(x: float) -> str:
    return f"{x:.12g}"


def _model_card(name: str, model: DeviceModel) -> list[str]:
    params = " ".join(f"{k}={_num(v)}" for k, v in sorted(model.params.items())
                      if math.isfinite(v) and k not in NON_SPICE)
    return [f".model {name} {_SPICE_KIND[model.kind]}({params})"]


def _opamp_card(name: str, model: DeviceModel) -> list[str]:
    """The macro-model of kitleaf.engine.devices.opamp as a subcircuit of B sources."""
    p = model.get
    vs = "(v(vpos)-v(vneg))"
    working = p("SWING_HI") + p("SWING_LO") + 2.0 * H_MIN
    rho = f"min(max({vs}/{_num(working)},0),1)"
    mid = f"((v(vpos)+v(vneg))/2+{_num((p('SWING_LO') - p('SWING_HI')) / 2)}*{rho})"
    h_raw = f"({vs}-{_num(p('SWING_HI') + p('SWING_LO'))})/2"
    half = f"max(max({h_raw},{_num(H_MIN)}*{rho}),{_num(H_FLOOR)})"
    f = f"({mid}+{half}*tanh((v(x)-{mid})/{half}))"
    z = f"((-{vs}-{_num(SUB_KNEE)})/{_num(VT)})"
    substrate = f"{_num(VT / SUB_R)}*{_softplus(z)}"
    isr = float(slew_current(p))
    ilim, rout = p("ILIM"), p("ROUT")
    over = _softplus(f"(v(x)-{mid}-{_num(CLAMP_U)}*{half})/{_num(CLAMP_WIDTH)}")
    under = _softplus(f"({mid}-{_num(CLAMP_U)}*{half}-v(x))/{_num(CLAMP_WIDTH)}")
    return [
        f".subckt {name} inp inn out vpos vneg",
        f"rin inp inn {_num(p('RIN'))}",
        f"b2 vneg x i={_num(isr)}*tanh({_num(p('AOL') / R1 / isr)}*v(inp,inn))",
        f"g2 vneg x vpos vneg {_num(0.5 / R1)}",
        f"r1 x vneg {_num(R1)}",
        f"c1 x vneg {_num(float(compensation(p)))}",
        f"b3 x vneg i={_num(isr / CLAMP_OVERDRIVE * CLAMP_WIDTH)}*({over}-{under})",
        f"b1 0 out i={_num(ilim)}*tanh(({f}-v(out))/{_num(rout * ilim)})"
        f"+({f}-v(out))/{_num(rout / LIMIT_FLOOR)}",
        f"bq vpos vneg i={_num(p('IQ'))}*tanh({vs}/{_num(IQ_FADE)})-{substrate}",
        f"ibp inp vneg dc {_num(p('IB'))}",
        f"ibn inn vneg dc {_num(p('IB'))}",
        ".ends",
    ]


def _softplus(z: str) -> str:
    """log(1 + e^z) written so it cannot overflow."""
    return f"(max({z},0)+ln(1+exp(-abs({z}))))"


def _passive(prefix: str):
    def write(w: _Writer, e) -> None:
        w.line(prefix, e.name, (e.a, e.b), _num(e.value))
    return write


def _pot(w: _Writer, e: el.Pot) -> None:
    lower, upper = e.legs()
    w.line("r", e.name + ":ccw", (e.ccw, e.w), _num(lower))
    w.line("r", e.name + ":cw", (e.w, e.cw), _num(upper))


def _source(prefix: str):
    def write(w: _Writer, e) -> None:
        w.line(prefix, e.name, (e.p, e.n), f"dc {_num(e.dc)} ac {_num(e.ac)}")
    return write


def _device(prefix: str, pins: tuple[str, ...]):
    def write(w: _Writer, e) -> None:
        w.line(prefix, e.name, tuple(getattr(e, p) for p in pins), w.model(e.model, _model_card))
    return write


def _bjt(w: _Writer, e: el.Bjt) -> None:
    """The transistor, and its emitter-base breakdown as a diode of negligible forward
    current whose SPICE breakdown is the engine's (-IBV exp(-(v + BV) / VT))."""
    w.line("q", e.name, (e.c, e.b, e.e), w.model(e.model, _model_card))
    bv = e.model.get("BVEBO")
    if math.isfinite(bv):
        pins = (e.b, e.e) if e.model.kind == "npn" else (e.e, e.b)
        card = f"IS=1e-30 N=1 BV={_num(bv)} IBV={_num(EBO_AMPS)}"
        w.line("d", e.name + ":ebo", pins, w.model_text(f"D({card})"))


def _pump(w: _Writer, e: el.Pump) -> None:
    """The averaged pump as SPICE's linear controlled sources: E makes ratio x the input, a
    0 V source senses the delivered current through rout, F draws ratio x it from the input."""
    inside, sensed = f"{e.name}:e", f"{e.name}:s"
    w.nodes.setdefault(inside, f"n{len(w.nodes) + 1}")
    w.nodes.setdefault(sensed, f"n{len(w.nodes) + 1}")
    w.line("e", e.name + ":gain", (inside, e.ref, e.inp, e.ref), _num(e.ratio))
    # sensed backwards, so its branch current has the engine's sign (negative delivering)
    sense = w.line("v", e.name, (sensed, inside), "dc 0")
    w.line("r", e.name + ":rout", (sensed, e.out), _num(e.rout))
    w.line("f", e.name + ":draw", (e.inp, e.ref), f"{sense} {_num(-e.ratio)}")


def _opamp(w: _Writer, e: el.OpAmp) -> None:
    pins = (e.inp, e.inn, e.out, e.vpos, e.vneg)
    w.line("x", e.name, pins, w.model(e.model, _opamp_card))


_WRITERS = {
    el.Resistor: _passive("r"), el.Capacitor: _passive("c"), el.Inductor: _passive("l"),
    el.Pot: _pot, el.VSource: _source("v"), el.ISource: _source("i"),
    el.Diode: _device("d", ("a", "k")), el.Bjt: _bjt,
    el.Jfet: _device("j", ("d", "g", "s")), el.OpAmp: _opamp, el.Pump: _pump,
}
