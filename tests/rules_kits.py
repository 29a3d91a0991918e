"""Invented Fernbrook Circuitworks test kits for the claims and design-rule tests."""

from __future__ import annotations

from kitleaf.circuit.build import build_circuit
from kitleaf.guide.parse import parse_guide
from kitleaf.specs.claims import Checks, verify
from kitleaf.specs.derive import derive_specs

KIT = """\
```kit
title: Fernbrook Test Boost
code: FB-T9
supply: 9 V
source: low-z
knob: Level = VR1
```
"""

POWER = """\
```stage power
kind: power
reverse-diode: D1 1N5817
bulk-cap: C10 100u electrolytic 16V
vref-top: R11 22k
vref-bottom: R12 22k
vref-cap: C12 22u electrolytic 16V
led: LED1 red
led-resistor: R10 4k7
```
"""

BOOST = """\
```stage boost
kind: common-emitter
input-cap: C1 1u film 63V
bias-top: R1 680k
bias-bottom: R2 150k
transistor: Q1 2N5088
collector: R3 8k2
emitter: R4 1k5
bypass-cap: C3 100u electrolytic 16V
bypass-resistor: R5 470
output-cap: C2 10u film 63V
volume: VR1 A100k
```
"""

# An op-amp gain stage at a fixed gain, biased to the power stage's reference.
OPAMP = """\
```stage gain
kind: opamp-non-inverting
input-cap: C1 100n film 63V
bias: R1 1M
opamp: U1A TL072
feedback: R3 82k
gain-resistor: R4 2k7
gain-cap: C4 10u electrolytic 16V
output-cap: C2 1u film 63V
```
"""

GUIDE = KIT + "\n# Test boost\n\n" + POWER + "\n" + BOOST


def swapped(*pairs: tuple[str, str]) -> str:
    """The test guide with each (old, new) text swap made; each old text occurs once."""
    text = GUIDE
    for old, new in pairs:
        assert text.count(old) == 1, old
        text = text.replace(old, new)
    return text


def checks_of(text: str, path: str = "test.md") -> Checks:
    g = parse_guide(path, text)
    kit = build_circuit(g)
    return verify(g, kit, derive_specs(g, kit))


def findings(text: str, rule: str) -> list:
    return [f for f in checks_of(text).findings if f.rule == rule]

# A 2N5457 source follower biased at half the rail: the source sits about |VGS| above the
# gate, and across the 2N5457's wide pinch-off range it climbs close to the rail.
BUFFER = """\
```kit
title: Fernbrook Test Buffer
code: FB-T8
supply: 9 V
```

```stage power
kind: power
reverse-diode: D1 1N5817
bulk-cap: C10 100u electrolytic 16V
```

```stage buffer
kind: custom
title: JFET buffer
nodes: g s
part: C1 100n film 63V @ in g
part: R1 1M @ vcc g
part: R2 1M @ g 0
part: Q2 2N5457 @ vcc g s
part: R3 10k @ s 0
part: C2 1u film 63V @ s out
part: R4 1M @ out 0
test-point: Q2 source = s
```
"""
