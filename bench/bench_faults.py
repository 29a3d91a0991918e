"""Benchmark of the fault finder: every single fault of a four-stage kit solved by the engine
in its batched runs, printed beside ngspice solving the same faulted operating points one by
one. Prints figures, asserts nothing.

Run: python bench/bench_faults.py [--rounds 3] [--guide PATH]

The engine's figure is the whole job of ``solve_faults``: the board built, every fault over
its 8 tolerance samples, every fault with nominal parts, the 10 Mohm meter solved in place
where it matters, and the meter's loading elsewhere. Beside it, the engine's nominal batch
alone (one operating point per fault). ngspice then solves each fault's circuit (built in
directly, nominal parts) one after another in one session (`source`, `op`), its start-up (a
session that loads nothing) subtracted. CPU times are this process's or ngspice's own
(getrusage), best of the rounds; the two alternate, so a busy machine slows both alike.
"""

# ruff: noqa: E402 (the thread settings must precede numpy's import)
from __future__ import annotations

import os

for _var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")  # one core, as ngspice runs

import argparse
import resource
import shutil
import subprocess
import tempfile
from pathlib import Path

from kitleaf.circuit.build import build_circuit
from kitleaf.engine.batch import solve_batch
from kitleaf.engine.spice_export import to_spice
from kitleaf.faults.board import build_board
from kitleaf.faults.catalogue import catalogue
from kitleaf.faults.inject import faulted_circuit
from kitleaf.faults.model import GOOD
from kitleaf.faults.solve import SAMPLES, solve_faults
from kitleaf.guide import parse_guide
from kitleaf.memory import keep_freed_memory

# An invented four-stage kit (Fernbrook Circuitworks test scenario), shared with the tests.
GUIDE = Path(__file__).resolve().parent.parent / "tests" / "faults" / "guides" / \
    "alder-four-stage.md"


def cpu_seconds(fn) -> float:
    """CPU seconds of ``fn()`` in this process and the children it waited for."""
    def cpu() -> float:
        me = resource.getrusage(resource.RUSAGE_SELF)
        kids = resource.getrusage(resource.RUSAGE_CHILDREN)
        return me.ru_utime + me.ru_stime + kids.ru_utime + kids.ru_stime

    start = cpu()
    fn()
    return cpu() - start


def ngspice_session(folder: Path, circuits: list, name: str) -> Path:
    """A deck that sources each circuit in turn and solves its operating point."""
    control = []
    for k, circuit in enumerate(circuits):
        path = folder / f"{name}{k}.cir"
        path.write_text(to_spice(circuit).text + ".end\n")
        control += [f"source {path}", "op"]
    deck = folder / f"{name}.cir"
    deck.write_text("* fault session\n.control\n" + "\n".join(control) + "\n.endc\n.end\n")
    return deck


def run_ngspice(deck: Path) -> None:
    done = subprocess.run(["ngspice", "-b", str(deck)], capture_output=True, text=True,
                          timeout=600)
    if "error" in (done.stdout + done.stderr).lower():
        raise SystemExit(f"ngspice failed on {deck.name}:\n{done.stdout[-2000:]}")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rounds", type=int, default=3)
    parser.add_argument("--guide", type=Path, default=GUIDE)
    args = parser.parse_args()
    keep_freed_memory()
    kit = build_circuit(parse_guide(args.guide))
    board = build_board(kit)
    faults = [f for f in catalogue(kit, board) if f.dc_visible]
    scale = board.scale([GOOD, *faults])
    solve_faults(kit)  # warm: imports, the device library, numpy's first calls
    whole, nominal, spice = [], [], []
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        deck = ngspice_session(folder, [faulted_circuit(kit, f) for f in faults], "fault")
        empty = ngspice_session(folder, [], "empty")
        for _ in range(args.rounds):
            whole.append(cpu_seconds(lambda: solve_faults(kit)))
            nominal.append(cpu_seconds(lambda: solve_batch(
                board.circuit, samples=len(scale), scale=scale, spread=False)))
            if shutil.which("ngspice"):
                spice.append(cpu_seconds(lambda: run_ngspice(deck))
                             - cpu_seconds(lambda: run_ngspice(empty)))
    points = len(faults) + 1
    print(f"{args.guide.stem}: {len(faults)} DC-visible single faults and the good build, "
          f"{len(kit.signal_stages)} signal stages, {len(board.circuit.elements)} elements "
          "on the fault board")
    print(f"  engine, the whole job ({points} x {SAMPLES} tolerance samples, {points} "
          f"nominal, metered points): {min(whole):.3f} s CPU (rounds: "
          f"{', '.join(f'{t:.3f}' for t in whole)})")
    print(f"  engine, one nominal batch of {points} operating points: {min(nominal):.3f} s CPU"
          f" ({min(nominal) / points * 1e3:.2f} ms each)")
    if spice:
        best = min(spice)
        print(f"  ngspice, the {len(faults)} faulted operating points one by one: {best:.3f} s"
              f" CPU ({best / len(faults) * 1e3:.2f} ms each; rounds: "
              f"{', '.join(f'{t:.3f}' for t in spice)})")
        print(f"  per operating point, ngspice / engine nominal batch: "
              f"{best / len(faults) / (min(nominal) / points):.1f}x; ngspice at its rate "
              f"for the whole job's {points * (SAMPLES + 1)} operating points (the metered "
              f"ones not counted): {best / len(faults) * points * (SAMPLES + 1):.2f} s")
    else:
        print("  ngspice not installed: no comparison")
    print(f"  target: the whole job within 1 s on one core: "
          f"{'met' if min(whole) <= 1.0 else 'NOT met'}")


if __name__ == "__main__":
    main()
