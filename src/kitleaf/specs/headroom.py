"""Output headroom: the peak swing a node can carry before some device leaves its linear region.

Each device gives margins: DC distances (volts, from the bias point and the rails) that a signal
eats into before the device saturates or cuts off. A margin moves with the signal in proportion
to the small-signal voltage across it, so at a node N it allows a peak swing of
``margin * |H(N)| / |H(a) - H(b)|`` (H: complex voltages at 1 kHz per volt of source). The
smallest over every margin and device is the headroom.

- BJT: saturation, VCE (device frame) down to VCE(sat); cutoff, the collector up to the rail
  its load returns to and the emitter down to its own rail.
- JFET: pinch-off, VDS down to VGS - VTO; cutoff as for the BJT (drain and source).
- Op-amp: the output between the model's swing limits below V+ and above V-.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from kitleaf.circuit.rails import DOUBLED_NODE, NEGATIVE_NODE
from kitleaf.engine import elements as el
from kitleaf.engine.devices.bjt import SATURATION_VCE
from kitleaf.specs.sampled import Batch

GROUND = "0"


@dataclass(frozen=True)
class Margin:
    """A device's room before it leaves its linear region: volts across nodes ``a`` and ``b``."""

    label: str
    volts: np.ndarray  # (samples,)
    a: str
    b: str


def _polarity(element) -> float:
    return -1.0 if element.model.kind in ("pnp", "pjf") else 1.0


def _cutoff(batch: Batch, name: str, pin: str, node: str, rail: str, rails: set[str]):
    if node in rails:
        return []
    volts = np.abs(batch.voltage(rail) - batch.voltage(node))
    return [Margin(f"{name} {pin}, cutoff side", volts, node, rail)]


def _bjt(batch: Batch, q: el.Bjt, vcc: str, rails: set[str]) -> list[Margin]:
    pol = _polarity(q)
    vce = pol * (batch.voltage(q.c) - batch.voltage(q.e))
    top, bottom = (vcc, GROUND) if pol > 0 else (GROUND, vcc)
    return [Margin(f"{q.name} collector, saturation side", vce - SATURATION_VCE, q.c, q.e),
            *_cutoff(batch, q.name, "collector", q.c, top, rails),
            *_cutoff(batch, q.name, "emitter", q.e, bottom, rails)]


def _jfet(batch: Batch, j: el.Jfet, vcc: str, rails: set[str]) -> list[Margin]:
    pol = _polarity(j)
    vto = batch.params[j.name]["VTO"]
    pinch = pol * (batch.voltage(j.d) - batch.voltage(j.g)) + vto
    top, bottom = (vcc, GROUND) if pol > 0 else (GROUND, vcc)
    return [Margin(f"{j.name} drain, pinch-off side", pinch, j.d, j.g),
            *_cutoff(batch, j.name, "drain", j.d, top, rails),
            *_cutoff(batch, j.name, "source", j.s, bottom, rails)]


def _opamp(batch: Batch, u: el.OpAmp, vcc: str, rails: set[str]) -> list[Margin]:
    p = batch.params[u.name]
    out = batch.voltage(u.out)
    high = batch.voltage(u.vpos) - p["SWING_HI"] - out
    low = out - batch.voltage(u.vneg) - p["SWING_LO"]
    return [Margin(f"{u.name} output, upper limit", high, u.out, GROUND),
            Margin(f"{u.name} output, lower limit", low, u.out, GROUND)]


MARGINS = {el.Bjt: _bjt, el.Jfet: _jfet, el.OpAmp: _opamp}


def margins(batch: Batch, devices: tuple, vcc: str) -> list[Margin]:
    """Every margin of ``devices`` (engine elements), for a stage fed from node ``vcc``."""
    rails = {GROUND, vcc, "vcc", "supply", "vref", DOUBLED_NODE, NEGATIVE_NODE}
    found: list[Margin] = []
    for device in devices:
        found.extend(MARGINS[type(device)](batch, device, vcc, rails))
    return found


def headroom(found: list[Margin], x_ref: np.ndarray, batch: Batch, node: str
             ) -> tuple[np.ndarray, list[str]] | None:
    """Peak volts at ``node`` per sample and, per sample, the margin that limits it.

    ``x_ref`` is the complex solution (samples, n) at the reference frequency.
    """
    if not found:
        return None

    def at(name: str) -> np.ndarray:
        row = batch.row(name)
        return np.zeros(x_ref.shape[0], complex) if row is None else x_ref[:, row]

    h_node = np.abs(at(node))
    swings = []
    for m in found:
        across = np.abs(at(m.a) - at(m.b))
        with np.errstate(divide="ignore", invalid="ignore"):
            swing = np.where(across > 0, np.maximum(m.volts, 0.0) * h_node / across, np.inf)
        swings.append(swing)
    table = np.array(swings)
    limit = np.argmin(table, axis=0)
    return table[limit, np.arange(table.shape[1])], [found[i].label for i in limit]
