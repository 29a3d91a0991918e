"""The specs as JSON (schema ``kitleaf-specs/1``, documented in docs/specs-json.md)."""

from __future__ import annotations

from kitleaf.display import dbv, instability_words
from kitleaf.specs.model import (
    SAMPLES,
    Curve,
    Drive,
    DriveBand,
    DriveSetting,
    Headroom,
    KitSpecs,
    KnobPoint,
    PumpRipple,
    Range,
    Scoop,
    StageSpecs,
    Unstable,
    Voltage,
)

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


def _unstable(u: Unstable | None) -> dict | None:
    """Why a setting's small-signal figures are null: its growing pole."""
    if u is None:
        return None
    return {"pole_hz": _num(u.hz), "growth_per_s": _num(u.growth), "oscillates": u.oscillates,
            "stage": u.stage or None, "reason": instability_words(u)}


def _small(r: Range | None, unstable: Unstable | None, scale: float = 1.0) -> dict | None:
    """A small-signal figure: null at an unstable setting, where it means nothing."""
    return None if unstable is not None else _range(r, scale)


def _sweep(points: tuple[KnobPoint, ...]) -> list[dict]:
    return [{"knobs": {name: pos for name, pos in p.positions},
             "gain_db": _small(p.gain_db, p.unstable),
             "input_impedance_ohm_1khz": _small(p.input_impedance, p.unstable),
             "output_impedance_ohm_1khz": _small(p.output_impedance, p.unstable),
             "scoop": None if p.unstable else _scoop(p.scoop),
             "hum_mv_rms": _small(p.hum, p.unstable, 1e3),
             "hum_dbv": None if p.unstable else _dbv(p.hum),
             "unstable": _unstable(p.unstable)}
            for p in points]


def _swing(swing: tuple[float, str] | None) -> dict | None:
    return None if swing is None else {"volts": _num(swing[0]), "limit": swing[1]}


def _setting(s: DriveSetting) -> dict:
    return {"knobs": {name: pos for name, pos in s.positions}, "computed": not s.error,
            "reason": s.error or None,
            "clean_limit_v_peak": _num(s.clean_limit), "driven_limit_v_peak": _num(s.driven_limit),
            "clean_limit_below_v_peak": _num(s.clean_below),
            "driven_limit_below_v_peak": _num(s.driven_below),
            "thd_percent": [_num(x * 100, 4) for x in s.thd],
            "output_peak_v": [_num(x, 4) for x in s.peak],
            "at_levels": [{"level_v_peak": _num(p.level), "thd_percent": _num(p.thd * 100, 4),
                           "output_peak_v": _num(p.peak, 4),
                           "harmonics_v_peak": [_num(a, 4) for a in p.harmonics]}
                          for p in s.points],
            "swing_up": _swing(s.swing_up), "swing_down": _swing(s.swing_down),
            "tolerance": _drive_band(s.band)}


def _dbv(r: Range | None) -> dict | None:
    """RMS volts as dB relative to 1 V RMS (the higher the hum, the higher the figure)."""
    if r is None:
        return None
    levels = (None if x is None else max(dbv(x), -300.0) for x in (r.nominal, r.low, r.high))
    return _range(Range(*levels))


def _pump_ripple(r: PumpRipple) -> dict:
    return {"pump": r.pump, "rail": r.rail, "hz": _num(r.hz), "mv_pp": _range(r.volts_pp, 1e3),
            "output_mv_rms": _range(r.output, 1e3), "output_dbv": _dbv(r.output),
            "loudest_mv_rms": _num(r.loudest * 1e3),
            "loudest_knobs": {name: pos for name, pos in r.loudest_at}}


def _ripple(ripple: tuple[float, float] | None) -> dict | None:
    return None if ripple is None else {"mv_pp": _num(ripple[0] * 1e3), "hz": _num(ripple[1])}


def _headroom(h: Headroom | None) -> dict | None:
    return None if h is None else {**_range(h.volts), "limit": h.limit}


def _drive(d: Drive | None) -> dict | None:
    if d is None:
        return None
    return {"freq_hz": _num(d.freq), "levels_v_peak": [_num(x) for x in d.levels],
            "settings": [_setting(s) for s in d.settings], "tolerance": _drive_band(d.band)}


def _drive_band(b: DriveBand | None) -> dict | None:
    if b is None:
        return None
    return {"samples": b.samples,
            "thd_percent": {"low": [_num(x * 100, 4) for x in b.thd_low],
                            "high": [_num(x * 100, 4) for x in b.thd_high]},
            "output_peak_v": {"low": [_num(x, 4) for x in b.peak_low],
                              "high": [_num(x, 4) for x in b.peak_high]}}


def _scoop(s: Scoop | None) -> dict | None:
    return None if s is None else {"depth_db": _range(s.depth_db), "freq_hz": _range(s.hz)}


def _voltage(v: Voltage, specs: KitSpecs) -> dict:
    return {"label": v.label, "node": v.node, "device": v.device, "pin": v.pin,
            "volts": _range(v.volts),
            "readings": [{"supply": s.name, "supply_v": _num(s.volts), "volts": _range(r)}
                         for s, r in zip(specs.supplies, v.readings, strict=True)]}


def _response(freqs, curves: tuple[Curve, ...], low, high) -> dict:
    return {"freqs_hz": [_num(f) for f in freqs],
            "curves": [{"knob": c.knob or None, "position": c.position,
                        "gain_db": None if c.unstable else [_num(x, 4) for x in c.gain_db],
                        "unstable": _unstable(c.unstable)} for c in curves],
            "tolerance_db": {"low": [_num(x, 4) for x in low],
                             "high": [_num(x, 4) for x in high]}}


def _stage(s: StageSpecs, specs: KitSpecs) -> dict:
    return {
        "id": s.id, "kind": s.kind, "title": s.title, "signal_path": s.signal,
        "dc_voltages": [_voltage(v, specs) for v in s.voltages],
        "unstable": _unstable(s.unstable),
        "gain_db_1khz": _small(s.gain_db, s.unstable),
        "band_gain_db": _small(s.band_gain_db, s.unstable),
        "gain_db_1khz_by_knob": _sweep(s.knob_sweep),
        "low_corner_hz": _small(s.low_corner_hz, s.unstable),
        "high_corner_hz": _small(s.high_corner_hz, s.unstable),
        "input_impedance_ohm_1khz": _small(s.input_impedance, s.unstable),
        "output_impedance_ohm_1khz": _small(s.output_impedance, s.unstable),
        "supply_current_ma": _range(s.supply_current, 1e3),
        "headroom_v_peak": _headroom(s.headroom),
        "drive": _drive(s.drive),
        "scoop": None if s.unstable else _scoop(s.scoop),
        "response": _response(specs.freqs, s.curves, s.band_low, s.band_high)
        if s.signal else None,
    }


def specs_to_json(specs: KitSpecs) -> dict:
    """A plain dict for ``json.dumps``; every key is documented and stable."""
    return {
        "schema": SCHEMA,
        "kit": {"title": specs.title, "code": specs.code, "revision": specs.revision,
                "supply_v": _num(specs.supply_v),
                "knobs": [{"name": n, "pot": d} for n, d in specs.knobs],
                "switches": [{"name": n, "switch": d, "positions": list(p), "rest": r}
                             for n, d, p, r in specs.switches]},
        "tolerance": {"samples": specs.samples or SAMPLES, "seed": specs.seed,
                      "distribution": "uniform", "percentiles": [5, 95]},
        "supplies": [{"name": s.name, "volts": _num(s.volts)} for s in specs.supplies],
        "unstable": _unstable(specs.unstable),
        "gain_db_1khz": _small(specs.gain_db, specs.unstable),
        "gain_db_1khz_from_source": _small(specs.source_gain_db, specs.unstable),
        "band_gain_db": _small(specs.band_gain_db, specs.unstable),
        "gain_db_1khz_by_knob": _sweep(specs.knob_sweep),
        "gain_db_1khz_knob_ends": _sweep(specs.knob_ends),
        "low_corner_hz": _small(specs.low_corner_hz, specs.unstable),
        "high_corner_hz": _small(specs.high_corner_hz, specs.unstable),
        "input_impedance_ohm_1khz": _small(specs.input_impedance, specs.unstable),
        "output_impedance_ohm_1khz": _small(specs.output_impedance, specs.unstable),
        "supply_current_ma": _range(specs.supply_current, 1e3),
        "headroom_v_peak": _headroom(specs.headroom),
        "scoop": None if specs.unstable else _scoop(specs.scoop),
        "drive": _drive(specs.drive),
        "adapter_ripple": _ripple(specs.ripple),
        "hum_mv_rms": _small(specs.hum, specs.unstable, 1e3),
        "hum_dbv": None if specs.unstable else _dbv(specs.hum),
        "pump_ripple": [_pump_ripple(r) for r in specs.pump_ripples],
        "response": _response(specs.freqs, specs.curves, specs.band_low, specs.band_high),
        "stages": [_stage(s, specs) for s in specs.stages],
        "trims": [{"trimmer": t.designator, "stage": t.stage_id, "point": t.label,
                   "point_number": t.number, "volts": _num(t.volts),
                   "position": _range(t.position), "out_of_reach": _num(t.out_of_reach)}
                  for t in specs.trims],
    }
