"""What each response plot shows, taken from the specs: curves per knob position and corners."""

from __future__ import annotations

from kitleaf.render.plot import Curve, ResponsePlot
from kitleaf.specs.model import KitSpecs


def stage_plot(specs: KitSpecs, stage_id: str) -> ResponsePlot | None:
    stage = specs.stage(stage_id)
    if not stage.signal or not stage.curves:
        return None
    return ResponsePlot(
        f"{stage.title}: gain against frequency", specs.freqs,
        tuple(Curve(label, tuple(db)) for label, db in stage.curves),
        corners=tuple(c.nominal for c in (stage.low_corner_hz, stage.high_corner_hz) if c),
    )


def kit_plot(specs: KitSpecs) -> ResponsePlot:
    return ResponsePlot(
        f"{specs.title}: whole kit, source to load", specs.freqs,
        tuple(Curve(label, tuple(db)) for label, db in specs.curves),
        corners=tuple(c.nominal for c in (specs.low_corner_hz, specs.high_corner_hz) if c),
    )
