"""Benchmark of the circuit engine against ngspice: prints figures, asserts nothing.

Run: python bench/bench_engine.py [--samples 1000] [--repeat 20]

For a one-transistor stage and a three-stage chain it times the engine's DC operating point
plus a 200-point AC sweep, and a Monte Carlo of N samples (DC, then the same 200 points and
both corners per sample); then ngspice does the same work in its own .control loop
(alter / altermod with its random functions, op, ac) and the ratios are printed. The two
Monte Carlo runs alternate, round by round, so a busy machine slows both alike; the best
wall-clock and CPU time (this process and its children, from getrusage) of each are shown.

The DC + AC figure compiles the circuit afresh every time (a copy of it, which the engine's
compile cache does not know). The Monte Carlo runs reuse one compiled circuit, as the
engine does for every analysis of a circuit object, just as ngspice's figure leaves out its
parse of the netlist (its start-up, an empty deck's run, is subtracted).
"""

# ruff: noqa: E402 (the thread settings must precede numpy's import)
from __future__ import annotations

import os

# ngspice runs on one core; so does the engine here. The engine's matrices are small, and
# BLAS helper threads mostly spin between calls, adding CPU time without shortening the run.
for _var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")

import argparse
import copy
import resource
import shutil
import subprocess
import tempfile
import time
from pathlib import Path

import numpy as np

from kitleaf.engine import Circuit, monte_carlo, solve_ac, solve_dc
from kitleaf.engine.spice_export import to_spice
from kitleaf.memory import keep_freed_memory

FREQS = np.geomspace(10.0, 100e3, 200)


def one_transistor() -> Circuit:
    c = Circuit("one-transistor boost")
    c.vsource("VCC", "vcc", "0", dc=9.0).vsource("VIN", "in", "0", ac=1.0)
    c.capacitor("C1", "in", "b", 100e-9, tol=0.10)
    c.resistor("R1", "vcc", "b", 1e6, tol=0.05).resistor("R2", "b", "0", 100e3, tol=0.05)
    c.bjt("Q1", "c", "b", "e", "2N5089")
    c.resistor("RC", "vcc", "c", 10e3, tol=0.05).resistor("RE", "e", "0", 390.0, tol=0.05)
    return c.capacitor("C2", "c", "out", 1e-6, tol=0.10).resistor("RL", "out", "0", 100e3)


def three_stage() -> Circuit:
    """JFET buffer, BJT boost, op-amp gain stage with a tone roll-off."""
    c = Circuit("three-stage chain")
    c.vsource("VCC", "vcc", "0", dc=9.0).vsource("VIN", "in", "0", ac=1.0)
    c.resistor("RA", "vcc", "vref", 10e3, tol=0.05).resistor("RB", "vref", "0", 10e3, tol=0.05)
    c.capacitor("CREF", "vref", "0", 47e-6, tol=0.2)
    c.capacitor("C1", "in", "g1", 22e-9, tol=0.1).resistor("RG1", "g1", "vref", 1e6, tol=0.05)
    c.jfet("Q1", "vcc", "g1", "s1", "2N5457").resistor("RS1", "s1", "0", 10e3, tol=0.05)
    c.capacitor("C2", "s1", "b2", 100e-9, tol=0.1)
    c.resistor("R21", "vcc", "b2", 1e6, tol=0.05).resistor("R22", "b2", "0", 100e3, tol=0.05)
    c.bjt("Q2", "c2", "b2", "e2", "2N5089").resistor("RC2", "vcc", "c2", 10e3, tol=0.05)
    c.resistor("RE2", "e2", "0", 390.0, tol=0.05)
    c.capacitor("C3", "c2", "p3", 100e-9, tol=0.1).resistor("RB3", "p3", "vref", 1e6, tol=0.05)
    c.opamp("U1A", "p3", "n3", "o3", "vcc", "0", "TL072")
    c.resistor("RF3", "o3", "n3", 47e3, tol=0.05).capacitor("CF3", "o3", "n3", 1e-9, tol=0.1)
    c.resistor("RG3", "n3", "g3", 4.7e3, tol=0.05).capacitor("CG3", "g3", "0", 10e-6, tol=0.2)
    c.capacitor("C4", "o3", "t", 1e-6, tol=0.1).resistor("RT", "t", "out", 10e3, tol=0.05)
    c.capacitor("CT", "out", "0", 10e-9, tol=0.1)
    return c.pot("VR1", "out", "vol", "0", 100e3, position=0.5, taper="log", tol=0.2)


def best_of(fn, repeat: int) -> float:
    return min(timed(fn, repeat))


def timed(fn, repeat: int) -> list[float]:
    """Wall-clock seconds of ``repeat`` calls."""
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        fn()
        times.append(time.perf_counter() - start)
    return times


def cpu_timed(fn) -> float:
    """CPU seconds of one call: this process (every thread) plus any child it waited for."""
    def cpu() -> float:
        me, kids = resource.getrusage(resource.RUSAGE_SELF), resource.getrusage(
            resource.RUSAGE_CHILDREN)
        return me.ru_utime + me.ru_stime + kids.ru_utime + kids.ru_stime

    start = cpu()
    fn()
    return cpu() - start


def engine_dc_ac(c: Circuit) -> None:
    op = solve_dc(c)
    solve_ac(c, op, FREQS, "VIN").transfer("out")


def engine_mc(c: Circuit, samples: int):
    return monte_carlo(c, samples=samples, seed=1, freqs=FREQS, source="VIN", nodes=["out"],
                       outputs=["out"])


def ngspice_deck(c: Circuit, runs: int, vary: bool) -> str:
    """The circuit with a .control loop doing ``runs`` x (alter, op, 200-point ac)."""
    netlist = to_spice(c)
    alters = []
    if vary:
        for part in c.elements:
            name = netlist.parts.get(part.name)
            tol = getattr(part, "tol", 0.0)
            if name and tol and name[0] in "rcl":
                alters.append(f"alter {name} = {part.value!r} * (1 + {tol!r} * sunif(0))")
        for model, card in _model_names(netlist.text).items():
            spread = _spread_of(c, model)
            for key, (low, high) in spread.items():
                if key != "IDSS":
                    mid, half = (low + high) / 2, (high - low) / 2
                    alters.append(f"altermod {card} {key.lower()} = {mid!r} + {half!r} * sunif(0)")
    points = FREQS.size // 4  # ngspice counts points per decade: 4 decades, 200 points
    loop = ["let k = 0", f"while k < {runs}", *alters, "op",
            f"ac dec {points} {FREQS[0]!r} {FREQS[-1]!r}", "destroy all", "let k = k + 1",
            "end"]
    return netlist.text + ".control\n" + "\n".join(loop) + "\n.endc\n.end\n"


def _model_names(text: str) -> dict[str, str]:
    """Library model name -> card name, from the comment-free netlist (by order of use)."""
    cards = [line.split()[1] for line in text.splitlines() if line.startswith(".model")]
    return dict(zip(cards, cards, strict=True))


def _spread_of(c: Circuit, card: str) -> dict:
    netlist = to_spice(c)
    for part in c.elements:
        name = netlist.parts.get(part.name, "")
        if hasattr(part, "model") and name[0] in "dqj":
            line = next(ln for ln in netlist.text.splitlines() if ln.startswith(name + " "))
            if line.split()[-1] == card:
                return dict(part.model.spread)
    return {}


def ngspice_run(deck: str):
    """A function running ngspice on ``deck`` (written once to a temporary file)."""
    tmp = tempfile.mkdtemp()
    path = Path(tmp) / "deck.cir"
    path.write_text(deck)

    def run() -> None:
        subprocess.run(["ngspice", "-b", str(path)], capture_output=True, check=False)

    return run


def ngspice_seconds(deck: str, repeat: int = 3) -> float:
    return best_of(ngspice_run(deck), repeat)


def compare_mc(c: Circuit, samples: int, rounds: int) -> dict[str, float]:
    """Engine and ngspice Monte Carlo timed in alternation, so both see the same load:
    best wall and CPU seconds of each (ngspice's start-up, an empty deck, subtracted), and
    each round's own CPU ratio (the machine's slow and quick spells last seconds, so a
    ratio within one round compares like with like). Within a round the engine runs back
    to back for about as long as one ngspice run takes, and its mean CPU time per run is
    used: both sides are then exposed to the machine's hiccups over the same span, where
    one 50 ms run against one 500 ms run would let a single hiccup weigh ten times more on
    the engine's side."""
    base_run = ngspice_run(ngspice_deck(c, 0, False))
    spice_run = ngspice_run(ngspice_deck(c, samples, True))
    best = {k: float("inf") for k in ("mc", "mc_cpu", "spice", "spice_cpu", "base", "base_cpu")}
    ratios, runs_per_round = [], 1
    for _ in range(rounds):
        now = {}
        for key, fn in (("spice", spice_run), ("base", base_run)):
            start = time.perf_counter()
            now[key] = cpu_timed(fn)
            best[key] = min(best[key], time.perf_counter() - start)
            best[key + "_cpu"] = min(best[key + "_cpu"], now[key])
        total = 0.0
        for _ in range(runs_per_round):
            start = time.perf_counter()
            cpu = cpu_timed(lambda: engine_mc(c, samples))
            best["mc"] = min(best["mc"], time.perf_counter() - start)
            best["mc_cpu"] = min(best["mc_cpu"], cpu)
            total += cpu
        ratios.append((now["spice"] - now["base"]) / (total / runs_per_round))
        runs_per_round = max(3, round((now["spice"] - now["base"]) / best["mc_cpu"]))
    best["spice"] -= best["base"]
    best["spice_cpu"] -= best["base_cpu"]
    best["round_ratios"] = sorted(ratios[1:] if len(ratios) > 1 else ratios)
    best["runs_per_round"] = runs_per_round
    return best


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--samples", type=int, default=1000)
    parser.add_argument("--repeat", type=int, default=20)
    parser.add_argument("--rounds", type=int, default=5,
                        help="alternating engine / ngspice Monte Carlo rounds")
    parser.add_argument("--plain-malloc", action="store_true",
                        help="leave glibc's malloc thresholds as they are (the kitleaf "
                             "command raises them, see kitleaf/memory.py)")
    args = parser.parse_args()
    kept = not args.plain_malloc and keep_freed_memory()
    have_ngspice = shutil.which("ngspice") is not None
    print(f"kitleaf engine benchmark: DC + {FREQS.size}-point AC, Monte Carlo of "
          f"{args.samples} samples (best of repeats, wall clock; {os.cpu_count()} CPUs, "
          f"load average {os.getloadavg()[0]:.1f}; BLAS threads "
          f"{os.environ['OPENBLAS_NUM_THREADS']}; freed memory kept: {'yes' if kept else 'no'})")
    for label, build, stages in (("one-transistor stage", one_transistor, 1),
                                 ("three-stage chain", three_stage, 3)):
        c = build()
        engine_dc_ac(c)  # warm-up (model library, imports)
        ours = best_of(lambda c=c: engine_dc_ac(copy.copy(c)), args.repeat)
        print(f"\n{label}:")
        print(f"  engine DC+AC          {ours * 1e3:8.2f} ms  ({ours * 1e3 / stages:.2f} ms "
              "per stage, target <= 5)")
        if not have_ngspice:
            mc = best_of(lambda c=c: engine_mc(c, args.samples), max(3, args.repeat // 5))
            print(f"  engine Monte Carlo    {mc * 1e3:8.1f} ms")
            print("  ngspice not installed: no comparison")
            continue
        base = ngspice_seconds(ngspice_deck(c, 0, False))
        runs = 100
        single = (ngspice_seconds(ngspice_deck(c, runs, False)) - base) / runs
        print(f"  ngspice DC+AC         {single * 1e3:8.2f} ms  (start-up {base * 1e3:.0f} ms "
              "excluded)")
        print(f"  ratio DC+AC           {single / ours:8.3f} x  (ngspice time / engine time)")
        t = compare_mc(c, args.samples, args.rounds)
        print(f"  engine Monte Carlo    {t['mc'] * 1e3:8.1f} ms wall, {t['mc_cpu'] * 1e3:6.1f} ms "
              f"CPU  ({t['mc'] / args.samples * 1e6:.1f} us per sample)")
        print(f"  ngspice Monte Carlo   {t['spice'] * 1e3:8.1f} ms wall, "
              f"{t['spice_cpu'] * 1e3:6.1f} ms CPU")
        print(f"  ratio Monte Carlo     {t['spice'] / t['mc']:8.2f} x wall, "
              f"{t['spice_cpu'] / t['mc_cpu']:.2f} x CPU  (target >= 10)")
        rounds = t["round_ratios"]
        print(f"  CPU ratio per round   {rounds[len(rounds) // 2]:8.2f} x median, "
              f"{rounds[0]:.2f} .. {rounds[-1]:.2f} x over {len(rounds)} rounds (engine: "
              f"mean of {t['runs_per_round']} runs back to back, as long as ngspice's one)")


if __name__ == "__main__":
    main()
