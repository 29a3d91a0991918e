"""The specs as JSON (schema ``kitleaf-specs/1``, documented in docs/specs-json.md) and as text."""

from __future__ import annotations

from kitleaf.render.environment import range_text
from kitleaf.specs.model import KitSpecs, KnobPoint, Range, StageSpecs

SCHEMA = "kitleaf-specs/1"


def _num(x: float | None, figures: int = 6) -> float | None:
    """Rounded to ``figures`` significant figures, so the JSON is stable across platforms."""
    return None if x is None else float(f"{x:.{figures}g}")


def _range(r: Range | None, scale: float = 1.0) -> dict | None:
    if r is None:
        return None
    return {"nominal": _num(r.nominal * scale),
            "low": _num(r.low * scale) if r.low is not None else None,
            "high": _num(r.high * scale) if r.high is not None else None}


def _sweep(points: tuple[KnobPoint, ...]) -> list[dict]:
    return [{"knobs": {name: pos for name, pos in p.positions}, "gain_db": _range(p.gain_db)}
            for p in points]


def _stage(s: StageSpecs) -> dict:
    return {
        "id": s.id, "kind": s.kind, "title": s.title, "signal_path": s.signal,
        "dc_voltages": [{"label": v.label, "node": v.node, "device": v.device, "pin": v.pin,
                         "volts": _range(v.volts)} for v in s.voltages],
        "gain_db_1khz": _range(s.gain_db),
        "gain_db_1khz_by_knob": _sweep(s.knob_sweep),
        "low_corner_hz": _range(s.low_corner_hz),
        "high_corner_hz": _range(s.high_corner_hz),
        "input_impedance_ohm_1khz": _range(s.input_impedance),
        "output_impedance_ohm_1khz": _range(s.output_impedance),
        "supply_current_ma": _range(s.supply_current, 1e3),
    }


def specs_to_json(specs: KitSpecs) -> dict:
    """A plain dict for ``json.dumps``; every key is documented and stable."""
    return {
        "schema": SCHEMA,
        "kit": {"title": specs.title, "code": specs.code, "revision": specs.revision,
                "supply_v": _num(specs.supply_v)},
        "gain_db_1khz": _range(specs.gain_db),
        "gain_db_1khz_by_knob": _sweep(specs.knob_sweep),
        "low_corner_hz": _range(specs.low_corner_hz),
        "high_corner_hz": _range(specs.high_corner_hz),
        "input_impedance_ohm_1khz": _range(specs.input_impedance),
        "output_impedance_ohm_1khz": _range(specs.output_impedance),
        "supply_current_ma": _range(specs.supply_current, 1e3),
        "stages": [_stage(s) for s in specs.stages],
    }


def specs_to_text(specs: KitSpecs) -> str:
    """A short plain-text summary for the terminal."""
    lines = [f"{specs.title} ({specs.code}, revision {specs.revision})",
             f"  gain at 1 kHz      {range_text(specs.gain_db, 'db')}",
             f"  low corner         {range_text(specs.low_corner_hz, 'frequency')}",
             f"  high corner        {range_text(specs.high_corner_hz, 'frequency')}",
             f"  input impedance    {range_text(specs.input_impedance, 'resistance')}",
             f"  current draw       {range_text(specs.supply_current, 'current')}"]
    for s in specs.stages:
        lines.append(f"  stage {s.id} ({s.kind})")
        if s.gain_db is not None:
            lines.append(f"    gain at 1 kHz    {range_text(s.gain_db, 'db')}")
        for v in s.voltages:
            lines.append(f"    {v.label:<16} {range_text(v.volts, 'voltage')}")
    return "\n".join(lines)
