"""Large-signal benchmark: the engine's periodic steady state against ngspice's transients.

Run: python bench/bench_drive.py [--settle 0.1] [--rounds 3]

For a one-transistor stage (a gain knob on its emitter bypass) and a three-stage chain (its
output volume knob), the grid of 5 knob positions x 6 pickup levels at 1 kHz: the engine
solves all 30 periodic steady states in one call (96 points per period, as the kit figures
use), ngspice runs 30 transients, each long enough for the coupling capacitors to settle
(``--settle`` seconds) plus one period at a step of a 96th of it, with the step control
of the engine's ngspice checks.
CPU seconds of each side (this process, or the ngspice children from getrusage, less an
empty deck's start-up per run) are printed side by side with their ratio, and the two sides'
THD beside each other so the accuracy is seen to be the same. The sides alternate round by
round, so a busy machine slows both alike; the best round of each is shown.

A transient that stops before the coupling capacitors have settled reads a THD off the periodic
state (the three-stage chain's reference capacitor has a time constant of about 0.23 s, so
after 100 ms its clipped levels still drift). Each circuit's top level at the first knob
position is therefore run once more with ``--reference-settle`` seconds of settling: where the
short transients disagree with the engine and the long one agrees, ngspice needs more time
than was timed for the same accuracy, and the printed ratio is a lower bound.
"""

# ruff: noqa: E402 (the thread settings must precede numpy's import)
from __future__ import annotations

import os

for _var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")

import argparse
import resource
import subprocess
import tempfile
from pathlib import Path

import numpy as np
from bench_engine import one_transistor, three_stage

from kitleaf.engine import Circuit, solve_batch
from kitleaf.engine.harmonics import distortion
from kitleaf.engine.periodic import periodic_steady_state
from kitleaf.engine.spice_export import to_spice
from kitleaf.memory import keep_freed_memory

POSITIONS = (0.0, 0.25, 0.5, 0.75, 1.0)
LEVELS = (0.03, 0.1, 0.2, 0.3, 1.0, 2.0)
FREQ = 1000.0
POINTS = 96
# The step control of the engine's ngspice checks (tests/engine/ngspice_tran.py)
OPTIONS = ".options reltol=1e-5 trtol=1 abstol=1e-14 vntol=1e-8 itl4=200"


def gain_stage() -> Circuit:
    """The engine bench's one-transistor stage with a 5 kohm gain pot in series with a
    22 uF emitter bypass capacitor."""
    c = one_transistor()
    c.pot("VR1", "e", "eb", "eb", 5e3, position=0.5, taper="lin")
    return c.capacitor("CE", "eb", "0", 22e-6)


def engine_grid(c: Circuit):
    """The 30 periodic steady states in one call; THD at "out" per (position, level)."""
    batches = [solve_batch(c.replaced("VR1", position=p)) for p in POSITIONS]
    result = periodic_steady_state(batches, "VIN", LEVELS, FREQ, nodes=["out"], points=POINTS)
    return result.distortion("out").thd[:, :, 0]


def decks(c: Circuit, settle: float, folder: Path,
          positions: tuple[float, ...] = POSITIONS) -> list[Path]:
    """One deck per (position, level): a transient over ``settle`` plus one period, the
    last period written out at POINTS instants."""
    period = 1.0 / FREQ
    stop = float((np.ceil(settle * FREQ) + 1.0) * period)
    step = period / POINTS
    paths = []
    for i, p in enumerate(positions):
        netlist = to_spice(c.replaced("VR1", position=p))
        source, out = netlist.parts["VIN"], netlist.node("out")
        for j, level in enumerate(LEVELS):
            lines = [line.replace(" ac ", f" sin(0 {level!r} {FREQ!r}) ac ", 1)
                     if line.startswith(source + " ") else line
                     for line in netlist.text.splitlines()]
            path = folder / f"deck-{i}-{j}.cir"
            control = [f"tran {step!r} {stop!r} {stop - period!r} {step!r}",
                       f"linearize v({out})", f"wrdata {folder}/out-{i}-{j}.dat v({out})"]
            path.write_text("\n".join(lines) + f"\n{OPTIONS}\n.control\n"
                            + "\n".join(control) + "\n.endc\n.end\n")
            paths.append(path)
    return paths


def children_cpu() -> float:
    kids = resource.getrusage(resource.RUSAGE_CHILDREN)
    return kids.ru_utime + kids.ru_stime


def self_cpu() -> float:
    me = resource.getrusage(resource.RUSAGE_SELF)
    return me.ru_utime + me.ru_stime


def ngspice_cpu(paths: list[Path], empty: Path) -> float:
    """CPU seconds of the runs, less an empty deck's start-up for each."""
    start = children_cpu()
    for path in paths:
        subprocess.run(["ngspice", "-b", str(path)], capture_output=True, check=False)
    spent = children_cpu() - start
    start = children_cpu()
    for _ in paths:
        subprocess.run(["ngspice", "-b", str(empty)], capture_output=True, check=False)
    return spent - (children_cpu() - start)


def ngspice_thd(folder: Path) -> np.ndarray:
    thd = np.zeros((len(POSITIONS), len(LEVELS)))
    for i in range(len(POSITIONS)):
        for j in range(len(LEVELS)):
            data = np.loadtxt(folder / f"out-{i}-{j}.dat")
            thd[i, j] = float(distortion(data[:POINTS, 1]).thd)
    return thd


def compare(name: str, c: Circuit, settle: float, rounds: int, reference: float) -> None:
    folder = Path(tempfile.mkdtemp())
    paths = decks(c, settle, folder)
    empty = folder / "empty.cir"
    empty.write_text("empty\n.end\n")
    engine_grid(c)  # imports and first-use costs, as a running build has paid them
    ours, theirs = [], []
    for _ in range(rounds):
        start = self_cpu()
        thd = engine_grid(c)
        ours.append(self_cpu() - start)
        theirs.append(ngspice_cpu(paths, empty))
    ref = ngspice_thd(folder)
    shown = ref >= 1e-3
    worst = float(np.max(np.abs(thd[shown] / ref[shown] - 1.0))) if shown.any() else 0.0
    print(f"{name}: {len(POSITIONS)} knob positions x {len(LEVELS)} levels")
    print(f"  engine, one periodic solve of all 30:  {min(ours):7.3f} s CPU (best of {rounds})")
    print(f"  ngspice, 30 transients of {settle * 1000:.0f} ms + 1 period: "
          f"{min(theirs):7.3f} s CPU (best of {rounds})")
    print(f"  ratio (best of each): {min(theirs) / min(ours):6.1f}x; per round: "
          + ", ".join(f"{t / o:.1f}x" for o, t in zip(ours, theirs, strict=True)))
    print(f"  THD, engine against ngspice where >= 0.1 %: worst {worst * 100:.2f} % relative")
    settled = settled_thd(c, reference, folder)
    print(f"  THD at {LEVELS[-1] * 1000:g} mV, knob at {POSITIONS[0]:g}: engine "
          f"{thd[0, -1] * 100:.2f} %, ngspice after {settle * 1000:.0f} ms "
          f"{ref[0, -1] * 100:.2f} %, after {reference * 1000:.0f} ms {settled * 100:.2f} %")


def settled_thd(c: Circuit, settle: float, folder: Path) -> float:
    """ngspice's THD at the top level, first knob position, after ``settle`` seconds."""
    deck = decks(c, settle, folder, POSITIONS[:1])[-1]
    subprocess.run(["ngspice", "-b", str(deck)], capture_output=True, check=False)
    return float(distortion(np.loadtxt(folder / f"out-0-{len(LEVELS) - 1}.dat")[:POINTS, 1]).thd)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--settle", type=float, default=0.1,
                        help="seconds of ngspice transient before the period kept")
    parser.add_argument("--rounds", type=int, default=3)
    parser.add_argument("--reference-settle", type=float, default=1.0,
                        help="seconds of settling for the one long reference transient")
    args = parser.parse_args()
    keep_freed_memory()
    for name, circuit in (("one-transistor stage", gain_stage()),
                          ("three-stage chain", three_stage())):
        compare(name, circuit, args.settle, args.rounds, args.reference_settle)


if __name__ == "__main__":
    main()
