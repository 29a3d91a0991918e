"""Large-signal figures: the kit driven by a sine from its pickup model, at every knob setting.

The whole kit is solved at once (one periodic steady state per level and knob setting, see
``kitleaf.engine.periodic``); each stage's figures are read at its output node in the chain,
so a stage is driven by what the stages before it really deliver and loaded by the next.
Levels are the pickup's own peak voltage (before its source impedance).
"""

from __future__ import annotations

import math
from collections import OrderedDict
from dataclasses import dataclass

import numpy as np

from kitleaf.circuit.chain import OUTPUT, SOURCE
from kitleaf.engine import elements as el
from kitleaf.engine.devices.base import VT
from kitleaf.engine.periodic import PeriodicResult, periodic_steady_state
from kitleaf.errors import KitleafError
from kitleaf.guide.kit_lines import PLAYING_VOLTS, playing_levels, test_tone
from kitleaf.guide.model import KitBlock
from kitleaf.specs.drive_limits import first_bracket, refine
from kitleaf.specs.model import Drive, DriveBand, DrivePoint, DriveSetting

# Pickup peak levels of the sweep (volts), whatever the playing levels: 300 mV and 1 V are
# the design rules' own (clips-when-clean, opamp-rail). The playing levels by default: 100 mV,
# 300 mV and 1 V peak span a single-coil's soft picking to a hot humbucker's hard strum
# (common practice, no source); a kit block's ``playing-levels:`` and ``test-tone:`` lines
# set its own.
GRID = (0.03, 0.1, 0.2, 0.3, 1.0, 2.0)
PLAYING = (0.1, 0.3, 1.0)
DRIVE_HZ = 1000.0
POINTS = 96  # per period: harmonics up to the 47th, the first five shown
CLEAN_THD = 0.01  # 1 %: the clean limit
DRIVEN_THD = 0.10  # 10 %: where a stage is driven
CLIPPED_THD = 0.01  # below this at the top level a stage has not met its swing limits
# Where THD is already past a mark at the sweep's lowest level, the kit is solved again at
# these levels below it, down to the softest playing level (a weak single coil's softest
# note): the crossing is then bracketed and solved for as within the sweep, or lies below.
BELOW_SWEEP = (PLAYING_VOLTS[0], 0.003, 0.01)


@dataclass(frozen=True)
class Below:
    """A limit whose mark THD is past already at ``level``, the lowest level solved."""

    level: float


@dataclass(frozen=True)
class DrivePlan:
    """What the kit is driven with: the playing levels (pickup peak volts) whose figures are
    shown and named, and the test tone's frequency."""

    playing: tuple[float, ...] = PLAYING
    freq: float = DRIVE_HZ

    @property
    def levels(self) -> tuple[float, ...]:
        """The sweep: the grid and the playing levels, lowest first."""
        return tuple(sorted(set(GRID) | set(self.playing)))


def drive_plan(kit: KitBlock) -> DrivePlan:
    """The kit block's playing levels and test tone, each where it states them."""
    lines = {e.key: e for e in kit.extra}
    levels, tone = lines.get("playing-levels"), lines.get("test-tone")
    return DrivePlan(PLAYING if levels is None else playing_levels(levels),
                     DRIVE_HZ if tone is None else test_tone(tone))


# The last few sweeps and their limits by their circuits' text: a kit solved again in one
# process (a rebuild, the checks after the specs) reuses them, which saves seconds.
_SWEEPS: OrderedDict[str, object] = OrderedDict()
SWEEPS_KEPT = 16


def kept(key: str, compute):
    """``compute()``, kept under ``key`` among the last SWEEPS_KEPT."""
    if key not in _SWEEPS:
        _SWEEPS[key] = compute()
        while len(_SWEEPS) > SWEEPS_KEPT:
            _SWEEPS.popitem(last=False)
    return _SWEEPS[key]


def drive_sweep(states, nodes: list[str],
                plan: DrivePlan) -> tuple[PeriodicResult | None, str]:
    """One periodic solve of every state (knob setting) at every level, keeping the kit's
    nodes; (None, the reason) when the engine cannot run it at all."""
    key = repr([s.circuit.elements for s in states]) + repr(nodes) + repr(plan)
    return kept(key, lambda: _sweep(states, nodes, plan))


def drive_limits(states, result: PeriodicResult, wanted,
                 plan: DrivePlan) -> dict[tuple, float | None]:
    """:func:`limits`, kept as the sweep is."""
    key = repr([s.circuit.elements for s in states]) + repr(sorted(wanted)) + repr(plan)
    return kept(key + "limits", lambda: limits(states, result, wanted, plan.freq))


def _sweep(states, nodes: list[str], plan: DrivePlan) -> tuple[PeriodicResult | None, str]:
    batches = [s.nominal.batch.system for s in states]
    try:
        return periodic_steady_state(batches, SOURCE, plan.levels, plan.freq, nodes=nodes,
                                     points=POINTS), ""
    except KitleafError as exc:
        return None, exc.message


def limits(states, result: PeriodicResult, wanted, freq: float) -> dict[tuple, object]:
    """The 1 % and 10 % levels of each (state index, node) of ``wanted``, keyed
    (index, node, threshold): each bracketed on the sweep's grid (extended below it where
    THD is past the mark at its lowest level) and solved for (specs/drive_limits.py); a
    :class:`Below` where THD is past the mark even at BELOW_SWEEP[0]. Pairs whose sweep did
    not settle are left out."""
    found, brackets, low = {}, {}, {}
    thd_at = {}
    for index, node in wanted:
        if not result.converged[index, :, 0].all():
            continue
        if node not in thd_at:
            thd_at[node] = result.distortion(node).thd[:, :, 0]
        for threshold in (CLEAN_THD, DRIVEN_THD):
            first = first_bracket(result.levels, thd_at[node][index], threshold)
            target = brackets if isinstance(first, tuple) else found if first is None else low
            target[(index, node, threshold)] = first
    found |= _below_sweep(states, low, float(result.levels[0]),
                          {key: thd_at[key[1]][key[0]][0] for key in low}, brackets, freq)
    return {**found, **refine(brackets, lambda requests: _thd_at(states, requests, freq))}


def _below_sweep(states, low: dict, lowest: float, thd_lowest: dict, brackets: dict,
                 freq: float) -> dict[tuple, object]:
    """The keys of ``low`` (THD past the mark at the sweep's ``lowest`` level) solved at
    BELOW_SWEEP: each crossing found there is added to ``brackets``; the rest, returned,
    are below BELOW_SWEEP[0] (below ``lowest`` where those levels did not settle)."""
    if not low:
        return {}
    pairs = sorted({(index, node) for index, node, _ in low})
    thd = _thd_at(states, [((i, n, None), lv) for i, n in pairs for lv in BELOW_SWEEP], freq)
    levels = (*BELOW_SWEEP, lowest)
    found = {}
    for key in low:
        at = pairs.index(key[:2]) * len(BELOW_SWEEP)
        curve = [*thd[at:at + len(BELOW_SWEEP)], thd_lowest[key]]
        if not all(math.isfinite(x) for x in curve):
            found[key] = Below(lowest)
            continue
        first = first_bracket(levels, curve, key[2])
        if isinstance(first, tuple):
            brackets[key] = first
        else:
            found[key] = Below(levels[0])
    return found


def _thd_at(states, requests: list[tuple[tuple, float]], freq: float) -> list[float]:
    """THD at each request's (state index, node) and level, solved in one batch; NaN where
    the periodic solve did not settle."""
    nodes = sorted({node for (_, node, _), _ in requests})
    try:
        result = periodic_steady_state(
            [states[index].nominal.batch.system for (index, _, _), _ in requests], SOURCE,
            [[level] for _, level in requests], freq, nodes=nodes, points=POINTS)
    except KitleafError:
        return [math.nan] * len(requests)
    thd = {node: result.distortion(node).thd[:, 0, 0] for node in nodes}
    return [float(thd[node][i]) if result.converged[i, 0, 0] else math.nan
            for i, ((_, node, _), _) in enumerate(requests)]


def setting(result: PeriodicResult, index: int, positions: tuple, node: str,
            devices: tuple, circuit, found: dict, playing: tuple[float, ...],
            band: DriveBand | None = None) -> DriveSetting:
    """The figures at ``node`` of knob setting ``index`` of ``result``; ``found`` holds the
    1 % and 10 % levels (see :func:`limits`), ``playing`` the levels of its points, ``band``
    the setting's tolerance spread."""
    ok = result.converged[index, :, 0]
    if not ok.all():
        level = float(result.levels[int(np.flatnonzero(~ok)[0])])
        reason = str(result.reasons[index, int(np.flatnonzero(~ok)[0]), 0])
        return DriveSetting(positions, error=f"{reason} at {level * 1000:g} mV pickup peak")
    d = result.distortion(node)
    thd, peak = d.thd[index, :, 0], d.peak[index, :, 0]
    levels = result.levels
    wave = result.wave(node)
    points = tuple(_point(d, wave, index, int(np.flatnonzero(levels == lv)[0]), lv)
                   for lv in playing)
    up, down = _swing(result, d, index, node, devices, circuit)
    (clean, clean_below), (driven, driven_below) = (
        _limit(found[(index, node, t)]) for t in (CLEAN_THD, DRIVEN_THD))
    return DriveSetting(positions, clean, driven, points, tuple(float(x) for x in thd),
                        tuple(float(x) for x in peak), up, down, clean_below=clean_below,
                        driven_below=driven_below, band=band)


def _limit(found: float | Below | None) -> tuple[float | None, float | None]:
    """(the level found, the level it lies below): one of them or neither is set."""
    return (None, found.level) if isinstance(found, Below) else (found, None)


def _point(d, wave: np.ndarray, index: int, i: int, level: float) -> DrivePoint:
    return DrivePoint(level, float(d.thd[index, i, 0]), float(d.peak[index, i, 0]),
                      tuple(float(a) for a in d.amplitudes[index, i, 0]),
                      tuple(round(float(v), 6) for v in wave[index, i, 0]))


def _swing(result: PeriodicResult, d, index: int, node: str, devices: tuple, circuit):
    """(volts, what sets it) above and below the mean at the top level; None when the output
    is still clean there (its swing limits are not reached in the sweep)."""
    top = len(result.levels) - 1
    if d.thd[index, top, 0] < CLIPPED_THD:
        return None, None
    wave = result.wave(node)[index, top, 0]
    found = []
    for volts, at in ((d.peak_pos[index, top, 0], int(np.argmax(wave))),
                      (d.peak_neg[index, top, 0], int(np.argmin(wave)))):
        found.append((float(volts), limiting_part(result, index, top, at, devices, circuit)))
    return found[0], found[1]


def limiting_part(result: PeriodicResult, index: int, level: int, at: int, devices: tuple,
                  circuit) -> str:
    """Which of ``devices`` is at a limit at sample ``at`` of the period: the first found."""
    def volts(node: str) -> float:
        return 0.0 if node == el.GROUND else float(result.wave(node)[index, level, 0, at])

    for device in devices:
        text = LIMITS[type(device)](device, volts)
        if text:
            return text
    return "no part at a limit (the stage's own transfer curve)"


def _bjt(q: el.Bjt, v) -> str:
    pol = -1.0 if q.model.kind == "pnp" else 1.0
    vce, vbe = pol * (v(q.c) - v(q.e)), pol * (v(q.b) - v(q.e))
    if vce < 0.3:
        return f"{q.name} saturates"
    return f"{q.name} cuts off" if vbe < 0.45 else ""


def _jfet(j: el.Jfet, v) -> str:
    pol = -1.0 if j.model.kind == "pjf" else 1.0
    vgs, vds, vto = pol * (v(j.g) - v(j.s)), pol * (v(j.d) - v(j.s)), j.model.get("VTO")
    if vgs <= vto:
        return f"{j.name} pinches off"
    return f"{j.name} leaves saturation (drain too low)" if vds < vgs - vto else ""


def _opamp(u: el.OpAmp, v) -> str:
    m = u.model.get
    if v(u.out) >= v(u.vpos) - m("SWING_HI") - 0.2:
        return f"{u.name} output at its upper limit"
    return f"{u.name} output at its lower limit" if v(u.out) <= v(u.vneg) + m(
        "SWING_LO") + 0.2 else ""


def _diode(dio: el.Diode, v) -> str:
    vd = v(dio.a) - v(dio.k)
    current = dio.model.get("IS") * math.expm1(min(vd / (dio.model.get("N") * VT), 80.0))
    if abs(current) > 20e-6:
        return f"{dio.name} conducts" if current > 0 else f"{dio.name} breaks down"
    return ""


LIMITS = {el.Bjt: _bjt, el.Jfet: _jfet, el.OpAmp: _opamp, el.Diode: _diode}


def stage_drive(result: PeriodicResult | None, why: str, indices: list[tuple[int, tuple]],
                node: str, devices: tuple, circuit, found: dict, plan: DrivePlan,
                bands: dict | None = None) -> Drive:
    """A stage's (or the kit's, at OUTPUT) figures at each of its knob settings; ``found``
    holds their 1 % and 10 % levels (see :func:`limits`), ``bands`` their tolerance spreads
    by (state index, node)."""
    bands = bands or {}
    if result is None:
        settings = tuple(DriveSetting(p, error=why) for _, p in indices)
    else:
        settings = tuple(setting(result, i, p, node, devices, circuit, found, plan.playing,
                                 bands.get((i, node))) for i, p in indices)
    return Drive(plan.levels, settings, plan.freq)


RAIL_MARGIN_V = 0.1  # an output this close to its swing limit has reached it
RAIL_LEVEL = 1.0  # volts pickup peak: a hot pickup's hard strum (common practice, no source)


def rail_touches(result: PeriodicResult | None, indices: list[tuple[int, tuple]],
                 opamps: tuple) -> tuple:
    """(op-amp, knob setting) for each op-amp output at its swing limit at RAIL_LEVEL."""
    if result is None:
        return ()
    level = int(np.flatnonzero(result.levels == RAIL_LEVEL)[0])
    found = []
    for u in opamps:
        m = u.model.get
        for index, positions in indices:
            if not result.converged[index, level, 0]:
                continue
            out = result.wave(u.out)[index, level, 0]
            top = result.wave(u.vpos)[index, level, 0] - m("SWING_HI") - RAIL_MARGIN_V
            bottom = result.wave(u.vneg)[index, level, 0] + m("SWING_LO") + RAIL_MARGIN_V
            if np.any(out >= top) or np.any(out <= bottom):
                found.append((u.name, positions))
    return tuple(found)


def kit_nodes(kit) -> list[str]:
    """Every node of the kit's netlist (waveforms kept for the limit search)."""
    return [n for n in kit.netlist().nodes() if n != el.GROUND] or [OUTPUT]
