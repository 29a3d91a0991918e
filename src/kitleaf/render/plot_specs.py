"""What each response plot shows, taken from the specs: curves per knob position and corners."""

from __future__ import annotations

from kitleaf.circuit.stages import KINDS
from kitleaf.display import figure, percent, thd_text
from kitleaf.render.plot import Panel, ResponsePlot, Trace
from kitleaf.render.plot_drive import CurvePanel, DrivePicture, WavePanel
from kitleaf.specs.model import Curve, Drive, KitSpecs, Range, Scoop
from kitleaf.values import format_value


def stage_plot(specs: KitSpecs, stage_id: str) -> ResponsePlot | None:
    stage = specs.stage(stage_id)
    if not stage.signal or not stage.curves:
        return None
    if stage.unstable is not None:  # no corner to mark where the circuit oscillates
        corners = ()
    elif KINDS[stage.kind].shapes_response:  # its corners follow its knobs: mark the scoop
        corners = _scoop(stage.scoop)
    else:
        corners = _corners(stage.low_corner_hz, stage.high_corner_hz)
    return ResponsePlot(f"{stage.title}: gain from its input to its output", specs.freqs,
                        _panels(stage.curves, stage.band_low, stage.band_high, corners))


PANELS_PER_FIGURE = 3  # a printed page holds three panels at readable type (about 7 pt)


def in_figures(plot: ResponsePlot) -> tuple[ResponsePlot, ...]:
    """The plot cut into figures of at most :data:`PANELS_PER_FIGURE` panels, one above the
    next on the page, so a figure never needs shrinking to fit a printed page."""
    parts = [plot.panels[i:i + PANELS_PER_FIGURE]
             for i in range(0, len(plot.panels), PANELS_PER_FIGURE)] or [()]
    return tuple(ResponsePlot(plot.title if k == 0 else f"{plot.title} (continued)",
                              plot.freqs, panels) for k, panels in enumerate(parts))


def kit_plot(specs: KitSpecs) -> ResponsePlot:
    if specs.unstable:
        corners = ()
    elif not specs.passband:  # a tone control in the chain: mark its scoop, as its stage's
        corners = _scoop(specs.scoop)
    else:
        corners = _corners(specs.low_corner_hz, specs.high_corner_hz)
    return ResponsePlot(f"{specs.title}: gain from the input jack to the output jack",
                        specs.freqs,
                        _panels(specs.curves, specs.band_low, specs.band_high, corners))


def _panels(curves: tuple[Curve, ...], low, high, corners
            ) -> tuple[Panel, ...]:
    """One panel per knob or switch, in the kit block's order; one unnamed panel when no
    knob acts."""
    knobs = list(dict.fromkeys(c.knob for c in curves))
    rests = {c.knob: c.position for c in curves if c.at_rest}
    panels = []
    for knob in knobs:
        mine = tuple(Trace(_label(c), c.gain_db) for c in curves if c.knob == knob)
        resting = [c.at_rest for c in curves if c.knob == knob]
        # a switch's resting position is the band's curve, drawn solid
        solid = resting.index(True) if isinstance(rests.get(knob), str) else None
        panels.append(Panel(_title(knob, knobs, rests), mine, low, high, corners, solid))
    return tuple(panels)


def _label(curve: Curve) -> str:
    """The legend's words; an unstable setting's curve says that it is no response."""
    words = _setting_label(curve)
    return words if curve.unstable is None else f"{words} (unstable: not a response)"


def _setting_label(curve: Curve) -> str:
    if not curve.knob:
        return "nominal parts"
    if isinstance(curve.position, str):
        return f"{curve.knob}: {curve.position}"
    return f"{curve.knob} {percent(curve.position)}"


def _title(knob: str, knobs: list[str], rests: dict | None = None) -> str:
    """The panel's title; it names only the knobs and switches of the plotted curves (a
    stage's plot is not moved by another stage's knob, so naming that knob would mislead).
    ``rests`` gives the position each rests at by its name (a switch's by its name)."""
    if not knob:
        return ""
    switches = {name: rest for name, rest in (rests or {}).items() if isinstance(rest, str)}
    turned = f"{knob} switch set" if knob in switches else f"{knob} knob turned"
    others = [name for name in knobs if name != knob and name not in switches]
    held = ([f"{_listed(others)} at 50 %"] if others else []) + [
        f"{name} set to {switches[name]}" for name in knobs if name != knob and name in switches]
    return ", ".join([turned, *held])


def _listed(names: list[str]) -> str:
    """Names as a sentence lists them: "Gain", "Gain and Tone", "Gain, Tone and Level"."""
    return names[0] if len(names) == 1 else f"{', '.join(names[:-1])} and {names[-1]}"


def _scoop(scoop: Scoop | None) -> tuple[tuple[float, str], ...]:
    """The deepest dip with the knobs at half way, marked where it lies; none without one."""
    if scoop is None:
        return ()
    where = format_value(scoop.hz.nominal, "frequency")
    return ((scoop.hz.nominal, f"scoop {figure(scoop.depth_db.nominal, 'db')} at {where}"),)


def _corners(low: Range | None, high: Range | None) -> tuple[tuple[float, str], ...]:
    """The nominal -3 dB corners with their labels, knobs at half way."""
    return tuple((r.nominal, f"−3 dB {format_value(r.nominal, 'frequency')}")
                 for r in (low, high) if r is not None)


def wave_picture(specs: KitSpecs) -> DrivePicture | None:
    """The kit's output over two cycles at each playing level, knobs at half way; None
    when the large-signal figures were not computed."""
    drive = specs.drive
    if drive is None or drive.base.error:
        return None
    panels = tuple(WavePanel(p.level, f"{format_value(p.level, 'voltage')} pickup peak: "
                                      f"THD {thd_text(p.thd)}, output "
                                      f"{format_value(p.peak, 'voltage')} peak", p.wave)
                   for p in drive.base.points)
    return DrivePicture(f"{specs.title}: output beside the pickup, knobs at half way", panels,
                        freq=drive.freq)


def drive_picture(specs: KitSpecs) -> DrivePicture | None:
    """THD and output peak against the pickup level, one line per position of each knob and
    switch (a panel pair each; one pair, knobs at half way, for a kit with neither)."""
    drive = specs.drive
    if drive is None or drive.base.error:
        return None
    rests = {name: rest for name, _, _, rest in specs.switches}
    names = [name for name, _ in specs.knobs] + list(rests)
    panels = []
    for name in names or [""]:
        settings = _control_settings(drive, name)
        title = _title(name, names, rests) or "Knobs fixed"
        bands = [s.band for _, s in settings]  # each line's own tolerance spread
        panels.append(CurvePanel(f"THD, {title}", "thd",
                                 tuple((lb, s.thd) for lb, s in settings),
                                 tuple(b and (b.thd_low, b.thd_high) for b in bands)))
        panels.append(CurvePanel(f"Output peak, {title}", "volts",
                                 tuple((lb, s.peak) for lb, s in settings),
                                 tuple(b and (b.peak_low, b.peak_high) for b in bands)))
    return DrivePicture(f"{specs.title}: distortion and output against the pickup level",
                        tuple(panels), drive.levels, tuple(p.level for p in drive.base.points),
                        drive.freq)


def _control_settings(drive: Drive, name: str) -> list:
    """(label, setting) for each computed position of knob or switch ``name``: a knob's in
    order of rotation, a switch's in the kit block's order."""
    if not name:
        return [("nominal parts", drive.base)]
    found = [(dict(s.positions)[name], s) for s in drive.settings
             if s.positions and s.positions[0][0] == name and not s.error]
    if found and isinstance(found[0][0], str):
        return [(f"{name}: {pos}", s) for pos, s in found]
    return [(f"{name} {percent(pos)}", s) for pos, s in sorted(found, key=lambda f: f[0])]
