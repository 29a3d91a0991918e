"""How long a guide of four signal stages takes to solve its specs and draw its plots.

Prints CPU and wall seconds with BLAS pinned to one thread (set before numpy loads), best of
three runs after a warm-up run, so imports and font loading are not counted. Not a timed test.
"""

from __future__ import annotations

import os

for _var in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ[_var] = "1"

import tempfile  # noqa: E402
import time  # noqa: E402
from pathlib import Path  # noqa: E402

from kitleaf.circuit.build import build_circuit  # noqa: E402
from kitleaf.guide import parse_guide  # noqa: E402
from kitleaf.render.plot import render_response_svg  # noqa: E402
from kitleaf.render.plot_specs import kit_plot, stage_plot  # noqa: E402
from kitleaf.specs.derive import derive_specs  # noqa: E402

# An invented four-stage kit (Fernbrook Circuitworks bench scenario, not a product).
GUIDE = """```kit
title: Bench Four-Stage
code: FB-900
revision: A
supply: 9 V
knob: Gain = VR1
knob: Tone = VR2
knob: Level = VR3
```

```stage power
kind: power
title: Power
reverse-diode: D1 1N5817
bulk-cap: C10 100u electrolytic 16V
filter-cap: C11 100n ceramic 50V
vref-top: R11 22k
vref-bottom: R12 22k
vref-cap: C12 22u electrolytic 16V
```

```stage buffer
kind: emitter-follower
title: Input buffer
input-cap: C1 100n film 63V
bias-top: R1 1M
bias-bottom: R2 1M
transistor: Q1 2N3904
emitter: R3 10k
output-cap: C2 1u film 63V
pulldown: R8 100k
```

```stage gain
kind: opamp-non-inverting
title: Gain
input-cap: C3 100n film 63V
bias: R4 1M
opamp: U1A TL072
feedback: R5 100k
gain-resistor: R6 2k2
gain: VR1 B50k
gain-cap: C4 10u electrolytic 16V
output-cap: C5 1u film 63V
```

```stage tone
kind: tone-cut
title: Tone
series: R7 4k7
tone: VR2 B25k
cap: C6 22n film 63V
```

```stage level
kind: volume
title: Level
volume: VR3 A25k
```
"""


def run_once(path: Path) -> tuple[float, float]:
    """(CPU seconds of this process, wall seconds) for one guide, end to end."""
    start, cpu = time.perf_counter(), time.process_time()
    guide = parse_guide(path)
    kit = build_circuit(guide)
    specs = derive_specs(guide, kit)
    render_response_svg(kit_plot(specs))
    for stage in kit.signal_stages:
        render_response_svg(stage_plot(specs, stage.id))
    return time.process_time() - cpu, time.perf_counter() - start


def main() -> None:
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "bench-four-stage.md"
        path.write_text(GUIDE, encoding="utf-8")
        run_once(path)  # warm-up: imports, fonts, model library
        cpu, wall = min(run_once(path) for _ in range(3))
    # CPU time is the one-core figure; wall time also counts other work on a shared machine.
    print(f"four signal stages, specs and 5 plots: {cpu:.2f} s CPU, {wall:.2f} s wall "
          "(target under 2 s on one core)")


if __name__ == "__main__":
    main()
