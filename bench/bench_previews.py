"""Sound previews: every clip of the demo kits rendered cold, a one-transistor stage's 4 s clip
and its first half second beside ngspice rendering the same samples as a transient, and a
bench site with previews on and off.

CPU seconds of this process (getrusage), the ngspice children's separately, less an empty
deck's start-up. The bench site is bench_build.py's (four-stage guides made from the demo
guides); it is built cold with every kit block saying 'sound-previews: off' and then 'on':

    python bench/bench_previews.py [--site-guides 100] [--skip-kits] [--skip-ngspice]
                                   [--ngspice-seconds 0.5]
"""

from __future__ import annotations

import argparse
import re
import subprocess
import tempfile
import time
from pathlib import Path

import numpy as np
from bench_build import make_site
from bench_drive import OPTIONS, children_cpu, self_cpu
from bench_engine import one_transistor
from scipy.signal import resample_poly

from kitleaf.audio.clips import clip_plan
from kitleaf.audio.encode import RATE
from kitleaf.audio.oversampling import oversampling
from kitleaf.audio.phrase import dry_phrase
from kitleaf.audio.previews import make_previews
from kitleaf.audio.render import kit_renderer
from kitleaf.circuit.build import build_circuit
from kitleaf.engine import solve_batch, transient_response
from kitleaf.engine.spice_export import to_spice
from kitleaf.guide import parse_guide
from kitleaf.memory import keep_freed_memory
from kitleaf.site.build import build_site
from kitleaf.specs.derive import solve_kit

DEMO = Path(__file__).resolve().parents[1] / "guides"


def demo_kits() -> None:
    """Every clip of every demo kit, from the solved kit to the encoded files."""
    total_cpu, total_bytes, clips = 0.0, 0, 0
    dry = dry_phrase(RATE)
    for path in sorted(DEMO.glob("*.md")):
        guide = parse_guide(path)
        kit = build_circuit(guide)
        solved = solve_kit(guide, kit)
        plan = clip_plan([(k.name, k.designator) for k in kit.knobs])
        start = self_cpu()
        previews = make_previews(plan, dry, kit_renderer(solved), "sounds")
        spent = self_cpu() - start
        size = sum(len(data) for _, data in previews.files)
        missing = sum(1 for c in previews.clips if c.file is None)
        print(f"  {path.stem:24s} {len(plan.settings)} clips + bypass: {spent:6.1f} s CPU, "
              f"{size / 1000:6.1f} kB" + (f", {missing} missing" if missing else ""))
        total_cpu, total_bytes, clips = total_cpu + spent, total_bytes + size, clips + len(
            plan.settings)
    print(f"  all demo kits: {clips} clips, {total_cpu:.1f} s CPU (target 10 s), "
          f"{total_bytes / 1000:.1f} kB of audio in all")


def one_stage_against_ngspice(seconds: float) -> None:
    """The bench's one-transistor stage playing the 4 s phrase with our steps (the probe that
    picks its stepping rate included); then its first ``seconds`` by ours and by ngspice,
    both playing the same samples at the stepping rate (ngspice's piecewise-linear source of
    one point a sample slows it more than in proportion to the length, so it plays a slice)."""
    c = one_transistor()
    dry = dry_phrase(RATE)
    start = self_cpu()
    batch = solve_batch(c)
    [factor] = oversampling([batch], "VIN", "out")
    probed = self_cpu() - start
    clip = transient_response([batch], "VIN", dry, RATE, factor, ["out"])
    whole = self_cpu() - start
    print(f"  kitleaf, 4 s clip: {whole:.2f} s CPU (target 1 s), of which the probe "
          f"{probed:.2f} s; stepped at {factor * RATE / 1000:g} kHz, converged: "
          f"{bool(clip.converged[0])}", flush=True)
    played = dry[:int(seconds * RATE)]
    start = self_cpu()
    ours = transient_response([batch], "VIN", played, RATE, factor, ["out"])
    mine = self_cpu() - start
    # ngspice plays the very samples our steps play: the slice brought up to the stepping
    # rate by the same resampler, and its output brought down by it again
    fine = resample_poly(played, factor, 1)
    fine[0] = 0.0  # our steps start from rest: their first sample is the operating point
    with tempfile.TemporaryDirectory() as tmp:
        theirs, wave = ngspice_clip(c, fine, factor * RATE, Path(tmp))
    ref = resample_poly(wave - wave[0], 1, factor)[:played.size]
    gap = ours.wave("out")[0] - ref
    print(f"  first {seconds:g} s, the same {factor * RATE / 1000:g} kHz samples: kitleaf "
          f"{mine:.2f} s CPU, ngspice {theirs:.2f} s CPU (a transient printed at each sample, "
          f"under its own step control: {OPTIONS}); ngspice / kitleaf: {theirs / mine:.1f}")
    gap_db = 10 * np.log10(np.sum(gap ** 2) / np.sum(ref ** 2))
    print(f"  difference over the slice, RMS: {gap_db:.1f} dB of the clip")


def ngspice_clip(c, dry: np.ndarray, rate: float, folder: Path) -> tuple[float, np.ndarray]:
    """ngspice's transient of ``c`` with VIN playing ``dry`` (a piecewise-linear source of one
    point a sample at ``rate``), sampled at ``rate``; CPU seconds less an empty deck's."""
    netlist = to_spice(c)
    source, out = netlist.parts["VIN"], netlist.node("out")
    times = np.arange(dry.size) / rate
    pairs = [f"{t:.10g} {v:.10g}" for t, v in zip(times, dry, strict=True)]
    pwl = "\n".join("+ " + " ".join(pairs[i:i + 8]) for i in range(0, len(pairs), 8))
    lines = [f"{source} {line.split()[1]} {line.split()[2]} PWL(\n{pwl}\n+ )"
             if line.startswith(source + " ") else line for line in netlist.text.splitlines()]
    stop = float(times[-1])
    control = [f"tran {1 / rate:.10g} {stop:.10g}", f"linearize v({out})",
               f"wrdata {folder}/out.dat v({out})"]
    deck, empty = folder / "clip.cir", folder / "empty.cir"
    deck.write_text("\n".join(lines) + f"\n{OPTIONS}\n.control\n" + "\n".join(control)
                    + "\n.endc\n.end\n")
    empty.write_text("empty\n.end\n")
    start = children_cpu()
    subprocess.run(["ngspice", "-b", str(deck)], capture_output=True, check=False)
    spent = children_cpu() - start
    start = children_cpu()
    subprocess.run(["ngspice", "-b", str(empty)], capture_output=True, check=False)
    data = np.loadtxt(folder / "out.dat")
    wave = np.interp(times, data[:, 0], data[:, 1])
    return spent - (children_cpu() - start), wave


def bench_site(count: int) -> None:
    """The bench site built cold with previews off, then on."""
    seconds = {}
    for state in ("off", "on"):
        with tempfile.TemporaryDirectory() as tmp:
            guides = make_site(Path(tmp), count)
            for path in guides.glob("*.md"):
                text = re.sub(r"^sound-previews: .*\n", "", path.read_text(), flags=re.M)
                path.write_text(text.replace("supply: 9 V\n",
                                             f"supply: 9 V\nsound-previews: {state}\n", 1))
            started = time.perf_counter()
            build_site(guides, Path(tmp) / "published", use_cache=False)
            seconds[state] = time.perf_counter() - started
        print(f"  {count} guides, previews {state}: {seconds[state]:.1f} s cold", flush=True)
    print(f"  on / off: {seconds['on'] / seconds['off']:.2f} (target at most 2)")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--site-guides", type=int, default=100,
                        help="guides of the bench site (0: skip it)")
    parser.add_argument("--skip-kits", action="store_true")
    parser.add_argument("--skip-ngspice", action="store_true")
    parser.add_argument("--ngspice-seconds", type=float, default=0.5,
                        help="the slice of the phrase ngspice plays")
    args = parser.parse_args()
    keep_freed_memory()
    if not args.skip_kits:
        print("Every clip of the demo kits, cold:", flush=True)
        demo_kits()
    if not args.skip_ngspice:
        print("A one-transistor stage's 4 s clip:", flush=True)
        one_stage_against_ngspice(args.ngspice_seconds)
    if args.site_guides:
        print("The bench site:", flush=True)
        bench_site(args.site_guides)


if __name__ == "__main__":
    main()
