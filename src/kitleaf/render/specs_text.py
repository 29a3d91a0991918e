"""The specs as a short plain-text summary for the terminal (``kitleaf specs``)."""

from __future__ import annotations

from kitleaf.display import (
    hum_text,
    level_text,
    range_text,
    settings,
    si,
    small_signal_text,
    thd_text,
    trim_instruction,
    trim_travel,
    unstable_text,
)
from kitleaf.specs.model import Drive, Headroom, KitSpecs, KnobPoint


def specs_to_text(specs: KitSpecs) -> str:
    """A short plain-text summary for the terminal."""
    width = max((len(_knobs(p)) + 1 for p in specs.knob_sweep), default=15)
    unstable = specs.unstable

    def small(value, quantity: str) -> str:
        return small_signal_text(value, quantity, unstable)

    lines = [f"{specs.title} ({specs.code}, revision {specs.revision})",
             f"  {_gain_words(specs.clips) + ' ':<19}{small(specs.gain_db, 'db')}",
             *(f"    {_knobs(p):<{width}}{small_signal_text(p.gain_db, 'db', p.unstable)}"
               for p in specs.knob_sweep),
             f"  band gain          {small(specs.band_gain_db, 'db')}",
             *([f"  low corner         {small(specs.low_corner_hz, 'frequency')}",
                f"  high corner        {small(specs.high_corner_hz, 'frequency')}"]
               if specs.passband else
               ["  corners            none given (no flat band: see the mid scoop)"]),
             *_scoop_lines(specs, "  ", unstable),
             f"  input impedance    {small(specs.input_impedance, 'resistance')}",
             f"  output impedance   {small(specs.output_impedance, 'resistance')}",
             f"  current draw       {range_text(specs.supply_current, 'current')}",
             *(_drive_lines(specs.drive) if specs.drive else
               [f"  output headroom    {_swing(specs.headroom)}"])]
    if specs.hum is not None:
        lines.append(f"  hum at the output  {_hum(specs.hum, unstable)}")
        lines.extend(f"    {_knobs(p):<{width}}{_hum(p.hum, p.unstable)}"
                     for p in specs.knob_sweep)
    for r in specs.pump_ripples:
        lines.append(f"  {r.pump} switching ripple {range_text(r.volts_pp, 'voltage')} p-p on "
                     f"{r.rail.upper()} at {si(r.hz, 'frequency')}; at the output "
                     f"{hum_text(r.output)}")
    for trim in specs.trims:
        lines += [f"  set-up: {trim_instruction(trim)}", f"    {trim_travel(trim)}"]
    for s in specs.stages:
        lines.append(f"  stage {s.id} ({s.kind})")
        if s.gain_db is not None:
            lines += [f"    {_gain_words(s.clips) + ' ':<17}{small(s.gain_db, 'db')}",
                      *(_corner_lines(s, unstable) if s.passband else
                        ["    corners          none given (no flat band: see the mid scoop)"]),
                      f"    input impedance  {small(s.input_impedance, 'resistance')}",
                      f"    output impedance {small(s.output_impedance, 'resistance')}"]
        lines += _scoop_lines(s, "    ", unstable)
        for v in s.voltages:
            readings = ", ".join(f"{sup.name} {range_text(r, 'voltage')}"
                                 for sup, r in zip(specs.supplies, v.readings, strict=True))
            lines.append(f"    {v.label:<16} {readings}")
    return "\n".join(lines)


def _scoop_lines(s, indent: str, unstable) -> list[str]:
    """The mid scoop of a kit or stage that has one, in the column of its other figures."""
    if s.scoop is None:
        return []
    label = f"{indent}{'mid scoop':<{19 - len(indent) + 2}}"
    if unstable is not None:
        return [f"{label}{unstable_text(unstable)}"]
    return [f"{label}{range_text(s.scoop.depth_db, 'db')} at {range_text(s.scoop.hz, 'frequency')}"]


def _corner_lines(s, unstable=None) -> list[str]:
    return [f"    low corner       {small_signal_text(s.low_corner_hz, 'frequency', unstable)}",
            f"    high corner      {small_signal_text(s.high_corner_hz, 'frequency', unstable)}"]


def _gain_words(clips: bool) -> str:
    """A clipping stage's gain holds for small signals only, and says so."""
    return "small-signal gain" if clips else "gain at 1 kHz"


def _hum(value, unstable) -> str:
    return hum_text(value) if unstable is None else unstable_text(unstable)


def _knobs(point: KnobPoint) -> str:
    return settings(point.positions)


def _swing(h: Headroom | None) -> str:
    return "–" if h is None else f"{range_text(h.volts, 'voltage')} peak ({h.limit})"


def _drive_lines(drive: Drive | None) -> list[str]:
    """The large-signal figures with every knob at half (a sine from the pickup)."""
    if drive is None:
        return []
    d = drive.base
    if d.error:
        return [f"  large signal       not computed: {d.error}"]
    clean = level_text(d.clean_limit, drive.levels, d.clean_below)
    driven = level_text(d.driven_limit, drive.levels, d.driven_below)
    lines = [f"  clean up to        {clean} pickup peak (THD 1 %)",
             f"  driven from        {driven} pickup peak (THD 10 %)"]
    lines += [f"    at {si(p.level, 'voltage'):<12}THD {thd_text(p.thd)}, output "
              f"{si(p.peak, 'voltage')} peak" for p in d.points]
    if d.swing_up is None or d.swing_down is None:
        return lines + [f"  output swing       not reached at {si(drive.levels[-1], 'voltage')}"]
    return lines + [f"  output swing       +{si(d.swing_up[0], 'voltage')} ({d.swing_up[1]}), "
                    f"-{si(d.swing_down[0], 'voltage')} ({d.swing_down[1]})"]
