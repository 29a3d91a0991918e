"""How the check of one guide grows with its circuit: time and peak memory against its size.

Two families of invented guides (Fernbrook Circuitworks bench scenario, not products): a guide
of N signal stages (the demo guides' stages, renumbered, one after another) and a guide whose
one custom stage is a resistor ladder of N resistors. Each size is checked as ``kitleaf check``
does (BLAS on one thread), in a fresh process, and the bench prints its CPU time (the shared
machine's load moves wall time far more) and peak resident memory, with the ratio to the
previous size, so growth can be read off: a ratio near the size ratio (2) is linear, near 4
quadratic. Not a timed test. The tree measured is the one the bench file sits in (its
``src/`` on the path), so a copy of the bench in another checkout measures that checkout.

    python bench/bench_scale.py [--stages 10 20 40] [--ladder 100 200 400] [--base SRC]

``--base`` takes another checkout's ``src/`` and runs the same sizes with it, side by side.
Sizes the base cannot check in reasonable time can be left out: ``--stages 10 20``.
"""

from __future__ import annotations

import argparse
import os
import re
import subprocess
import sys
import tempfile
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

from bench_build import DEMO, renumbered, stage_blocks, with_reference  # noqa: E402

from kitleaf.circuit.stages import KINDS  # noqa: E402

HEAD = """```kit
title: Bench {title}
code: FB-9{code:02d}
revision: A
supply: 9 V
```

"""
POWER = """```stage power
kind: power
title: Power
reverse-diode: D1 1N5817
bulk-cap: C1 100u electrolytic 16V
filter-cap: C2 100n ceramic 50V
```

"""
# A repeated stage's switch would need its own ``switch:`` line and would multiply the kit's
# states; the bench measures one fixed circuit, so the switch goes, with the pair only it selects.
SWITCHED = re.compile(r"^(?:[a-z-]+: S\d+ .*|alt-[a-z]+: .*)\n", re.M)
# Runs in a fresh interpreter: the check of one guide, then the peak resident memory (kB).
CHILD = """
import resource, sys, time
from kitleaf.memory import keep_freed_memory
keep_freed_memory()
from kitleaf.commands.check import check_guide
started = time.process_time()
check_guide(sys.argv[1])
print(time.process_time() - started, resource.getrusage(resource.RUSAGE_SELF).ru_maxrss)
"""


def stages_guide(count: int) -> str:
    """A guide of ``count`` signal stages taken in turn from the demo guides, claims dropped."""
    demos = [with_reference(p.read_text()) for p in sorted(DEMO.glob("*.md"))]
    power = next(b for d in demos for sid, b in stage_blocks(d)
                 if sid == "power" and "vref-top:" in b)
    spares = [(sid, b) for d in demos for sid, b in stage_blocks(d) if _signal(b)]
    blocks = [renumbered(spares[k % len(spares)][1], spares[k % len(spares)][0], 100 * (k + 1))
              for k in range(count)]
    text = HEAD.format(title=f"{count} Stages", code=count % 100) + power + "\n".join(blocks)
    return SWITCHED.sub("", re.sub(r"^claim: .*\n", "", text, flags=re.M))


def _signal(block: str) -> bool:
    """Whether a stage block's kind is on the signal path (not power, not a spare op-amp)."""
    kind = re.search(r"^kind: (\S+)", block, re.M)
    return kind is not None and KINDS[kind[1]].signal


def ladder_guide(resistors: int) -> str:
    """A guide whose custom stage is a ladder: series 100R steps with 1M shunts to ground (a
    ladder that lets the signal through: one that lost it entirely is a located error)."""
    rungs = resistors // 2
    nodes = " ".join(f"n{k}" for k in range(1, rungs))
    lines = [f"part: R{100 + 2 * k} 100R @ {_node(k, rungs)} {_node(k + 1, rungs)}\n"
             f"part: R{101 + 2 * k} 1M @ {_node(k + 1, rungs)} 0"
             for k in range(rungs)]
    stage = ("```stage ladder\nkind: custom\ntitle: Resistor ladder\n"
             f"nodes: {nodes}\n" + "\n".join(lines) + "\n```\n")
    return HEAD.format(title=f"{resistors} Resistor Ladder", code=resistors % 100) + POWER + stage


def _node(k: int, rungs: int) -> str:
    return "in" if k == 0 else "out" if k == rungs else f"n{k}"


def measure(src: Path, guide: Path) -> tuple[float, float]:
    """(CPU seconds, peak MB) of checking ``guide`` in a fresh process, ``src`` on the path."""
    env = dict(os.environ, OMP_NUM_THREADS="1", OPENBLAS_NUM_THREADS="1", PYTHONPATH=str(src))
    out = subprocess.run([sys.executable, "-c", CHILD, str(guide)], env=env, check=True,
                         capture_output=True, text=True).stdout.split()
    return float(out[0]), float(out[1]) / 1024


def table(label: str, sizes: list[int], make, trees: dict[str, Path], root: Path) -> None:
    """One row per size, each tree's CPU time and peak memory side by side, each with its
    ratio to the previous size."""
    print(label)
    print(f"{'size':>6}" + "".join(f" | {name[:30]:>30}" for name in trees))
    print(f"{'':>6}" + f" | {'CPU s':>7} {'ratio':>5} {'peak MB':>8} {'ratio':>5}" * len(trees))
    previous: dict[str, tuple[float, float]] = {}
    for size in sizes:
        guide = root / f"{label}-{size}.md"
        guide.write_text(make(size))
        row = f"{size:>6}"
        for name, src in trees.items():
            seconds, peak = measure(src, guide)
            last = previous.get(name)
            ratios = ("", "") if last is None else (f"{seconds / last[0]:.2f}",
                                                    f"{peak / last[1]:.2f}")
            row += f" | {seconds:>7.2f} {ratios[0]:>5} {peak:>8.0f} {ratios[1]:>5}"
            previous[name] = (seconds, peak)
        print(row, flush=True)


def main() -> int:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--stages", type=int, nargs="*", default=[10, 20, 40])
    p.add_argument("--ladder", type=int, nargs="*", default=[100, 200, 400])
    p.add_argument("--base", type=Path, help="another checkout's src/ to run side by side")
    args = p.parse_args()
    here = Path(__file__).resolve().parents[1] / "src"
    trees = {"this tree": here} | ({f"base {args.base}": args.base} if args.base else {})
    with tempfile.TemporaryDirectory() as tmp:
        table("stages", args.stages, stages_guide, trees, Path(tmp))
        table("ladder", args.ladder, ladder_guide, trees, Path(tmp))
    return 0


if __name__ == "__main__":
    sys.exit(main())
