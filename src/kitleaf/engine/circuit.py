"""The circuit builder: named elements between named nodes, validated as they are added."""

from __future__ import annotations

import dataclasses
import math

from kitleaf.engine import elements as el
from kitleaf.engine.models import DeviceModel, get_model
from kitleaf.errors import ModelError

# Which device families accept which model kinds.
_KINDS = {"diode": ("diode",), "bjt": ("npn", "pnp"), "jfet": ("njf", "pjf"), "opamp": ("opamp",)}


class Circuit:
    """A netlist under construction; the ground node is ``"0"``. Every method returns ``self``."""

    def __init__(self, title: str = "") -> None:
        self.title = title
        self._elements: dict[str, el.Element] = {}

    @property
    def elements(self) -> tuple[el.Element, ...]:
        return tuple(self._elements.values())

    def element(self, name: str) -> el.Element:
        try:
            return self._elements[name]
        except KeyError:
            raise ModelError(f"no part named {name!r} in the circuit") from None

    def nodes(self) -> tuple[str, ...]:
        """Every node except ground, in order of first appearance."""
        seen: dict[str, None] = {}
        for element in self._elements.values():
            for node in el.terminals(element):
                if node != el.GROUND:
                    seen.setdefault(node)
        return tuple(seen)

    def resistor(self, name: str, a: str, b: str, value: float, tol: float = 0.0) -> Circuit:
        return self._add(el.Resistor(name, a, b, _positive(name, value), _tol(name, tol)))

    def capacitor(self, name: str, a: str, b: str, value: float, tol: float = 0.0) -> Circuit:
        return self._add(el.Capacitor(name, a, b, _positive(name, value), _tol(name, tol)))

    def inductor(self, name: str, a: str, b: str, value: float, tol: float = 0.0) -> Circuit:
        return self._add(el.Inductor(name, a, b, _positive(name, value), _tol(name, tol)))

    def pot(self, name: str, ccw: str, w: str, cw: str, value: float, position: float = 0.5,
            taper: str = "lin", tol: float = 0.0) -> Circuit:
        if taper not in el.TAPERS:
            raise ModelError(f"{name}: unknown taper {taper!r}, use one of {sorted(el.TAPERS)}")
        if not el.is_finite(position) or not 0.0 <= position <= 1.0:
            raise ModelError(f"{name}: pot position {position!r} is outside 0..1")
        pot = el.Pot(name, ccw, w, cw, _positive(name, value), float(position), taper,
                     _tol(name, tol))
        return self._add(pot)

    def vsource(self, name: str, p: str, n: str, dc: float = 0.0, ac: float = 0.0) -> Circuit:
        return self._add(el.VSource(name, p, n, _number(name, dc), _number(name, ac)))

    def isource(self, name: str, p: str, n: str, dc: float = 0.0, ac: float = 0.0) -> Circuit:
        return self._add(el.ISource(name, p, n, _number(name, dc), _number(name, ac)))

    def pump(self, name: str, inp: str, out: str, ref: str, ratio: float, rout: float
             ) -> Circuit:
        """A charge pump, averaged: ``out`` = ``ratio`` x ``inp`` - ``rout`` x its current."""
        if _number(name, ratio) == 0.0:
            raise ModelError(f"{name}: a pump's ratio must not be zero")
        return self._add(el.Pump(name, inp, out, ref, float(ratio), _positive(name, rout)))

    def diode(self, name: str, a: str, k: str, model: str | DeviceModel) -> Circuit:
        return self._add(el.Diode(name, a, k, _model(name, model, "diode")))

    def bjt(self, name: str, c: str, b: str, e: str, model: str | DeviceModel) -> Circuit:
        return self._add(el.Bjt(name, c, b, e, _model(name, model, "bjt")))

    def jfet(self, name: str, d: str, g: str, s: str, model: str | DeviceModel) -> Circuit:
        return self._add(el.Jfet(name, d, g, s, _model(name, model, "jfet")))

    def opamp(self, name: str, inp: str, inn: str, out: str, vpos: str, vneg: str,
              model: str | DeviceModel) -> Circuit:
        part = el.OpAmp(name, inp, inn, out, vpos, vneg, _model(name, model, "opamp"))
        return self._add(part)

    def replaced(self, name: str, **changes: object) -> Circuit:
        """A copy with one part's fields changed, e.g. ``replaced("VR1", position=0.2)``."""
        new = dataclasses.replace(self.element(name), **changes)
        scratch = Circuit()  # re-validates the changed part through its builder method
        fields = (getattr(new, f.name) for f in dataclasses.fields(new))
        getattr(scratch, _ADDERS[type(new)])(*fields)
        copy = Circuit(self.title)
        copy._elements = {k: scratch._elements[k] if k == name else v
                          for k, v in self._elements.items()}
        return copy

    def add(self, element: el.Element) -> Circuit:
        """Add a ready-made element (one taken from another circuit, say)."""
        return self._add(element)

    def _add(self, element: el.Element) -> Circuit:
        if not isinstance(element.name, str) or not element.name:
            raise ModelError(f"a part needs a name, got {element.name!r}")
        if element.name in self._elements:
            raise ModelError(f"{element.name}: a part with this name is already in the circuit")
        for node in el.terminals(element):
            if not isinstance(node, str) or not node:
                raise ModelError(f"{element.name}: node names must be non-empty strings")
        self._elements[element.name] = element
        return self

    def __repr__(self) -> str:
        return f"Circuit({self.title!r}, {len(self._elements)} parts)"


_ADDERS = {
    el.Resistor: "resistor", el.Capacitor: "capacitor", el.Inductor: "inductor", el.Pot: "pot",
    el.VSource: "vsource", el.ISource: "isource", el.Diode: "diode", el.Bjt: "bjt",
    el.Jfet: "jfet", el.OpAmp: "opamp", el.Pump: "pump",
}


def _number(name: str, value: float) -> float:
    if not el.is_finite(value):
        raise ModelError(f"{name}: value {value!r} is not a finite number")
    return float(value)


def _positive(name: str, value: float) -> float:
    value = _number(name, value)
    if value <= 0.0:
        raise ModelError(f"{name}: value must be positive, got {value!r}")
    return value


def _tol(name: str, tol: float) -> float:
    tol = _number(name, tol)
    if not 0.0 <= tol < 1.0 or math.isnan(tol):
        raise ModelError(f"{name}: tolerance {tol!r} must be a fraction in 0..1 (0.05 for 5 %)")
    return tol


def _model(name: str, model: str | DeviceModel, family: str) -> DeviceModel:
    try:
        found = get_model(model)
    except ModelError as exc:
        raise ModelError(f"{name}: {exc.message}") from None
    if found.kind not in _KINDS[family]:
        raise ModelError(f"{name}: model {found.name!r} is a {found.kind}, not a {family}")
    return found
