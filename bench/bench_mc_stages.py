"""Where a Monte Carlo run's time goes, stage by stage: prints figures, asserts nothing.

Run: python bench/bench_mc_stages.py [--samples 1000] [--repeat 15] [--base PATH]

For the two circuits of bench_engine.py it times each stage of ``monte_carlo`` alone (best of
``repeat`` calls): compiling, drawing the samples, the nominal start, the DC reduction, the
batched Newton steps, the port system, its diagonalisation and check, the 200-point
evaluation and the corner search. With ``--base``, a checkout of kitleaf's ``src`` folder,
the same figures of that tree are measured in alternation with this one's, so a change is
judged side by side on the same load.
"""

from __future__ import annotations

import argparse
import copy
import json
import subprocess
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
STAGES = ("compile", "draw", "nominal", "reduce", "newton", "ports", "modal", "evaluate",
          "corners", "whole run")


def best(fn, repeat: int) -> tuple[float, object]:
    times, out = [], None
    for _ in range(repeat):
        start = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - start)
    return min(times), out


def measure(samples: int, repeat: int) -> dict[str, dict[str, float]]:
    """Best seconds of every stage, per circuit (run in the interpreter of the tree tested)."""
    sys.path.insert(0, str(HERE))
    from bench_engine import one_transistor, three_stage

    from kitleaf.memory import keep_freed_memory

    keep_freed_memory()  # as the kitleaf command runs
    return {label: stages(build(), samples, repeat)
            for label, build in (("one-transistor", one_transistor),
                                 ("three-stage", three_stage))}


def stages(c, samples: int, repeat: int) -> dict[str, float]:
    import numpy as np
    from bench_engine import FREQS

    from kitleaf.engine import mc_response as response
    from kitleaf.engine.montecarlo import compile_circuit, draw_problem, monte_carlo, nominal_state
    from kitleaf.engine.ports import modal, port_form
    from kitleaf.engine.reduce import partition, reduce_problem, solve_reduced

    t = {}
    # a copy: the compile cache knows the circuit itself after its first compile
    t["compile"], system = best(lambda: compile_circuit(copy.copy(c)), repeat)
    part = partition(system)
    t["draw"], (problem, factors, _) = best(
        lambda: draw_problem(system, samples, 1, "uniform"), repeat)
    t["nominal"], _ = best(lambda: nominal_state(system, problem, samples), repeat)
    t["reduce"], _ = best(lambda: reduce_problem(problem, part), repeat)

    def dc():
        state = nominal_state(system, problem, samples)
        return solve_reduced(problem, state, part), state

    whole, (reduced, state) = best(dc, repeat)
    t["newton"] = max(0.0, whole - t["nominal"] - t["reduce"])
    rows, rhs = [system.layout.row("out")], system.rhs(only="VIN")
    t["ports"], ports = best(lambda: port_form(system, part, problem, state.x, factors, rhs,
                                               rows, reduced), repeat)
    t["modal"], form = best(lambda: modal(ports, float(FREQS[0])), repeat)
    row = response._Row(form.take([0]))
    t["evaluate"], mags = best(lambda: np.abs(row(FREQS)), repeat)
    t["corners"], _ = best(lambda: response._corners(row, FREQS, mags, None), repeat)
    t["whole run"], _ = best(lambda: monte_carlo(
        c, samples=samples, seed=1, freqs=FREQS, source="VIN", nodes=["out"],
        outputs=["out"]), repeat)
    return t


def run_tree(src: str, samples: int, repeat: int) -> dict:
    code = (f"import sys, json; sys.path.insert(0, {src!r}); sys.path.insert(1, {str(HERE)!r});"
            f"from bench_mc_stages import measure; print(json.dumps(measure({samples}, "
            f"{repeat})))")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          check=True)
    return json.loads(done.stdout.strip().splitlines()[-1])


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--samples", type=int, default=1000)
    parser.add_argument("--repeat", type=int, default=15)
    parser.add_argument("--base", help="another tree's src folder, measured side by side")
    parser.add_argument("--rounds", type=int, default=3, help="alternations with --base")
    args = parser.parse_args()
    here = str(HERE.parent / "src")
    trees = {"this tree": here} if not args.base else {"base": args.base, "this tree": here}
    results = {name: {} for name in trees}
    for _ in range(args.rounds if args.base else 1):
        for name, src in trees.items():
            got = run_tree(src, args.samples, args.repeat)
            for circuit, stages in got.items():
                mine = results[name].setdefault(circuit, {})
                for k, v in stages.items():
                    mine[k] = min(mine.get(k, float("inf")), v)
    print(f"Monte Carlo stages, {args.samples} samples, best of {args.repeat} (ms)")
    for circuit in results["this tree"]:
        print(f"\n{circuit}:")
        print("  " + "stage".ljust(12) + "".join(name.rjust(12) for name in trees)
              + ("   ratio" if args.base else ""))
        for stage in STAGES:
            cells = [results[name][circuit][stage] * 1e3 for name in trees]
            ratio = f"   {cells[0] / cells[-1]:5.2f}x" if args.base else ""
            print("  " + stage.ljust(12) + "".join(f"{c:12.2f}" for c in cells) + ratio)


if __name__ == "__main__":
    main()
