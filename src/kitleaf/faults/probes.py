"""Where the builder measures: the kit's test points by name, the meter, the black probe."""

from __future__ import annotations

from dataclasses import dataclass

from kitleaf.circuit.chain import GROUND, KitCircuit
from kitleaf.circuit.kind import point_name

METER_OHMS = 10e6  # a digital multimeter's input resistance on its volts ranges (common
# practice, no source)
METER_RESOLUTION = 0.01  # volts: a 3 1/2-digit meter's last digit on its 20 V range
METER_ACCURACY = 0.005  # of the reading, its usual DC accuracy (common practice, no source)
MODEL_MARGIN = 0.01  # of the reading, plus the resolution: what the models may be off by


@dataclass(frozen=True)
class Probe:
    """A test point: the name a builder types (``boost.q1.collector``), its label, its node."""

    name: str
    label: str
    node: str


@dataclass(frozen=True)
class Black:
    """Where the meter's black probe goes: a node of the fault board and how to find it."""

    key: str
    node: str
    text: str


BLACK = (
    Black("supply", GROUND, "black probe on the supply's negative terminal (the battery "
          "clip's black wire, or the DC jack's negative lug)"),
    Black("ground", "gnd", "black probe on the board's ground (the ground pad the battery "
          "clip's black wire is soldered to)"),
)


def black(key: str) -> Black:
    return next(b for b in BLACK if b.key == key)


def probes(kit: KitCircuit) -> tuple[Probe, ...]:
    """Every test point of the kit, in stage order, named as the guide's inline values are."""
    out = []
    for stage in kit.stages:
        for tp in kit.kind(stage).test_points(stage):
            name = f"{stage.id}.{point_name(tp.device, tp.pin, tp.node)}"
            node = kit.node_of(stage, tp.node)
            out.append(Probe(name, tp.label, "gnd" if node == GROUND else node))
    return tuple(out)


def meter_error(volts):
    """The meter's own uncertainty about a reading (volts), plus the models' margin."""
    return METER_RESOLUTION + (METER_ACCURACY + MODEL_MARGIN) * abs(volts)
