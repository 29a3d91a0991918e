"""Site build speed: cold build, no-change rebuild and one-value rebuild of 100 four-stage guides.

The guides are made in a temporary folder from the demo guides in guides/: each takes one demo
guide, appends signal stages of the others (designators renumbered, stage ids suffixed) until
it has four stages, and moves every resistor and capacitor one E12 step up or down at random
(seeded, so every run builds the same site). Printed side by side with the targets:

    python bench/bench_build.py [--guides 100] [--jobs N] [--keep DIR]
"""

from __future__ import annotations

import argparse
import importlib
import os
import random
import re
import shutil
import subprocess
import sys
import tempfile
import threading
import time
from pathlib import Path

from kitleaf.eseries import nearest_in_series, series
from kitleaf.memory import keep_freed_memory
from kitleaf.site.build import BuildFailed, build_site
from kitleaf.site.pool import default_jobs
from kitleaf.values import format_rkm, parse_value

DEMO = Path(__file__).resolve().parents[1] / "guides"
STAGES = 4
FENCE = re.compile(r"^```stage (\S+)\n(.*?)^```\n", re.S | re.M)
PART = re.compile(r"^([a-z-]+: )([A-Z]+)(\d+)([A-Z]?)( +)(\S+)", re.M)
QUANTITY = {"R": "resistance", "C": "capacitance"}
CLAIM = re.compile(r"^claim: .*\n", re.M)  # a stated claim would not hold for varied values
ALLOW = re.compile(r"^allow: .*\n", re.M)  # names the stage by its first id


def stage_blocks(text: str) -> list[tuple[str, str]]:
    """(stage id, whole fenced block) of a guide, in document order."""
    return [(m.group(1), m.group(0)) for m in FENCE.finditer(text)]


def renumbered(block: str, stage_id: str, offset: int) -> str:
    """A stage block under a new id, its designators moved up by ``offset``."""
    block = block.replace(f"```stage {stage_id}\n", f"```stage {stage_id}{offset}\n", 1)
    block = ALLOW.sub("", block)
    return PART.sub(lambda m: f"{m[1]}{m[2]}{int(m[3]) + offset}{m[4]}{m[5]}{m[6]}", block)


def vary(text: str, rng: random.Random) -> str:
    """Every resistor and capacitor of the stage blocks one E12 step up, down, or kept."""
    def step(m: re.Match) -> str:
        quantity = QUANTITY.get(m[2])
        if quantity is None:
            return m[0]
        value = nearest_in_series(parse_value(m[6], quantity), "E12")[0]
        e12 = series("E12")
        mantissa = value / 10 ** int(f"{value:e}".split("e")[1])
        i = min(range(len(e12)), key=lambda k: abs(e12[k] - mantissa))
        j = min(max(i + rng.choice((-1, 0, 1)), 0), len(e12) - 1)
        new = value * e12[j] / e12[i]
        return f"{m[1]}{m[2]}{m[3]}{m[4]}{m[5]}{format_rkm(new, quantity)}"

    return FENCE.sub(lambda b: PART.sub(step, b[0]), text)


# A mid-rail reference for a base guide whose power stage has none: an op-amp stage taken
# from another guide biases its input there, and without it that input would float (the
# bias-path rule's warning; with the op-amp's input bias current it then sits at a rail).
REFERENCE = "vref-top: R97 22k\nvref-bottom: R98 22k\nvref-cap: C97 22u electrolytic 16V\n"


def with_reference(text: str) -> str:
    """``text`` with a reference divider in its power stage, if it has none."""
    def add(m: re.Match) -> str:
        if m[1] != "power" or "vref-top:" in m[2]:
            return m[0]
        return m[0][: -len("```\n")] + REFERENCE + "```\n"

    return FENCE.sub(add, text)


SWITCH_PART = re.compile(r"^[a-z-]+: S(\d+) ", re.M)
SWITCH_LINE = re.compile(r"^switch: (.+?) = S(\d+): (.+)$", re.M)


def switch_lines(block: str, donor: str, offset: int) -> str:
    """The donor kit's ``switch:`` line of each switch in ``block``, renumbered by
    ``offset`` and its name suffixed (a guide names every switch on its board)."""
    named = {m[2]: m for m in SWITCH_LINE.finditer(donor)}
    lines = [f"switch: {named[n][1]} {offset} = S{int(n) + offset}: {named[n][3]}\n"
             for n in SWITCH_PART.findall(block) if n in named]
    return "".join(lines)


def four_stage_guide(base: str, donors: list[str], number: int, rng: random.Random) -> str:
    """A demo guide grown to four stages from the others' signal stages, values varied."""
    text = with_reference(base)
    spares = [(sid, block, d) for d in donors for sid, block in stage_blocks(d)
              if sid != "power"]
    k = 1
    while len(stage_blocks(text)) < STAGES:
        sid, block, donor = spares[(number + k) % len(spares)]
        text += "\n" + renumbered(block, sid, 100 * k)
        extra = switch_lines(block, donor, 100 * k)
        text = text.replace("\n```\n", f"\n{extra}```\n", 1) if extra else text
        k += 1
    text = re.sub(r"^code: (\S+)", lambda m: f"code: {m[1]}-{number:03d}", text, count=1,
                  flags=re.M)
    text = re.sub(r"^title: (.+)$", lambda m: f"title: {m[1]} {number:03d}", text, count=1,
                  flags=re.M)
    return vary(CLAIM.sub("", text), rng)


def make_site(root: Path, count: int, large_signal: str | None = None) -> Path:
    """``count`` guides of four stages under ``root/guides``; with ``large_signal`` ("yes"
    or "no") every kit block says so (the demo guides ask for those figures or not)."""
    demos = [p.read_text() for p in sorted(DEMO.glob("*.md"))]
    if large_signal is not None:
        demos = [re.sub(r"^large-signal: .*\n", "", d, flags=re.M).replace(
            "supply: 9 V\n", f"supply: 9 V\nlarge-signal: {large_signal}\n", 1) for d in demos]
    guides = root / "guides"
    guides.mkdir(parents=True)
    rng = random.Random(2024)
    for n in range(count):
        base = demos[n % len(demos)]
        donors = [d for d in demos if d is not base]
        (guides / f"kit-{n:03d}.md").write_text(four_stage_guide(base, donors, n, rng))
    return guides


def change_one_value(guides: Path) -> str:
    """One resistor of one guide one E12 step up: the edit a kit maker makes for an erratum."""
    path = sorted(guides.glob("*.md"))[len(list(guides.glob("*.md"))) // 2]
    text = path.read_text()
    m = next(m for m in PART.finditer(text) if m[2] == "R")
    value = parse_value(m[6], "resistance")
    new = format_rkm(value * 1.2, "resistance")
    path.write_text(text[:m.start(6)] + new + text[m.end(6):])
    return f"{path.name}: {m[2]}{m[3]} {m[6]} to {new}"


def timed(func, *args, **kwargs):
    started = time.perf_counter()
    result = func(*args, **kwargs)
    return time.perf_counter() - started, result


class TreeMemory:
    """Samples this process and its descendants from /proc every ``interval`` seconds.

    Keeps the peak of the tree's summed proportional set size (shared pages split between the
    processes sharing them, so forked workers are not counted twice), the peak of the summed
    resident sizes (which counts shared pages once per process), and the largest single process.
    """

    def __init__(self, interval: float = 0.1) -> None:
        self.interval, self.pss, self.rss, self.single = interval, 0.0, 0.0, 0.0
        self._stop = threading.Event()
        self._thread = threading.Thread(target=self._run, daemon=True)

    def __enter__(self) -> TreeMemory:
        self._thread.start()
        return self

    def __exit__(self, *exc) -> None:
        self._stop.set()
        self._thread.join()

    def _run(self) -> None:
        while not self._stop.wait(self.interval):
            sizes = [s for s in map(_rollup, _tree(os.getpid())) if s]
            self.pss = max(self.pss, sum(s[0] for s in sizes))
            self.rss = max(self.rss, sum(s[1] for s in sizes))
            self.single = max([self.single] + [s[1] for s in sizes])


def _tree(pid: int) -> list[int]:
    """``pid`` and every descendant, from /proc/PID/task/*/children."""
    found, todo = [], [pid]
    while todo:
        current = todo.pop()
        found.append(current)
        for task in Path(f"/proc/{current}/task").glob("*/children"):
            try:
                todo.extend(int(c) for c in task.read_text().split())
            except OSError:
                continue
    return found


def _rollup(pid: int) -> tuple[float, float] | None:
    """(PSS, RSS) of one process in MB, or None if it has gone."""
    try:
        text = Path(f"/proc/{pid}/smaps_rollup").read_text()
    except OSError:
        return None
    fields = dict(line.split(":", 1) for line in text.splitlines()[1:])
    return int(fields["Pss"].split()[0]) / 1024, int(fields["Rss"].split()[0]) / 1024


def cli_run(guides: Path, out: Path) -> tuple[float, str]:
    """A no-change rebuild through the command line, interpreter start-up included.

    Run last: kitleaf's code is part of every cache key, so if the source changed while the
    bench ran, this rebuild is a cold one and its summary line says so.
    """
    started = time.perf_counter()
    run = subprocess.run([sys.executable, "-m", "kitleaf", "build", str(guides), "-o", str(out)],
                         check=True, capture_output=True, text=True)
    return time.perf_counter() - started, run.stdout.strip().splitlines()[-1]


def main() -> int:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--guides", type=int, default=100)
    p.add_argument("--jobs", type=int, default=None)
    p.add_argument("--keep", type=Path, help="build here and keep it, instead of a temp dir")
    p.add_argument("--large-signal", choices=("yes", "no"),
                   help="every guide asks for the large-signal figures, or none does "
                        "(default: as its demo guide says)")
    args = p.parse_args()
    keep_freed_memory()  # as the kitleaf command does before it builds
    # The pipeline's imports (about 1 s) are paid once, before any timing, as a running
    # `kitleaf proof` pays them: a rebuild with work to do builds in this process and would
    # otherwise carry them, a rebuild with nothing to do never loads them.
    importlib.import_module("kitleaf.site.guide_output")
    root = args.keep or Path(tempfile.mkdtemp(prefix="kitleaf-bench-"))
    jobs = args.jobs or default_jobs()
    try:
        run(root, args.guides, jobs, args.large_signal)
    except BuildFailed as failed:
        print("\n".join(str(e) for e in failed.errors[:5]), file=sys.stderr)
        raise
    finally:
        if args.keep is None:
            shutil.rmtree(root, ignore_errors=True)
    return 0


def run(root: Path, count: int, jobs: int, large_signal: str | None = None) -> None:
    guides, out = make_site(root, count, large_signal), root / "published"
    load = os.getloadavg()
    with TreeMemory() as memory:
        cold, report = timed(build_site, guides, out, jobs=jobs)
    same, again = timed(build_site, guides, out, jobs=jobs)
    edit = change_one_value(guides)
    one, changed = timed(build_site, guides, out, jobs=jobs)
    cli, cli_summary = cli_run(guides, out)
    print(f"{count} guides of {STAGES} stages, {report.files} files, {jobs} process(es)")
    print(f"{'':24}{'measured':>12}{'target':>12}")
    # the large-signal sweeps on every guide are given half again the plain build's time
    target = "<= 45 s" if large_signal == "yes" else "<= 30 s"
    print(f"{'cold build':24}{cold:>10.2f} s{target:>12}   (load average before: {load[0]:.1f}, "
          f"after: {os.getloadavg()[0]:.1f})")
    print(f"{'no-change rebuild':24}{same:>10.3f} s{'<= 1 s':>12}"
          f"   ({again.rebuilt} guides rebuilt, {len(again.written)} files written)")
    print(f"{'  same, through the CLI':24}{cli:>10.2f} s{'':>12}   {cli_summary}")
    print(f"{'one-value rebuild':24}{one:>10.2f} s{'':>12}   {edit}; "
          f"{changed.rebuilt} guide(s) rebuilt, {len(changed.written)} files written")
    print(f"{'one-value / cold':24}{one / cold * 100:>10.1f} %{'<= 5 %':>12}")
    print(f"{'no-change / cold':24}{same / cold * 100:>10.2f} %")
    print(f"{'peak memory (cold)':24}{memory.pss:>9.0f} MB{'<= 600 MB':>12}"
          f"   (process tree's summed PSS; summed RSS {memory.rss:.0f} MB, "
          f"largest process {memory.single:.0f} MB)")


if __name__ == "__main__":
    sys.exit(main())
