"""Each clip of a kit's sound previews played through the kit's circuit, in time.

The dry phrase drives the kit's signal source (the pickup model, so the kit's input loads
the pickup as a real one is loaded) and the clip is the voltage at the output jack, across
the kit's load, each setting stepped as finely as its clipping needs (oversampling.py).
The settings stepped alike are the variants of one time-domain solve; the settings the
specs already solved (every knob at half way, each knob at its ends) are reused, not solved
again.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

import numpy as np

from kitleaf.audio.clips import ClipSetting
from kitleaf.audio.encode import RATE
from kitleaf.audio.oversampling import oversampling
from kitleaf.audio.previews import Rendered, Renderer
from kitleaf.circuit.chain import INPUT, OUTPUT, SOURCE, KitCircuit
from kitleaf.engine.transient import TransientResult, transient_response
from kitleaf.errors import KitleafError
from kitleaf.specs.derive import SolvedKit
from kitleaf.specs.solve import KitState


def kit_renderer(solved: SolvedKit) -> Renderer:
    """The renderer of ``solved``'s clips (see previews.make_previews)."""
    def render(settings: Sequence[ClipSetting], dry: np.ndarray) -> list[Rendered]:
        return render_clips(solved, settings, dry)
    return render


def render_clips(solved: SolvedKit, settings: Sequence[ClipSetting],
                 dry: np.ndarray) -> list[Rendered]:
    """Every setting's output (volts at RATE, less its DC value) for the pickup playing
    ``dry``; a setting whose solve fails has no output and says why, naming the stage."""
    batches = [state_at(solved, s.position_map).nominal.batch.system for s in settings]
    try:
        factors = oversampling(batches, SOURCE, OUTPUT)
        results = {f: transient_response([b for b, g in zip(batches, factors, strict=True)
                                          if g == f], SOURCE, dry, RATE, f, [OUTPUT])
                   for f in sorted(set(factors))}
    except KitleafError as exc:
        return [Rendered(s, None, exc.message) for s in settings]
    return [_rendered(solved.kit, setting, results[factor], factors[:i].count(factor))
            for i, (setting, factor) in enumerate(zip(settings, factors, strict=True))]


def _rendered(kit: KitCircuit, setting: ClipSetting, result: TransientResult,
              i: int) -> Rendered:
    """Variant ``i`` of ``result`` as ``setting``'s clip, or why it has none."""
    if result.converged[i]:
        return Rendered(setting, result.wave(OUTPUT)[i])
    stage = stage_of(kit, result.where[i])
    whose = f"stage '{stage}'" if stage else "the kit"
    return Rendered(setting, None, (
        f"the time-domain solve of {whose} did not settle {result.failed_at[i]:.2f} s "
        f"into the phrase (at node {result.where[i]})"), stage)


def state_at(solved: SolvedKit, positions: Mapping[str, float]) -> KitState:
    """The kit solved at ``positions`` (the others where the specs rest them): one of the
    specs' own states when it is there, else solved here."""
    wanted = {**solved.nominal, **positions}
    for state in (solved.base, *(s for sweep in solved.sweeps.values() for s in sweep)):
        if state.positions == wanted:
            return state
    return KitState(solved.kit, wanted, near=solved.base)


def stage_of(kit: KitCircuit, node: str) -> str:
    """The stage a node belongs to: the stage its name starts with ('boost.c'), the stage of
    the part whose inside it is ('Q1:c'), the first signal stage for the input jack and the
    last for the output jack; '' for a node of no one stage (the source's, a supply rail)."""
    chain = kit.signal_stages
    ends = {INPUT: chain[0].id, OUTPUT: chain[-1].id}
    if node in ends:
        return ends[node]
    if ":" in node:
        designator = node.split(":", 1)[0]
        return next((s.id for s in kit.stages
                     if any(p.designator == designator for p in s.all_parts())), "")
    prefix = node.split(".", 1)[0]
    return prefix if any(s.id == prefix for s in kit.stages) else ""
