"""What each response plot shows, taken from the specs: curves per knob position and corners."""

from __future__ import annotations

from kitleaf.display import percent
from kitleaf.render.plot import Panel, ResponsePlot, Trace
from kitleaf.specs.model import Curve, KitSpecs, Range
from kitleaf.values import format_value


def stage_plot(specs: KitSpecs, stage_id: str) -> ResponsePlot | None:
    stage = specs.stage(stage_id)
    if not stage.signal or not stage.curves:
        return None
    corners = _corners(stage.low_corner_hz, stage.high_corner_hz)
    return ResponsePlot(f"{stage.title}: gain from its input to its output", specs.freqs,
                        _panels(stage.curves, stage.band_low, stage.band_high, corners))


def kit_plot(specs: KitSpecs) -> ResponsePlot:
    corners = _corners(specs.low_corner_hz, specs.high_corner_hz)
    return ResponsePlot(f"{specs.title}: gain from the input jack to the output jack",
                        specs.freqs,
                        _panels(specs.curves, specs.band_low, specs.band_high, corners))


def _panels(curves: tuple[Curve, ...], low, high, corners
            ) -> tuple[Panel, ...]:
    """One panel per knob, in the kit block's order; one unnamed panel when no knob acts."""
    knobs = list(dict.fromkeys(c.knob for c in curves))
    panels = []
    for knob in knobs:
        mine = tuple(Trace(_label(c), c.gain_db) for c in curves if c.knob == knob)
        panels.append(Panel(_title(knob, knobs), mine, low, high, corners))
    return tuple(panels)


def _label(curve: Curve) -> str:
    if not curve.knob:
        return "nominal parts"
    return f"{curve.knob} {percent(curve.position)}"


def _title(knob: str, knobs: list[str]) -> str:
    """The panel's title; it names only the knobs of the plotted curves (a stage's plot is
    not moved by another stage's knob, so naming that knob would mislead)."""
    others = [name for name in knobs if name != knob]
    if not knob:
        return ""
    if not others:
        return f"{knob} knob turned"
    return f"{knob} knob turned, {_listed(others)} at 50 %"


def _listed(names: list[str]) -> str:
    """Names as a sentence lists them: "Gain", "Gain and Tone", "Gain, Tone and Level"."""
    return names[0] if len(names) == 1 else f"{', '.join(names[:-1])} and {names[-1]}"


def _corners(low: Range | None, high: Range | None) -> tuple[tuple[float, str], ...]:
    """The nominal -3 dB corners with their labels, knobs at half way."""
    return tuple((r.nominal, f"−3 dB {format_value(r.nominal, 'frequency')}")
                 for r in (low, high) if r is not None)
