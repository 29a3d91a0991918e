"""derive_specs: the kit solved at every knob position, measured into :class:`KitSpecs`."""

from __future__ import annotations

import numpy as np

from kitleaf.circuit.chain import INPUT, OUTPUT, KitCircuit, input_meter, supply_meter
from kitleaf.circuit.kind import Stage
from kitleaf.guide.model import Guide
from kitleaf.specs.model import KitSpecs, KnobPoint, Range, StageSpecs, Voltage
from kitleaf.specs.response import FREQS, REFERENCE_HZ, corners, to_db
from kitleaf.specs.solve import Solution, nominal_positions, solve_kit

KNOB_STEPS = (0.0, 0.25, 0.5, 0.75, 1.0)


def derive_specs(guide: Guide, kit: KitCircuit) -> KitSpecs:
    """Every spec of the kit and its stages, computed from the parts."""
    nominal = nominal_positions(kit)
    base = solve_kit(kit, nominal)
    sweeps = {k.designator: [solve_kit(kit, {**nominal, k.designator: p}) for p in KNOB_STEPS]
              for k in kit.knobs}
    stages = tuple(stage_specs(kit, s, base, sweeps) for s in kit.stages)
    kit_gain = _ratio(base, None, OUTPUT)
    low, high = _corners(base, None, OUTPUT)
    return KitSpecs(
        title=guide.kit.title, code=guide.kit.code, revision=guide.kit.revision,
        supply_v=kit.supply_v, stages=stages,
        knob_sweep=_sweep(kit, sweeps, None, OUTPUT),
        gain_db=Range(_db_at(kit_gain)), low_corner_hz=_opt(low), high_corner_hz=_opt(high),
        input_impedance=Range(abs(base.ac.input_impedance()[_ref_index()])),
        output_impedance=Range(abs(np.asarray(base.ac.output_impedance(OUTPUT))[_ref_index()])),
        supply_current=Range(abs(base.op.current("VSUPPLY"))),
        freqs=tuple(float(f) for f in FREQS),
        curves=_curves(kit, base, sweeps, None, OUTPUT),
    )


def stage_specs(kit: KitCircuit, stage: Stage, base: Solution, sweeps) -> StageSpecs:
    kind = kit.kind(stage)
    voltages = tuple(
        Voltage(tp.label, tp.node, tp.device, tp.pin,
                Range(base.op.voltage(_node(kit, stage, tp.node))))
        for tp in kind.test_points(stage)
    )
    if not kind.signal:
        return StageSpecs(stage.id, stage.kind, stage.title, False, voltages, (), None, None,
                          None, None, None, Range(abs(base.op.current("VSUPPLY"))))
    node_in, node_out = kit.stage_nodes(stage.id)
    gain = _ratio(base, node_in, node_out)
    low, high = _corners(base, node_in, node_out)
    i = _ref_index()
    z_in = base.h(node_in)[i] / np.asarray(base.ac.current(input_meter(stage.id)))[i]
    return StageSpecs(
        stage.id, stage.kind, stage.title, True, voltages,
        _sweep(kit, sweeps, node_in, node_out, stage.id), Range(_db_at(gain)),
        _opt(low), _opt(high), Range(abs(z_in)), None,
        Range(abs(base.op.current(supply_meter(stage.id)))),
        curves=_curves(kit, base, sweeps, node_in, node_out, stage.id),
    )


def _node(kit: KitCircuit, stage: Stage, local: str) -> str:
    rails = kit._nodes(stage)
    return rails.get(local) or f"{stage.id}.{local}"


def _ratio(sol: Solution, node_in: str | None, node_out: str) -> np.ndarray:
    h = sol.h(node_out)
    return h if node_in is None else h / sol.h(node_in)


def _corners(sol: Solution, node_in: str | None, node_out: str):
    def evaluate(f: float) -> complex:
        one = sol.at(f)
        out = np.asarray(one.transfer(node_out))[0]
        return out if node_in is None else out / np.asarray(one.transfer(node_in))[0]

    return corners(FREQS, _ratio(sol, node_in, node_out), evaluate)


def _ref_index() -> int:
    return int(np.argmin(np.abs(FREQS - REFERENCE_HZ)))


def _db_at(h: np.ndarray, freq: float = REFERENCE_HZ) -> float:
    db = to_db(h)
    return float(np.interp(np.log10(freq), np.log10(FREQS), db))


def _opt(value: float | None) -> Range | None:
    return None if value is None else Range(float(value))


def _sweep(kit, sweeps, node_in, node_out, stage_id: str | None = None):
    points = []
    for knob in kit.knobs:
        if stage_id is not None and knob.stage_id != stage_id:
            continue
        for pos, sol in zip(KNOB_STEPS, sweeps[knob.designator]):
            points.append(KnobPoint(((knob.name, pos),), Range(_db_at(_ratio(sol, node_in, node_out)))))
    return tuple(points)


def _curves(kit, base, sweeps, node_in, node_out, stage_id: str | None = None):
    """One curve per position of each knob that acts here; the nominal curve if none does."""
    curves = []
    for knob in kit.knobs:
        if stage_id is not None and knob.stage_id != stage_id:
            continue
        for pos, sol in zip(KNOB_STEPS, sweeps[knob.designator]):
            db = to_db(_ratio(sol, node_in, node_out))
            curves.append((f"{knob.name} {round(pos * 100)} %", tuple(float(x) for x in db)))
    if not curves:
        db = to_db(_ratio(base, node_in, node_out))
        curves.append(("nominal", tuple(float(x) for x in db)))
    return tuple(curves)
