"""Helpers for the stage tests: invented Fernbrook Circuitworks guides built into kits."""

from __future__ import annotations

import numpy as np

from kitleaf.circuit.build import build_circuit
from kitleaf.circuit.chain import KitCircuit
from kitleaf.engine import solve_ac, solve_dc
from kitleaf.guide.parse import parse_guide
from kitleaf.specs.derive import derive_specs
from kitleaf.specs.model import KitSpecs

POWER = """\
```stage power
kind: power
title: Power
reverse-diode: D90 1N5817
bulk-cap: C90 100u electrolytic 25V
vref-top: R90 10k
vref-bottom: R91 10k
vref-cap: C91 10u electrolytic 25V
led: LED90 red
led-resistor: R92 4k7
```
"""


def guide_text(*blocks: str, supply: str = "9V", source: str = "low-z", load: str = "",
               lines: tuple[str, ...] = ()) -> str:
    """A whole guide: the kit block (with its extra ``lines``, such as 'switch: Clip = S1:
    diodes, LEDs'), then ``blocks`` (each a stage block's text)."""
    kit = ["```kit", "title: Fernbrook Test Kit", "code: FB-T1", f"supply: {supply}",
           f"source: {source}"] + ([f"load: {load}"] if load else []) + [*lines, "```", ""]
    return "\n".join(kit) + "\n".join(blocks)


def specs_of(*blocks: str, knobs: tuple[str, ...] = (), **kit) -> tuple[KitCircuit, KitSpecs]:
    """The kit of ``blocks`` and its specs; ``knobs`` are kit-block lines such as 'Gain = VR1'."""
    text = guide_text(*blocks, **kit)
    # The kit block's closing fence is the first bare one.
    text = text.replace("```\n", "".join(f"knob: {k}\n" for k in knobs) + "```\n", 1)
    guide = parse_guide("test.md", text)
    kit_circuit = build_circuit(guide)
    return kit_circuit, derive_specs(guide, kit_circuit)


def line_of(text: str, start: str) -> int:
    """The 1-based line of ``text`` that starts with ``start``."""
    return 1 + next(i for i, line in enumerate(text.splitlines()) if line.startswith(start))


def stage_block(stage_id: str, kind: str, *lines: str) -> str:
    return "\n".join([f"```stage {stage_id}", f"kind: {kind}", *lines, "```", ""])


# A soft-clipping drive with quick coupling (a few milliseconds, so that ngspice's transient
# settles), its clipping parts to be added after the pulldown; with a silicon pair, the
# clipped wave the tone stages' large-signal checks are fed.
QUICK_DRIVE = stage_block("drive", "opamp-soft-clip", "input-cap: C1 22n film",
                          "bias: R1 100k", "opamp: U1A TL072", "feedback: R2 10k",
                          "gain: VR1 B100k", "gain-resistor: R3 1k", "gain-cap: C2 1u film",
                          "output-cap: C3 100n", "pulldown: R5 100k")
CLIPPED_DRIVE = QUICK_DRIVE.replace("pulldown: R5 100k", "pulldown: R5 100k\n"
                                    "clip-positive: D1 1N4148\nclip-negative: D2 1N4148")


def make_kit(*blocks: str, **kit) -> KitCircuit:
    return build_circuit(parse_guide("test.md", guide_text(*blocks, **kit)))


def gain_at(kit: KitCircuit, freq: float, node: str = "output", positions=None) -> complex:
    """Transfer from the source's open-circuit voltage to ``node`` at ``freq``."""
    circuit = kit.netlist(positions)
    ac = solve_ac(circuit, solve_dc(circuit), np.array([freq]), source="VIN")
    return complex(ac.transfer(node)[0])


def response(kit: KitCircuit, freqs: np.ndarray, positions=None, node_in: str = "input",
             node_out: str = "output") -> np.ndarray:
    """The complex gain from ``node_in`` to ``node_out`` (the kit's jacks unless named)."""
    circuit = kit.netlist(positions)
    ac = solve_ac(circuit, solve_dc(circuit), freqs, source="VIN")
    return ac.transfer(node_out) / ac.transfer(node_in)


def dc_at(kit: KitCircuit, node: str, positions=None) -> float:
    return solve_dc(kit.netlist(positions)).voltage(node)


# One stage of every kind, wired into a chain (coupling caps between stages get pulldowns).
EVERY_KIND = (POWER,) + tuple(f"```stage {b.strip()}\n```\n" for b in """
boost
kind: common-emitter
input-cap: C1 100n film
bias-top: R1 470k
bias-bottom: R2 100k
transistor: Q1 2N5089
collector: R3 10k
emitter: R4 1k
bypass-resistor: R5 100R
gain: VR2 B1k
bypass-cap: C3 22u electrolytic
output-cap: C2 1u film
volume: VR1 A100k
===
buffer
kind: emitter-follower
input-cap: C4 100n
bias-top: R6 1M
bias-bottom: R7 1M
transistor: Q2 2N3904
emitter: R8 10k
output-cap: C5 1u
pulldown: R30 1M
===
jfet
kind: jfet-common-source
input-cap: C6 47n
gate: R9 1M
transistor: Q3 J201
drain: R10 6k8
source: R11 1k5
source-bypass: C7 10u electrolytic
output-cap: C8 100n
pulldown: R31 1M
===
drive
kind: opamp-non-inverting
input-cap: C9 100n
bias: R12 1M
opamp: U1A TL072
feedback: R13 100k
feedback-cap: C10 100p
gain-resistor: R14 4k7
gain: VR3 C100k
gain-cap: C11 1u
output-cap: C12 1u
pulldown: R32 1M
===
inv
kind: opamp-inverting
input-cap: C13 100n
input: R15 10k
opamp: U1B TL072
feedback: R16 100k
feedback-cap: C14 220p
output-cap: C15 1u
pulldown: R33 1M
===
hp
kind: high-pass
series-cap: C16 10n
shunt-resistor: R17 1M
===
lp
kind: low-pass
series-resistor: R18 10k
shunt-cap: C17 10n
===
tone
kind: tone-cut
series: R19 10k
tone: VR4 A25k
cap: C18 22n
===
clip
kind: diode-clipper
input-cap: C19 100n
series: R20 2k2
clip-positive: D1 1N4148
clip-negative: D2 1N4148
clip-negative: D3 1N4148
===
custom
kind: custom
title: Fernbrook fuzz core
nodes: b c
part: C20 100n @ in b
part: R21 100k @ c b
part: Q4 2N5089 @ c b 0
part: R22 10k @ vcc c
part: C21 100n @ c out
test-point: Q4 collector = c
===
vol
kind: volume
volume: VR5 A100k
===
stack
kind: tone-stack
treble-cap: C40 220p
slope: R40 47k
treble: VR40 A250k
bass-cap: C41 22n
bass: VR41 A1M
mid-cap: C42 22n
mid: VR42 B25k
===
blend
kind: tone-blend
low-resistor: R43 39k
low-cap: C43 10n
high-cap: C44 4n7
high-resistor: R44 22k
tone: VR43 B100k
===
active
kind: tone-active
input-cap: C45 4u7 film
bass-in: R45 10k
bass: VR44 B100k
bass-out: R46 10k
bass-cap-in: C46 22n
bass-cap-out: C47 22n
treble-in: R47 2k2
treble: VR45 B100k
treble-out: R48 2k2
treble-cap: C48 10n
opamp: U2A TL072
output-cap: C49 10u film
pulldown: R49 1M
===
softclip
kind: opamp-soft-clip
input-cap: C140 100n
bias: R140 1M
opamp: U3A TL072
feedback: R141 10k
gain: VR140 A500k
feedback-cap: C141 100p
clip-series: R142 1k
clip-positive: D140 1N4148
clip-negative: D141 1N4148
clip-negative: D142 1N4148
gain-resistor: R143 4k7
gain-cap: C142 1u
output-cap: C143 1u
pulldown: R144 1M
volume: VR141 A100k
===
fuzz
kind: direct-coupled-fuzz
input-cap: C150 2u2
input-transistor: Q150 2N5088
input-collector: R150 33k
output-transistor: Q151 2N5088
output-collector: R151 8k2
output-emitter: R152 1k
feedback: R153 100k
gain: VR150 B1k
bypass-cap: C151 22u electrolytic
output-cap: C152 100n
pulldown: R154 1M
volume: VR151 A500k
===
jbuf
kind: jfet-source-follower
input-cap: C155 100n
gate: R155 10M
bias-top: R156 1M
bias-bottom: R157 1M
transistor: Q155 2N5457
drain: R158 100R
source: R159 10k
output-cap: C156 10u
pulldown: R160 1M
===
outbuf
kind: output-buffer
input-cap: C160 1u
follower: U3B TL072
bias: R161 1M
output-cap: C161 10u
pulldown: R162 100k
output-resistor: R163 470R
""".split("===\n"))
