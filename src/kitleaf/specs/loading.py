"""What loading does: each signal stage alone against in its place, and the kit behind its source.

A stage's figures in the spec table are measured in place: driven by the stage before it and
loaded by the stage after it. Here the same stage is also solved alone, from a 100 Ω source into
a 1 MΩ load, so the page can show what its neighbours change. For the kit, the response from the
source's own voltage (through its impedance, a pickup's inductance included) is set beside the
response from the input jack: the difference is the source loaded by the kit's input impedance.
Nominal values only: these show a design effect, not a part spread.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from kitleaf.circuit.chain import DEFAULT_LOAD, INPUT, LOW_Z, OUTPUT, KitCircuit
from kitleaf.circuit.kind import Stage
from kitleaf.specs import measures as m
from kitleaf.specs.model import SOURCE_GAIN_LABEL
from kitleaf.specs.response import band_peak
from kitleaf.specs.solve import KitState, View, nominal_positions

SOURCE_NODE = "src"  # the source's own voltage, before its impedance (see circuit/chain.py)


@dataclass(frozen=True)
class Row:
    """One figure measured two ways; None where it does not exist (a corner beyond the band)."""

    label: str
    quantity: str
    first: float | None
    second: float | None

    @property
    def moved(self) -> bool:
        """True when the two differ enough to mention (0.1 dB, or 1 % of a frequency)."""
        if self.first is None or self.second is None:
            return self.first != self.second
        if self.quantity == "db":
            return abs(self.first - self.second) >= 0.1
        return abs(self.first - self.second) >= 0.01 * abs(self.first)


@dataclass(frozen=True)
class Comparison:
    """A small two-column table: what changes between two ways of driving or loading."""

    caption: str
    headings: tuple[str, str]
    rows: tuple[Row, ...]

    @property
    def moved(self) -> bool:
        return any(row.moved for row in self.rows)


def _value(measure, view: View) -> float | None:
    x = float(np.asarray(measure(view))[0])
    return x if np.isfinite(x) else None


def _stage_rows(first: View, second: View, ends: tuple[tuple[str, str], tuple[str, str]]):
    rows = []
    for label, quantity, make in (("gain at 1 kHz", "db", m.gain_db),
                                  ("low corner (−3 dB)", "frequency",
                                   lambda a, b: m.corner(a, b, 0)),
                                  ("high corner (−3 dB)", "frequency",
                                   lambda a, b: m.corner(a, b, 1))):
        rows.append(Row(label, quantity, _value(make(*ends[0]), first),
                        _value(make(*ends[1]), second)))
    return tuple(rows)


def alone(kit: KitCircuit, stage: Stage) -> KitCircuit:
    """The kit cut down to its power stages and ``stage``, between a low-Z source and 1 MΩ."""
    power = tuple(s for s in kit.stages if not kit.kind(s).signal)
    knobs = tuple(k for k in kit.knobs if k.stage_id == stage.id)
    switches = tuple(k for k in kit.switches if k.stage_id == stage.id)
    return replace(kit, stages=(*power, stage), knobs=knobs, switches=switches, source=LOW_Z,
                   load=DEFAULT_LOAD)


def stage_loading(kit: KitCircuit, stage: Stage, base: KitState) -> Comparison:
    """The stage's gain and corners alone, and as measured in its place in the kit."""
    cut = alone(kit, stage)
    state = KitState(cut, nominal_positions(cut))
    rows = _stage_rows(state.nominal, base.nominal,
                       ((INPUT, OUTPUT), kit.stage_nodes(stage.id)))
    return Comparison("Alone and in its place",
                      ("alone: 100 Ω source, 1 MΩ load", "in the kit"), rows)


def _peak(node_in: str):
    def measure(view: View):
        return band_peak(view.sweep.ratio(node_in, OUTPUT))
    return measure


def source_loading(kit: KitCircuit, base: KitState) -> Comparison | None:
    """The kit's response from its input jack, and from the source's own voltage."""
    if kit.source.resistance <= LOW_Z.resistance and not kit.source.is_pickup:
        return None
    view = base.nominal
    jack, source = _peak(INPUT)(view), _peak(SOURCE_NODE)(view)
    rows = (
        Row(SOURCE_GAIN_LABEL, "db", _value(m.gain_db(INPUT, OUTPUT), view),
            _value(m.gain_db(SOURCE_NODE, OUTPUT), view)),
        Row("highest gain, 10 Hz to 40 kHz", "db", float(jack[0][0]), float(source[0][0])),
        Row("where the highest gain lies", "frequency", float(jack[1][0]), float(source[1][0])),
    )
    return Comparison(f"The {kit.source.name} loaded by the kit",
                      ("from the input jack", f"from the {kit.source.name}'s own voltage"), rows)
