"""derive_specs: the kit solved at every knob and switch position, measured into
:class:`KitSpecs`.

Every figure comes with its 5th-95th percentile spread over seeded tolerance samples, solved
as one batch per kit state (knob positions and supply), never as a loop of single solves.
"""

from __future__ import annotations

import warnings
from contextlib import contextmanager
from dataclasses import replace

from kitleaf.circuit.chain import INPUT, OUTPUT, KitCircuit, input_meter, supply_meter
from kitleaf.circuit.kind import Stage
from kitleaf.display import setting
from kitleaf.engine.elements import OpAmp
from kitleaf.errors import KitleafError, SolveError
from kitleaf.guide.kit_lines import adapter_ripple
from kitleaf.guide.model import Guide
from kitleaf.guide.parse import wants_large_signal
from kitleaf.specs import measures as m
from kitleaf.specs.claim_tone import claim_entries, claimed_tones
from kitleaf.specs.drive import (
    LIMITS,
    DrivePlan,
    drive_limits,
    drive_plan,
    drive_sweep,
    kit_nodes,
    rail_touches,
    stage_drive,
)
from kitleaf.specs.drive_band import drive_bands
from kitleaf.specs.headroom import MARGINS, margins
from kitleaf.specs.knob_ends import knob_ends
from kitleaf.specs.loading import source_loading, stage_loading
from kitleaf.specs.model import (
    SAMPLES,
    SEED,
    Drive,
    Headroom,
    KitSpecs,
    KnobPoint,
    StageSpecs,
    Supply,
    ToneDrives,
    Voltage,
)
from kitleaf.specs.plotdata import band, curves
from kitleaf.specs.pump_ripple import pump_ripples
from kitleaf.specs.response import FREQS
from kitleaf.specs.scoop import scoop
from kitleaf.specs.shorts import check_supply
from kitleaf.specs.signal_path import check_signal_path
from kitleaf.specs.solve import KitState, nominal_positions
from kitleaf.specs.stability import unstable_at
from kitleaf.specs.trim import trims

# A fresh alkaline 9 V battery reads up to about 9.6 V (common practice, no source).
FRESH_BATTERY_V = 9.6


class SolvedKit:
    """The kit's solved states: nominal settings, each knob's and switch's sweep, and the
    battery supply."""

    def __init__(self, kit: KitCircuit) -> None:
        self.kit = kit
        self.nominal = nominal_positions(kit)
        self.base = KitState(kit, self.nominal)
        check_supply(kit, self.base.nominal.batch.system)  # before any figure is derived
        check_signal_path(kit, self.base.nominal)
        self.sweeps = {c.designator: tuple(self._state(c.designator, p) for p, _ in c.steps)
                       for c in kit.controls}
        self._check_sweeps()
        self.supplies = supplies(kit.supply_v)
        self.by_supply = (self.base, *(KitState(kit, self.nominal, s.volts, self.base)
                                       for s in self.supplies[1:]))

    def _check_sweeps(self) -> None:
        """No knob or switch setting shorts the supply (a pot's end leg is about 1 ohm)."""
        for control in self.kit.controls:
            for (_, shown), state in zip(control.steps, self.sweeps[control.designator],
                                         strict=True):
                check_supply(self.kit, state.nominal.batch.system,
                             f" with {setting(control.name, shown)}")

    def _state(self, designator: str, position: float) -> KitState:
        if position == self.nominal[designator]:
            return self.base
        return KitState(self.kit, {**self.nominal, designator: position}, near=self.base)


def supplies(rated_v: float) -> tuple[Supply, ...]:
    """The rated supply (an adapter), and a fresh battery when the kit runs on a 9 V battery."""
    if rated_v == 9.0:
        return (Supply("adapter", rated_v), Supply("fresh battery", FRESH_BATTERY_V))
    return (Supply("adapter", rated_v),)


def derive_specs(guide: Guide, kit: KitCircuit, solved: SolvedKit | None = None) -> KitSpecs:
    """Every spec of the kit and its stages, computed from the parts; ``solved``, the kit's
    :func:`solve_kit`, when the caller shares it with the design rules (see verify).

    An engine error (a solve that did not converge, say) is placed at the guide line of the
    part or stage it names, so the maker sees where to look, or else at the kit block. A numeric
    warning (an overflow, a NaN) stops the solve too: figures past it would be silently wrong.
    """
    with _located(guide, kit):
        return _derive(guide, kit, solved or SolvedKit(kit))


def solve_kit(guide: Guide, kit: KitCircuit) -> SolvedKit:
    """The kit's solved states (knobs at half way, each knob's sweep, the supplies), solved
    once for the specs and the design rules alike; errors placed as derive_specs places them."""
    with _located(guide, kit):
        return SolvedKit(kit)


@contextmanager
def _located(guide: Guide, kit: KitCircuit):
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("error", RuntimeWarning)
            yield
    except RuntimeWarning as warning:
        raise SolveError(f"the numbers ran out of range while solving ({warning}); look for a "
                         "part value or device far from the usual", guide.kit.span) from None
    except KitleafError as exc:
        raise kit.locate(exc).located(guide.kit.span) from None


def _derive(guide: Guide, kit: KitCircuit, solved: SolvedKit) -> KitSpecs:
    base = solved.base
    # the large-signal sweep costs seconds: only for a kit that asks for it
    plan = drive_plan(guide.kit)
    driven = Driven(solved, plan) if wants_large_signal(guide.kit) else None
    stages = tuple(replace(stage_specs(solved, s), drive=driven.stage(s))
                   if driven and kit.kind(s).signal else stage_specs(solved, s)
                   for s in kit.stages)
    chain = kit.signal_stages
    first, last = chain[0].id, chain[-1].id
    shaped = any(kit.kind(s).shapes_response for s in chain)  # no flat band: see the scoop
    ripple = stated_ripple(guide)
    hum = None if ripple is None else m.hum(OUTPUT, *ripple)
    return KitSpecs(
        title=guide.kit.title, code=guide.kit.code, revision=guide.kit.revision,
        supply_v=kit.supply_v, stages=stages,
        knob_sweep=knob_sweep(solved, INPUT, OUTPUT, kit.controls,
                              impedances(kit, first, kit.stage_nodes(first)[0],
                                         last, kit.stage_nodes(last)[1]),
                              scoops=shaped, hum=hum),
        knob_ends=knob_ends(kit, solved.base),
        gain_db=base.range(m.gain_db(INPUT, OUTPUT)),
        low_corner_hz=base.range(m.corner(INPUT, OUTPUT, 0)),
        high_corner_hz=base.range(m.corner(INPUT, OUTPUT, 1)),
        input_impedance=stage(stages, first).input_impedance,
        output_impedance=stage(stages, last).output_impedance,
        supply_current=base.range(m.supply_current(None)),
        freqs=tuple(float(f) for f in FREQS),
        curves=curves(solved, INPUT, OUTPUT, kit.controls),
        notes=notes(stages, kit),
        band_gain_db=base.range(m.band_gain_db(INPUT, OUTPUT)),
        headroom=kit_headroom(solved),
        band_low=band(base, INPUT, OUTPUT, 5.0), band_high=band(base, INPUT, OUTPUT, 95.0),
        supplies=solved.supplies,
        knobs=tuple((k.name, k.designator) for k in kit.knobs),
        switches=tuple((s.name, s.designator, s.positions, s.positions[s.rest])
                       for s in kit.switches),
        samples=SAMPLES, seed=SEED,
        source_loading=source_loading(kit, base),
        drive=driven.kit() if driven else None,
        claim_tones=claim_drives(guide, solved, plan) if driven else (),
        trims=trims(kit),
        ripple=ripple, hum=None if hum is None else base.range(hum),
        pump_ripples=pump_ripples(solved),
        clips=any(s.clips for s in stages),
        unstable=unstable_at(base),
        scoop=scoop(base, INPUT, OUTPUT, spread=True) if shaped else None,
        passband=not shaped,
    )


def claim_drives(guide: Guide, solved: SolvedKit, plan: DrivePlan) -> tuple[ToneDrives, ...]:
    """The large-signal figures at each tone the claims set (specs/claim_tone.py), at the
    levels they name (the kit's playing levels where they name none)."""
    kit = solved.kit
    found = []
    for tone, levels in claimed_tones(e for _, e in claim_entries(guide, kit)).items():
        driven = Driven(solved, DrivePlan(levels or plan.playing, tone), bands=False)
        found.append(ToneDrives(tone, driven.kit(), tuple((s.id, driven.stage(s))
                                                          for s in kit.signal_stages)))
    return tuple(found)


class Driven:
    """The kit's large-signal sweep: every knob and switch setting the specs show, solved at
    once; ``bands``: with the tolerance band."""

    def __init__(self, solved: SolvedKit, plan: DrivePlan, bands: bool = True) -> None:
        self.solved, self.plan = solved, plan
        self.states = [solved.base]
        for control in solved.kit.controls:
            sweep = solved.sweeps[control.designator]
            self.states += [s for s in sweep if all(s is not t for t in self.states)]
        self.result, self.why = drive_sweep(self.states, kit_nodes(solved.kit), plan)
        wanted = self._wanted()
        self.found = {} if self.result is None else drive_limits(
            self.states, self.result, wanted, plan)
        self.bands = {} if self.result is None or not bands else drive_bands(
            self.states, sorted({node for _, node in wanted}), plan)

    def _wanted(self) -> set[tuple[int, str]]:
        """(state index, node) of every setting the stages and the kit show."""
        kit = self.solved.kit
        wanted = {(i, OUTPUT) for i, _ in self._settings(kit.controls)}
        for stage in kit.signal_stages:
            controls = [c for c in kit.controls if c.stage_id == stage.id]
            node = kit.stage_nodes(stage.id)[1]
            wanted |= {(i, node) for i, _ in self._settings(controls)}
        return wanted

    def _settings(self, controls) -> list[tuple[int, tuple]]:
        """(state index, positions) of the knobs and switches at rest, then of each of
        ``controls`` at each of its steps (a switch's position by its name)."""
        found = [(0, ())]
        for c in controls:
            for (_, shown), state in zip(c.steps, self.solved.sweeps[c.designator],
                                         strict=True):
                index = next(i for i, s in enumerate(self.states) if s is state)
                found.append((index, ((c.name, shown),)))
        return found

    def _devices(self, stages) -> tuple:
        names = [p.designator for s in stages for p in s.all_parts()]
        by_name = {e.name: e for e in self.solved.base.circuit.elements if type(e) in LIMITS}
        return tuple(by_name[n] for n in names if n in by_name)

    def stage(self, stage: Stage) -> Drive:
        kit = self.solved.kit
        controls = [c for c in kit.controls if c.stage_id == stage.id]
        node = kit.stage_nodes(stage.id)[1]
        return stage_drive(self.result, self.why, self._settings(controls), node,
                           self._devices([stage]), self.solved.base.circuit, self.found,
                           self.plan, self.bands)

    def kit(self) -> Drive:
        kit = self.solved.kit
        settings = self._settings(kit.controls)
        devices = self._devices(reversed(kit.signal_stages))
        drive = stage_drive(self.result, self.why, settings, OUTPUT, devices,
                            self.solved.base.circuit, self.found, self.plan, self.bands)
        opamps = tuple(d for d in reversed(devices) if isinstance(d, OpAmp))
        return replace(drive, rails=rail_touches(self.result, settings, opamps))


def stated_ripple(guide: Guide) -> tuple[float, float] | None:
    """The adapter's ripple the kit block states (volts peak to peak, hertz), if it does."""
    entry = next((e for e in guide.kit.extra if e.key == "adapter-ripple"), None)
    return None if entry is None else adapter_ripple(entry)


def stage(stages: tuple[StageSpecs, ...], stage_id: str) -> StageSpecs:
    return next(s for s in stages if s.id == stage_id)


def stage_specs(solved: SolvedKit, stage: Stage) -> StageSpecs:
    kit, base = solved.kit, solved.base
    voltages = stage_voltages(solved, stage)
    if not kit.kind(stage).signal:
        if kit.metered(stage):
            current = m.supply_current(supply_meter(stage.id))
        else:  # the power section: what no stage's meter takes
            current = m.supply_current(None, tuple(supply_meter(s.id) for s in kit.stages
                                                   if kit.metered(s)))
        return StageSpecs(stage.id, stage.kind, stage.title, False, voltages, (), None, None,
                          None, None, None, base.range(current))
    node_in, node_out = kit.stage_nodes(stage.id)
    knobs = tuple(k for k in kit.controls if k.stage_id == stage.id)
    z = impedances(kit, stage.id, node_in, stage.id, node_out)
    scoops = kit.kind(stage).shapes_response
    return StageSpecs(
        stage.id, stage.kind, stage.title, True, voltages,
        knob_sweep(solved, node_in, node_out, knobs, z, scoops),
        base.range(m.gain_db(node_in, node_out)),
        base.range(m.corner(node_in, node_out, 0)), base.range(m.corner(node_in, node_out, 1)),
        base.range(z[0]), base.range(z[1]),
        base.range(m.supply_current(supply_meter(stage.id))),
        curves=curves(solved, node_in, node_out, knobs),
        band_gain_db=base.range(m.band_gain_db(node_in, node_out)),
        headroom=stage_headroom(solved, (stage,), node_out),
        band_low=band(base, node_in, node_out, 5.0), band_high=band(base, node_in, node_out, 95.0),
        loading=stage_loading(kit, stage, base),
        scoop=scoop(base, node_in, node_out, spread=True) if scoops else None,
        clips=kit.kind(stage).clips, passband=kit.kind(stage).passband,
        unstable=unstable_at(base),
    )


def output_measure(kit: KitCircuit, stage_id: str, node_out: str) -> m.Measure:
    """Open the next stage's input meter, or take the load off at the kit output."""
    ids = [s.id for s in kit.signal_stages]
    i = ids.index(stage_id)
    if i + 1 < len(ids):
        return m.output_impedance(node_out, input_meter(ids[i + 1]), None)
    return m.output_impedance(node_out, None, kit.load)


def impedances(kit: KitCircuit, first: str, node_in: str, last: str,
               node_out: str) -> tuple[m.Measure, m.Measure]:
    """The input impedance of stage ``first`` and the output impedance of stage ``last``."""
    return m.input_impedance(first, node_in), output_measure(kit, last, node_out)


def knob_sweep(solved: SolvedKit, node_in: str, node_out: str, controls,
               z: tuple[m.Measure, m.Measure], scoops: bool = False,
               hum: m.Measure | None = None) -> tuple[KnobPoint, ...]:
    """Gain and impedances at 1 kHz at each step of each knob and switch in ``controls``,
    the others at their nominal settings (and the deepest dip, nominal parts, where
    ``scoops`` asks for it; the hum at the output where the kit states its adapter's
    ripple)."""
    return tuple(KnobPoint(((c.name, shown),), state.range(m.gain_db(node_in, node_out)),
                           state.range(z[0]), state.range(z[1]),
                           scoop=scoop(state, node_in, node_out, spread=False) if scoops
                           else None,
                           hum=None if hum is None else state.range(hum),
                           unstable=unstable_at(state))
                 for c in controls
                 for (_, shown), state in zip(c.steps, solved.sweeps[c.designator],
                                              strict=True))


def stage_voltages(solved: SolvedKit, stage: Stage) -> tuple[Voltage, ...]:
    """Each test point's voltage to ground at every supply of the table."""
    out = []
    for tp in solved.kit.kind(stage).test_points(stage):
        node = solved.kit.node_of(stage, tp.node)
        readings = tuple(s.range(m.node_voltage(node)) for s in solved.by_supply)
        out.append(Voltage(tp.label, node, tp.device, tp.pin, readings[0], readings))
    return tuple(out)


def stage_headroom(solved: SolvedKit, stages: tuple[Stage, ...], node: str) -> Headroom | None:
    names = {p.designator for s in stages for p in s.all_parts()}
    circuit = solved.base.circuit
    devices = tuple(e for e in circuit.elements if type(e) in MARGINS and e.name in names)
    if not devices:
        return None
    vcc = {d.name: f"{s.id}.vcc" for s in stages for d in devices
           if d.name in {p.designator for p in s.all_parts()}}

    def find(v):
        return [x for d in devices for x in margins(v.batch, (d,), vcc[d.name])]

    volts = solved.base.range(m.swing(find, node))
    return None if volts is None else Headroom(volts, m.swing_limit(find, node,
                                                                    solved.base.nominal))


def kit_headroom(solved: SolvedKit) -> Headroom | None:
    return stage_headroom(solved, solved.kit.signal_stages, OUTPUT)


def notes(stages: tuple[StageSpecs, ...], kit: KitCircuit) -> tuple[str, ...]:
    """Findings a builder should hear about, each a ``path:line: warning:`` line: what reading
    the guide's device models raised, then a device with no room to swing at its bias (at its
    stage's block)."""
    spans = {s.id: s.span for s in kit.stages}
    return tuple(w.line() for w in kit.warnings) + tuple(
        f"{spans[s.id]}: warning: stage '{s.id}': {s.headroom.limit} leaves no room to swing "
        "at this bias"
        for s in stages if s.headroom is not None and s.headroom.volts.nominal <= 0.0)

